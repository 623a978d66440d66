"""The prepreg answer in words: a table and one sentence.

The rows (:mod:`stackopt.analyses.prepregs`): one per stocked dielectric the design space
can put directly under the top copper, with the cheapest board using it that can be
built, its cost, margin, worst margin over the listed via models ("robust margin") and
Monte Carlo yield, whether it meets every requirement, and the most robust board with it.
The sentence names the cheapest option that meets and the most robust one. The report,
the console, ``prepregs.png`` and ``summary.json`` read the same rows.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from stackopt.analyses.prepregs import (
    PrepregRow,
    cheapest_meeting_row,
    most_robust_row,
    prepreg_rows,
)
from stackopt.outputs.facts import db, mm, money, money_digits
from stackopt.outputs.reasons import because
from stackopt.outputs.robust_text import model_mark

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["prepreg_sentence", "prepreg_table", "prepreg_summary", "why_none",
           "unbuildable", "yield_text"]


def yield_text(result: Result, i: int | None) -> str:
    """The Monte Carlo yield of board ``i`` as ``98.4 %`` (``-`` when not sampled)."""
    if i is None or result.yields is None or not math.isfinite(result.yields[i]):
        return "-"
    return f"{100.0 * result.yields[i]:.1f} %"


def why_none(result: Result, row: PrepregRow) -> str:
    """Why no board with this dielectric can be built: what the nearest one breaks."""
    if row.nearest is None:
        return "none evaluated"
    return "; ".join(because(result.problem, result.evaluation, row.nearest)[:1])


def _board(result: Result, i: int) -> str:
    """``C01360 at 1.956 EUR per board with +24.9 dB (+24.9 dB over every model, yield
    100.0 %)``."""
    ev, cur = result.evaluation, result.problem.table.currency
    extra = ""
    if result.robust:
        extra = (f" ({db(result.robust_margin[i], sign=True)} at worst over the listed via "
                 "models"
                 + ("" if yield_text(result, i) == "-" else
                    f", yield {yield_text(result, i)}") + ")")
    return (f"{result.ids[i]} at {money(ev.unit_cost[i], cur, 3)} per board with "
            f"{db(ev.margin[i], sign=True)}{extra}")


def prepreg_sentence(result: Result, rows: list[PrepregRow] | None = None) -> str:
    """The cheapest option that meets every requirement and the most robust one."""
    rows = prepreg_rows(result) if rows is None else rows
    rob = most_robust_row(result, rows)
    if rob is None:
        return "No stocked dielectric under the top copper gives a board that can be built."
    ri = rob.most_robust
    assert ri is not None
    c = cheapest_meeting_row(result, rows)
    what = ("board closest to meeting them" if c is None else
            "most robust board" if result.robust else "board with the most margin")
    tail = f"the {what} uses {rob.name} ({mm(rob.thickness)}): {_board(result, ri)}"
    ch = rob.cheapest
    if ch is not None and ch != ri:  # what the same dielectric gives for less
        ev, cur = result.evaluation, result.problem.table.currency
        tail += (f"; the cheapest board with it, {result.ids[ch]} at "
                 f"{money(ev.unit_cost[ch], cur, 3)}, reaches "
                 f"{db(result.robust_margin[ch], sign=True)}")
    tail += "."
    if c is None:
        return "No stocked dielectric under the top copper meets every requirement; " + tail
    ci = c.cheapest_meeting
    assert ci is not None
    if c.name == rob.name and ci == ri:
        return (f"{c.name} ({mm(c.thickness)}, Dk {c.er:.2f}) under the top copper gives "
                f"both the cheapest board that meets every requirement and the {what}: "
                f"{_board(result, ci)}.")
    return (f"The cheapest board that meets every requirement puts {c.name} "
            f"({mm(c.thickness)}, Dk {c.er:.2f}) under the top copper: {_board(result, ci)}; "
            + tail)


def prepreg_table(result: Result, rows: list[PrepregRow] | None = None, compact: bool = False
                  ) -> tuple[list[str], list[list[str]]]:
    """(header, rows) of the prepreg answer for the options that give a board that can be
    built (:func:`unbuildable` says why the others do not); ``compact`` for the console.
    Robust margin and yield columns only where the robustness analysis ran."""
    rows = prepreg_rows(result) if rows is None else rows
    ev, cur = result.evaluation, result.problem.table.currency
    used = [r.cheapest for r in rows if r.cheapest is not None]
    digits = money_digits(ev.unit_cost[used]) if used else 2
    rb = bool(result.robust)
    out = []
    for r in rows:
        i, k = r.cheapest, r.most_robust
        if i is None:
            continue  # listed apart, with the reason (unbuildable)
        cells = [result.ids[i] + ("" if compact else f" ({int(ev.geometry.layers[i])} "
                                  "layers)"), money(ev.unit_cost[i], cur, digits),
                 db(ev.margin[i], sign=True) + model_mark(result, i)]
        if rb:
            cells += [db(result.robust_margin[i], sign=True), yield_text(result, i)]
        cells.append("yes" if result.meets[i] else "no")
        if k is None:
            best = "-"
        elif compact:
            best = db((result.robust_margin if rb else ev.margin)[k], sign=True) \
                + model_mark(result, k)
        elif rb:
            best = (f"{result.ids[k]}: {db(result.robust_margin[k], sign=True)}, "
                    f"{yield_text(result, k)}{model_mark(result, k)}")
        else:
            best = f"{result.ids[k]}: {db(ev.margin[k], sign=True)}{model_mark(result, k)}"
        if compact:
            out.append([r.name, mm(r.thickness), *cells, best])
        else:
            out.append([r.name, f"{r.kind}, {mm(r.thickness)}, Dk {r.er:.2f}", *cells, best])
    rob_head = (["robust", "yield"] if compact else
                ["Robust margin (every via model)", "Yield"]) if rb else []
    head = (["top dielectric", "thickness", "cheapest", "per board", "margin", *rob_head,
             "meets", "best robust" if rb else "best margin"] if compact else
            ["Top dielectric", "Kind, thickness, Dk", "Cheapest board with it",
             "Cost per board", "Margin", *rob_head, "Meets every requirement",
             ("Most robust board with it (robust margin, yield)" if rb
              else "Most margin with it")])
    return head, out


def unbuildable(result: Result, rows: list[PrepregRow] | None = None) -> list[str]:
    """One line per stocked top dielectric that gives no board that can be built: its
    name, kind and thickness and why (what the nearest evaluated board breaks)."""
    rows = prepreg_rows(result) if rows is None else rows
    return [f"{r.name} ({r.kind}, {mm(r.thickness)}): {why_none(result, r)}"
            for r in rows if r.cheapest is None]


def _num(x) -> float | None:
    x = float(x)
    return x if math.isfinite(x) else None


def prepreg_summary(result: Result, rows: list[PrepregRow] | None = None) -> list[dict]:
    """``summary.json``'s ``prepregs``: one record per row (ids, costs, margins, robust
    margins, yields; ``null`` where there is no such board or no sample)."""
    rows = prepreg_rows(result) if rows is None else rows
    ev = result.evaluation

    def board(i: int | None) -> dict | None:
        if i is None:
            return None
        y = None if result.yields is None else _num(result.yields[i])
        return {"id": result.ids[i], "unit_cost": _num(ev.unit_cost[i]),
                "margin_dB": _num(ev.margin[i]),
                "robust_margin_dB": _num(result.robust_margin[i]), "yield": y,
                "model_spread_dB": _num(result.model_spread[i]),
                "model_dependent": bool(result.model_dependent[i]),
                "meets_requirements": bool(result.meets[i])}

    return [{"top_dielectric": r.name, "kind": r.kind, "thickness_m": r.thickness,
             "er": r.er, "cheapest": board(r.cheapest),
             "cheapest_meeting": board(r.cheapest_meeting),
             "most_robust": board(r.most_robust),
             "why_none": None if r.cheapest is not None else why_none(result, r)}
            for r in rows]
