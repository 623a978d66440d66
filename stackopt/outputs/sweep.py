"""Cost against quantity, for people: the summary rows, the plot and the report section of
a :class:`~stackopt.analyses.quantities.QuantitySweep`.

The rows name every pick of each lot's search plus ``recommended`` (the board
:func:`~stackopt.outputs.facts.selected_index` recommends at that lot).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from matplotlib.figure import Figure
from matplotlib.ticker import FuncFormatter

from stackopt.analyses.quantities import QuantitySweep, quantity_grid, unit_cost_curve
from stackopt.outputs.facts import money, selected_index
from stackopt.outputs.plots import new_figure, pick_color, plain, styled
from stackopt.search.picks import PICKS

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["SWEEP_PICKS", "label", "named_picks", "sweep_summary", "sweep_sentence",
           "sweep_section", "plot_quantities"]

#: The picks the sweep's table, sentence and console show (every pick is in the JSON).
SWEEP_PICKS = ("cheapest_two_layer", "cheapest_meeting_requirements", "recommended")
#: The record fields each pick keeps per lot.
_FIELDS = ("id", "layers", "unit_cost", "lot_cost", "margin_dB", "meets_requirements")
_WORDS = {2: "two", 4: "four", 6: "six", 8: "eight", 10: "ten", 12: "twelve"}


def label(name: str) -> str:
    """A pick's name for people."""
    return "Recommended" if name == "recommended" else (
        PICKS[name].report if name in PICKS else name)


def named_picks(result: Result) -> dict[str, int | None]:
    """Index of every pick of a search, plus ``recommended`` (the sweep's rows and the
    fab comparison both show these)."""
    out = dict(result.picks)
    out["recommended"] = selected_index(result)
    return out


def sweep_summary(sweep: QuantitySweep) -> list[dict]:
    """``summary.json``'s ``quantity_sweep``: per lot, each pick's id, layers, unit and lot
    cost, margin (``null`` where nothing qualifies)."""
    rows = []
    for q, r in zip(sweep.quantities, sweep.results, strict=True):
        row: dict = {"quantity": q}
        for name, i in named_picks(r).items():
            row[name] = None if i is None else {k: r.record(i)[k] for k in _FIELDS}
        rows.append(row)
    return rows


def _pairs(sweep: QuantitySweep) -> list[tuple[int, float, float, int]]:
    """Per lot where both exist: (boards, unit cost of the recommended board, of the
    cheapest two-layer board, layers of the recommended one)."""
    out = []
    for q, r in zip(sweep.quantities, sweep.results, strict=True):
        p = named_picks(r)
        a, t = p["recommended"], p["cheapest_two_layer"]
        if a is not None and t is not None:
            u = r.evaluation.unit_cost
            out.append((q, float(u[a]), float(u[t]), int(r.evaluation.geometry.layers[a])))
    return out


def _board(result: Result, i: int | None) -> tuple | None:
    """A board's identity (every design choice), comparable across lots' searches."""
    return None if i is None else tuple(result.candidates.take(np.array([i])).matrix()[0].tolist())


def _changes(sweep: QuantitySweep, name: str) -> str:
    """``" The ... board changes with quantity (C1 at 100, C2 from 10,000) ..."`` when
    the board a pick names changes between lots, else ``""``."""
    parts, last = [], None
    for k, (q, r) in enumerate(zip(sweep.quantities, sweep.results, strict=True)):
        i = named_picks(r)[name]
        board = _board(r, i)
        if k == 0 or board != last:
            ident = "none" if i is None else r.ids[i]
            parts.append(f"{ident} from {q:,}" if k else f"{ident} at {q:,}")
        last = board
    if len(parts) < 2:
        return ""
    what = {"recommended": "recommended board",
            "cheapest_meeting_requirements": "cheapest board meeting the requirements"
            }.get(name, f"board picked as {label(name).lower()}")
    return f" The {what} changes with quantity (" + ", ".join(parts) + ")."


def sweep_sentence(sweep: QuantitySweep) -> str:
    """One sentence on the trend or the break-even between the recommended board and the
    cheapest two-layer one."""
    cur = sweep.currency
    qs = sweep.quantities
    pairs = _pairs(sweep)
    recs = [named_picks(r)["recommended"] for r in sweep.results]
    if all(i is None for i in recs):
        return "No board was evaluated at these quantities."
    if not pairs:
        r0, r1 = sweep.results[0], sweep.results[-1]
        i0, i1 = recs[0], recs[-1]
        if i0 is None or i1 is None:
            return "The recommendation is missing at some quantities."
        return (f"No two-layer board is feasible; the recommended board costs "
                f"{money(r0.evaluation.unit_cost[i0], cur)} per board at {qs[0]:,} and "
                f"{money(r1.evaluation.unit_cost[i1], cur)} at {qs[-1]:,}."
                + _changes(sweep, "recommended"))
    (q0, a0, _t0, _n0), (q1, a1, _t1, n1) = pairs[0], pairs[-1]
    layers = [n for *_, n in pairs]
    if set(layers) == {2}:
        return (f"A two-layer board is recommended at every quantity: "
                f"{money(a0, cur)} per board at {q0:,}, {money(a1, cur)} at {q1:,}."
                + _changes(sweep, "recommended"))
    d = [(q, a - t) for q, a, t, _n in pairs]
    lot0, lot1 = d[0][1] * d[0][0], d[-1][1] * d[-1][0]
    if len(set(layers)) > 1:
        steps = [f"{n} at {q:,}" for k, (q, *_, n) in enumerate(pairs)
                 if k == 0 or n != layers[k - 1]]
        text = ("The recommended board's layer count changes with quantity ("
                + ", ".join(steps) + "); against the cheapest two-layer board it costs "
                f"{_more(d[0][1], cur)} per board at {d[0][0]:,} and {_more(d[-1][1], cur)} "
                f"at {d[-1][0]:,}.")
    else:
        words = _WORDS.get(n1, str(n1)).capitalize()
        text = (f"{words} layers cost {_more(d[0][1], cur)} per board than the cheapest "
                f"two-layer board at {d[0][0]:,}, {_more(d[-1][1], cur)} at {d[-1][0]:,}; ")
        if lot0 > 0 and lot1 > 0:
            text += (f"the extra for the lot {'grows' if lot1 >= lot0 else 'shrinks'} from "
                     f"{money(lot0, cur, 0)} to {money(lot1, cur, 0)}.")
        else:
            text += (f"for the whole lot {_more(lot0, cur, 0)} and "
                     f"{_more(lot1, cur, 0)}.")
    sign = [x > 0 for _, x in d]
    for k in range(1, len(d)):
        if sign[k] != sign[k - 1]:
            text += (f" The break-even lies between {d[k - 1][0]:,} and {d[k][0]:,} boards.")
            break
    return text + _changes(sweep, "cheapest_meeting_requirements")


def _more(x: float, cur: str, digits: int = 2) -> str:
    """``"0.12 EUR more"`` or ``"0.05 EUR less"``."""
    return f"{money(abs(x), cur, digits)} {'more' if x >= 0 else 'less'}"


def sweep_section(sweep: QuantitySweep) -> list[tuple]:
    """Report blocks: heading, the sentence, the table and the plot."""
    cur = sweep.currency
    head = ["Boards", *(label(n) for n in SWEEP_PICKS), "Extra per board", "Extra per lot"]
    rows = []
    for q, r in zip(sweep.quantities, sweep.results, strict=True):
        p = named_picks(r)
        u = r.evaluation.unit_cost
        cells = [f"{q:,}"]
        for n in SWEEP_PICKS:
            i = p[n]
            cells.append("none" if i is None else f"{r.ids[i]}: {money(u[i], cur)}")
        a, t = p["recommended"], p["cheapest_two_layer"]
        if a is None or t is None:
            cells += ["n/a", "n/a"]
        else:
            cells += [money(u[a] - u[t], cur), money((u[a] - u[t]) * q, cur, 0)]
        rows.append(cells)
    return [("h2", "Cost against quantity"), ("p", sweep_sentence(sweep)),
            ("table", head, rows),
            ("img", "quantities", "Cost per board against the lot size (log scale) for each "
             "pick; the dotted lines are the fab's price breaks, the points the lot sizes "
             "searched.")]


@styled
def plot_quantities(sweep: QuantitySweep) -> Figure:
    """Cost per board against quantity (log x), one line per pick: between the lot sizes
    searched, the board picked at the nearest one re-priced at every quantity, so the
    price-break steps (a break and the lot just below it are both on the curve) and the
    fall of the set-up per board show; the searched lots as points."""
    fig = new_figure(8.0, 4.8)
    ax = fig.add_subplot()
    cur = sweep.currency
    qs = np.asarray(sweep.quantities, dtype=float)
    table = sweep.results[0].problem.table
    lo, hi = max(1, int(qs[0] / 2)), int(qs[-1] * 2)
    grid = quantity_grid(lo, hi, table.base_price.quantities, n=200)
    near = np.abs(np.log(grid)[:, None] - np.log(qs)[None, :]).argmin(axis=1)
    # one line per distinct sequence of boards (pick names sharing it share the line)
    lines: dict[tuple, list[str]] = {}
    for name in SWEEP_PICKS:
        seq = tuple(named_picks(r)[name] for r in sweep.results)
        lines.setdefault(seq, []).append(name)
    drawn: list[float] = []
    for k, (seq, names) in enumerate(lines.items()):
        if all(i is None for i in seq):
            continue
        y = np.full(len(grid), np.nan)
        for j, (r, i) in enumerate(zip(sweep.results, seq, strict=True)):
            if i is None:
                continue
            sel = near == j
            y[sel] = unit_cost_curve(r, [i], grid[sel])[:, 0]
        pts = [(q, r.evaluation.unit_cost[i]) for q, r, i in
               zip(sweep.quantities, sweep.results, seq, strict=True) if i is not None]
        color = pick_color(k)
        ax.plot(grid, y, color=color, lw=1.6,
                label=plain(" = ".join(label(n) for n in names)))
        ax.plot([p[0] for p in pts], [p[1] for p in pts], "o", color=color, ms=5)
        drawn += [float(np.nanmin(y)), float(np.nanmax(y))]
    breaks = [b for b in table.base_price.quantities if lo < b <= hi]
    for k, b in enumerate(breaks):
        ax.axvline(b, color="0.5", ls=":", lw=0.8,
                   label="price break of the fab" if k == 0 else None)
    ax.set_xscale("log")
    if drawn:
        if min(drawn) > 0 and max(drawn) / min(drawn) > 8:  # a wide range: log too
            ax.set_yscale("log")
        ax.legend(loc="upper right")
    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:,.0f}"))
    ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:g}"))
    ax.yaxis.set_minor_formatter(FuncFormatter(lambda v, _: ""))
    ax.set_xlabel("Boards in the lot")
    ax.set_ylabel(f"Cost per board ({plain(cur)})")
    ax.set_title(plain(f"Cost per board against quantity — {table.fab}"))
    return fig
