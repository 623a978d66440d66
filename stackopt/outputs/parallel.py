"""Render independent outputs (figures, CSV text) on several cores.

Drawing the figures is the largest part of a small run. Each job is a function of no
arguments returning bytes, or a dict of several named outputs (one figure saved as PNG
and SVG); :func:`render` runs them in forked worker processes, which
inherit the search result and the libraries already imported, so nothing is pickled but
the job's name and its bytes. Each job draws from the same data as it would in one
process, so the files are byte-identical to a serial run (``tests/test_outputs_parallel``).

While the workers draw, this process does its own share (``meanwhile``: the summary,
the tables, the stackup files), so a run's last phase takes about the time of its longest
share instead of the sum.

Where ``fork`` is not available (Windows, or a macOS default) or only one core is free,
the jobs run in this process, in order, after ``meanwhile``. ``STACKOPT_JOBS=1`` forces
that.
"""

from __future__ import annotations

import multiprocessing
import os
from collections.abc import Callable, Mapping
from typing import TypeVar

__all__ = ["render", "workers"]

Job = Callable[[], "bytes | dict[str, bytes]"]
T = TypeVar("T")

#: The jobs of the current :func:`render` call, as a forked worker inherits them (set in
#: the parent only for the lifetime of its pool; a worker reads it, never writes it).
_JOBS: Mapping[str, Job] = {}


def workers(n_jobs: int) -> int:
    """Worker processes to use for ``n_jobs`` jobs: the cores this process may use
    (``STACKOPT_JOBS`` overrides), at most one per job; 1 where fork is unavailable."""
    if "fork" not in multiprocessing.get_all_start_methods():
        return 1
    env = os.environ.get("STACKOPT_JOBS", "").strip()
    try:
        cores = int(env) if env else len(os.sched_getaffinity(0))
    except (ValueError, AttributeError):
        cores = os.cpu_count() or 1
    return max(1, min(cores, n_jobs))


def _run(name: str) -> bytes | dict[str, bytes]:
    return _JOBS[name]()


def _merge(results: Mapping[str, bytes | dict[str, bytes]]) -> dict[str, bytes]:
    out: dict[str, bytes] = {}
    for name, r in results.items():
        out.update(r if isinstance(r, dict) else {name: r})
    return out


def render(jobs: Mapping[str, Job], meanwhile: Callable[[], T] | None = None
           ) -> tuple[dict[str, bytes], T | None]:
    """Every job's bytes, by name, in the order of ``jobs`` (a job returning a dict
    contributes its entries instead), and the value of ``meanwhile()``.

    The jobs run in ``workers(len(jobs))`` forked processes while this process calls
    ``meanwhile`` (forked first: nothing ``meanwhile`` computes or caches reaches a job,
    as in a serial run where each job reads only the result). An exception in a job is
    raised here (as it would be serially).
    """
    global _JOBS
    n = workers(len(jobs))
    if n <= 1:
        mine = meanwhile() if meanwhile is not None else None
        return _merge({name: job() for name, job in jobs.items()}), mine
    from concurrent.futures import ProcessPoolExecutor

    _JOBS = jobs
    try:
        with ProcessPoolExecutor(max_workers=n,
                                 mp_context=multiprocessing.get_context("fork")) as pool:
            futures = {name: pool.submit(_run, name) for name in jobs}
            mine = meanwhile() if meanwhile is not None else None
            return _merge({name: f.result() for name, f in futures.items()}), mine
    finally:
        _JOBS = {}
