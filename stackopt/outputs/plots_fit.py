"""``fit.png``: a measured |S21| beside the fitted curve and every model's curve."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from matplotlib.figure import Figure

from stackopt.outputs.plots import new_figure, plain, styled
from stackopt.physics.shunt import db20

__all__ = ["plot_fit"]

_COLORS = ("#1f77b4", "#2ca02c", "#9467bd", "#8c564b", "#e377c2", "#17becf", "#bcbd22")


@styled
def plot_fit(f: np.ndarray, measured: np.ndarray, fitted: tuple[str, np.ndarray],
             others: Sequence[tuple[str, np.ndarray]], title: str, note: str = "") -> Figure:
    """|S21| in dB over frequency (log axis): the measurement as points, the fitted curve
    (solid black) and each other curve (a model's prediction, dashed), with the fit's
    residual below.

    Parameters
    ----------
    f : ndarray
        Frequencies [Hz], shape (F,).
    measured : ndarray
        Complex measured S21, shape (F,).
    fitted : tuple
        (label, complex S21 of shape (F,)) of the fit.
    others : sequence of tuple
        (label, complex S21), e.g. one per via model.
    title : str
        Figure title.
    note : str
        A line under the plot (e.g. "synthesized data").
    """
    fig = new_figure(7.0, 5.2)
    ax, res = fig.subplots(2, 1, sharex=True, height_ratios=(3.2, 1.0))
    fg = f / 1e9
    meas_db = db20(measured)
    step = max(1, len(f) // 150)  # a readable number of points
    ax.plot(fg[::step], meas_db[::step], "o", ms=3.0, mfc="none", color="#d62728",
            label="measured", zorder=3)
    ax.plot(fg, db20(fitted[1]), "-", color="black", lw=1.6, label=plain(fitted[0]), zorder=4)
    for k, (label, s) in enumerate(others):
        ax.plot(fg, db20(s), "--", color=_COLORS[k % len(_COLORS)], lw=1.1,
                label=plain(label))
    ax.set_xscale("log")
    ax.set_ylabel("|S21| (dB)")
    ax.set_title(plain(title))
    ax.legend(loc="best")
    r = db20(fitted[1]) - meas_db
    res.plot(fg, r, ".", ms=2.5, color="black")
    res.axhline(0.0, color="#888888", lw=0.8)
    lim = max(float(np.max(np.abs(r))) * 1.2, 0.05)
    res.set_ylim(-lim, lim)
    res.set_ylabel("fit - meas. (dB)")
    res.set_xlabel("frequency (GHz)")
    if note:
        fig.text(0.01, 0.005, plain(note), fontsize=7.5, color="#555555", ha="left",
                 va="bottom")
    return fig
