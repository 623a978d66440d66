"""Helpers of the output tests: the demo search, run once per process and cached."""

from __future__ import annotations

import dataclasses
import functools
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "scenarios" / "harmonic_lowpass.yaml"


@functools.lru_cache(maxsize=4)
def run(scenario=DEMO, table=None):
    """The demo scenario searched (invented demo data; about a second)."""
    import stackopt

    return stackopt.optimize(scenario, table)


@functools.lru_cache(maxsize=1)
def second_run():
    """An independent second search of the demo (for determinism checks)."""
    return run.__wrapped__()


def renamed(result, name: str):
    """The same search under another scenario name (nothing re-evaluated)."""
    from stackopt.search.problem import Problem

    sc = result.problem.scenario.model_copy(update={"name": name})
    return dataclasses.replace(result, problem=Problem(sc, result.problem.table))
