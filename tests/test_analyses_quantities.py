"""Cost against quantity (issue 15): the sweep's picks are the picks of separate runs,
lot cost is unit cost x quantity, unit cost never rises with the lot for a table whose
prices fall, bad lot sizes are one-line errors.

The cost model's rules checked here are its own documented definition
(``stackopt/cost/pricing.py``: ``lot_cost = unit_cost * quantity``, ``setup / q`` per
board) and the demo table's numbers (invented demo data).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest

import stackopt
from stackopt.analyses.quantities import (
    quantity_grid,
    quantity_sweep,
    scenario_at,
    unit_cost_curve,
)
from stackopt.cli.main import main
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import demo_paths, load_scenario
from stackopt.search.memo import ResponseMemo
from stackopt.search.phenotype import batch_key, exact_key
from stackopt.search.problem import Problem

ROOT = Path(__file__).resolve().parents[1]
QUICKTURN = ROOT / "cost_tables" / "quickturn.yaml"


@pytest.fixture(scope="module")
def demo():
    sp, _ = demo_paths()
    return load_scenario(sp), load_cost_table(QUICKTURN)


@pytest.fixture(scope="module")
def shifting_table(tmp_path_factory):
    """The quick-turn demo table with one standard thickness (1.5 mm +-2 %) and a large
    per-lot charge for any other: the cheapest build of a group then depends on the lot
    size, so the exact search's representatives and picks change with quantity."""
    text = QUICKTURN.read_text(encoding="utf-8")
    for a, b in (("non_standard_thickness: {per_panel: 5, per_lot: 25, days: 1}",
                  "non_standard_thickness: {per_panel: 0, per_lot: 400, days: 1}"),
                 ("standard_thicknesses: [0.8 mm, 1.0 mm, 1.2 mm, 1.6 mm, 2.0 mm]",
                  "standard_thicknesses: [1.5 mm]"),
                 ("thickness_tolerance: 10 %", "thickness_tolerance: 2 %")):
        assert a in text
        text = text.replace(a, b)
    p = tmp_path_factory.mktemp("tables") / "shifting.yaml"
    p.write_text(text, encoding="utf-8")
    return load_cost_table(p)


def _picks(result) -> dict:
    """Each pick as (id, unit cost, lot cost, layers, board identity)."""
    out = {}
    for name, i in result.picks.items():
        if i is None:
            out[name] = None
            continue
        ev = result.evaluation
        out[name] = (result.ids[i], float(ev.unit_cost[i]), float(ev.lot_cost[i]),
                     int(ev.geometry.layers[i]),
                     tuple(result.candidates.take([i]).matrix()[0].tolist()))
    return out


@pytest.mark.slow
def test_sweep_picks_equal_separate_runs_where_the_picks_change(demo, shifting_table):
    sc, _ = demo
    qs = (10, 1000, 100000)
    memo = ResponseMemo()
    main_run = stackopt.optimize(sc, shifting_table, memo=memo)
    sweep = quantity_sweep(sc, shifting_table, qs, memo=memo, main=main_run)
    assert sweep.quantities == qs
    seen = []
    for q, r in zip(qs, sweep.results, strict=True):
        alone = stackopt.optimize(scenario_at(sc, q), shifting_table)  # no memo at all
        assert _picks(r) == _picks(alone), q
        np.testing.assert_array_equal(r.evaluation.margin, alone.evaluation.margin)
        seen.append(_picks(r))
    # the case is not trivial: a pick names another board at another quantity
    boards = [{k: v[4] for k, v in p.items() if v} for p in seen]
    assert boards[0] != boards[-1]
    # the sweep re-ran only prices: every phenotype was solved once
    assert memo.reused > memo.solved > 0


@pytest.mark.slow
def test_sweep_with_nsga2_equals_separate_runs(demo):
    sc, table = demo
    kw = {"method": "nsga2", "budget": 1200, "seed": 7}
    sweep = quantity_sweep(sc, table, (200, 5000), **kw)
    for q, r in zip(sweep.quantities, sweep.results, strict=True):
        alone = stackopt.optimize(scenario_at(sc, q), table, **kw)
        assert _picks(r) == _picks(alone), q


def test_lot_is_unit_times_quantity_and_setup_spreads_over_the_lot(demo):
    sc, table = demo
    sweep = quantity_sweep(sc, table, (200, 400))
    for q, r in zip(sweep.quantities, sweep.results, strict=True):
        np.testing.assert_allclose(r.evaluation.lot_cost, r.evaluation.unit_cost * q,
                                   rtol=1e-12)
    # both lots are above the table's last break (100): per board they differ only by
    # what is charged per lot, spread over it (cost model docstring: setup / q, per_lot / q)
    r0, r1 = sweep.results
    i = r0.picks["cheapest_two_layer"]
    assert r1.picks["cheapest_two_layer"] == i
    per_lot = table.setup[2] + table.features.impedance_control.per_lot  # the demo's line
    thick = r0.evaluation.cost_items["non_standard_thickness"][i] > 0
    per_lot += table.features.non_standard_thickness.per_lot * thick
    d = r0.evaluation.unit_cost[i] - r1.evaluation.unit_cost[i]
    assert d == pytest.approx(per_lot * (1 / 200 - 1 / 400), rel=1e-12)


def test_unit_cost_never_rises_with_quantity(demo, shifting_table):
    sc, _ = demo
    for table in (load_cost_table(QUICKTURN), load_cost_table(ROOT / "cost_tables" /
                                                              "volume.yaml"), shifting_table):
        r = stackopt.optimize(sc, table)
        idx = [i for i in r.picks.values() if i is not None]
        grid = quantity_grid(1, 200_000, table.base_price.quantities, n=120)
        u = unit_cost_curve(r, idx, grid)
        assert np.all(np.diff(u, axis=0) <= 1e-12 * u[:-1])
        # and the breaks show: at a break the price drops against the lot just below
        for b in table.base_price.quantities[1:]:
            k = int(np.searchsorted(grid, b))
            assert grid[k] == b and grid[k - 1] == b - 1


def test_sweep_picks_never_cost_more_at_a_larger_lot(demo, shifting_table):
    sc, _ = demo
    sweep = quantity_sweep(sc, shifting_table, (10, 100, 1000, 10000, 100000))
    for name in ("cheapest_meeting_requirements", "cheapest_two_layer"):
        cost = [r.evaluation.unit_cost[r.picks[name]] for r in sweep.results]
        assert all(b <= a for a, b in zip(cost, cost[1:], strict=False)), name


def test_memo_refuses_another_circuit(demo):
    sc, table = demo
    memo = ResponseMemo()
    stackopt.optimize(sc, table, memo=memo)
    other = load_scenario(ROOT / "scenarios" / "consumer_emi.yaml")
    with pytest.raises(ValueError, match="one circuit"):
        stackopt.optimize(other, table, memo=memo)


def test_memo_hands_a_search_only_the_response_of_its_own_numbers(demo, tmp_path):
    """Two fabs whose cores differ by 0.3 nm: the phenotype key (quantized to 1 nm) is the
    same, the numbers the circuit receives are not. A memo filled by the first fab's
    search must not hand its responses to the second: the second's responses equal those
    it solves with no memo, bit for bit (a memo keyed by the quantized phenotype copied
    the first fab's). Independent reference: the same Problem solved without a memo."""
    sc, table = demo
    text = QUICKTURN.read_text(encoding="utf-8")
    thin, n = re.subn(r"\{thickness: ([0-9.]+) mm",
                      lambda m: f"{{thickness: {float(m.group(1)) + 3e-7:.7f} mm", text)
    assert n == len(table.materials.cores)
    (tmp_path / "thin.yaml").write_text(thin, encoding="utf-8")
    other = load_cost_table(tmp_path / "thin.yaml")
    memo = ResponseMemo()
    cands = stackopt.optimize(sc, table, memo=memo).candidates
    shared, alone = Problem(sc, other, memo=memo), Problem(sc, other)
    g0, g1 = Problem(sc, table).space.geometry(cands), shared.space.geometry(cands)
    gb0, gb1 = Problem(sc, table).ground_batch(g0), shared.ground_batch(g1)
    same_bucket = np.all(batch_key(gb0) == batch_key(gb1), axis=1)
    differ = np.any(exact_key(gb0) != exact_key(gb1), axis=1)
    assert np.any(same_bucket & differ)  # the case the test is about is there
    reused = memo.reused
    s_shared, l_shared = shared.response(g1)
    s_alone, l_alone = alone.response(g1)
    assert memo.reused > reused  # rows with identical numbers (no core under the via) reused
    assert np.array_equal(s_shared, s_alone) and np.array_equal(l_shared, l_alone)


@pytest.mark.slow
def test_cli_sweep_writes_summary_plot_and_report(tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["optimize", "--out", str(out), "--quantities", "1000,100,10000"]) == 0
    text = capsys.readouterr().out
    assert "cost per board against quantity" in text
    summary = json.loads((out / "summary.json").read_text(encoding="utf-8"))
    rows = summary["quantity_sweep"]
    assert [r["quantity"] for r in rows] == [100, 1000, 10000]
    for r in rows:
        for name in ("cheapest_two_layer", "cheapest_meeting_requirements", "recommended"):
            rec = r[name]
            assert set(rec) >= {"id", "unit_cost", "lot_cost", "layers"}
            assert rec["lot_cost"] == pytest.approx(rec["unit_cost"] * r["quantity"])
    main_row = rows[1]
    assert main_row["cheapest_meeting_requirements"]["id"] == \
        summary["picks"]["cheapest_meeting_requirements"]["id"]
    assert (out / "quantities.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    md = (out / "report.md").read_text(encoding="utf-8")
    assert "## Cost against quantity" in md and "quantities.png" in md


@pytest.mark.parametrize("value, words", [
    ("0,100", "'0' is not a number of boards"),
    ("100,-5", "'-5' is not a number of boards"),
    ("100,1.5", "'1.5' is not a number of boards"),
    ("100,abc", "'abc' is not a number of boards"),
    ("100,1000,100", "100 boards is listed twice"),
    (",", "no lot size given"),
])
def test_bad_quantities_are_one_line_errors(value, words, tmp_path, capsys):
    assert main(["optimize", "--out", str(tmp_path / "o"), f"--quantities={value}"]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "--quantities" in err and words in err
    assert not (tmp_path / "o").exists()


def test_bad_scenario_quantities_name_the_key(tmp_path, capsys):
    sp, _ = demo_paths()
    text = sp.read_text(encoding="utf-8").replace(
        "quantity: 1000}", "quantity: 1000, quantities: [100, 100]}")
    bad = tmp_path / "s.yaml"
    bad.write_text(text, encoding="utf-8")
    assert main(["optimize", str(bad), "--costs", str(QUICKTURN),
                 "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "board.quantities" in err and "listed twice" in err


def test_sentence_quotes_the_rows_and_a_true_break_even(demo, shifting_table):
    from stackopt.outputs.sweep import sweep_sentence, sweep_summary

    sc, table = demo
    sweep = quantity_sweep(sc, table, (100, 10000))
    rows = sweep_summary(sweep)
    text = sweep_sentence(sweep)
    for r in rows:  # the extra per board, from the rows themselves
        extra = r["recommended"]["unit_cost"] - r["cheapest_two_layer"]["unit_cost"]
        assert f"{abs(extra):,.2f} EUR {'more' if extra >= 0 else 'less'}" in text
    assert "break-even" not in text  # four layers cost more at both lots
    sweep = quantity_sweep(sc, shifting_table, (1, 10, 100, 1000, 10000))
    rows = sweep_summary(sweep)
    extra = [r["recommended"]["unit_cost"] - r["cheapest_two_layer"]["unit_cost"]
             for r in rows]
    text = sweep_sentence(sweep)
    k = next(k for k in range(1, len(extra)) if (extra[k] > 0) != (extra[k - 1] > 0))
    assert f"break-even lies between {rows[k - 1]['quantity']:,} and " \
           f"{rows[k]['quantity']:,} boards" in text
