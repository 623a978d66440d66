"""What the robustness analyses cost (run by hand: ``python benchmarks/bench_robustness.py``).

Goal: the robust margins (every evaluated candidate under ``search.robustness.models``),
the model spread, the Monte Carlo yields of the front and the picks, the cheapest robust
pick and the limits add at most 50 % to the demo's run time. Measured in one run, as
ratios, for every demo scenario:

- ``search``: ``stackopt.optimize`` with the analyses switched off (the search alone);
- ``analyses``: :func:`stackopt.analyses.robust.analyse` on that result;
- ``demo``: ``stackopt optimize <scenario>`` end to end in a fresh process (search,
  analyses, every plot, the report and the files), the run time the goal refers to;
- ``bare``: the same command in a fresh process with the analyses switched off (the
  outputs then leave the robustness out); ``demo / bare`` is the goal's ratio (≤ 1.5);
- ``floor``: ``python -c "import numpy"`` in a fresh process.

Best of three repeats each (the machine is shared; the minimum is the least disturbed).
"""

from __future__ import annotations

import os

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")  # one core

import platform
import subprocess
import sys
import tempfile
from pathlib import Path

from timing import best_of

ROOT = Path(__file__).resolve().parents[1]
SCENARIOS = ("harmonic_lowpass", "two_layer_only", "consumer_emi", "lines_mixed")
REPEATS = 3


#: ``stackopt optimize`` with :func:`stackopt.analyses.robust.analyse` switched off.
BARE = ("import sys, stackopt.analyses.robust as r; r.analyse = lambda x: x; "
        "from stackopt.cli.main import main; sys.exit(main(sys.argv[1:]))")


def fresh(*argv: str, bare: bool = False) -> float:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    with tempfile.TemporaryDirectory() as d:
        run = ["optimize", *argv, "--out", d, "--force", "--quiet"]
        cmd = [sys.executable, *argv] if argv[0] == "-c" else \
            [sys.executable, "-c", BARE, *run] if bare else [sys.executable, "-m", "stackopt", *run]
        return best_of(lambda: subprocess.run(cmd, check=True, env=env, cwd=ROOT),
                       REPEATS)[0]


def main() -> None:
    import stackopt.analyses.robust as robust
    import stackopt.search.api as api

    print(f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
          f"load {os.getloadavg()[0]:.1f}; python {platform.python_version()}")
    floor = fresh("-c", "import numpy")
    print(f"floor (python -c 'import numpy'): {floor:.2f} s")
    print(f"{'scenario':18s} {'search':>8s} {'analyses':>9s} {'demo':>7s} {'bare':>7s} "
          f"{'analyses/search':>16s} {'demo/bare':>10s}")
    real = robust.analyse
    for name in SCENARIOS:
        path = ROOT / "scenarios" / f"{name}.yaml"
        robust.analyse = lambda r: r  # the search alone
        try:
            t_search = best_of(lambda: api.optimize(path), REPEATS)[0]  # noqa: B023
            bare = api.optimize(path)
        finally:
            robust.analyse = real
        t_an = best_of(lambda: real(bare), REPEATS)[0]  # noqa: B023
        t_demo = fresh(str(path))
        t_bare = fresh(str(path), bare=True)
        print(f"{name:18s} {t_search:8.2f} {t_an:9.2f} {t_demo:7.2f} {t_bare:7.2f} "
              f"{t_an / t_search:16.2f} {t_demo / t_bare:10.2f}")
    print(f"load after: {os.getloadavg()[0]:.1f}")


if __name__ == "__main__":
    main()
