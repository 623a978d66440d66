"""The search: exact pruning against brute force, NSGA-II against the exact front, a case
whose answer is known from physics, determinism and the reported constraints.

The cost table is the invented demo table (invented data, used only as a fixture)."""

from __future__ import annotations

import numpy as np
import pytest

from stackopt.inputs.costtable import load_cost_table
from stackopt.model.scenario import Scenario
from stackopt.search.api import optimize
from stackopt.search.exact import enumerate_all
from stackopt.search.front import hypervolume, nondominated
from stackopt.search.problem import Problem

TABLE = load_cost_table("cost_tables/quickturn.yaml")

# A single shunt "short" to ground through one via across a 50 ohm line, as in the classic
# ground-via measurement: the attenuation is set by the via inductance alone.
SHORT = {
    "z0": "50 ohm",
    "elements": [
        {"name": "R1", "type": "R", "value": "0.001 ohm", "between": ["in", "gnd"],
         "ground": "g1"},
        {"name": "R2", "type": "R", "value": "0.001 ohm", "between": ["in", "out"]},
    ],
    "grounds": [{"name": "g1", "at": ["0 mm", "0 mm"]}],
}

FILTER = {
    "z0": "50 ohm",
    "filter": {"family": "chebyshev", "order": 5, "cutoff": "1 GHz", "ripple": "0.1 dB",
               "ground": {"trace_length": "0.5 mm", "trace_width": "0.4 mm"}},
}


def scenario(circuit=FILTER, *, layers=(2, 4), symmetric=True, window=None, mitigations=(),
             req=(("1.8 GHz", "35 dB"), ("2.7 GHz", "45 dB")), drills=("0.2 mm", "0.3 mm"),
             vias=(1, 2), lines=(), search=None, copper=("1 oz",)):
    space = {"layers": list(layers), "symmetric": symmetric, "drills": list(drills),
             "vias_per_ground": list(vias), "mitigations": list(mitigations),
             "copper": list(copper)}
    if window:
        space["thickness"] = {"nominal": window, "tolerance": 0.1}
    return Scenario.model_validate({
        "name": "test", "board": {"width": "50 mm", "height": "40 mm", "quantity": 100},
        "circuit": circuit,
        "requirements": [{"frequency": f, "min_attenuation": a} for f, a in req],
        "lines": list(lines), "space": space, "search": search or {}})


def front_points(result):
    return {tuple(np.round(result.objectives[i], 9)) for i in np.flatnonzero(result.on_front)}


def brute_front(sc):
    p = Problem(sc, TABLE)
    c = enumerate_all(p.space)
    ev = p.evaluate(c)
    f = p.objectives(ev)
    ok = ev.feasible
    nd = nondominated(f[ok])
    return {tuple(np.round(x, 9)) for x in f[ok][nd]}, len(c)


@pytest.mark.parametrize("kw", [
    {},
    {"symmetric": False},
    {"window": "1.6 mm"},
    {"window": "1.0 mm", "mitigations": ("via_in_pad", "own_vias")},
    # copper changes the finished thickness, the via height (inner copper between the top
    # and its plane on S-P-G-S) and the pad traces; coplanar changes the ground network
    {"copper": ("0.5 oz", "1 oz", "2 oz"), "mitigations": ("coplanar", "via_in_pad"),
     "drills": ("0.3 mm",), "vias": (1, 3)},
    {"copper": ("0.5 oz", "2 oz"), "mitigations": ("coplanar",), "symmetric": False,
     "window": "1.2 mm"},
])
def test_exact_equals_brute_force(kw):
    sc = scenario(**kw)
    r = optimize(sc, TABLE, method="exact")
    brute, n = brute_front(sc)
    assert front_points(r) == brute
    assert r.space_size == n
    assert r.evaluated < n  # pruning visited less than the whole space


def test_exact_equals_brute_force_with_lead_time_as_third_objective():
    # A non-standard finished thickness that costs nothing but adds days (an edited copy
    # of the invented demo table): the cheapest tail of a group is then not the fastest,
    # and the exact search must keep both.
    feats = TABLE.features.model_copy(update={"non_standard_thickness": TABLE.features
                                              .non_standard_thickness.model_copy(
                                                  update={"per_panel": 0.0, "per_lot": 0.0,
                                                          "days": 3})})
    table = TABLE.model_copy(update={"features": feats})
    sc = scenario(SHORT, layers=(4,), req=(("800 MHz", "40 dB"),),
                  mitigations=("via_in_pad",), search={"third_objective": "lead_time"})
    r = optimize(sc, table, method="exact")
    p = Problem(sc, table)
    c = enumerate_all(p.space)
    ev = p.evaluate(c)
    f = p.objectives(ev)[ev.feasible]
    brute = {tuple(np.round(x, 9)) for x in f[nondominated(f)]}
    assert front_points(r) == brute
    assert r.objectives.shape[1] == 3
    assert len({x[2] for x in brute}) > 1  # lead time really varies along the front


def test_front_members_are_nondominated_among_all_evaluated():
    r = optimize(scenario(window="1.6 mm"), TABLE, method="exact")
    f, ok = r.objectives, r.feasible
    for i in np.flatnonzero(r.on_front):
        dominated = np.all(f[ok] <= f[i], axis=1) & np.any(f[ok] < f[i], axis=1)
        assert not dominated.any()


def test_infeasible_candidates_name_their_constraint():
    r = optimize(scenario(window="1.0 mm"), TABLE, method="exact")
    bad = np.flatnonzero(~r.feasible)
    assert len(bad)
    for i in bad:
        v = r.evaluation.violated(int(i))
        assert v and all("(+" in s for s in v)
    assert not r.on_front[bad].any()


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_nsga2_reaches_99_percent_of_exact_hypervolume(seed):
    sc = scenario(symmetric=False, window="1.6 mm")
    exact = optimize(sc, TABLE, method="exact")
    ga = optimize(sc, TABLE, method="nsga2", seed=seed)
    fe = exact.objectives[exact.on_front]
    fg = ga.objectives[ga.on_front]
    lo = fe.min(axis=0)
    span = np.ptp(np.vstack([fe, fg]), axis=0) + 1e-9
    ref = np.full(fe.shape[1], 1.1)
    hv_e = hypervolume((fe - lo) / span, ref)
    hv_g = hypervolume((fg - lo) / span, ref)
    assert ga.method == "nsga2"
    assert hv_g >= 0.99 * hv_e


def test_known_answer_only_a_thin_plane_meets():
    # One via to ground across 50 ohm at 800 MHz. The requirement is what a via of 0.2 mm
    # reaches, computed independently here from Goldfarb-Pucel (IEEE MGWL 1991, eq. 3) and
    # the shunt formula S21 = 2Z/(2Z+Z0): only stackups with the plane <= 0.2 mm under the
    # top can meet it.
    from stackopt.physics.constants import MU0

    r_via, h = 0.15e-3, 0.2e-3
    lgp = MU0 / (2 * np.pi) * (h * np.log((h + np.hypot(r_via, h)) / r_via)
                               + 1.5 * (r_via - np.hypot(r_via, h)))
    z = 0.001 + 2j * np.pi * 800e6 * lgp
    need = -20 * np.log10(abs(2 * z / (2 * z + 50.0))) - 0.01
    sc = scenario(SHORT, layers=(2, 4, 6), req=(("800 MHz", f"{need} dB"),),
                  drills=("0.3 mm",), vias=(1,), window="1.6 mm")
    r = optimize(sc, TABLE)
    pick = r.picks["cheapest_meeting_requirements"]
    assert pick is not None
    depth = r.evaluation.geometry.via_height
    assert depth[pick] <= 0.2e-3
    assert np.all(depth[r.meets] <= 0.2e-3 + 1e-12)
    assert np.any(r.feasible & (depth > 0.2e-3))  # deeper planes exist but fail
    assert r.picks["best_two_layer"] is not None
    assert not r.meets[r.picks["best_two_layer"]]


def test_same_seed_same_table():
    sc = scenario(symmetric=False, window="1.6 mm")
    a = optimize(sc, TABLE, method="nsga2", seed=7, budget=3000)
    b = optimize(sc, TABLE, method="nsga2", seed=7, budget=3000)
    assert a.table.equals(b.table)
    e1 = optimize(sc, TABLE, method="exact")
    e2 = optimize(sc, TABLE, method="exact")
    assert e1.table.equals(e2.table)


def test_summary_contract():
    r = optimize(scenario(window="1.6 mm"), TABLE)
    s = r.to_summary()
    for k in ("scenario", "currency", "quantity", "method", "space_size", "evaluated",
              "front", "picks"):
        assert k in s
    assert s["method"] in ("exact", "nsga2")
    assert set(s["picks"]) == {"cheapest_robust", "cheapest_meeting_requirements",
                               "cheapest_two_layer",
                               "best_two_layer", "best_overall"}
    rec = s["front"][0]
    for k in ("id", "layers", "thickness_m", "ground_plane_depth_m", "unit_cost", "lot_cost",
              "lead_time_days", "margin_dB", "meets_requirements", "attenuation_dB", "stackup"):
        assert k in rec
    assert all(isinstance(v, float) and v > 0 for v in rec["attenuation_dB"].values())
    assert set(rec["attenuation_dB"]) == {"1800000000", "2700000000"}
    for layer in rec["stackup"]:
        assert {"kind", "material", "thickness_m"} <= set(layer)
        assert ("role" in layer) or ("er" in layer)


@pytest.mark.parametrize("k", [2, 3, 4])
def test_nondominated_matches_pairwise_definition(k):
    # the definition of Pareto dominance (minimisation), checked pairwise
    rng = np.random.default_rng(k)
    for _ in range(50):
        F = rng.integers(0, 5, (int(rng.integers(1, 40)), k)).astype(float)
        ref = np.array([not (np.all(F <= F[i], 1) & np.any(F < F[i], 1)).any()
                        for i in range(len(F))])
        assert (nondominated(F) == ref).all()
