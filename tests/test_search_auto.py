"""The method switch: ``auto`` searches exactly wherever the exact search fits its time and
memory budget, from a count of the work that equals what the exact search then does.

The cost table is the invented demo table (invented data, used only as a fixture)."""

from __future__ import annotations

import pytest

from stackopt.inputs.costtable import load_cost_table
from stackopt.search import api
from stackopt.search.api import optimize
from stackopt.search.exact import ExactCost, exact_candidates, exact_cost
from stackopt.search.problem import Problem
from tests.test_search import scenario

TABLE = load_cost_table("cost_tables/quickturn.yaml")


@pytest.mark.parametrize("kw", [
    {},
    {"layers": (6,), "symmetric": False},
    {"layers": (2, 4, 6, 8), "symmetric": False, "mitigations": ("via_in_pad", "coplanar")},
    {"layers": (4,), "vias": (1, 2, 3), "mitigations": ("own_vias",)},
])
def test_exact_cost_counts_what_the_exact_search_does(kw):
    # the independent side: run the exact search and count what it priced and evaluated
    p = Problem(scenario(**kw), TABLE)
    plan = exact_candidates(p)
    cost = exact_cost(p)
    assert cost.priced == plan.priced
    assert cost.representatives == len(plan.representatives)


def test_auto_chooses_exact_on_a_small_six_layer_space():
    r = optimize(scenario(layers=(6,), symmetric=False), TABLE, method="auto")
    assert r.method == "exact"


def test_auto_chooses_nsga2_only_beyond_the_budget(monkeypatch):
    sc = scenario(layers=(4,), symmetric=False)
    monkeypatch.setattr(api, "exact_cost", lambda p: ExactCost(10**12, 10**9))
    r = optimize(sc, TABLE, method="auto", budget=300)
    assert r.method == "nsga2"
