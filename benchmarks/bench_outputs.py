"""Outputs of a large result: their share of the run and of the peak memory (run by hand:
``python benchmarks/bench_outputs.py``).

The invented large space (``benchmarks/large/``, about 2.6e17 stackups, some 445,000
candidates evaluated by the exact search) is searched by the library call in a fresh
process, whose peak memory is read; then the whole command (search plus every output
file) runs in another fresh process. Goals: the whole command's peak memory at most 1.3x
the library call's, and the output phase at most 20 % of the run. Forked plot workers
are counted with the command (peak of the process and its children), and so is their
CPU time, printed beside the wall clock (less moved by other jobs on the machine).
"""

from __future__ import annotations

import json
import os
import platform
import subprocess
import sys

PHASES = r"""
import json, os, resource, shutil, sys, time, tempfile
t0 = time.perf_counter()
import stackopt
r = stackopt.optimize("benchmarks/large/large_scenario.yaml")
t1 = time.perf_counter()
c1 = os.times()
lib_rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
if sys.argv[1] == "outputs":
    from stackopt.outputs.bundle import write_all
    out = tempfile.mkdtemp(prefix="stackopt-bench-")
    write_all(r, out, force=True)
t2 = time.perf_counter()
c2 = os.times()
if sys.argv[1] == "outputs":
    shutil.rmtree(out)
rss = max(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss,
          resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)
cpu = sum(getattr(c2, k) - getattr(c1, k) for k in ("user", "system", "children_user",
                                                       "children_system"))
print(json.dumps({"search_s": t1 - t0, "outputs_s": t2 - t1, "outputs_cpu_s": cpu,
                  "search_cpu_s": c1.user + c1.system, "n": r.n,
                  "lib_rss_MB": lib_rss / 1024, "rss_MB": rss / 1024}))
"""


def run(mode: str) -> dict:
    out = subprocess.run([sys.executable, "-c", PHASES, mode], check=True,
                         capture_output=True, text=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    load0 = os.getloadavg()[0]
    lib = run("library")
    cmd = run("outputs")
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores; load {load0:.2f} before, "
          f"{os.getloadavg()[0]:.2f} after; python {platform.python_version()}")
    print(f"candidates evaluated: {cmd['n']}")
    print(f"library call alone: {lib['search_s']:.1f} s, peak {lib['rss_MB']:.0f} MB")
    total = cmd["search_s"] + cmd["outputs_s"]
    print(f"with every output:  search {cmd['search_s']:.1f} s + outputs "
          f"{cmd['outputs_s']:.1f} s, peak {cmd['rss_MB']:.0f} MB")
    print(f"CPU (every process): search {cmd['search_cpu_s']:.1f} s, outputs "
          f"{cmd['outputs_cpu_s']:.1f} s (the outputs' share of the wall clock is at "
          f"least half their CPU on two cores: load moves it, the CPU less)")
    print(f"peak memory ratio   = {cmd['rss_MB'] / lib['rss_MB']:.2f}  (goal <= 1.3)")
    print(f"output phase share  = {cmd['outputs_s'] / total:.0%}  (goal <= 20 %)")


if __name__ == "__main__":
    main()
