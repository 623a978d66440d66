"""Timing helpers shared by the benchmarks (run by hand; imported as ``timing`` because a
benchmark runs as ``python benchmarks/bench_x.py``, with this folder on the path)."""

from __future__ import annotations

import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from typing import TypeVar

T = TypeVar("T")


def best_of(fn: Callable[[], T], repeat: int = 3, warm: bool = False) -> tuple[float, T]:
    """(shortest wall-clock time of ``repeat`` calls [s], the last call's result); ``warm``
    makes one untimed call first (allocation and first-call costs)."""
    if warm:
        fn()
    times = []
    out: T
    for _ in range(repeat):  # repeats of one measurement, not a loop over candidates
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


def import_numpy_floor(repeat: int = 5) -> float:
    """The floor quoted beside every figure: median wall time of a fresh
    ``python -c "import numpy"`` [s]."""
    ts = []
    for _ in range(repeat):
        t = time.perf_counter()
        subprocess.run([sys.executable, "-c", "import numpy"], check=True)
        ts.append(time.perf_counter() - t)
    return statistics.median(ts)
