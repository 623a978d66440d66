"""Controlled-impedance lines on every layer: scenario schema, per-candidate widths and
violations, the exact search with inner lines, and the impedance table in the outputs.

Independent checks: the recommended stackup's widths are re-solved with the test-only
field solver tests/reference/fd2d.py (node-centred finite volumes, energy capacitance;
independent of stackopt) on the cross-section read back from selected.yaml.
"""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import yaml
from reference import fd2d
from test_search import TABLE, brute_front, front_points, scenario

from stackopt.cli.main import main
from stackopt.model.scenario import Scenario
from stackopt.search.api import optimize
from stackopt.search.exact import enumerate_all
from stackopt.search.problem import Problem

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "scenarios" / "lines_mixed.yaml"

THREE = (
    {"name": "ant50", "type": "microstrip", "layer": "L1", "impedance": "50 ohm"},
    {"name": "clk50", "type": "stripline", "layer": "inner", "impedance": "50 ohm"},
    {"name": "usb90", "type": "diff-microstrip", "differential": "90 ohm",
     "spacing": "0.2 mm"},
)


def _demo(layers):
    raw = yaml.safe_load(DEMO.read_text())
    raw["space"]["layers"] = list(layers)
    raw.pop("cost_table")
    return Scenario.model_validate(raw)


def test_every_candidate_carries_all_three_lines():
    # 50 ohm microstrip on L1, 50 ohm stripline inside, 90 ohm pair: six-layer boards have
    # an inner signal layer between planes, so every candidate gets all three lines, each
    # on every layer where its type applies (the stripline on each inner signal layer, the
    # pair on both outer layers)
    p = Problem(_demo([6]), TABLE)
    names = [rt.name for rt in p.routes]
    assert names == ["ant50@L1", "clk50@L3", "clk50@L4", "usb90@L1", "usb90@L6"]
    c = enumerate_all(p.space)
    g = p.space.geometry(c)
    w, layers = p.line_widths(g), p.line_layers(g)
    assert w.shape == layers.shape == (len(c), 5)
    assert p.line_present(layers).all()
    assert np.isfinite(w[layers >= 0]).all() and np.isnan(w[layers < 0]).all()
    arr = np.array([a.name for a in p.space.arrangements])[c.arr]
    # S-G-S-S-P-S: L3 and L4 both lie between G (L2) and P (L5); S-G-S-P-G-S: L3 only
    both = arr == "S-G-S-S-P-S"
    assert (layers[both] == [0, 2, 3, 0, 5]).all()
    assert (layers[~both] == [0, 2, -1, 0, 5]).all()
    # the pair's spacing is checked against the fab's minimum space
    ev = p.evaluate(c.take(np.arange(50)))
    assert "min_space" in ev.violations
    assert {"line_clk50@L4_unreachable", "line_usb90@L6_too_wide"} <= set(ev.violations)


def test_absent_layer_is_no_violation_and_each_layer_has_its_own_constraints():
    # a microstrip without 'layer' runs on both outer layers; an asymmetric board puts a
    # different dielectric under the bottom one: its own width, its own max_width check.
    # A layer of the space the board lacks (L6 of a four-layer board) is no violation.
    sc = scenario(layers=(4, 6), symmetric=False, lines=(
        {"name": "m", "type": "microstrip", "impedance": "50 ohm", "max_width": "0.3 mm"},))
    p = Problem(sc, TABLE)
    assert [rt.name for rt in p.routes] == ["m@L1", "m@L4", "m@L6"]
    ev = p.evaluate(enumerate_all(p.space))
    layers, w = ev.line_layers, ev.widths
    four = ev.geometry.layers == 4
    assert (layers[four, 2] == -1).all() and not (ev.violations["line_m@L6_too_wide"][four]
                                                  > 0).any()
    assert not (ev.violations["line_m_no_layer"] > 0).any()
    bottom_only = (w[:, 0] <= 0.3e-3) & (np.nan_to_num(w[:, 1]) > 0.3e-3)
    assert bottom_only.any()  # the bottom dielectric alone breaks the limit somewhere
    assert (ev.violations["line_m@L4_too_wide"][bottom_only] > 0).all()
    assert not (ev.violations["line_m@L1_too_wide"][bottom_only] > 0).any()
    assert not ev.feasible[bottom_only].any()


def test_stripline_has_no_layer_on_four_layer_boards_only():
    # S-G-P-S has no inner signal layer: a named violation for those candidates only
    p = Problem(_demo([4, 6]), TABLE)
    c = enumerate_all(p.space)
    ev = p.evaluate(c)
    no = ev.violations["line_clk50_no_layer"] > 0
    four = ev.geometry.layers == 4
    assert no[four].all() and not no[~four].any()
    assert np.isnan(ev.widths[four, 1]).all() and np.isfinite(ev.widths[four, 0]).all()


def test_exact_search_is_exact_with_an_inner_line():
    # the stripline's width depends on dielectrics below the top ground plane (the exact
    # search's tail); a max_width makes some of them infeasible: exact must equal brute
    sc = scenario(layers=(4, 6), lines=(
        {"name": "s50", "type": "stripline", "impedance": "50 ohm", "max_width": "0.2 mm"},))
    r = optimize(sc, TABLE, method="exact")
    brute, n = brute_front(sc)
    assert front_points(r) == brute and r.evaluated < n


def test_demo_outputs_show_every_line(tmp_path):
    out = tmp_path / "out"
    assert main(["optimize", str(DEMO), "--out", str(out)]) == 0
    summary = json.loads((out / "summary.json").read_text())
    pick = summary["picks"]["cheapest_meeting_requirements"]
    assert {"ant50@L1", "clk50@L3", "usb90@L1"} <= set(pick["line_widths_m"])
    assert pick["line_spacings_m"]["usb90@L1"] == pytest.approx(0.2e-3)
    rows = {r["name"]: r for r in pick["lines"]}
    assert {r["line"] for r in pick["lines"]} == {"ant50", "clk50", "usb90"}
    assert all(r["name"] == f"{r['line']}@{r['layer']}" for r in pick["lines"])
    for r in rows.values():
        assert r["z_ohm"] == pytest.approx(r["target_ohm"], rel=1e-4)  # closed form
        assert r["width_field_m"] is not None and r["z_field_ohm"] is not None
    report = (out / "report.md").read_text()
    assert "## Controlled-impedance lines" in report
    for name in rows:
        assert f"| {name} | {name.split('@')[1]} |" in report
    sel = yaml.safe_load((out / "selected.yaml").read_text())
    ci = {r["name"]: r for r in sel["controlled_impedance"]}
    assert ci["usb90@L1"]["differential"] == "90 ohm"
    assert ci["usb90@L1"]["spacing"] == "0.2 mm"
    assert ci["clk50@L3"]["layer"] == "L3" and ci["clk50@L3"]["solver"] == "field"
    assert sel["solder_mask"] == {"thickness": "20 um", "dk": 3.5}
    _independent_check(sel, ci["clk50@L3"])


def _mm(text: str) -> float:
    value, unit = text.split()
    return float(value) * {"mm": 1e-3, "um": 1e-6}[unit]


def _independent_check(sel, ci):
    # the field-refined widths of selected.yaml, re-solved by the independent test solver
    # on the cross-section read from the same file: within 1 % of each target
    layers = sel["layers"]
    cu = [k for k, r in enumerate(layers) if r["kind"] == "copper"]
    l3 = cu[2]
    t = _mm(layers[l3]["thickness"])
    below, above = layers[l3 + 1], layers[l3 - 1]  # L4 is signal: plane L5 below it
    assert layers[cu[4]]["role"] in ("power", "ground") and layers[cu[1]]["role"] == "ground"
    h_lo = sum(_mm(layers[k]["thickness"]) for k in range(l3 + 1, cu[4]))
    h_hi = _mm(above["thickness"])
    er_lo = np.average([r["dk"] for r in layers[l3 + 1:cu[4]] if r["kind"] != "copper"],
                       weights=[_mm(r["thickness"]) for r in layers[l3 + 1:cu[4]]
                                if r["kind"] != "copper"])
    er_hi = above["dk"]
    assert below["kind"] != "copper"
    w = _mm(ci["width"])
    b = h_lo + t + h_hi
    base = fd2d.stripline_box(w, b, er_lo, t, offset=h_lo + t / 2 - b / 2)
    diel = (fd2d.Rect(0, base.x_max, 0, h_lo, er_lo),
            fd2d.Rect(0, base.x_max, h_lo, b, er_hi))
    z = fd2d.solve_line(replace(base, dielectrics=diel))[0].z0
    assert z == pytest.approx(50.0, rel=0.01)


BAD = [
    ({"name": "s", "type": "stripline", "impedance": "50 ohm"}, (2,), "inner layer"),
    ({"name": "s", "type": "microstrip", "layer": "L9", "impedance": "50 ohm"}, (2, 4),
     "L9"),
    ({"name": "d", "type": "diff-microstrip", "differential": "90 ohm"}, (2,), "spacing"),
    ({"name": "d", "type": "diff-microstrip", "impedance": "50 ohm", "spacing": "0.2 mm"},
     (2,), "differential"),
    ({"name": "s", "type": "stripline", "layer": "outer", "impedance": "50 ohm"}, (4,),
     "inner"),
    ({"name": "m", "type": "microstrip", "layer": "inner", "impedance": "50 ohm"}, (4,),
     "outer"),
    ({"name": "m", "type": "microstrip", "layer": "top", "impedance": "50 ohm"}, (4,),
     "layer name"),
    ({"name": "m", "type": "microstrip", "impedance": "50 ohm", "spacing": "0.1 mm"}, (4,),
     "diff"),
]


@pytest.mark.parametrize("line,layers,words", BAD, ids=[b[2] for b in BAD])
def test_bad_lines_are_one_line_errors(tmp_path, capsys, line, layers, words):
    raw = yaml.safe_load((ROOT / "scenarios" / "harmonic_lowpass.yaml").read_text())
    raw["cost_table"] = str(ROOT / "cost_tables" / "quickturn.yaml")
    raw["lines"] = [line]
    raw["space"]["layers"] = list(layers)
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(raw))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "lines" in err and words in err, err


def test_eval_prints_every_line_with_layer_and_field_width(tmp_path, capsys):
    out = tmp_path / "o"
    assert main(["optimize", str(DEMO), "--out", str(out)]) == 0
    capsys.readouterr()
    assert main(["eval", str(DEMO), "--stackup", str(out / "selected.yaml"), "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    rows = {r["name"]: r for r in got["lines"]}
    assert rows["usb90@L1"]["spacing_m"] == pytest.approx(0.2e-3)
    assert rows["clk50@L3"]["layer"] == "L3" and rows["clk50@L3"]["width_field_m"] > 0


def test_cpwg_gap_and_pair_spacing_meet_the_fab_minimum_space():
    sc = scenario(layers=(2,), lines=(
        {"name": "c", "type": "cpwg", "impedance": "50 ohm", "gap": "0.05 mm"},))
    p = Problem(sc, TABLE)
    ev = p.evaluate(enumerate_all(p.space))
    fab_min = TABLE.capabilities.min_space
    assert 0.05e-3 < fab_min  # the invented quick-turn table's minimum space is wider
    assert (ev.violations["min_space"] > 0).all()


def test_exact_search_is_exact_with_a_bottom_layer_line():
    # a default microstrip also runs on the bottom layer; on asymmetric boards its width
    # depends on the bottom dielectric (the exact search's tail unless marked): exact must
    # still equal brute force
    # (with only the top layer's dielectric marked, this front differs from brute force)
    sc = scenario(layers=(4,), symmetric=False, lines=(
        {"name": "m", "type": "microstrip", "impedance": "50 ohm", "max_width": "0.2 mm"},))
    r = optimize(sc, TABLE, method="exact")
    brute, n = brute_front(sc)
    assert front_points(r) == brute and r.evaluated < n


def test_named_inner_layer_missing_on_some_counts_is_a_violation_there_only():
    # 'L3' exists on every board of (4, 6) but is a plane on the four-layer ones: those
    # candidates get line_s_no_layer, the six-layer ones carry the line on L3
    sc = scenario(layers=(4, 6), lines=(
        {"name": "s", "type": "stripline", "layer": "L3", "impedance": "50 ohm"},))
    p = Problem(sc, TABLE)
    assert [rt.name for rt in p.routes] == ["s@L3"]
    ev = p.evaluate(enumerate_all(p.space))
    four = ev.geometry.layers == 4
    assert (ev.violations["line_s_no_layer"][four] > 0).all()
    assert not (ev.violations["line_s_no_layer"][~four] > 0).any()
    assert np.isfinite(ev.widths[~four, 0]).all()



def test_field_solves_listed_ahead_are_exactly_what_the_picks_tables_need(monkeypatch):
    # field_keys lists the solves before the analyses (another process may solve them);
    # with those filled in, the picks' checked tables must solve nothing more, and give
    # the rows the lazily solved tables give
    import stackopt.analyses.lines as lines

    lazy = optimize(DEMO)
    picks = sorted({i for i in lazy.picks.values() if i is not None})
    expected = {i: lazy.lines(i) for i in picks}
    ahead = optimize(DEMO)
    keys = ahead.field_keys(picks)
    assert keys and len(keys) == len(set(keys))
    ahead.line_solves.update(lines.field_checks(keys))
    assert ahead.field_keys(picks) == []

    def no_more(*args):
        raise AssertionError("solved again")

    monkeypatch.setattr(lines, "field_check", no_more)
    assert {i: ahead.lines(i) for i in picks} == expected
