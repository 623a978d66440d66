"""Tolerance Monte Carlo: per-material thickness tolerances and the impedance spread of
every line type (stackopt.analyses.tolerances).

Outside references:
- the yield of a build whose margin falls monotonically with one toleranced thickness is
  the probability that the thickness stays below the crossing: the normal CDF
  (``scipy.special.ndtr``, the tolerance read as 3 sigma) or the uniform CDF; the Monte
  Carlo must land within its binomial standard error sqrt(p (1 - p) / n);
- microstrip impedance over the drawn builds against scikit-rf's ``MLine``
  (Hammerstad-Jensen, qucs compatibility, no dispersion) at each build's height, Dk and
  etched width;
- a line between two planes in one homogeneous dielectric is a TEM line, so scaling the
  Dk of every layer by (1 + d) scales its impedance by exactly 1 / sqrt(1 + d) (D. M.
  Pozar, Microwave Engineering, 4th ed., Wiley 2012, sec. 3.8 on stripline as a TEM
  line).
Scenarios and cost tables are the invented demo files, edited inline.
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from scenario_support import edited_copy, shunt_via_problem
from scipy.special import ndtr

import stackopt
from stackopt.analyses.tolerances import build_draws, built, layer_tolerances, monte_carlo
from stackopt.circuit import solve
from stackopt.circuit.metrics import attenuation_db
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.search.exact import exact_candidates
from stackopt.search.problem import Problem
from stackopt.search.space import Candidates

ROOT = Path(__file__).resolve().parents[1]
TWO = ROOT / "scenarios" / "two_layer_only.yaml"
MIXED = ROOT / "scenarios" / "lines_mixed.yaml"
TABLE = ROOT / "cost_tables" / "quickturn.yaml"


def _table(tmp_path: Path, prepreg_tol: dict[str, str], core_tol: str | None = None,
           name: str = "t.yaml") -> Path:
    def edit(d):
        for p in d["materials"]["prepregs"]:
            if p["glass"] in prepreg_tol:
                p["thickness_tolerance"] = prepreg_tol[p["glass"]]
        if core_tol is not None:
            for c in d["materials"]["cores"]:
                c["thickness_tolerance"] = core_tol
    return edited_copy(tmp_path, name, TABLE, edit)


@pytest.mark.parametrize("dist", ["normal", "uniform"])
def test_per_material_tolerance_gives_the_analytic_yield(tmp_path, dist):
    rb = {"samples": 400, "dk": 0, "etch": "0 mm", "drill": "0 mm", "distribution": dist}
    tol = 0.03  # the 2116 prepreg's own; the fab's default stays 10 %
    table = _table(tmp_path, {"2116": "3 %"})
    p0 = shunt_via_problem(tmp_path, 10.0, layers=4, table=table, robustness=rb)
    reps = exact_candidates(p0).representatives
    g_all = p0.space.geometry(reps)
    pp = p0.table.material_index("pp-2116")
    one_ply = np.isclose(g_all.via_height, 0.115e-3, rtol=1e-6)
    rows = np.flatnonzero((g_all.slot_material[:, 0] == pp) & one_ply)
    assert len(rows)  # a board whose vias cross one 2116 ply to L2
    g = p0.space.geometry(reps.take(rows[:1]))
    assert layer_tolerances(p0, g)[0, 0] == pytest.approx(tol)
    assert p0.table.capabilities.thickness_tolerance == pytest.approx(0.10)
    gb = p0.ground_batch(g)

    def att(x: float) -> float:  # attenuation with that prepreg (1 + x) thick
        b = replace(gb, height=gb.height * (1 + x))
        return float(attenuation_db(solve(p0.compiled, p0.freqs, b))[0, 0])

    rising = att(-0.02) < att(0.0) < att(0.02)  # below the series resonance here
    assert rising or att(-0.02) > att(0.0) > att(0.02)  # monotone either way
    x = 0.02  # the requirement is met exactly at +2 % thickness

    def cdf(t: float) -> float:  # P(thickness deviation <= x) at tolerance t
        c = float(ndtr(x / (t / 3))) if dist == "normal" else (x + t) / (2 * t)
        return 1.0 - c if rising else c

    p = shunt_via_problem(tmp_path, att(x), layers=4, table=table, robustness=rb)
    mc = monte_carlo(p, g, np.zeros((1, 0)), "goldfarb-pucel", build_draws(p))
    n = rb["samples"]
    exact = cdf(tol)
    se = math.sqrt(exact * (1 - exact) / n)
    assert mc.yields[0] == pytest.approx(exact, abs=3 * se + 1 / n)
    # with the fab's 10 % the same board would have a clearly different yield
    assert abs(cdf(0.10) - exact) > 6 * se
    # another material's tolerance (every core, the other prepregs) changes nothing
    other = _table(tmp_path, {"106": "20 %", "1080": "1 %", "7628": "40 %"}, "25 %",
                   name="other.yaml")
    table2 = edited_copy(tmp_path, "t2.yaml", other, lambda d: [
        p.update(thickness_tolerance="3 %") for p in d["materials"]["prepregs"]
        if p["glass"] == "2116"])
    p2 = Problem(p.scenario, load_cost_table(table2))
    mc2 = monte_carlo(p2, g, np.zeros((1, 0)), "goldfarb-pucel", build_draws(p2))
    assert np.array_equal(mc.margin, mc2.margin)
    # a scenario tolerance overrides every material's
    over = p.scenario.model_copy(update={"search": p.scenario.search.model_copy(update={
        "robustness": p.scenario.search.robustness.model_copy(update={"thickness": 0.1})})})
    d_over = build_draws(Problem(over, p.table))
    assert np.all(layer_tolerances(p, g, d_over.thickness_tolerance) == 0.1)


def test_every_layer_draws_its_own_thickness(tmp_path):
    table = _table(tmp_path, {"2116": "3 %"}, "6 %")
    p = shunt_via_problem(tmp_path, 10.0, layers=4, table=table, robustness={"samples": 64})
    reps = exact_candidates(p).representatives
    g = p.space.geometry(reps.take(np.arange(min(8, len(reps)))))
    d = build_draws(p)
    gs, k = built(p, g, d)
    rel = gs.stack.dielectric / np.repeat(g.stack.dielectric, d.n, axis=0) - 1.0
    tol = np.repeat(layer_tolerances(p, g), d.n, axis=0)
    used = np.repeat(g.stack.dielectric, d.n, axis=0) > 0
    assert np.allclose(rel[used], (d.thickness[k][:, :tol.shape[1]] * tol)[used])
    assert not np.allclose(rel[:, 0], rel[:, 1])  # layers are drawn independently


# ---- impedance spread of every line type ------------------------------------------------
@pytest.fixture(scope="module")
def mixed():
    return stackopt.optimize(MIXED)


def test_summary_and_report_carry_every_lines_impedance_range(mixed):
    r = mixed
    s = r.to_summary()
    names = [ln.name for ln in r.problem.scenario.lines]
    types = {ln.type for ln in r.problem.scenario.lines}
    assert {"microstrip", "stripline", "diff-microstrip"} <= types
    recs = list(s["front"]) + [v for v in s["picks"].values() if v is not None]
    assert recs
    target = {ln.name: ln.target for ln in r.problem.scenario.lines}
    for rec in recs:
        zr = rec["impedance_range_ohm"]  # keyed by line and layer: every layer it runs on
        assert set(zr) == set(rec["line_widths_m"])
        assert {k.split("@")[0] for k in zr} == set(names)
        for route, (lo, hi) in zr.items():
            assert lo is not None and hi is not None, (rec["id"], route)
            assert lo < target[route.split("@")[0]] < hi  # the builds straddle the target
    from stackopt.outputs.report import report_document

    text = repr(report_document(r))
    assert all(f"{route} " in text for rec in recs for route in rec["impedance_range_ohm"])
    assert "ohm" in text


def test_zero_tolerance_gives_the_target_on_every_line_type(mixed):
    r = mixed
    p = r.problem
    rb = p.scenario.search.robustness.model_copy(update={
        "samples": 16, "thickness": 0.0, "dk": 0.0, "etch": 0.0, "drill": 0.0})
    d = build_draws(Problem(p.scenario.model_copy(update={
        "search": p.scenario.search.model_copy(update={"robustness": rb})}), p.table))
    idx = np.flatnonzero(r.on_front)
    g = p.space.geometry(r.candidates.take(idx))
    mc = monte_carlo(p, g, r.evaluation.widths[idx], p.scenario.search.via_model, d)
    target = np.broadcast_to([p.scenario.lines[rt.line].target for rt in p.routes],
                             mc.impedance_min.shape)
    here = r.evaluation.line_layers[idx] >= 0  # the layers that carry each line there
    assert (np.isfinite(r.evaluation.widths[idx]) == here).all()
    assert np.allclose(mc.impedance_min[here], target[here], rtol=1e-5)
    assert np.allclose(mc.impedance_max[here], target[here], rtol=1e-5)
    assert np.isnan(mc.impedance_min[~here]).all()


def test_stripline_spread_under_dk_alone_is_the_tem_scaling(mixed):
    """Only the Dk varies: a line between planes scales as 1 / sqrt(1 + d)."""
    r = mixed
    p = r.problem
    rb = p.scenario.search.robustness.model_copy(update={
        "samples": 64, "thickness": 0.0, "dk": 0.08, "etch": 0.0, "drill": 0.0})
    sc = p.scenario.model_copy(update={"search": p.scenario.search.model_copy(update={
        "robustness": rb})})
    d = build_draws(Problem(sc, p.table))
    idx = np.flatnonzero(r.on_front)[:6]
    g = p.space.geometry(r.candidates.take(idx))
    mc = monte_carlo(p, g, r.evaluation.widths[idx], p.scenario.search.via_model, d)
    j = [ln.type for ln in p.scenario.lines].index("stripline")
    z0 = p.scenario.lines[j].target
    assert np.allclose(mc.impedance_min[:, j], z0 / math.sqrt(1 + d.dk.max()), rtol=1e-5)
    assert np.allclose(mc.impedance_max[:, j], z0 / math.sqrt(1 + d.dk.min()), rtol=1e-5)


def test_microstrip_spread_matches_scikit_rf(tmp_path):
    skrf = pytest.importorskip("skrf")
    from skrf.media import MLine

    sc = edited_copy(tmp_path, "two.yaml", TWO, lambda d: d["space"].update(
        mitigations=[]))  # no coplanar pour: the line stays a microstrip
    p = Problem(load_scenario(sc), load_cost_table(TABLE))
    reps = exact_candidates(p).representatives
    g = p.space.geometry(reps.take(np.arange(min(3, len(reps)))))
    widths = p.line_widths(g)
    d = build_draws(p)
    mc = monte_carlo(p, g, widths, p.scenario.search.via_model, d)
    gs, k = built(p, g, d)
    freq = skrf.Frequency(1, 1, 1, unit="GHz")
    for i in range(len(g)):  # a few candidates, each build through scikit-rf
        rows = np.arange(i * d.n, (i + 1) * d.n)
        h, er = gs.trace_height[rows], gs.trace_er[rows]
        w = widths[i, 0] + d.etch
        z = [float(np.real(MLine(frequency=freq, w=w[s], h=h[s], t=g.copper[i], ep_r=er[s],
                                 model="hammerstadjensen", disp="none", diel="frequencyinvariant",
                                 rough=0, tand=0, compatibility_mode="qucs").z0_characteristic[0]))
             for s in range(d.n)]
        assert mc.impedance_min[i, 0] == pytest.approx(min(z), rel=1e-6)
        assert mc.impedance_max[i, 0] == pytest.approx(max(z), rel=1e-6)


def test_equal_yield_keys_give_equal_builds(tmp_path):
    """The cheapest-robust search samples one candidate per yield key; candidates sharing
    it (boards that differ only below the ground plane) get the same margin in every
    build, and boards whose via crosses differently split layers do not share it."""
    from stackopt.analyses.tolerances import yield_key
    from stackopt.rows import unique_rows

    table = _table(tmp_path, {"2116": "3 %"}, "6 %")
    p = shunt_via_problem(tmp_path, 10.0, layers=4, table=table, robustness={"samples": 32})
    reps = exact_candidates(p).representatives
    g = p.space.geometry(reps)
    i = int(np.flatnonzero(g.stack.ground_plane(0)[:, 0] == 1)[0])  # vias end on L2
    one = reps.take(np.array([i]))
    cores = len(p.space.options["core"])
    variants = Candidates.concat([one.with_slot(1, o) for o in range(cores)])
    gv = p.space.geometry(variants)
    assert len(np.unique(gv.slot_material[:, 1])) == cores  # every core below the plane
    first, _ = unique_rows(yield_key(p, gv))
    assert len(first) == 1
    d = build_draws(p)
    mc = monte_carlo(p, gv, np.zeros((cores, 0)), "goldfarb-pucel", d)
    assert np.array_equal(mc.margin, np.broadcast_to(mc.margin[0], mc.margin.shape))
    # vias to L3 through 0.05 + 0.2 mm and through 0.1 + 0.15 mm: same nominal height,
    # different builds, different keys
    l3 = np.flatnonzero(g.stack.ground_plane(0)[:, 0] == 2)
    h = np.round(g.via_height[l3] * 1e9)
    pair = next(l3[h == v] for v in np.unique(h) if np.sum(h == v) >= 2
                and len({tuple(r) for r in g.stack.dielectric[l3[h == v], :2]}) >= 2)[:2]
    gp = p.space.geometry(reps.take(pair))
    assert len(unique_rows(yield_key(p, gp))[0]) == 2
    mp = monte_carlo(p, gp, np.zeros((2, 0)), "goldfarb-pucel", d)
    assert not np.array_equal(mp.margin[0], mp.margin[1])


def test_normal_quantile_against_scipy_ndtri():
    # Wichura's AS 241 in numpy against scipy's ndtri (Cephes), both tails down to
    # 1e-300 and the centre; the inverse of scipy's ndtr; the limits
    from scipy.special import ndtri

    from stackopt.analyses.tolerances import normal_quantile

    p = np.concatenate([np.logspace(-300, -1, 3000), np.linspace(0.01, 0.99, 2001),
                        1.0 - np.logspace(-15, -1, 500)])
    np.testing.assert_allclose(normal_quantile(p), ndtri(p), rtol=2e-15, atol=1e-15)
    z = np.linspace(-8.0, 3.0, 111)  # above 3, p = ndtr(z) near 1 has lost the digits
    np.testing.assert_allclose(normal_quantile(ndtr(z)), z, rtol=1e-9, atol=1e-9)
    assert normal_quantile(0.5) == 0.0
    assert list(normal_quantile(np.array([0.0, 1.0]))) == [-np.inf, np.inf]
    assert normal_quantile(0.975) == pytest.approx(1.959963984540054, rel=1e-15)  # from memory
