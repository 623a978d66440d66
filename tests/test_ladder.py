"""The mitigation ladder: monotone, free steps first, ends at the best reachable two-layer
board, and shows in the outputs (mitigations.csv, mitigations.png, the report, summary.json).

The scenarios and the cost table are invented demo data (used here as fixtures)."""

from __future__ import annotations

import io
import json

import numpy as np
import pandas as pd
import pytest
from outputs_support import DEMO, ROOT, run

from stackopt.inputs.costtable import load_cost_table
from stackopt.model.scenario import Scenario
from stackopt.outputs.bundle import render_all, write_all
from stackopt.search.api import optimize
from stackopt.search.ladder import mitigation_ladder, two_layer_combinations

TWO = ROOT / "scenarios" / "two_layer_only.yaml"
EMI = ROOT / "scenarios" / "consumer_emi.yaml"
TABLE = load_cost_table(ROOT / "cost_tables" / "quickturn.yaml")


def _decoupling(layers=(2,), mitigations=("via_in_pad",), lines=()):
    """Hand-built: one 100 nF shunt across a through line, its ground through g1 (a
    0.5 mm pad trace), 20 dB wanted at 1 GHz: far above the series resonance, so less
    ground inductance always means more attenuation (Goldfarb & Pucel 1991; Hammerstad &
    Jensen 1980 for the trace)."""
    circuit = {"z0": "50 ohm", "elements": [
        {"name": "R0", "type": "R", "value": "0.001 ohm", "between": ["in", "out"]},
        {"name": "C1", "type": "C", "value": "100 nF", "between": ["in", "gnd"],
         "ground": "g1"}],
        "grounds": [{"name": "g1", "at": ["0 mm", "0 mm"], "trace_length": "0.5 mm",
                     "trace_width": "0.3 mm"}]}
    return Scenario.model_validate({
        "name": "decoupling", "board": {"width": "50 mm", "height": "40 mm",
                                        "quantity": 100},
        "circuit": circuit,
        "requirements": [{"frequency": "1 GHz", "min_attenuation": "20 dB"}],
        "lines": list(lines),
        "space": {"layers": list(layers), "drills": ["0.3 mm"], "vias_per_ground": [1, 2],
                  "mitigations": list(mitigations), "copper": ["1 oz"],
                  "thickness": {"nominal": "1.6 mm", "tolerance": 0.1}}})


@pytest.fixture(scope="module")
def demos():
    return {"two": optimize(TWO), "emi": optimize(EMI), "harmonic": run(DEMO)}


@pytest.mark.parametrize("name", ["two", "emi", "harmonic"])
def test_ladder_is_monotone_and_ends_at_the_best_reachable(demos, name):
    r = demos[name]
    lad = mitigation_ladder(r)
    ev = lad.evaluation
    tol = 1e-9 * max(1.0, float(ev.unit_cost.max()))
    assert np.all(np.diff(ev.unit_cost) >= -tol)  # cost never falls
    assert np.all(np.diff(ev.margin) > 0)  # margin never falls (each step gains)
    assert ev.feasible[1:].all()
    # no feasible two-layer combination costs at least as much and has more margin
    pb = r.problem
    pool = pb.evaluate(two_layer_combinations(pb.space))
    better = pool.feasible & (pool.unit_cost >= ev.unit_cost[-1] - tol) & (
        pool.margin > ev.margin[-1] + 1e-6)
    assert not better.any()
    # the Pareto set is non-dominated and by cost
    pe = lad.pareto_evaluation
    assert np.all(np.diff(pe.unit_cost) > 0) and np.all(np.diff(pe.margin) > 0)
    # the table's deltas are the differences of the boards' own figures
    t = lad.table
    np.testing.assert_allclose(t["d_cost"].to_numpy()[1:], np.diff(ev.unit_cost))
    key = pb.scenario.requirements[0].key
    np.testing.assert_allclose(t[f"d_attenuation_dB_{key}Hz"].to_numpy()[1:],
                               np.diff(ev.attenuation[:, 0]))


def test_a_free_mitigation_comes_before_a_costly_one():
    # A second via is free in the demo table; via-in-pad has a fill-and-cap adder. Both
    # lower the ground inductance and so raise the attenuation above resonance.
    lad = mitigation_ladder(optimize(_decoupling(), TABLE))
    t = lad.table
    assert list(t["kind"]) == ["start", "vias", "via_in_pad"]
    assert t["d_cost"][1] == 0 and t["d_margin_dB"][1] > 0
    assert t["d_cost"][2] > 0 and t["d_margin_dB"][2] > 0
    assert lad.four_layer is None and "no four-layer" in lad.four_layer_note


def test_no_ladder_without_two_layer_boards():
    r = optimize(_decoupling(layers=(4,), mitigations=()), TABLE)
    assert mitigation_ladder(r) is None
    files = render_all(r)
    assert "mitigations.csv" not in files and "mitigations.png" not in files
    assert json.loads(files["summary.json"])["mitigation_ladder"] is None
    assert "mitigation ladder" not in files["report.md"].decode()


def test_two_layer_demo_shows_the_ladder(demos, tmp_path):
    r = demos["two"]
    lad = mitigation_ladder(r)
    write_all(r, tmp_path / "out")
    out = tmp_path / "out"
    df = pd.read_csv(out / "mitigations.csv")
    steps = df[df["set"] == "ladder"]
    assert len(steps) == len(lad.steps) >= 2
    assert (df["set"] == "pareto").any()
    md = (out / "report.md").read_text()
    assert "The mitigation ladder" in md and "(mitigations.png)" in md
    for change in lad.changes:
        assert change in md
    assert "no four-layer boards" in md  # the two-layer demo has nothing to compare with
    data = json.loads((out / "summary.json").read_text())
    assert len(data["mitigation_ladder"]["steps"]) == len(lad.steps)
    from matplotlib.image import imread

    assert imread(io.BytesIO((out / "mitigations.png").read_bytes())).shape[1] > 500


def test_four_layer_board_set_against_the_ladder(demos):
    r = demos["harmonic"]
    lad = mitigation_ladder(r)
    assert lad.four_layer is not None
    fev = lad.four_layer_evaluation
    assert fev.margin[0] >= 0 and fev.geometry.layers[0] == 4
    four = r.meets & (r.evaluation.geometry.layers == 4)
    assert fev.unit_cost[0] == pytest.approx(r.evaluation.unit_cost[four].min())
    assert "four_layer" in set(lad.frame()["set"])
    assert lad.to_summary()["four_layer"]["unit_cost"] == pytest.approx(fev.unit_cost[0])


def test_infeasible_two_layer_space_is_said_plainly():
    # no width reaches 5 kohm on any board: every two-layer combination is infeasible
    from stackopt.outputs.report_ladder import ladder_section

    sc = _decoupling(lines=[{"name": "z", "type": "microstrip", "impedance": "5000 ohm"}])
    r = optimize(sc, TABLE)
    lad = mitigation_ladder(r)
    assert len(lad.steps) == 1 and not lad.evaluation.feasible[0]
    answer = ladder_section(r, lad)[1][1]
    assert answer.startswith("No: none of the 40 two-layer combinations can be built")
    assert "5000 ohm line 'z@L1'" in answer and answer.endswith(".")
    assert "line_z@L1_unreachable" not in answer
    assert "gives the 5000 ohm line 'z@L1' its impedance" in answer


@pytest.mark.parametrize("name", ["two", "emi", "harmonic"])
def test_ladder_reads_the_search_rows_instead_of_solving_again(demos, name, monkeypatch):
    """Every two-layer combination of these spaces is in the search's result, so the
    ladder solves nothing; its rows are the search's rows bit for bit, and a ladder built
    by fresh evaluations (the path it replaces) takes the same steps, the same Pareto set
    and the same four-layer board with the same figures (1e-9 dB, to the cent)."""
    from stackopt.search.ladder import build_ladder
    from stackopt.search.problem import Problem

    r = demos[name]
    pb = r.problem
    fresh = build_ladder(pb, four=r.ladder.four_layer if r.ladder else None)
    calls = []
    real = Problem.evaluate
    monkeypatch.setattr(Problem, "evaluate",
                        lambda self, c, model=None: calls.append(len(c)) or real(self, c, model))
    lad = mitigation_ladder(r)
    assert calls == []  # nothing solved again
    key = {tuple(row): i for i, row in enumerate(r.candidates.matrix().tolist())}
    rows = [key[tuple(row)] for row in lad.steps.matrix().tolist()]
    assert np.array_equal(lad.evaluation.margin, r.evaluation.margin[rows])
    assert np.array_equal(lad.evaluation.unit_cost, r.evaluation.unit_cost[rows])
    assert np.array_equal(lad.steps.matrix(), fresh.steps.matrix())
    assert lad.kinds == fresh.kinds and lad.changes == fresh.changes
    assert np.array_equal(lad.pareto.matrix(), fresh.pareto.matrix())
    for a, b in ((lad.evaluation, fresh.evaluation),
                 (lad.pareto_evaluation, fresh.pareto_evaluation),
                 (lad.four_layer_evaluation, fresh.four_layer_evaluation)):
        if a is None:
            assert b is None
            continue
        np.testing.assert_allclose(a.margin, b.margin, rtol=0, atol=1e-9)
        np.testing.assert_allclose(a.attenuation, b.attenuation, rtol=0, atol=1e-9)
        np.testing.assert_allclose(a.unit_cost, b.unit_cost, rtol=0, atol=0.005)
        assert np.array_equal(a.feasible, b.feasible)


def test_known_rows_solve_only_the_unknown_boards_once(demos):
    """KnownRows reads the known boards and evaluates each unknown one once (a board
    listed twice is solved once); the answer matches Problem.evaluate row for row."""
    from stackopt.search.evalrows import KnownRows, take_rows

    r = demos["two"]
    pb = r.problem
    known = KnownRows(pb, r.candidates.take(np.arange(0, r.n, 2)),
                      take_rows(r.evaluation, np.arange(0, r.n, 2)))
    ask = np.array([1, 0, 3, 1, 2, 5])  # 1 twice; 0 and 2 known
    ev = known.evaluate(r.candidates.take(ask))
    assert known.solved == 3  # rows 1, 3, 5
    direct = pb.evaluate(r.candidates.take(ask))
    np.testing.assert_allclose(ev.margin, direct.margin, rtol=0, atol=1e-9)
    np.testing.assert_allclose(ev.unit_cost, direct.unit_cost, rtol=0, atol=0.005)
    assert np.array_equal(ev.geometry.thickness, direct.geometry.thickness)
    again = known.evaluate(r.candidates.take(ask))
    assert known.solved == 3  # the second call solves nothing
    assert np.array_equal(again.margin, ev.margin)


@pytest.mark.parametrize("name", ["two", "emi", "harmonic"])
def test_the_summary_rows_are_the_tables_rows(demos, name):
    # to_summary builds its rows without pandas (the summary is written where pandas is
    # not loaded); they must be pandas' own rows of the ladder's tables, value for value
    lad = demos[name].ladder
    if lad is None:
        pytest.skip("no two-layer boards")

    def rows(df: pd.DataFrame) -> list[dict]:
        return [{k: (v.item() if hasattr(v, "item") else v) for k, v in r.items()}
                for _, r in df.iterrows()]

    s = lad.to_summary()
    assert json.dumps(s["steps"]) == json.dumps(rows(lad.table))
    assert json.dumps(s["pareto"]) == json.dumps(rows(lad.pareto_table))
    if lad.four_layer is not None:
        four = pd.DataFrame(lad._columns(lad.four_layer, lad.four_layer_evaluation))
        assert json.dumps(s["four_layer"]) == json.dumps(rows(four)[0])


@pytest.mark.parametrize("name", ["two", "emi", "harmonic"])
def test_every_step_is_numbered_once_and_coincident_steps_share_a_label(demos, name):
    # steps on one spot (a change that neither costs nor helps) get one "0-2" label
    # instead of numbers beside hidden markers; every step is named exactly once
    from matplotlib.text import Annotation

    from stackopt.outputs.plots_ladder import plot_mitigations

    lad = demos[name].ladder
    if lad is None or lad.blocked:
        pytest.skip("no ladder")
    ax = plot_mitigations(lad, demos[name]).axes[0]
    named: list[int] = []
    for t in (c for c in ax.get_children() if isinstance(c, Annotation)):
        text = t.get_text()
        if "\u2013" in text:
            a, b = map(int, text.split("\u2013"))
            named += range(a, b + 1)
        else:
            named += [int(v) for v in text.split(", ")]
    assert sorted(named) == list(range(len(lad.steps)))
