"""Time and accuracy of the built-in 2-D field solver per cross-section, on one core.

Run by hand:  python benchmarks/bench_fieldsolve.py
For each cross-section: the default solve (base grid + every cell halved, Richardson),
its time (best of 3), the unknowns of both grids, and its deviation from a converged value
(exact where one exists, else the Richardson limit of nested grids 1/2/3 with the
observed order). The floor beside the figures: one sparse LU solve of a 5-point Laplacian
of 4 096 unknowns, and `python -c "import numpy"`, measured in the same run. Quote the
output in docs/performance.md with the machine and its load.
"""

import os

for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[var] = "1"

import platform  # noqa: E402
import subprocess  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402

import numpy as np  # noqa: E402
import scipy.sparse as sp  # noqa: E402
from scipy.sparse.linalg import splu  # noqa: E402
from timing import best_of  # noqa: E402

from stackopt.physics.coupled import coupled_stripline  # noqa: E402
from stackopt.physics.fieldlines import Section, solve_section  # noqa: E402
from stackopt.physics.stripline import stripline_cohn  # noqa: E402

MM, ER, T = 1e-3, 4.3, 35e-6


def _limit(sec, key):
    z = np.array([solve_section(sec, extrapolate=False, level=k)[key] for k in (1, 2, 3)])
    p = np.log2((z[1] - z[0]) / (z[2] - z[1]))
    return z[2] + (z[2] - z[1]) / (2**p - 1)


def _floor_lu():
    n = 64
    e = np.ones(n)
    t1 = sp.diags([-e[:-1], 2 * e, -e[:-1]], [-1, 0, 1])
    a = (sp.kron(t1, sp.eye(n)) + sp.kron(sp.eye(n), t1)).tocsc()
    return lambda: splu(a).solve(np.ones(n * n))


CASES = [
    ("stripline w/b 0.4, t 0 (Cohn exact)", lambda: Section(
        0.2 * MM, 0.25 * MM, ER, 0.0, h_above=0.25 * MM, top_plane=True), "z0",
     float(stripline_cohn(0.2 * MM, 0.5 * MM, ER))),
    ("coupled stripline 0.15/0.15/0.5 mm t 0, odd+even (Cohn exact)", lambda: Section(
        0.15 * MM, 0.25 * MM, ER, 0.0, h_above=0.25 * MM, top_plane=True, s=0.15 * MM),
     "z_odd", float(coupled_stripline(0.15 * MM, 0.15 * MM, 0.5 * MM, ER)["z_odd"])),
    ("microstrip w 0.1 h 0.2 mm t 35 um", lambda: Section(0.1 * MM, 0.2 * MM, ER, T),
     "z0", None),
    ("microstrip + 20 um mask", lambda: Section(0.1 * MM, 0.2 * MM, ER, T, mask_t=20e-6),
     "z0", None),
    ("asym. stripline 0.2/0.3 mm, Dk 4.6/3.9", lambda: Section(
        0.15 * MM, 0.2 * MM, 4.6, T, h_above=0.3 * MM, er_above=3.9, top_plane=True),
     "z0", None),
    ("CPWG w 0.3 gap 0.15 h 1.6 mm", lambda: Section(0.3 * MM, 1.6 * MM, ER, T,
                                                     gap=0.15 * MM), "z0", None),
    ("coupled microstrip 0.2/0.2/0.2 mm, odd+even", lambda: Section(
        0.2 * MM, 0.2 * MM, ER, T, s=0.2 * MM), "z_odd", None),
]


def main():
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", "import numpy"], check=True)
    floor_import = time.perf_counter() - t0
    floor_lu, _ = best_of(_floor_lu(), warm=True)
    print(f"# {platform.processor() or platform.machine()}, Python "
          f"{platform.python_version()}, numpy {np.__version__}, load "
          f"{os.getloadavg()[0]:.2f}")
    print(f"# floors: python -c 'import numpy' {floor_import * 1e3:.0f} ms; "
          f"splu of a 4096-unknown Laplacian {floor_lu * 1e3:.1f} ms")
    print("| cross-section | time [ms] | / LU floor | unknowns | error estimate | "
          "vs converged |")
    print("|---|---|---|---|---|---|")
    for label, make, key, exact in CASES:
        sec = make()
        dt, r = best_of(lambda sec=sec: solve_section(sec), warm=True)
        ref = exact if exact is not None else _limit(sec, key)
        print(f"| {label} | {dt * 1e3:.1f} | {dt / floor_lu:.1f}x | {r['unknowns']:.0f} | "
              f"{100 * r['error']:.2f} % | {100 * (r[key] / ref - 1):+.2f} % |")


if __name__ == "__main__":
    main()
