"""Plots of a search result (matplotlib, no pyplot state, Agg rendering).

Every figure is built with the :data:`STYLE` rc settings and saved without dates or
version strings, so a re-run writes byte-identical PNG and SVG files. The stackup, cost
and prepreg figures live in :mod:`stackopt.outputs.plots_stackup`.
"""

from __future__ import annotations

import functools
import io
import os
from pathlib import Path
from typing import TYPE_CHECKING, Any

import matplotlib as mpl
import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.layout_engine import PlaceHolderLayoutEngine

from stackopt.outputs.facts import money_digits, plural, responses, sweep_freqs, unique_picks
from stackopt.outputs.files import atomic_write_bytes
from stackopt.outputs.robust_text import model_mark
from stackopt.search.picks import PICKS

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["STYLE", "styled", "new_figure", "fix_layout", "figure_bytes", "save_png", "save_svg",
           "plot_front", "plot_response", "plain", "LAYER_MARKERS", "layer_color", "pick_color"]

#: rc settings of every figure (``svg.hashsalt`` fixes the SVG ids; paths, not fonts).
#: ``axes.titley`` at the top edge spares matplotlib its search, on every draw, for tick
#: labels or an offset above the axes (there are none: no top tick labels, and tick
#: labels without an offset, which also reads better: the full value on each tick).
#: ``figure.dpi`` equals ``savefig.dpi``: the layout and the label placement are solved at
#: the pixels that are saved. ``text.hinting`` "none": FreeType runs no hinting program per
#: glyph (a quarter of the drawing time; text as readable at 110 dpi, measured in
#: ``benchmarks/bench_figures.py`` and looked at side by side).
STYLE = {
    "svg.hashsalt": "stackopt",
    "svg.fonttype": "path",
    "font.size": 9.0,
    "axes.titlesize": 10.0,
    "axes.titley": 1.0,
    "axes.formatter.useoffset": False,
    "axes.labelsize": 9.0,
    "axes.grid": True,
    "grid.alpha": 0.3,
    "legend.fontsize": 8.0,
    "legend.framealpha": 0.9,
    "figure.dpi": 110.0,
    "savefig.dpi": 110.0,
    "path.simplify": False,
    "text.hinting": "none",
}
#: Marker per copper-layer count.
LAYER_MARKERS = {2: "o", 4: "s", 6: "^", 8: "D", 10: "v", 12: "P"}
_PICK_COLORS = ("#d62728", "#1f77b4", "#2ca02c", "#9467bd", "#8c564b")
_PNG_META = {"Software": "stackopt"}
#: zlib level 3 (deflate's fast strategy): a quarter less encoding time than the usual 6,
#: and for these flat-coloured charts files as small or smaller (benchmarks/bench_figures).
_PNG_ENCODER = {"compress_level": 3}
_SVG_META = {"Date": None, "Creator": "stackopt"}


def plain(text: object) -> str:
    """A user string made safe for matplotlib (no mathtext: ``$`` is literal)."""
    return str(text).replace("$", r"\$")


def layer_color(n: int) -> str:
    """A fixed colour per layer count."""
    palette = {2: "#ff7f0e", 4: "#1f77b4", 6: "#2ca02c", 8: "#9467bd"}
    return palette.get(int(n), "#7f7f7f")


def pick_color(k: int) -> str:
    """Colour of the ``k``-th distinct pick."""
    return _PICK_COLORS[k % len(_PICK_COLORS)]


def styled(fn):
    """Build the figure under :data:`STYLE` (decorator)."""
    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        with mpl.rc_context(STYLE):
            return fn(*args, **kwargs)
    return wrapper


def new_figure(width: float, height: float, **kw) -> Figure:
    """A pyplot-free figure with constrained layout (inches), on an Agg canvas: the
    layout, the label placement and the PNG then share one renderer and its cache of
    text sizes (a bare figure would measure its text on a renderer of its own)."""
    fig = Figure(figsize=(width, height), layout="constrained", **kw)
    FigureCanvasAgg(fig)
    return fig


def fix_layout(fig: Figure) -> None:
    """Solve the figure's layout once and keep it: the axes stay where they are placed
    now, and every later draw or save (PNG, then SVG) draws once, without solving again.

    With a layout engine, ``savefig`` solves the layout and draws the whole figure twice
    (a first draw without pixels to settle it), on every save; fixed, each save draws once.
    Call it when the figure is complete (or, as :func:`place_labels` does, before adding
    what is placed against the final axes). ``figure.dpi`` equals ``savefig.dpi`` in
    :data:`STYLE`, so the layout solved here is the one a save would solve (same text
    sizes in pixels; the PNG files are byte-identical to solving at save time).
    """
    engine = fig.get_layout_engine()
    if engine is not None and not isinstance(engine, PlaceHolderLayoutEngine):
        engine.execute(fig)
    fig.set_layout_engine(None)  # None, not "none": savefig's settling draw is skipped


def figure_bytes(fig: Figure, fmt: str = "png") -> bytes:
    """The figure encoded as ``png`` or ``svg``, deterministically; its layout is fixed
    on the first call (:func:`fix_layout`)."""
    buf = io.BytesIO()
    meta = _PNG_META if fmt == "png" else _SVG_META
    with mpl.rc_context(STYLE):  # type: ignore[arg-type]  # stubs want Literal rc keys
        fix_layout(fig)
        if fmt == "png":
            return _png(fig)
        fig.savefig(buf, format=fmt, metadata=meta)
    return buf.getvalue()


def _png(fig: Figure) -> bytes:
    """The figure drawn by Agg and written as an RGB PNG (RGBA only where a pixel is not
    opaque): matplotlib writes RGBA, whose alpha byte is 255 everywhere on an opaque
    figure; without it the file is about a tenth smaller and quicker to compress."""
    from PIL import Image
    from PIL.PngImagePlugin import PngInfo

    canvas = fig.canvas if isinstance(fig.canvas, FigureCanvasAgg) else FigureCanvasAgg(fig)
    fig.savefig(os.devnull, format="rgba")  # drawn on this canvas at savefig.dpi; read below
    rgba = np.asarray(canvas.buffer_rgba())  # a view of the canvas's pixels (H, W, 4)
    height, width = rgba.shape[:2]
    image = Image.frombuffer("RGBA", (width, height), rgba, "raw", "RGBA", 0, 1)
    if image.getchannel("A").getextrema()[0] == 255:  # every pixel opaque
        image = image.convert("RGB")
    info = PngInfo()
    for key, value in _PNG_META.items():
        info.add_text(key, value)
    dpi = float(mpl.rcParams["savefig.dpi"])
    buf = io.BytesIO()
    image.save(buf, format="png", pnginfo=info, dpi=(dpi, dpi), **_PNG_ENCODER)
    return buf.getvalue()


def save_png(fig: Figure, path: str | Path) -> Path:
    """Write the figure as PNG, atomically."""
    return atomic_write_bytes(path, figure_bytes(fig, "png"))


def save_svg(fig: Figure, path: str | Path) -> Path:
    """Write the figure as SVG, atomically."""
    return atomic_write_bytes(path, figure_bytes(fig, "svg"))


def _perf_axis(result: Result) -> tuple[np.ndarray, str, bool]:
    """(values, label, higher is better) of the electrical axis."""
    ev = result.evaluation
    if result.problem.scenario.requirements:
        return ev.margin, "Margin over the requirements (dB, worst requirement)", True
    return ev.inductance * 1e9, "Ground inductance, sum over connections (nH)", False


def _no_data(ax, text: str) -> None:
    ax.text(0.5, 0.5, text, ha="center", va="center", transform=ax.transAxes)
    ax.set_xticks([])
    ax.set_yticks([])


@styled
def plot_front(result: Result) -> Figure:
    """Cost against margin of every evaluated candidate: infeasible ones faint grey,
    feasible ones faint by layer count, the Pareto front bold (marker by layer count),
    the requirement line at 0 dB margin, and the picks annotated."""
    fig = new_figure(8.8, 5.0)
    ax = fig.add_subplot()
    ev = result.evaluation
    cur = result.problem.table.currency
    y, ylabel, higher = _perf_axis(result)
    x = ev.unit_cost
    layers = ev.geometry.layers
    feas = result.feasible
    if result.n == 0:
        _no_data(ax, "no candidate was evaluated")
        return fig
    bad = ~feas
    # the faint clouds (rasterized) sit together above the grid (zorder 1.5): the SVG holds
    # them as one embedded image instead of one per cloud
    if bad.any():
        ax.scatter(x[bad], y[bad], s=6, marker="x", color="0.6", alpha=0.25, linewidths=0.6,
                   label=f"infeasible ({int(bad.sum())})", rasterized=True, zorder=1.6)
    front = result.front_order
    for n in np.unique(layers):
        m = feas & (layers == n)
        mk = LAYER_MARKERS.get(int(n), "P")
        if m.any():
            ax.scatter(x[m], y[m], s=9, marker=mk, color=layer_color(n), alpha=0.18,
                       linewidths=0, rasterized=True, zorder=2)
            ax.scatter([], [], s=20, marker=mk, color=layer_color(n), alpha=0.5,
                       label=f"feasible, {int(n)} layers ({int(m.sum()):,})")
        f = front[layers[front] == n]
        if len(f):
            ax.scatter(x[f], y[f], s=38, marker=mk, facecolor=layer_color(n),
                       edgecolor="black", linewidths=0.6, zorder=4,
                       label=f"front, {int(n)} layers ({len(f)})")
    if len(front) > 1:
        ax.step(x[front], y[front], where="post", color="black", lw=0.8, alpha=0.6, zorder=3)
    if result.problem.scenario.requirements:
        ax.axhline(0.0, color="#d62728", lw=1.2, ls="--", zorder=3,
                   label="requirement met above this line")
    digits = money_digits(x[[i for i, _ in unique_picks(result)]])
    for k, (i, names) in enumerate(unique_picks(result)):  # numbered; words in the legend
        text = " / ".join(PICKS[nm].plot for nm in names)
        ax.scatter([x[i]], [y[i]], s=90, facecolor="none", edgecolor=pick_color(k),
                   linewidths=1.6, zorder=5,
                   label=f"{k + 1}: {text}, {int(layers[i])}L, {x[i]:,.{digits}f} {cur}"
                         f"{model_mark(result, i)}")
        ax.annotate(str(k + 1), (x[i], y[i]), xytext=(7, 5 + 9 * (k % 2)),
                    textcoords="offset points", fontsize=9, fontweight="bold",
                    color=pick_color(k), zorder=6)
    ok = np.isfinite(y) & feas if feas.any() else np.isfinite(y)
    if ok.any():  # keep the -999 dB stand-in of failed evaluations off the scale
        lo, hi = float(np.min(y[ok])), float(np.max(y[ok]))
        if result.problem.scenario.requirements:  # the requirement line stays in view
            lo, hi = min(lo, 0.0), max(hi, 0.0)
        pad = 0.08 * max(hi - lo, 1.0)
        ax.set_ylim(lo - pad, hi + 2.5 * pad)  # headroom for the pick numbers
        ylo, yhi = ax.get_ylim()
        out = int(np.sum(~((y >= ylo) & (y <= yhi))))
        if out:
            inside = (y >= ylo) & (y <= yhi)
            what = plural(out, "candidate")
            ax.text(0.01, 0.01, f"{what} outside the plotted range, not shown"
                    + ("" if np.any(feas & ~inside) else " (all infeasible or failed)"),
                    transform=ax.transAxes, fontsize=7.5, color="0.3", va="bottom",
                    bbox={"boxstyle": "square,pad=0.15", "fc": "white", "ec": "none",
                          "alpha": 0.8}, zorder=3.5)  # over the clouds, under the front
    ax.set_xlabel(f"Cost per board ({cur}, lot of {result.problem.scenario.board.quantity:,})")
    ax.set_ylabel(ylabel + ("" if higher else ", lower is better"))
    ax.set_title(f"Cost against performance: {result.n:,} candidates evaluated, "
                 f"{len(front)} on the front")
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=7.5)
    return fig


def _requirement_marks(ax, result: Result, ylo: float) -> list[tuple[str, tuple[float, float]]]:
    """Each requirement where it applies: a band as a shaded band with its limit line; a
    single frequency as a marker at the limit with a short bar up to 0 dB (the region a
    curve must stay below), not as a band it does not have. Returns the labels to place
    (text, anchor) once the curves and the legend are drawn (:func:`place_labels`)."""
    labels = []
    for k, r in enumerate(result.problem.scenario.requirements):
        top = -r.min_attenuation
        first = k == 0
        if r.frequency is not None:
            f0 = r.frequency / 1e9
            ax.plot([f0, f0], [top, 0.0], color="#d62728", lw=2.5, alpha=0.35, zorder=1,
                    solid_capstyle="butt")
            ax.plot([f0], [top], marker="v", ms=8, color="#d62728", zorder=5,
                    label="requirement: stay below the mark" if first else None)
            where = f0
        else:
            assert r.band is not None  # a requirement has a frequency or a band
            lo, hi = r.band[0] / 1e9, r.band[1] / 1e9
            ax.fill_between([lo, hi], [top, top], [0, 0], color="#d62728", alpha=0.12,
                            lw=0, zorder=1,
                            label="requirement band: stay below its line" if first else None)
            ax.plot([lo, hi], [top, top], color="#d62728", lw=2.0, zorder=5)
            where = (lo + hi) / 2
        labels.append((f"{plain(r.label)}\n≥ {r.min_attenuation:g} dB", (where, top)))
    return labels


#: Offsets (points) tried for a requirement's label around its mark, nearest first.
_LABEL_SPOTS = ((0, -10, "center", "top"), (8, -4, "left", "top"), (-8, -4, "right", "top"),
                (8, 4, "left", "bottom"), (-8, 4, "right", "bottom"),
                (0, -34, "center", "top"), (14, -24, "left", "top"), (-14, -24, "right", "top"))


def _curve_points(ax) -> np.ndarray:
    """Display coordinates of every drawn line (curves and requirement marks), densified
    (about a pixel apart) so that a box lying across a segment holds some of it (M, 2)."""
    pts = []
    for line in ax.get_lines():  # a handful of curves and marks
        xy = ax.transData.transform(np.asarray(line.get_xydata(), dtype=float))
        xy = xy[np.all(np.isfinite(xy), axis=1)]
        if len(xy) < 2:
            pts.append(xy)
            continue
        seg = np.hypot(*np.diff(xy, axis=0).T)
        n = np.maximum(np.ceil(seg).astype(int), 1)
        t = np.arange(n.sum()) - np.repeat(np.cumsum(n) - n, n)  # step within a segment
        t = t / np.repeat(n, n)
        i = np.repeat(np.arange(len(seg)), n)
        pts.append(xy[i] + t[:, None] * (xy[i + 1] - xy[i]))
    return np.concatenate(pts) if pts else np.zeros((0, 2))


def _inside(pts: np.ndarray, box) -> int:
    """How many points lie in a display-coordinate box (a matplotlib Bbox)."""
    return int(np.sum((pts[:, 0] >= box.x0) & (pts[:, 0] <= box.x1)
                      & (pts[:, 1] >= box.y0) & (pts[:, 1] <= box.y1)))


def place_labels(ax, labels) -> list:
    """Annotate each ``(text, (x, y), color)`` at the first offset of :data:`_LABEL_SPOTS`
    whose box crosses the fewest curve points and overlaps no placed label nor the
    legend and stays inside the axes; returns the annotations."""
    fig = ax.figure
    canvas = fig.canvas if hasattr(fig.canvas, "get_renderer") else FigureCanvasAgg(fig)
    fix_layout(fig)  # the axes where they will be drawn (the legend is placed on demand)
    renderer = canvas.get_renderer()
    pts = _curve_points(ax)
    taken = []
    legend = ax.get_legend()
    if legend is not None:
        taken.append(legend.get_window_extent(renderer))
    frame = ax.get_window_extent(renderer)
    out = []
    for text, xy, color in labels:  # a few requirements
        tried: list[tuple[int, int, Any, Any]] = []
        for dx, dy, ha, va in _LABEL_SPOTS:
            a = ax.annotate(text, xy, xytext=(dx, dy), textcoords="offset points", ha=ha,
                            va=va, fontsize=8, color=color, zorder=6)
            box = a.get_window_extent(renderer)
            cost = (_inside(pts, box) + 1000 * sum(box.overlaps(t) for t in taken)
                    + 1000 * (not frame.contains(box.x0, box.y0)
                              or not frame.contains(box.x1, box.y1)))
            tried.append((cost, len(tried), a, box))
            if cost == 0:
                break
        _, _, best, box = min(tried, key=lambda t: t[:2])
        for t in tried:
            if t[2] is not best:
                t[2].remove()
        taken.append(box)
        out.append(best)
    return out


@styled
def plot_response(result: Result) -> Figure:
    """|S21| in dB of each pick against the same circuit with ideal grounding, over a
    sweep covering the requirements, with the requirement marks."""
    fig = new_figure(8.0, 4.8)
    ax = fig.add_subplot()
    picks = unique_picks(result)
    if not picks:
        _no_data(ax, "no feasible candidate to plot")
        return fig
    f = sweep_freqs(result)
    s21, ideal = responses(result, [i for i, _ in picks], f)
    ax.plot(f / 1e9, ideal, color="black", ls="--", lw=1.2, label="ideal grounding", zorder=3)
    ev = result.evaluation
    for k, (i, names) in enumerate(picks):
        text = " / ".join(PICKS[nm].plot for nm in names)
        ax.plot(f / 1e9, s21[k], color=pick_color(k), lw=1.5, zorder=4,
                label=f"{text}: {int(ev.geometry.layers[i])} layers, "
                      f"{result.ids[i]}{model_mark(result, i)}")
    ax.set_xlim(0, f[-1] / 1e9)
    req = [r.min_attenuation for r in result.problem.scenario.requirements]
    floor = min(float(np.min(ideal)), float(np.min(s21)))
    ylo = max(floor - 5.0, -1.6 * max(req, default=60.0), -150.0)
    ax.set_ylim(ylo, 5.0)
    labels = _requirement_marks(ax, result, ylo)
    ax.set_xlabel("Frequency (GHz)")
    ax.set_ylabel("|S21| (dB)")
    model = result.problem.scenario.search.via_model
    ax.set_title(f"Transmission of the picks (via model: {model})")
    ax.legend(loc="best")
    place_labels(ax, [(t, xy, "#a01010") for t, xy in labels])
    return fig
