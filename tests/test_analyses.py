"""Robust margin, tolerance Monte Carlo and limiting mechanism (stackopt.analyses).

Outside references: the yield of a build whose margin falls monotonically with one
toleranced thickness is the probability that the thickness stays below the crossing,
i.e. the normal CDF (``scipy.special.ndtr``) or the uniform CDF at that point; the
Monte Carlo must land within its binomial standard error sqrt(p(1-p)/n) (PHYSICS.md).
Robust margins are recomputed per candidate through the whole-matrix nodal solve (no
phenotype sharing, no reduced solve). Scenarios are invented demo data.
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
from stackopt.analyses.limits import pick_limits
from stackopt.analyses.tolerances import (
    build_draws,
    draw,
    monte_carlo,
    part_impedances,
)
from stackopt.circuit import compile_circuit, solve
from stackopt.circuit.metrics import attenuation_db
from stackopt.inputs.scenario import load_scenario
from stackopt.search.exact import exact_candidates

ROOT = Path(__file__).resolve().parents[1]
TWO = ROOT / "scenarios" / "two_layer_only.yaml"
TABLE = ROOT / "cost_tables" / "quickturn.yaml"


@pytest.fixture(scope="module")
def two_layer():
    return stackopt.optimize(TWO, TABLE)


def test_robust_margin_is_the_minimum_over_models_recomputed_per_candidate(two_layer):
    r = two_layer
    p = r.problem
    models = p.scenario.search.robustness.models
    assert len(models) >= 2
    rng = np.random.default_rng(3)
    picks = rng.choice(r.n, size=6, replace=False)
    for i in picks:  # a few candidates, each solved alone (the independent path)
        gb = p.ground_batch(p.space.geometry(r.candidates.take(np.array([i]))))
        worst = math.inf
        for m in models:
            att = attenuation_db(solve(p.compiled, p.freqs, gb, m, method="mna"))[0]
            margin = min(att[np.isclose(p.freqs, rq.frequency)][0] - rq.min_attenuation
                         for rq in p.scenario.requirements)
            worst = min(worst, margin)
        assert r.robust_margin[i] == pytest.approx(worst, abs=1e-6)
    rec = r.record(int(r.front_order[0]))
    assert "robust_margin_dB" in rec and "margin_by_model_dB" in rec


def test_cheapest_robust_meets_under_every_model_and_the_yield_target(two_layer):
    r = two_layer
    target = r.problem.scenario.search.robustness.yield_target
    i = r.picks["cheapest_robust"]
    if i is None:  # then nothing that meets under every model reaches the target
        ok = r.robust_meets & (r.yield_or_low >= target)
        assert not ok.any()
        return
    assert r.robust_meets[i] and r.yields[i] >= target
    cheaper = r.robust_meets & (r.evaluation.unit_cost < r.evaluation.unit_cost[i] - 1e-9)
    assert np.all(r.yields[cheaper] < target)  # every cheaper robust one was sampled


@pytest.mark.parametrize("dist", ["normal", "uniform"])
def test_yield_matches_the_analytic_distribution(tmp_path, dist):
    rb = {"samples": 400, "thickness": "10 %", "dk": 0, "etch": "0 mm", "drill": "0 mm",
          "distribution": dist}
    p0 = shunt_via_problem(tmp_path, 10.0, rb)
    reps = exact_candidates(p0).representatives
    deepest = int(np.argmax(p0.space.geometry(reps).via_height))  # far above resonance
    g = p0.space.geometry(reps.take(np.array([deepest])))
    gb = p0.ground_batch(g)

    def att(x: float) -> float:  # attenuation with the dielectric (1 + x) thick
        b = replace(gb, height=gb.height * (1 + x))
        return float(attenuation_db(solve(p0.compiled, p0.freqs, b))[0, 0])

    assert att(-0.05) > att(0.0) > att(0.05)  # monotone: thicker is worse here
    x = 0.03  # the requirement is met exactly at +3 % thickness
    p = shunt_via_problem(tmp_path, att(x), rb)
    mc = monte_carlo(p, g, np.zeros((1, 0)), "goldfarb-pucel", build_draws(p))
    n = rb["samples"]
    exact = float(ndtr(x / (0.10 / 3))) if dist == "normal" else (x + 0.10) / 0.20
    se = math.sqrt(exact * (1 - exact) / n)
    assert mc.yields[0] == pytest.approx(exact, abs=3 * se + 1 / n)
    again = monte_carlo(p, g, np.zeros((1, 0)), "goldfarb-pucel", build_draws(p))
    assert np.array_equal(mc.margin, again.margin)  # a seed reproduces bit for bit
    other = monte_carlo(p, g, np.zeros((1, 0)), "goldfarb-pucel", build_draws(p, seed=2))
    assert not np.array_equal(mc.margin, other.margin)


def test_zero_tolerances_reproduce_the_nominal_margin(two_layer):
    r = two_layer
    p = r.problem
    rb = p.scenario.search.robustness.model_copy(update={"samples": 16, "thickness": 0.0,
                                                         "dk": 0.0, "etch": 0.0,
                                                         "drill": 0.0})
    d = draw(rb, p.space.n_slots, np.zeros(len(p.compiled.names)), seed=1)
    idx = np.flatnonzero(r.on_front)[:4]
    g = p.space.geometry(r.candidates.take(idx))
    mc = monte_carlo(p, g, r.evaluation.widths[idx], p.scenario.search.via_model, d)
    assert np.allclose(mc.margin, r.evaluation.margin[idx, None], atol=1e-6)
    # with no spread the line impedance is the synthesis target
    assert np.allclose(mc.impedance_min, p.scenario.lines[0].impedance, rtol=1e-3)


def test_part_values_scale_as_a_recompiled_circuit(tmp_path):
    sc = load_scenario(TWO)
    f = np.array([1e9, 5e9])
    dev = np.zeros((1, len(compile_circuit(sc.circuit).names)))
    dev[0, 0] = 0.05  # C1 five per cent high
    z = part_impedances(sc.circuit, f, dev)[0]
    from stackopt.analyses.tolerances import expanded_circuit
    exp = expanded_circuit(sc.circuit)
    els = list(exp.elements)
    els[0] = els[0].model_copy(update={"value": els[0].value * 1.05})
    ref = compile_circuit(exp.model_copy(update={"elements": tuple(els)})).impedance(f)
    assert np.allclose(z, ref, rtol=1e-12)


def test_a_circuit_that_fails_with_ideal_grounds_is_named(tmp_path):
    def edit(d):  # 2 nH of ESL per shunt capacitor: the parts fail on their own
        d["circuit"]["filter"]["capacitor"] = {"esl": "2 nH"}
    path = edited_copy(tmp_path, "s.yaml", TWO, edit)
    r = stackopt.optimize(path, TABLE)
    p = r.problem
    ideal = attenuation_db(solve(p.compiled, p.freqs))[0]  # reference: ideal grounds
    assert any(ideal[np.isclose(p.freqs, rq.frequency)][0] < rq.min_attenuation
               for rq in p.scenario.requirements)
    lim = pick_limits(r)
    assert lim and all(v["mechanism"] == "circuit" for v in lim.values())
    assert all("Even with ideal grounds" in v["sentence"]
               and "no stackup can fix that" in v["sentence"] for v in lim.values())
    assert r.to_summary()["limits"] == r.limits


@pytest.mark.slow
def test_demo_picks_hold_under_every_model():
    r = stackopt.optimize(ROOT / "scenarios" / "harmonic_lowpass.yaml")
    s = r.to_summary()
    for name in ("best_overall", "cheapest_robust"):
        rec = s["picks"][name]
        assert rec is not None and rec["model_spread_dB"] < 3.0
        assert not rec["model_dependent"]
    for rec in s["front"]:  # any thick-prepreg board still ranked is marked
        if abs(rec["ground_plane_depth_m"] - 0.345e-3) < 1e-6:
            assert rec["model_dependent"] == (rec["model_spread_dB"] > 3.0)
    from stackopt.outputs.prepregs import prepreg_summary

    rows = [p["most_robust"] | {"thickness_m": p["thickness_m"]} for p in prepreg_summary(r)
            if p["most_robust"] is not None]  # summary.json 'prepregs': each board marked
    assert [x for x in rows if abs(x["thickness_m"] - 0.345e-3) < 1e-6]  # 2116 x3 ranked
    for row in rows:
        assert row["model_spread_dB"] is not None
        assert row["model_dependent"] == (row["model_spread_dB"] > 3.0)
    assert set(s["limits"]) <= set(s["picks"])
    for v in s["limits"].values():
        assert v["mechanism"] in ("stackup_self_inductance", "ground_coupling", "circuit",
                                  "none")


def test_report_and_plot_carry_the_robustness(two_layer):
    from stackopt.outputs.plots import figure_bytes
    from stackopt.outputs.plots_robust import plot_robustness
    from stackopt.outputs.report import report_document

    r = two_layer
    png = figure_bytes(plot_robustness(r), "png")
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    blocks = report_document(r)
    assert ("img", "robustness") in [b[:2] for b in blocks]
    assert any(b[0] == "h2" and "uncertainty" in b[1] for b in blocks)


def _marked(r, i: int, spread_db: float):
    """``r`` with candidate ``i``'s margins over the via models ``spread_db`` apart."""
    spread = {m: v.copy() for m, v in r.spread.items()}
    for m in spread:
        spread[m][i] = r.evaluation.margin[i]
    spread[next(iter(spread))][i] += spread_db
    return replace(r, spread=spread)


def test_a_model_dependent_pick_is_marked_wherever_it_is_shown(two_layer):
    """A spread over the via models above 3 dB (the threshold's one owner) marks the pick
    in summary.json, the console, the report and every plot that names picks; 2.9 dB
    does not."""
    import matplotlib.pyplot as plt

    from stackopt.cli.optimize import say_result
    from stackopt.outputs.plots import plot_front, plot_response
    from stackopt.outputs.plots_robust import plot_robustness
    from stackopt.outputs.plots_stackup import plot_costs, plot_stackups
    from stackopt.outputs.report import report_document
    from stackopt.outputs.robust_text import MODEL_MARK
    from stackopt.search.records import MODEL_DEPENDENT_DB

    r = two_layer
    i = next(i for i in r.picks.values() if i is not None)
    assert MODEL_DEPENDENT_DB == 3.0
    calm = _marked(r, i, 2.9)  # not marked
    loud = _marked(r, i, 3.1)  # marked
    assert calm.record(i)["model_spread_dB"] == pytest.approx(2.9)
    assert not calm.record(i)["model_dependent"]
    assert loud.record(i)["model_dependent"] and loud.model_dependent[i]

    def texts(res) -> dict[str, str]:
        lines: list[str] = []
        say_result(res, lines.append)
        out = {"console": "\n".join(lines), "report": repr(report_document(res))}
        for make in (plot_front, plot_response, plot_robustness, plot_stackups, plot_costs):
            fig = make(res)
            words = [fig.get_suptitle()]
            for ax in fig.axes:
                words += ax.get_legend_handles_labels()[1]
                words += [t.get_text() for t in ax.get_yticklabels() + ax.get_xticklabels()]
                words.append(ax.get_title())
            out[make.__name__] = "\n".join(words)
            plt.close(fig)
        return out

    mark = MODEL_MARK.strip()
    for where, text in texts(loud).items():
        assert mark in text, where
    others = [j for j in r.picks.values() if j is not None and j != i]
    assert not r.model_dependent[others].any()  # so the mark can only come from pick i
    for where, text in texts(calm).items():
        assert mark not in text, where
