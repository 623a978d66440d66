"""Start-up and end-to-end time as ratios to floors measured in the same run (run by hand:
``python benchmarks/bench_startup.py``).

Each command runs as a fresh process, round-robin with its floor, 5 times; medians:

1. ``stackopt calc via ...`` against ``python -c "import numpy"`` (goal ≤ 2×);
2. ``stackopt --version`` against the same floor (goal ≤ 1.5×);
3. ``stackopt optimize`` of the demo, plots and report included, against importing the
   libraries it needs (numpy, pandas, yaml, pydantic, scipy.special, matplotlib's figure
   module and Agg backend) (goal ≤ 2.5×).
"""

from __future__ import annotations

import os
import platform
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

PY = sys.executable
LIBS = ("import numpy, pandas, yaml, pydantic, scipy.special, matplotlib.figure, "
        "matplotlib.backends.backend_agg")
REPS = 5


#: As an installed package runs: compiled bytecode cached (a shell that sets
#: PYTHONDONTWRITEBYTECODE would otherwise recompile stackopt on every start).
ENV = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}


def wall(cmd: list[str]) -> float:
    t = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                   env=ENV)
    return time.perf_counter() - t


def main() -> None:
    out = tempfile.mkdtemp(prefix="stackopt-bench-")
    cases = {
        "floor: import numpy": [PY, "-c", "import numpy"],
        "floor: import the demo's libraries": [PY, "-c", LIBS],
        "stackopt calc via": [PY, "-m", "stackopt", "calc", "via", "--depth", "0.19mm",
                              "--drill", "0.3mm", "--freq", "800MHz"],
        "stackopt --version": [PY, "-m", "stackopt", "--version"],
        "stackopt optimize (demo)": [PY, "-m", "stackopt", "optimize", "--out", out,
                                     "--force", "--quiet"],
    }
    times: dict[str, list[float]] = {k: [] for k in cases}
    load0 = os.getloadavg()[0]
    for cmd in cases.values():  # warm up: bytecode written, files in the page cache
        wall(cmd)
    for _ in range(REPS):  # round-robin: each figure and its floor see the same load
        for k, cmd in cases.items():
            times[k].append(wall(cmd))
    shutil.rmtree(out, ignore_errors=True)
    med = {k: statistics.median(v) for k, v in times.items()}
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores; python "
          f"{platform.python_version()}; load {load0:.2f} before, "
          f"{os.getloadavg()[0]:.2f} after; medians of {REPS}, round-robin")
    for k, v in med.items():
        print(f"  {k:38s} {v * 1e3:7.0f} ms  (min {min(times[k]) * 1e3:.0f})")
    f0, f1 = med["floor: import numpy"], med["floor: import the demo's libraries"]
    print(f"calc via / import numpy      = {med['stackopt calc via'] / f0:.2f}  (goal <= 2)")
    print(f"--version / import numpy     = {med['stackopt --version'] / f0:.2f}  (goal <= 1.5)")
    print(f"demo optimize / import libs  = {med['stackopt optimize (demo)'] / f1:.2f}  "
          "(goal <= 2.5)")


if __name__ == "__main__":
    main()
