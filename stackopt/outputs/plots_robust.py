"""``robustness.png``: for each pick, its margin under every via model and the spread of
its margin over the Monte Carlo builds, with the requirement line at 0 dB."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from matplotlib.figure import Figure

from stackopt.outputs.facts import unique_picks
from stackopt.outputs.plots import new_figure, styled
from stackopt.outputs.robust_text import model_mark, percent
from stackopt.search.picks import PICKS

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["plot_robustness"]

_MODEL_MARKERS = ("o", "s", "^", "D", "v", "P")
_MODEL_COLORS = ("#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#8c564b", "#17becf")


def _boxes(ax, samples: list[np.ndarray], ys: np.ndarray, height: float = 0.45) -> None:
    """Horizontal box plots: box from the lower to the upper quartile with the median,
    whiskers to the 5th and 95th percentiles with caps half the box high, the builds
    beyond as dots. The statistics are matplotlib's (``cbook.boxplot_stats``); drawn as a
    few collections rather than by ``Axes.boxplot`` (seven artists per box, and a scan of
    every rc setting per call, which also imports pyplot to settle the backend)."""
    from matplotlib.cbook import boxplot_stats
    from matplotlib.collections import LineCollection, PolyCollection

    st = boxplot_stats(samples, whis=(5, 95))
    q1, med, q3, lo, hi = (np.array([s[k] for s in st], dtype=float)
                           for k in ("q1", "med", "q3", "whislo", "whishi"))
    y0, y1 = ys - height / 2, ys + height / 2
    ax.add_collection(PolyCollection(  # a list of (4, 2) corners: the stubs want a sequence
        list(np.stack([np.c_[q1, y0], np.c_[q3, y0], np.c_[q3, y1], np.c_[q1, y1]], axis=1)),
        facecolors="#dddddd", edgecolors="#555555", linewidths=1.0, zorder=2.0))
    ax.add_collection(LineCollection(
        list(np.stack([np.c_[med, y0], np.c_[med, y1]], axis=1)), colors="#333333",
        linewidths=1.0, zorder=2.1))
    c0, c1 = ys - height / 4, ys + height / 4
    ax.add_collection(LineCollection(list(np.concatenate([
        np.stack([np.c_[lo, ys], np.c_[q1, ys]], axis=1),  # whiskers
        np.stack([np.c_[q3, ys], np.c_[hi, ys]], axis=1),
        np.stack([np.c_[lo, c0], np.c_[lo, c1]], axis=1),  # caps
        np.stack([np.c_[hi, c0], np.c_[hi, c1]], axis=1)])), colors="black", linewidths=1.0,
        zorder=2.0))
    fx = np.concatenate([s["fliers"] for s in st])
    counts = [len(s["fliers"]) for s in st]
    # spread over five rows within the box's height (the row's height means nothing), so
    # that builds packed just past a cap read as dots, not as the whisker running on
    rank = np.concatenate([np.arange(c) for c in counts]) if counts else np.zeros(0)
    fy = np.repeat(ys, counts) + (rank % 5 - 2) * height / 10
    if len(fx):
        ax.plot(fx, fy, "o", ms=1.8, mec="0.35", mfc="none", mew=0.5, alpha=0.7,
                zorder=2.0, gid="builds beyond the whiskers")


@styled
def plot_robustness(result: Result) -> Figure:
    """Margin by via model and Monte Carlo distribution per distinct pick."""
    picks = unique_picks(result)
    fig = new_figure(7.6, 1.5 + 0.8 * max(len(picks), 1))
    ax = fig.add_subplot()
    models = list(result.spread)
    ys = len(picks) - 1 - np.arange(len(picks))  # the first pick on top
    idx = [i for i, _ in picks]
    builds = [(b, y) for i, y in zip(idx, ys, strict=True)
              if (b := result.build_margins.get(i)) is not None and len(b)]
    if builds:
        _boxes(ax, [b for b, _ in builds], np.array([y for _, y in builds], dtype=float))
    for j, m in enumerate(models):  # one row of markers per model above each box
        v = np.asarray(result.spread[m], dtype=float)[idx]
        ok = np.isfinite(v)
        if ok.any():
            ax.plot(v[ok], ys[ok] + 0.3 + 0.09 * j, _MODEL_MARKERS[j % len(_MODEL_MARKERS)],
                    color=_MODEL_COLORS[j % len(_MODEL_COLORS)], ms=5,
                    mfc=None if m in result.robust else "white", label=m, linestyle="none")
    labels = []
    for i, names in picks:
        mark = model_mark(result, i)
        y_txt = "" if result.yields is None else f", yield {percent(result.yields[i])}"
        labels.append(f"{result.ids[i]} ({' / '.join(PICKS[n].plot for n in names)})"
                      f"{y_txt}{mark}")
    ax.axvline(0.0, color="#d62728", lw=1.2, ls="--")
    ax.set_yticks(range(len(picks)), labels[::-1])
    ax.set_ylim(-0.5, len(picks) - 1 + 0.75 + 0.09 * len(models))
    ax.set_xlabel("margin over the requirements [dB] (below 0: a requirement fails)")
    ax.set_title("Margin of each pick by via model (markers)\nand over the simulated builds "
                 "(box)")
    if models:
        fig.legend(loc="outside lower center", ncols=min(4, len(models)),
                   title="via model (filled: in the robust margin)")
    return fig
