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


def test_cheapest_builds_are_the_exact_searchs_cheapest_per_layer_count():
    # the exact search (tested against brute force) is the reference
    import numpy as np

    from stackopt.search.exact import cheapest_builds

    sc = scenario(layers=(2, 4, 6), symmetric=False)
    p = Problem(sc, TABLE)
    seeds = p.evaluate(cheapest_builds(p))
    ex = optimize(sc, TABLE, method="exact")
    layers = ex.evaluation.geometry.layers
    for n in (4, 6):
        ok = seeds.feasible & (seeds.geometry.layers == n)
        assert ok.any()
        best = ex.evaluation.unit_cost[ex.feasible & (layers == n)].min()
        assert np.isclose(seeds.unit_cost[ok].min(), best, rtol=1e-12)


def test_seeded_nsga2_holds_the_cheapest_board_of_each_layer_count_from_the_start():
    import numpy as np

    sc = scenario(layers=(2, 4, 6), symmetric=False)
    ex = optimize(sc, TABLE, method="exact")
    ga = optimize(sc, TABLE, method="nsga2", budget=200, seed=5)
    for n in (4, 6):
        e = ex.evaluation.unit_cost[ex.feasible & (ex.evaluation.geometry.layers == n)].min()
        g = ga.evaluation.unit_cost[ga.feasible & (ga.evaluation.geometry.layers == n)].min()
        assert np.isclose(g, e, rtol=1e-12)
