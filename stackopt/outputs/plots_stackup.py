"""Cross-sections, itemised costs and the prepreg choice of a search result."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from matplotlib.collections import LineCollection, PolyCollection
from matplotlib.figure import Figure

from stackopt.outputs.facts import cost_items, money_digits, unique_picks
from stackopt.outputs.plots import new_figure, pick_color, plain, styled
from stackopt.outputs.robust_text import model_mark
from stackopt.search.picks import PICKS

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["plot_stackups", "plot_costs", "plot_prepregs", "LABEL_PT", "MAX_WIDTH_IN"]

_FILL = {"copper": "#c87533", "prepreg": "#a8c686", "core": "#6f9a4e"}
#: Copper is drawn at least this fraction of the board so that 18 um stays visible.
_MIN_COPPER = 0.02
#: Layer labels, pt at the figure's size. The report shows figures at most 62 rem
#: (992 px) wide; a figure no wider than :data:`MAX_WIDTH_IN` at 110 dpi is not scaled
#: down there, so 8.5 pt (13 px) reads as at least 9 CSS pt (12 px).
LABEL_PT = 8.5
MAX_WIDTH_IN = 8.8


def _label_rows(st) -> list[tuple[str, str, float, str]]:
    """(kind, text, thickness, role/material) per layer, top to bottom."""
    rows = []
    for rec in st.to_records():
        t = rec["thickness_m"]
        if rec["kind"] == "copper":
            text = f"{rec['name']} {rec['role']}, {t * 1e6:.0f} µm"
        else:
            text = (f"{plain(rec['material'])} {rec['kind']}, {t * 1e3:.3g} mm, "
                    f"Dk {rec['er']:.2f}")
        rows.append((rec["kind"], text, t, rec.get("role", "")))
    return rows


def _draw_stackup(ax, st, title: str, color: str) -> None:
    rows = _label_rows(st)
    total = st.thickness
    shown = [max(t, _MIN_COPPER * total) if k == "copper" else t for k, _, t, _ in rows]
    scale = total / sum(shown)  # keep the drawn total equal to the real one
    h = np.asarray(shown) * scale
    z0 = np.cumsum(h) - h  # top of each layer
    centres = z0 + h / 2
    # one collection per fill style (hatched copper is a plane) and one for the leaders
    plane = np.array([k == "copper" and r in ("ground", "power", "plane") for k, _, _, r in rows])
    fills = np.array([_FILL[k] for k, _, _, _ in rows])
    corners = np.stack([np.c_[0 * h, z0], np.c_[0 * h + 0.34, z0], np.c_[0 * h + 0.34, z0 + h],
                        np.c_[0 * h, z0 + h]], axis=1)  # (layers, 4, 2)
    for sel, hatch in ((~plane, None), (plane, "////")):
        if sel.any():
            ax.add_collection(PolyCollection(list(corners[sel]), facecolors=list(fills[sel]),
                                             edgecolors="black", linewidths=0.5, hatch=hatch))
    n = len(rows)
    ys = np.linspace(0.0, total, n + 2)[1:-1] if n > 1 else np.array([total / 2])
    leaders = np.stack([np.c_[0 * ys + 0.34, centres], np.c_[0 * ys + 0.40, ys],
                        np.c_[0 * ys + 0.44, ys]], axis=1)  # (layers, 3, 2)
    ax.add_collection(LineCollection(list(leaders), colors="0.4", linewidths=0.5))
    for (kind, text, _t, _r), yl in zip(rows, ys, strict=True):
        ax.text(0.45, yl, text, va="center", fontsize=LABEL_PT,
                color="#7a3d10" if kind == "copper" else "black")
    ax.set_xlim(0, 1.75)
    ax.set_ylim(total * 1.02, -total * 0.02)
    ax.set_xticks([])
    ticks = np.linspace(0, total, 5)
    ax.set_yticks(ticks, [f"{v * 1e3:.2f}" for v in ticks])
    ax.set_ylabel("Depth from top copper (mm)")
    ax.grid(False)
    ax.set_title(title, fontsize=9, color=color)


@styled
def plot_stackups(result: Result) -> Figure:
    """Cross-section of each pick: dielectrics to scale, copper drawn at least 2 % of the
    board so it stays visible (hatched copper is a plane), every layer labelled with
    material, thickness and Dk."""
    picks = unique_picks(result)
    ncol = min(max(len(picks), 1), 2)
    nrow = max(-(-len(picks) // ncol), 1)
    fig = new_figure(MAX_WIDTH_IN, 4.6 * nrow)
    if not picks:
        ax = fig.add_subplot()
        ax.text(0.5, 0.5, "no feasible candidate to draw", ha="center", va="center")
        ax.set_axis_off()
        return fig
    cur = result.problem.table.currency
    digits = money_digits(result.evaluation.unit_cost[[i for i, _ in picks]])
    axes = fig.subplots(nrow, ncol, squeeze=False).ravel()
    for ax in axes[len(picks):]:
        ax.set_axis_off()
    for k, (ax, (i, names)) in enumerate(zip(axes, picks, strict=False)):
        st = result.stackup(i)
        head = " / ".join(PICKS[nm].plot for nm in names)
        title = (f"{head} ({result.ids[i]}){model_mark(result, i)}\n{st.n_layers} layers, "
                 f"{st.thickness * 1e3:.2f} mm, {result.evaluation.unit_cost[i]:,.{digits}f} "
                 f"{cur}")
        _draw_stackup(ax, st, title, pick_color(k))
    fig.suptitle("Stackups of the picks (dielectrics to scale; copper thickened to show)")
    return fig


@styled
def plot_costs(result: Result) -> Figure:
    """Itemised cost per board of each pick as stacked bars (items that are zero for
    every pick are left out), with the total and the lot cost over each bar."""
    fig = new_figure(8.0, 4.8)
    ax = fig.add_subplot()
    picks = unique_picks(result)
    cur = result.problem.table.currency
    if not picks:
        ax.text(0.5, 0.5, "no feasible candidate to price", ha="center", va="center")
        ax.set_axis_off()
        return fig
    idx = [i for i, _ in picks]
    items = cost_items(result, idx)
    names = [k for k, v in items.items() if np.any(np.abs(v) > 0)]
    xs = np.arange(len(idx))
    bottom = np.zeros(len(idx))
    cmap = [f"C{j}" for j in range(10)]
    for j, name in enumerate(names):
        v = np.asarray(items[name], dtype=float)
        ax.bar(xs, v, 0.55, bottom=bottom, color=cmap[j % 10], edgecolor="white", lw=0.5,
               label=name.replace("_", " "))
        bottom += v
    ev = result.evaluation
    for x, i, top in zip(xs, idx, bottom, strict=True):
        ax.annotate(f"{ev.unit_cost[i]:,.2f} {cur}\nlot {ev.lot_cost[i]:,.0f} {cur}",
                    (x, top), xytext=(0, 4), textcoords="offset points", ha="center",
                    fontsize=8)
    labels = [f"{' / '.join(PICKS[n].plot for n in nm)}\n{int(ev.geometry.layers[i])} layers"
              f"{model_mark(result, i)}" for i, nm in picks]
    ax.set_xticks(xs, labels)
    ax.set_ylim(0, float(bottom.max(initial=1.0)) * 1.22 or 1.0)
    ax.set_ylabel(f"Cost per board ({cur})")
    ax.set_title(f"Itemised cost of the picks (lot of "
                 f"{result.problem.scenario.board.quantity:,})")
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    ax.grid(axis="x", visible=False)
    return fig


@styled
def plot_prepregs(result: Result) -> Figure:
    """The dielectric under the top copper, one row per stocked option that gives a board
    that can be built (:func:`stackopt.analyses.prepregs.prepreg_rows`): the margin of the
    cheapest board using it (left; a tick at the most robust board's worst margin over the
    via models) and its cost per board (right), with enough decimals to tell the options
    apart."""
    from stackopt.analyses.prepregs import prepreg_rows
    from stackopt.outputs.facts import money_digits

    rows = [r for r in prepreg_rows(result) if r.cheapest is not None]
    fig = new_figure(8.6, max(2.6, 0.34 * len(rows) + 1.7))
    if not rows:
        ax = fig.add_subplot()
        ax.text(0.5, 0.5, "no feasible candidate", ha="center", va="center")
        ax.set_axis_off()
        return fig
    ev = result.evaluation
    cur = result.problem.table.currency
    cheap = np.array([r.cheapest for r in rows])
    best = np.array([r.most_robust for r in rows])
    ax1, ax2 = fig.subplots(1, 2, sharey=True)
    ys = np.arange(len(rows))
    margin = ev.margin[cheap]
    ax1.barh(ys, margin, color=np.where(margin >= 0, "#2ca02c", "#d62728"), height=0.6,
             label="cheapest board with it")
    ax1.scatter(result.robust_margin[best], ys, marker="|", s=140, color="black", zorder=4,
                label="most robust board with it (worst over the via models)")
    ax1.axvline(0, color="black", lw=0.8)
    ax1.set_yticks(ys, [f"{plain(r.name)} ({r.thickness * 1e3:.3g} mm, Dk {r.er:.2f})"
                        for r in rows])
    ax1.invert_yaxis()
    ax1.set_xlabel("Margin (dB)")
    ax1.locator_params(axis="x", nbins=6)  # signed decimals ("-17.5") need the room
    ax1.set_title("Margin of the cheapest board with it")
    fig.legend(loc="outside lower center", ncols=2, fontsize=7.5)
    cost = ev.unit_cost[cheap]
    digits = money_digits(cost)
    ax2.barh(ys, cost, color=np.where(result.meets[cheap], "#1f77b4", "0.65"), height=0.6)
    for y, i, c in zip(ys, cheap, cost, strict=True):
        ax2.annotate(f"{c:,.{digits}f} ({int(ev.geometry.layers[i])}L"
                     + ("" if result.meets[i] else ", misses") + ")",
                     (c, y), xytext=(3, 0), textcoords="offset points", va="center",
                     fontsize=7.5)
    ax2.set_xlim(0, float(cost.max()) * 1.35)
    ax2.set_xlabel(f"Cost per board ({cur})")
    ax2.set_title("Cost of that board (grey: misses)")
    for ax in (ax1, ax2):
        ax.grid(axis="y", visible=False)
    return fig
