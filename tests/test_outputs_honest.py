"""The first screen tells the truth: the four-layer case against the cheapest feasible
two-layer board, no claim about boards outside the space, every violation code in words,
the prepreg answer with one row per stocked top dielectric.

The checks here are against the search's own arrays (unit costs, feasibility), i.e. the
definitions the report promises in its words; the sentences are checked for their figures
(limits taken from the cost table and the scenario, not from the report code).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest
from outputs_support import ROOT, run

from stackopt.analyses.prepregs import prepreg_rows, top_options
from stackopt.outputs.case import four_layer_case
from stackopt.outputs.prepregs import (
    prepreg_sentence,
    prepreg_summary,
    prepreg_table,
    unbuildable,
    why_none,
)
from stackopt.outputs.reasons import SENTENCES, family
from stackopt.outputs.report import report_document, report_markdown

DEMOS = sorted((ROOT / "scenarios").glob("*.yaml"))


def _text(blocks) -> str:
    return "\n".join(str(b[1]) for b in blocks if b[0] in ("answer", "p"))


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_headline_extra_cost_is_against_cheapest_feasible_two_layer(path):
    res = run(path)
    c = four_layer_case(res)
    s = c.to_summary(res)
    ev = res.evaluation
    two = np.flatnonzero(res.feasible & (ev.geometry.layers == 2))
    if c.status != "compared":
        assert s["extra_cost_per_board"] is None
        return
    cheapest_two = two[np.argmin(ev.unit_cost[two])]
    rec = res.picks.get("cheapest_robust", res.picks["cheapest_meeting_requirements"])
    want = ev.unit_cost[rec] - ev.unit_cost[cheapest_two]
    assert s["extra_cost_per_board"] == pytest.approx(want, rel=1e-12)
    assert s["extra_cost_per_lot"] == pytest.approx(want * res.problem.scenario.board.quantity)
    assert s["two_layer_id"] == res.ids[c.two] and s["multilayer_id"] == res.ids[rec]
    assert ev.unit_cost[c.two] == pytest.approx(ev.unit_cost[cheapest_two])
    # the report's first money figure is the extra cost per board
    md = report_markdown(res)
    first = re.search(r"(-?[\d,]+\.\d+) " + res.problem.table.currency, md)
    assert first is not None
    assert float(first.group(1).replace(",", "")) == pytest.approx(abs(want), abs=0.006)


def _variant(**changes):
    import stackopt
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario, scenario_cost_table

    path = ROOT / "scenarios" / "harmonic_lowpass.yaml"
    sc = load_scenario(path)
    table = scenario_cost_table(sc, path) or load_cost_table(path)
    space = changes.pop("space", None)
    if space is not None:
        sc = sc.model_copy(update={"space": sc.space.model_copy(update=space)})
    sc = sc.model_copy(update=changes)
    return stackopt.optimize(sc, table)


def test_four_layers_only_makes_no_two_layer_claim():
    res = _variant(space={"layers": (4,)})
    c = four_layer_case(res)
    assert c.status == "no_two_layer_in_space"
    text = _text(report_document(res)).lower()
    assert "no two-layer boards" in text and "makes no claim" in text
    assert "feasible" not in text.split("makes no claim")[0]
    assert "two-layer candidate is feasible" not in text


def test_no_feasible_two_layer_names_the_blocking_constraint():
    # a 50 ohm line may be at most 0.5 mm wide: on two layers (1.5 mm core) it needs about
    # 1 mm even as grounded coplanar, so no two-layer board can be built
    sc_lines = run().problem.scenario.lines
    lines = tuple(ln.model_copy(update={"max_width": 0.5e-3}) for ln in sc_lines)
    res = _variant(lines=lines)
    c = four_layer_case(res)
    assert c.status == "no_feasible_two_layer"
    head = [b for b in report_document(res) if b[0] == "answer"][0][1]
    assert head.startswith("No two-layer board can be built")
    assert "Two layers would be feasible if" in head
    # one route: the line may be wider than its 0.5 mm limit
    assert re.search(r"the 50 ohm line 'rf50@L1' may be [\d.]+ mm wide \(limit 0.5 mm\)", head)
    assert head.endswith(".") and "line_rf50" not in head
    # the ladder neither starts from nor plots an infeasible board
    from stackopt.outputs.bundle import render_all

    files = render_all(res)
    assert "mitigations.png" not in files
    assert "line_rf50" not in files["report.md"].decode()


def _emitted_codes() -> set[str]:
    """Every violation code the source can emit: literal keys assigned to a violations
    dict anywhere in the package, with f-string fields replaced by a sample name, plus
    the pricing's list."""
    from stackopt.cost.pricing import VIOLATIONS

    codes = set(VIOLATIONS)
    pat = re.compile(r"\bvio\w*\[\s*(f?)\"([^\"]+)\"\s*\]\s*=")
    for path in Path(ROOT, "stackopt").rglob("*.py"):
        for f, key in pat.findall(path.read_text()):
            codes.add(re.sub(r"\{[^}]*\}", "x", key) if f else key)
    return codes


def test_every_violation_code_has_a_sentence():
    codes = _emitted_codes()
    assert {"thickness_window", "min_drill", "line_x_too_wide"} <= codes  # the scan works
    for path in DEMOS:  # and every code a real evaluation returns
        codes |= set(run(path).evaluation.violations)
    missing = sorted(c for c in codes if family(c) not in SENTENCES)
    assert not missing, f"violation codes without a sentence: {missing}"


def test_sentences_carry_the_figures():
    from stackopt.outputs.reasons import code_sentence

    res = run()
    pb = res.problem
    cap = pb.table.capabilities
    # 25 % under the minimum drill: the drill is 0.75 x the limit
    s = code_sentence(pb, res.evaluation, 0, "min_drill", 0.25)
    assert f"{cap.min_drill * 0.75 * 1e3:.3g} mm" in s and f"{cap.min_drill * 1e3:.3g} mm" in s
    lo, hi = pb.scenario.space.thickness.bounds
    s = code_sentence(pb, None, 0, "thickness_window", 0.0, "rule")
    assert f"{lo * 1e3:.3g} mm to {hi * 1e3:.3g} mm" in s


def test_prepreg_table_has_one_row_per_stocked_top_dielectric():
    res = run()
    sp = res.problem.space
    want = set()
    for a in sp.arrangements:  # independent count: slot 0's options of every arrangement
        want |= set(sp.options[a.slot_kinds[0]].names)
    rows = prepreg_rows(res)
    assert sorted(r.name for r in rows) == sorted(want)
    assert len(top_options(sp)) == len(want)
    ev = res.evaluation
    for r in rows:
        if r.cheapest is not None:  # really the cheapest feasible board with it
            names = sp.slot_names(res.candidates)[:, 0]
            use = np.flatnonzero((names == r.name) & res.feasible)
            assert ev.unit_cost[r.cheapest] == pytest.approx(ev.unit_cost[use].min())
            # the most robust board with it: the best worst-over-models margin
            assert res.robust_margin[r.most_robust] == res.robust_margin[use].max()
        else:
            assert why_none(res, r) and r.nearest is not None


def test_prepreg_rows_carry_robust_margin_and_yield():
    # every row's boards were built in the Monte Carlo (one batch with the front and the
    # picks); the yield of a board is the share of its builds meeting every requirement
    # (checked against the per-build margins the robustness analysis keeps for the picks)
    from stackopt.analyses.prepregs import row_boards

    res = run()
    rows = prepreg_rows(res)
    idx = row_boards(rows)
    assert len(idx) and np.all(np.isfinite(res.yields[idx]))
    for i, m in res.build_margins.items():
        assert res.yields[i] == pytest.approx(np.mean(m >= 0.0))
    head, table = prepreg_table(res, rows)
    assert "Yield" in head and any("Robust" in h for h in head)
    # the rows are found once by the analysis and stay true of the finished result
    from dataclasses import replace

    assert res.prepregs is rows
    assert prepreg_rows(replace(res, prepregs=None)) == rows
    k = head.index("Yield")
    built = [r for r in rows if r.cheapest is not None]  # the others listed apart
    assert len(unbuildable(res, rows)) == len(rows) - len(built)
    for r, cells in zip(built, table, strict=True):
        assert cells[0] == r.name and cells[k] == f"{100 * res.yields[r.cheapest]:.1f} %"
    summary = {p["top_dielectric"]: p for p in prepreg_summary(res)}
    assert set(summary) == {r.name for r in rows}
    for r in rows:
        rec = summary[r.name]["cheapest"]
        if r.cheapest is None:
            assert rec is None and summary[r.name]["why_none"]
            continue
        assert rec["id"] == res.ids[r.cheapest]
        assert rec["yield"] == pytest.approx(res.yields[r.cheapest])
        assert rec["robust_margin_dB"] == pytest.approx(res.robust_margin[r.cheapest])
    s = prepreg_sentence(res, rows)  # names the cheapest that meets and the most robust
    assert "cheapest board that meets every requirement" in s and "most robust" in s


def test_check_prints_every_element_with_its_unit(capsys):
    # values of the generated 7th-order 0.1 dB Chebyshev low-pass (1 GHz, 50 ohm) from the
    # prototype g-values of Matthaei, Young & Jones, "Microwave Filters, Impedance-Matching
    # Networks and Coupling Structures" (1964), table 4.05-2(a): g1 = 1.1811, g2 = 1.4228,
    # g4 = 1.5733 (quoted from memory); C = g / (2 pi fc z0), L = g z0 / (2 pi fc)
    import math

    from stackopt.cli.main import main

    rc = main(["check", str(ROOT / "scenarios" / "harmonic_lowpass.yaml")])
    out = capsys.readouterr().out
    assert rc == 0
    w = 2 * math.pi * 1e9
    for name, value in (("C1", f"{1.1811 / (w * 50) * 1e12:.3g} pF"),
                        ("L2", f"{1.4228 * 50 / w * 1e9:.3g} nH"),
                        ("L4", f"{1.5733 * 50 / w * 1e9:.3g} nH")):
        line = next(x for x in out.splitlines() if x.startswith(name + " "))
        assert value in line
    assert "esl 100 pH" in out and "q 60" in out and "trace length 0.5 mm" in out
    assert "mount 0402" in out and "None" not in out and "size=" not in out  # in words
    assert "finished thickness within 1.44 mm to 1.76 mm" in out
    rc = main(["check", str(ROOT / "scenarios" / "consumer_emi.yaml")])
    out = capsys.readouterr().out
    for name, value in (("C1", "100 pF"), ("L1", "47 nH"), ("C2", "100 pF")):
        line = next(x for x in out.splitlines() if x.startswith(name + " "))
        assert value in line and ("gA" in line or name == "L1")


class _Stream:
    def __init__(self, tty: bool) -> None:
        self.tty, self.text = tty, ""

    def isatty(self) -> bool:
        return self.tty

    def write(self, s: str) -> int:
        self.text += s
        return len(s)

    def flush(self) -> None:
        pass


@pytest.mark.parametrize(("tty", "enabled", "shown"),
                         [(True, True, True), (False, True, False), (True, False, False)])
def test_progress_only_on_a_terminal_and_not_quiet(tty, enabled, shown):
    from stackopt.cli.progress import Progress

    s = _Stream(tty)
    with Progress("searching", enabled, stream=s) as bar:
        for k in range(0, 101, 10):
            bar(k, 100)
    assert ("searching" in s.text) == shown
    assert (s.text != "") == shown


def test_eval_prints_worst_path_and_largest_coupling_not_a_sum(tmp_path, capsys):
    # the quantities the report's compare table shows (one owner), checked against the
    # per-connection breakdown eval prints beside them: in the demo every connection holds
    # one capacitor, so the worst path is the largest connection total
    import json

    from stackopt.cli.main import main
    from stackopt.outputs.exports import selected_yaml

    res = run()
    got = {}
    for key in ("cheapest_two_layer", "cheapest_meeting_requirements"):
        f = tmp_path / f"{key}.yaml"
        f.write_text(selected_yaml(res, res.picks[key]))
        assert main(["eval", str(ROOT / "scenarios" / "harmonic_lowpass.yaml"),
                     "--stackup", str(f), "--json"]) == 0
        got[key] = out = json.loads(capsys.readouterr().out)
        assert out["worst_ground_path_H"] == pytest.approx(
            max(g["total_H"] for g in out["grounds"]), rel=1e-9)
        assert main(["eval", str(ROOT / "scenarios" / "harmonic_lowpass.yaml"),
                     "--stackup", str(f)]) == 0
        text = capsys.readouterr().out
        assert "in all" not in text and "worst path" in text and "largest coupling" in text
    # the two-layer board's limit is the coupling between connections (a shared return
    # path through the thick core): far larger than on the four-layer board
    two, four = got["cheapest_two_layer"], got["cheapest_meeting_requirements"]
    assert two["largest_ground_coupling_H"] > 20 * four["largest_ground_coupling_H"]


def test_one_shared_ground_connection_has_no_coupling_figure():
    # consumer_emi grounds both capacitors through one connection: there is no pair of
    # connections, so no coupling figure (not a misleading 0 pH)
    from stackopt.outputs.facts import ground_figures

    res = run(ROOT / "scenarios" / "consumer_emi.yaml")
    assert len(res.problem.compiled.conn_names) == 1
    own, mutual = ground_figures(res, [res.picks["cheapest_two_layer"]])
    assert own[0] > 0 and np.isnan(mutual[0])
    text = report_markdown(res)
    assert "none (one shared connection)" in text and "| 0 pH" not in text


def test_without_two_layers_the_headline_says_why_fewer_layers_fail():
    # lines_mixed searches 4 and 6 layers; the stripline 'clk50' needs an inner layer
    # between two planes, which no 4-layer arrangement offers: the headline says so
    res = run(ROOT / "scenarios" / "lines_mixed.yaml")
    four = res.evaluation.geometry.layers == 4
    assert four.any() and not (four & res.feasible).any()
    head = next(b[1] for b in report_document(res) if b[0] == "answer")
    assert "no claim about them" in head and "No 4-layer board can be built" in head
    assert "clk50" in head


def test_unnamed_requirements_read_as_frequencies_with_units():
    # a requirement without a name is called by its frequency (or band) with its unit,
    # never by a bare number of hertz such as "1.736e+09"
    import stackopt
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario

    sc = load_scenario(ROOT / "scenarios" / "harmonic_lowpass.yaml")
    sc = sc.model_copy(update={"requirements": tuple(
        r.model_copy(update={"name": None}) for r in sc.requirements)})
    res = stackopt.optimize(sc, load_cost_table(ROOT / "cost_tables" / "quickturn.yaml"))
    text = report_markdown(res)
    assert "e+0" not in text
    assert "at 1.736 GHz" in text and "2.604 GHz" in text
    band = load_scenario(ROOT / "scenarios" / "consumer_emi.yaml").requirements[0]
    assert band.model_copy(update={"name": None}).label == "300 MHz to 1 GHz"
