"""The pictures tell the truth: a legend entry for every layer count drawn, a note of the
candidates outside the plotted range, single-frequency requirements as marks (not bands),
and stackup labels at least 9 pt where the report shows them (CSS: 1 pt = 4/3 px; the
report's column is 62 rem = 992 px at the browsers' default 16 px)."""

from __future__ import annotations

import struct

import numpy as np
import pytest
from matplotlib.collections import PolyCollection
from outputs_support import ROOT, run

from stackopt.outputs.plots import STYLE, figure_bytes, plot_front, plot_response
from stackopt.outputs.plots_stackup import LABEL_PT, plot_prepregs, plot_stackups

COLUMN_PX = 992  # 62 rem, report_render's body max-width


def _png_width(data: bytes) -> int:
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">I", data[16:20])[0]  # IHDR width (PNG specification, 11.2.2)


def test_stackup_labels_at_least_9pt_in_the_report():
    fig = plot_stackups(run())
    width = _png_width(figure_bytes(fig, "png"))
    shown = min(1.0, COLUMN_PX / width)  # the browser scales a wider image down
    px = LABEL_PT * STYLE["savefig.dpi"] / 72.0 * shown
    assert px >= 9 * 4 / 3
    sizes = [t.get_fontsize() for ax in fig.axes for t in ax.texts]
    assert sizes and min(sizes) >= LABEL_PT


def test_front_legend_names_every_layer_count_and_the_clipped():
    res = run()
    fig = plot_front(res)
    ax = fig.axes[0]
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    feas = res.feasible
    for n in np.unique(res.evaluation.geometry.layers[feas]):
        assert any(f"feasible, {n} layers" in lab for lab in labels), (n, labels)
    lo, hi = ax.get_ylim()
    y = res.evaluation.margin
    out = int(np.sum(~((y >= lo) & (y <= hi))))
    notes = [t.get_text() for t in ax.texts if "outside the plotted range" in t.get_text()]
    if out:
        assert notes and notes[0].startswith(f"{out:,} candidate")  # the count drawn
    else:
        assert not notes


def test_single_frequency_requirement_is_a_mark_not_a_band():
    res = run()  # two single-frequency requirements
    ax = plot_response(res).axes[0]
    assert not [c for c in ax.collections if isinstance(c, PolyCollection)]
    freqs = {round(r.frequency / 1e9, 9) for r in res.problem.scenario.requirements}
    marks = {round(float(line.get_xdata()[0]), 9) for line in ax.lines
             if line.get_marker() == "v"}
    assert marks == freqs
    band = run(ROOT / "scenarios" / "consumer_emi.yaml")  # one band requirement
    ax = plot_response(band).axes[0]
    assert [c for c in ax.collections if isinstance(c, PolyCollection)]


@pytest.mark.parametrize("fn", [plot_front, plot_response, plot_stackups, plot_prepregs])
def test_figures_fit_the_report_column(fn):
    assert _png_width(figure_bytes(fn(run()), "png")) <= COLUMN_PX


def test_prepreg_chart_costs_tell_the_options_apart():
    res = run()
    fig = plot_prepregs(res)
    texts = [t.get_text().split(" (")[0] for t in fig.axes[1].texts]
    from stackopt.analyses.prepregs import prepreg_rows

    rows = [r for r in prepreg_rows(res) if r.cheapest is not None]
    costs = {round(float(res.evaluation.unit_cost[r.cheapest]), 9) for r in rows}
    assert len(set(texts)) == len(costs)  # distinct costs never print alike


@pytest.mark.parametrize("name", ["harmonic_lowpass", "consumer_emi", "two_layer_only",
                                  "lines_mixed"])
def test_requirement_labels_overlap_no_curve_legend_or_label(name):
    # checked with matplotlib's own geometry (Path.intersects_bbox on each drawn line in
    # display coordinates), not with the placement code's sampling
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    fig = plot_response(run(ROOT / "scenarios" / f"{name}.yaml"))
    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    renderer = canvas.get_renderer()
    ax = fig.axes[0]
    labels = [t.get_window_extent(renderer) for t in ax.texts if "≥" in t.get_text()]
    assert len(labels) == len(run(ROOT / "scenarios" / f"{name}.yaml").problem.scenario
                              .requirements)
    legend = ax.get_legend().get_window_extent(renderer)
    for k, box in enumerate(labels):
        for line in ax.get_lines():
            path = line.get_transform().transform_path(line.get_path())
            assert not path.intersects_bbox(box, filled=False), line.get_label()
        assert not box.overlaps(legend)
        assert not any(box.overlaps(other) for other in labels[k + 1:])


def test_front_keeps_the_requirement_line_in_view():
    # a space where nothing meets (every margin below 0 dB) still shows the 0 dB line, so
    # the distance to the requirement is visible
    res = run(ROOT / "scenarios" / "two_layer_only.yaml")
    assert res.evaluation.margin[res.feasible].max() < 0
    lo, hi = plot_front(res).axes[0].get_ylim()
    assert lo < 0.0 < hi


def test_robustness_boxes_show_the_builds_quartiles_and_whiskers():
    # each pick's box spans numpy's 25th-75th percentile of its simulated builds (linear
    # interpolation, Hyndman & Fan type 7) with the median inside; whiskers end on the most
    # extreme build within the 5th-95th percentiles, and every build beyond is a dot
    from matplotlib.collections import LineCollection, PolyCollection

    from stackopt.outputs.facts import unique_picks
    from stackopt.outputs.plots_robust import plot_robustness

    res = run()
    ax = plot_robustness(res).axes[0]
    boxes = next(c for c in ax.collections if isinstance(c, PolyCollection)).get_paths()
    lines = [c for c in ax.collections if isinstance(c, LineCollection)]
    medians, whiskers = lines[0].get_segments(), lines[1].get_segments()
    picks = unique_picks(res)
    dots = [line for line in ax.get_lines() if line.get_gid() == "builds beyond the whiskers"]
    n_out = 0
    for k, (i, _) in enumerate(picks):
        b = np.asarray(res.build_margins[i], dtype=float)
        y = len(picks) - 1 - k
        box = boxes[k].vertices
        q1, med, q3 = np.percentile(b, [25, 50, 75])
        assert box[:, 0].min() == pytest.approx(q1) and box[:, 0].max() == pytest.approx(q3)
        assert box[:, 1].min() < y < box[:, 1].max()
        assert medians[k][0][0] == pytest.approx(med)
        p5, p95 = np.percentile(b, [5, 95])
        lo, hi = b[b >= p5].min(), b[b <= p95].max()
        ends = {round(float(x), 9) for seg in whiskers for x in seg[:, 0]
                if np.allclose(seg[:, 1], y)}
        assert round(float(lo), 9) in ends and round(float(hi), 9) in ends
        n_out += int(np.sum((b < lo) | (b > hi)))
        mine = [yy for d in dots for xx, yy in zip(d.get_xdata(), d.get_ydata(), strict=True)
                if (xx < lo or xx > hi) and box[:, 1].min() <= yy <= box[:, 1].max()]
        assert len(mine) == int(np.sum((b < lo) | (b > hi)))  # on the pick's own row
    assert sum(len(d.get_xdata()) for d in dots) == n_out
