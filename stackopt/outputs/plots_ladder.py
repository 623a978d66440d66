"""The mitigation-ladder chart: cumulative cost per board against margin, step by step,
with the Pareto set of two-layer combinations and the cheapest four-layer board meeting
the requirements."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from matplotlib.figure import Figure

from stackopt.outputs.plots import LAYER_MARKERS, layer_color, new_figure, styled

if TYPE_CHECKING:
    from stackopt.search.ladder import Ladder
    from stackopt.search.results import Result

__all__ = ["plot_mitigations"]


@styled
def plot_mitigations(ladder: Ladder, result: Result) -> Figure:
    """Cost per board against margin: the ladder's boards joined in order and numbered,
    the Pareto set of two-layer combinations, the four-layer board, and the 0 dB line."""
    fig = new_figure(8.0, 5.0)
    ax = fig.add_subplot()
    if ladder is None or ladder.blocked:
        ax.text(0.5, 0.5, "no two-layer boards in the design space" if ladder is None
                else "no two-layer board can be built: no ladder to draw", ha="center",
                va="center", transform=ax.transAxes)
        return fig
    cur = result.problem.table.currency
    ev, pev = ladder.evaluation, ladder.pareto_evaluation
    x, y = ev.unit_cost, ev.margin
    ys = [y, pev.margin]
    if len(pev.unit_cost):
        ax.step(pev.unit_cost, pev.margin, where="post", color="0.55", lw=0.8, zorder=2)
        ax.scatter(pev.unit_cost, pev.margin, s=22, marker="o", facecolor="white",
                   edgecolor="0.45", linewidths=0.8, zorder=3,
                   label=f"two-layer Pareto set ({len(pev.unit_cost)})")
    ax.plot(x, y, color=layer_color(2), lw=1.8, zorder=4)
    ax.scatter(x, y, s=46, marker=LAYER_MARKERS[2], facecolor=layer_color(2),
               edgecolor="black", linewidths=0.6, zorder=5, label="mitigation ladder")
    fev = ladder.four_layer_evaluation
    if fev is not None:
        ax.scatter(fev.unit_cost, fev.margin, s=70, marker=LAYER_MARKERS[4],
                   facecolor=layer_color(4), edgecolor="black", linewidths=0.6, zorder=5,
                   label=f"cheapest four-layer meeting the requirements, "
                         f"{float(fev.unit_cost[0]):,.2f} {cur}")
        ys.append(fev.margin)
    if result.problem.scenario.requirements:
        ax.axhline(0.0, color="#d62728", lw=1.2, ls="--", zorder=3,
                   label="requirement met above this line")
    allv = np.concatenate(ys)
    allv = allv[np.isfinite(allv) & (np.abs(allv) < 900)]
    if len(allv):
        lo, hi = float(allv.min()), float(allv.max())
        pad = 0.1 * max(hi - lo, 1.0)
        ax.set_ylim(min(lo, 0.0) - pad, max(hi, 0.0) + pad)
    _number_steps(ax, x, y, np.concatenate([x, pev.unit_cost]
                                            + ([fev.unit_cost] if fev is not None else [])))
    ax.set_xlabel(f"Cost per board ({cur}, lot of {result.problem.scenario.board.quantity:,})")
    ax.set_ylabel("Margin over the requirements (dB, worst requirement)")
    ax.set_title("What a two-layer board reaches, one change at a time (numbers: steps)")
    ax.legend(loc="best")
    return fig


def _number_steps(ax, x: np.ndarray, y: np.ndarray, all_x: np.ndarray) -> None:
    """Number the ladder's steps. Consecutive steps that land on one spot (within 1.5 %
    of the axes' spans: a change that neither costs nor helps) share one label, "0-2" or
    "3, 4", instead of numbers beside hidden markers; labels of different spots at one
    cost are spread sideways."""
    lo, hi = ax.get_ylim()
    x_tol = 0.015 * max(float(np.ptp(all_x)), 1e-9 * max(1.0, float(np.max(np.abs(all_x)))))
    near = (np.abs(np.diff(x)) <= x_tol) & (np.abs(np.diff(y)) <= 0.015 * (hi - lo))
    starts = np.flatnonzero(np.r_[True, ~near]).tolist()
    ends = (np.r_[starts[1:], len(x)] - 1).tolist()
    col = 0
    for g, (a, b) in enumerate(zip(starts, ends, strict=True)):
        col = col + 1 if g and abs(x[a] - x[starts[g - 1]]) <= x_tol else 0
        text = str(a) if a == b else (f"{a}, {b}" if b == a + 1 else f"{a}\u2013{b}")
        ax.annotate(text, (x[a], y[a]), xytext=(6 + 16 * col, 6 if col % 2 == 0 else -12),
                    textcoords="offset points", fontsize=8.5, zorder=6,
                    bbox={"boxstyle": "round,pad=0.1", "fc": "white", "ec": "none",
                          "alpha": 0.8})
