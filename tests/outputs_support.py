"""Shared fixtures of the output tests: one demo search, cached for the session
(import the fixtures into a test module; the search itself runs once per process)."""

from __future__ import annotations

import dataclasses
import functools
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "scenarios" / "harmonic_lowpass.yaml"


@functools.lru_cache(maxsize=4)
def run(scenario=DEMO, table=None):
    import stackopt

    return stackopt.optimize(scenario, table)


@pytest.fixture(scope="session")
def demo_result():
    """The demo scenario searched once (invented demo data; about a second)."""
    return run()


@pytest.fixture(scope="session")
def demo_out(demo_result, tmp_path_factory):
    """The demo's outputs written once."""
    from stackopt.outputs.bundle import write_all

    out = tmp_path_factory.mktemp("outputs") / "demo"
    paths = write_all(demo_result, out)
    return out, paths


def renamed(result, name: str):
    """The same search under another scenario name (nothing re-evaluated)."""
    from stackopt.search.problem import Problem

    sc = result.problem.scenario.model_copy(update={"name": name})
    return dataclasses.replace(result, problem=Problem(sc, result.problem.table))
