"""The prepreg answer: which stocked dielectric to put under the top copper.

One row per stocked dielectric that the design space can put directly under the top
copper (a prepreg opening of a multilayer board or the core of a two-layer one): the
cheapest feasible board using it among those evaluated, its cost and margin and whether
it meets every requirement, and the best margin reached with it. One sentence names the
cheapest option that meets and the one with the most margin (the robust margin where the
search computes one). The report, the console and ``prepregs.png`` read these rows.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from stackopt.outputs.facts import db, mm, money, money_digits, top_dielectric
from stackopt.outputs.reasons import because

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["PrepregRow", "top_options", "prepreg_rows", "prepreg_sentence", "prepreg_table"]


@dataclass(frozen=True)
class PrepregRow:
    """One stocked top dielectric (indices into the result; ``None``: no feasible board
    with it was evaluated)."""

    name: str
    kind: str  # prepreg or core
    thickness: float  # m
    er: float
    cheapest: int | None  # cheapest feasible board using it
    cheapest_meeting: int | None
    best: int | None  # most margin
    why: str = ""  # without a feasible board: what the nearest evaluated one breaks


def top_options(space) -> list[tuple[str, str, float, float]]:
    """(name, kind, thickness m, Dk) of every stocked dielectric the space can put under
    the top copper, thinnest first (each once)."""
    seen: dict[str, tuple[str, str, float, float]] = {}
    for a in space.arrangements:  # a handful of arrangements
        kind = a.slot_kinds[0]
        o = space.options[kind]
        if space.constructions:
            idx = sorted({b[2][0] for b in space.constructions if b[1] == a.n_layers})
        else:
            idx = list(range(len(o)))
        for j in idx:
            seen.setdefault(o.names[j], (o.names[j], kind, float(o.thickness[j]),
                                         float(o.er[j])))
    return sorted(seen.values(), key=lambda r: (r[2], r[0]))


def _first(idx: np.ndarray, *keys: np.ndarray) -> int | None:
    if not len(idx):
        return None
    return int(idx[np.lexsort((idx, *[k[idx] for k in reversed(keys)]))[0]])


def prepreg_rows(result: Result) -> list[PrepregRow]:
    """One :class:`PrepregRow` per stocked top dielectric reachable in the space."""
    ev = result.evaluation
    names = top_dielectric(result).astype(str)
    v = (np.stack(list(ev.violations.values())) if ev.violations
         else np.zeros((1, result.n)))
    broken, total = (v > 0).sum(axis=0), v.sum(axis=0)
    out = []
    for name, kind, t, er in top_options(result.problem.space):  # a few dozen options
        with_it = np.flatnonzero(names == name)
        use = with_it[result.feasible[with_it]]
        ok = use[result.meets[use]]
        why = ""
        if not len(use):
            near = _first(with_it, broken, total)
            why = ("none evaluated" if near is None else
                   "; ".join(because(result.problem, ev, near)[:1]))
        out.append(PrepregRow(name, kind, t, er,
                              _first(use, ev.unit_cost, -ev.margin),
                              _first(ok, ev.unit_cost, -ev.margin),
                              _first(use, -ev.margin, ev.unit_cost), why))
    return out


def prepreg_sentence(result: Result, rows: list[PrepregRow] | None = None) -> str:
    """The cheapest option that meets every requirement and the one with most margin."""
    rows = prepreg_rows(result) if rows is None else rows
    ev, cur = result.evaluation, result.problem.table.currency
    meet = [r for r in rows if r.cheapest_meeting is not None]
    feas = [r for r in rows if r.best is not None]
    if not feas:
        return "No stocked dielectric under the top copper gives a board that can be built."
    best = max(feas, key=lambda r: (ev.margin[r.best], -ev.unit_cost[r.best]))
    bi = best.best
    assert bi is not None
    tail = (f"the most margin comes with {best.name} ({mm(best.thickness)}): "
            f"{db(ev.margin[bi], sign=True)} on {result.ids[bi]} at "
            f"{money(ev.unit_cost[bi], cur, 3)} per board.")
    if not meet:
        return "No stocked dielectric under the top copper meets every requirement; " + tail
    c = min(meet, key=lambda r: (ev.unit_cost[r.cheapest_meeting], -ev.margin[
        r.cheapest_meeting]))
    ci = c.cheapest_meeting
    assert ci is not None
    return (f"The cheapest board that meets every requirement puts {c.name} "
            f"({mm(c.thickness)}, Dk {c.er:.2f}) under the top copper: {result.ids[ci]} at "
            f"{money(ev.unit_cost[ci], cur, 3)} per board with "
            f"{db(ev.margin[ci], sign=True)}; " + tail)


def prepreg_table(result: Result, rows: list[PrepregRow] | None = None, compact: bool = False
                  ) -> tuple[list[str], list[list[str]]]:
    """(header, rows) of the prepreg answer; ``compact`` for the console (without the
    options that give no board that can be built)."""
    rows = prepreg_rows(result) if rows is None else rows
    ev, cur = result.evaluation, result.problem.table.currency
    used = [r.cheapest for r in rows if r.cheapest is not None]
    digits = money_digits(ev.unit_cost[used]) if used else 2
    out = []
    for r in rows:
        i = r.cheapest
        if i is None and compact:
            continue  # the console lists only what can be built
        if i is None:
            cells = ([f"none can be built ({r.why})", "", "", ""] if not compact
                     else ["none", "-", "-", "-"])
        else:
            cells = [result.ids[i] + ("" if compact else f" ({int(ev.geometry.layers[i])} "
                                      "layers)"), money(ev.unit_cost[i], cur, digits),
                     db(ev.margin[i], sign=True), "yes" if result.meets[i] else "no"]
        best = db(ev.margin[r.best], sign=True) if r.best is not None else "-"
        if compact:
            out.append([r.name, mm(r.thickness), *cells, best])
        else:
            out.append([r.name, f"{r.kind}, {mm(r.thickness)}, Dk {r.er:.2f}", *cells, best])
    head = (["top dielectric", "thickness", "cheapest", "per board", "margin", "meets",
             "best margin"] if compact else
            ["Top dielectric", "Kind, thickness, Dk", "Cheapest board with it",
             "Cost per board", "Margin", "Meets every requirement", "Best margin with it"])
    return head, out
