"""Report facts on the demo search: itemised costs, the comparison, the infeasible answer,
the Touchstone export read by scikit-rf, plots on the Agg backend."""

from __future__ import annotations

import numpy as np
import pytest
from outputs_support import DEMO, run

from stackopt.outputs.case import four_layer_case
from stackopt.outputs.facts import cost_items, responses, selected_index, unique_picks
from stackopt.outputs.report import report_document, report_markdown


@pytest.fixture(scope="module")
def demo_result():
    return run()


def test_cost_items_sum_to_unit_cost(demo_result):
    # contract of stackopt.cost.pricing: the breakdown items sum to the unit cost
    idx = [i for i, _ in unique_picks(demo_result)]
    items = cost_items(demo_result, idx)
    total = np.sum(list(items.values()), axis=0)
    assert np.allclose(total, demo_result.evaluation.unit_cost[idx], rtol=1e-12)


def test_comparison_numbers(demo_result):
    c = four_layer_case(demo_result)
    ev = demo_result.evaluation
    assert c.status == "compared"
    assert c.multi == demo_result.picks["cheapest_meeting_requirements"]
    assert int(ev.geometry.layers[c.two]) == 2
    assert c.d_unit == pytest.approx(ev.unit_cost[c.multi] - ev.unit_cost[c.two])
    assert c.d_lot == pytest.approx(c.d_unit * demo_result.problem.scenario.board.quantity)
    assert c.cost_per_db == pytest.approx(c.d_unit / (ev.margin[c.multi] - ev.margin[c.two]))
    assert len(c.d_att) == len(demo_result.problem.scenario.requirements)


def test_response_at_requirements_matches_search(demo_result):
    # the report's sweep includes the requirement frequencies; there it must reproduce the
    # attenuation the search ranked by (same solver, same via model)
    i = demo_result.picks["cheapest_meeting_requirements"]
    pb = demo_result.problem
    s21, _ = responses(demo_result, [i], pb.freqs)
    assert np.allclose(-s21[0], demo_result.evaluation.attenuation_f[i], atol=1e-9)


def test_nothing_meets_is_an_answer():
    import stackopt
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario, scenario_cost_table

    sc = load_scenario(DEMO)
    table = scenario_cost_table(sc, DEMO) or load_cost_table(DEMO)
    hard = sc.model_copy(update={"requirements": tuple(
        r.model_copy(update={"min_attenuation": 250.0}) for r in sc.requirements)})
    res = stackopt.optimize(hard, table)
    assert res.picks["cheapest_meeting_requirements"] is None
    md = report_markdown(res)
    head = md[:md.index("pareto.png")]
    assert "No. None of the evaluated stackups meets every requirement" in head
    close = res.closest(3)
    for i in close:
        assert res.ids[i] in head
    assert "Failing requirement" in head and "of 250 dB" in head
    assert selected_index(res) == close[0]


def test_touchstone_read_by_scikit_rf(demo_result, tmp_path):
    skrf = pytest.importorskip("skrf")
    from stackopt.outputs.bundle import _touchstone

    i = selected_index(demo_result)
    p = tmp_path / "selected.s2p"
    p.write_text(_touchstone(demo_result, i))
    net = skrf.Network(str(p))  # independent Touchstone reader (scikit-rf)
    s21_db = 20 * np.log10(np.abs(net.s[:, 1, 0]))
    from stackopt.outputs.facts import sweep_freqs
    from stackopt.search.responses import TOUCHSTONE_POINTS

    f = sweep_freqs(demo_result, TOUCHSTONE_POINTS)
    assert np.allclose(net.f, f, rtol=1e-9)  # the file's frequencies, as written
    mine, _ = responses(demo_result, [i], f)
    assert net.z0[0, 0] == pytest.approx(demo_result.problem.compiled.z0)
    assert np.allclose(s21_db, mine[0], atol=1e-6)


def test_document_blocks_are_plain_text(demo_result):
    for b in report_document(demo_result):
        assert b[0] in {"h1", "h2", "h3", "p", "answer", "note", "ul", "table", "img"}


def test_plots_are_deterministic(demo_result):
    from stackopt.outputs.plots import figure_bytes, plot_front
    from stackopt.outputs.plots_stackup import plot_prepregs

    for fn in (plot_front, plot_prepregs):
        assert figure_bytes(fn(demo_result), "png") == figure_bytes(fn(demo_result), "png")
    svg = figure_bytes(plot_front(demo_result), "svg")
    assert svg == figure_bytes(plot_front(demo_result), "svg") and b"<dc:date>" not in svg
