"""CPU time of the demo's figures, as a ratio to a floor measured in the same run (run by
hand: ``python benchmarks/bench_figures.py``).

A fresh process searches the demo, then builds and encodes each figure of ``stackopt
optimize`` (seven PNG files and ``pareto.svg``) twice: the first pass is cold, as in a
forked worker that draws it (first use of fonts, artists, code paths), the second warm.
Round-robin with it, a fresh ``python -c "import matplotlib.figure, ...backend_agg"``
gives the floor (CPU of the process, as the figures' CPU). Medians of 5.

The figures' CPU includes the layout solve, the drawing and the PNG/SVG encoding, not the
search nor the imports; the file sizes are printed beside it.
"""

from __future__ import annotations

import json
import os
import platform
import resource
import statistics
import subprocess
import sys

REPS = 5
FLOOR = "import matplotlib.figure, matplotlib.backends.backend_agg"
FIGURES = r"""
import json, sys, time
import stackopt
from stackopt.cli.common import load_inputs
from stackopt.outputs.plots import figure_bytes, plot_front, plot_response
from stackopt.outputs.plots_ladder import plot_mitigations
from stackopt.outputs.plots_robust import plot_robustness
from stackopt.outputs.plots_stackup import plot_costs, plot_prepregs, plot_stackups

inp = load_inputs(None, None, None)
r = stackopt.optimize(inp.scenario, inp.table, seed=1)
import numpy as np
r.frame(np.zeros(0, dtype=np.int64)), r.ladder  # as outputs.bundle has them before the fork

def front():
    fig = plot_front(r)
    return {"pareto.png": figure_bytes(fig, "png"), "pareto.svg": figure_bytes(fig, "svg")}

jobs = {"pareto": front,
        "response": lambda: {"response.png": figure_bytes(plot_response(r))},
        "stackups": lambda: {"stackups.png": figure_bytes(plot_stackups(r))},
        "costs": lambda: {"costs.png": figure_bytes(plot_costs(r))},
        "prepregs": lambda: {"prepregs.png": figure_bytes(plot_prepregs(r))},
        "robustness": lambda: {"robustness.png": figure_bytes(plot_robustness(r))},
        "mitigations": lambda: {"mitigations.png": figure_bytes(plot_mitigations(r.ladder, r))}}
out = {"cold": {}, "warm": {}, "bytes": {}}
for phase in ("cold", "warm"):
    for name, job in jobs.items():  # one figure each, as the bundle's jobs
        t = time.process_time()
        files = job()
        out[phase][name] = time.process_time() - t
        out["bytes"].update((k, len(v)) for k, v in files.items())
print(json.dumps(out))
"""


def cpu(cmd: list[str]) -> tuple[float, str]:
    """(CPU seconds of a fresh process and its children, its standard output)."""
    r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
    out = subprocess.run(cmd, check=True, capture_output=True, text=True).stdout
    r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime), out


def main() -> None:
    load0 = os.getloadavg()[0]
    floors, runs = [], []
    cpu([sys.executable, "-c", FLOOR])  # warm up: bytecode and page cache
    for _ in range(REPS):  # round-robin: the floor and the figures see the same load
        floors.append(cpu([sys.executable, "-c", FLOOR])[0])
        runs.append(json.loads(cpu([sys.executable, "-c", FIGURES])[1].strip().splitlines()[-1]))
    floor = statistics.median(floors)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores; python "
          f"{platform.python_version()}; load {load0:.2f} before, {os.getloadavg()[0]:.2f} "
          f"after; medians of {REPS}, round-robin")
    print(f"  floor: {FLOOR:56s} {floor * 1e3:6.0f} ms CPU")
    print(f"  {'figure':12s} {'cold ms':>8s} {'warm ms':>8s}   files")
    total = {}
    for phase in ("cold", "warm"):
        total[phase] = statistics.median(sum(r[phase].values()) for r in runs)
    sizes = runs[-1]["bytes"]
    for name in runs[0]["cold"]:
        cold = statistics.median(r["cold"][name] for r in runs)
        warm = statistics.median(r["warm"][name] for r in runs)
        files = ", ".join(f"{k} {v / 1024:.0f} kB" for k, v in sizes.items()
                          if k.startswith(name + "."))
        print(f"  {name:12s} {cold * 1e3:8.0f} {warm * 1e3:8.0f}   {files}")
    print(f"  {'all':12s} {total['cold'] * 1e3:8.0f} {total['warm'] * 1e3:8.0f}   "
          f"{sum(sizes.values()) / 1024:.0f} kB")
    print(f"figures cold / import floor = {total['cold'] / floor:.2f}; "
          f"warm / floor = {total['warm'] / floor:.2f}")


if __name__ == "__main__":
    main()
