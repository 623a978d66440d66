"""Render independent outputs (figures, CSV text) on several cores.

Drawing the figures is the largest part of a small run. Each job is a function of no
arguments returning bytes, or a dict of several named outputs (one figure saved as PNG
and SVG); :func:`render` runs them in forked worker processes, which
inherit the search result and the libraries already imported, so nothing is pickled but
the job's name and its bytes. Each job draws from the same data as it would in one
process, so the files are byte-identical to a serial run (``tests/test_outputs_parallel``).

Where ``fork`` is not available (Windows, or a macOS default) or only one core is free,
the jobs run in this process, in order. ``STACKOPT_JOBS=1`` forces that.
"""

from __future__ import annotations

import multiprocessing
import os
from collections.abc import Callable, Mapping

__all__ = ["render", "workers"]

Job = Callable[[], "bytes | dict[str, bytes]"]

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


def render(jobs: Mapping[str, Job]) -> dict[str, bytes]:
    """Every job's bytes, by name, in the order of ``jobs`` (a job returning a dict
    contributes its entries instead).

    Runs in ``workers(len(jobs))`` forked processes; an exception in a job is raised here
    (as it would be serially).
    """
    global _JOBS
    n = workers(len(jobs))
    if n <= 1:
        return _merge({name: job() for name, job in jobs.items()})
    from concurrent.futures import ProcessPoolExecutor

    _JOBS = jobs
    try:
        with ProcessPoolExecutor(max_workers=n,
                                 mp_context=multiprocessing.get_context("fork")) as pool:
            futures = {name: pool.submit(_run, name) for name in jobs}
            return _merge({name: f.result() for name, f in futures.items()})
    finally:
        _JOBS = {}
