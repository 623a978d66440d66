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

__all__ = ["plot_robustness", "ROBUSTNESS_SENTENCE"]

_MODEL_MARKERS = ("o", "s", "^", "D", "v", "P")
_MODEL_COLORS = ("#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#8c564b", "#17becf")
#: The report's sentence beside the figure.
ROBUSTNESS_SENTENCE = (
    "Each pick's margin under every via model (markers) and over the simulated builds "
    "within the fab's and the parts' tolerances (box: middle half, whiskers: 5-95 %, "
    "dots beyond); a pick is robust when every marker and nearly all builds lie right "
    "of the 0 dB line.")


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
    if builds:  # one call for every pick's box (each call re-reads the rc settings)
        ax.boxplot([b for b, _ in builds], positions=[y for _, y in builds],
                   orientation="horizontal", widths=0.45, whis=(5, 95), showfliers=True,
                   patch_artist=True, boxprops={"facecolor": "#dddddd", "edgecolor": "#555555"},
                   medianprops={"color": "#333333"},
                   flierprops={"marker": ".", "markersize": 2, "alpha": 0.4})
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
