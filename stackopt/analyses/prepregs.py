"""The prepreg answer: which stocked dielectric to put under the top copper.

One row per stocked dielectric that the design space can put directly under the top
copper (a prepreg opening of a multilayer board or the core of a two-layer one), with
the boards that answer for it among those evaluated: the cheapest that can be built, the
cheapest that meets every requirement and the most robust (the best worst margin over
the listed via models). The robustness analysis (:func:`stackopt.analyses.robust.analyse`)
builds these boards in its Monte Carlo batch, so each row also has a yield. The report,
the console, ``prepregs.png`` and ``summary.json`` read these rows; the words are in
:mod:`stackopt.outputs.prepregs`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from stackopt.search.order import lexmin

__all__ = ["PrepregRow", "top_options", "prepreg_rows", "row_boards", "most_robust_row",
           "cheapest_meeting_row"]


@dataclass(frozen=True)
class PrepregRow:
    """One stocked top dielectric; indices into the result (``None``: no such board was
    evaluated)."""

    name: str
    kind: str  # prepreg or core
    thickness: float  # m
    er: float
    cheapest: int | None  # cheapest board with it that can be built
    cheapest_meeting: int | None  # cheapest with it meeting every requirement
    most_robust: int | None  # best worst-over-models margin with it
    nearest: int | None = None  # without a board that can be built: the least violating


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
    """The element of ``idx`` first by ``keys`` (primary first), then by index."""
    if not len(idx):
        return None
    return int(idx[lexmin([k[idx] for k in reversed(keys)])])  # then by index


def prepreg_rows(result) -> list[PrepregRow]:
    """One :class:`PrepregRow` per stocked top dielectric reachable in the space (the rows
    the robustness analysis kept on the result, found once per run)."""
    if result.prepregs is not None:
        return result.prepregs
    ev = result.evaluation
    names = result.problem.space.slot_names(result.candidates, 0).astype(str)
    v = (np.stack(list(ev.violations.values())) if ev.violations
         else np.zeros((1, result.n)))
    broken, total = (v > 0).sum(axis=0), v.sum(axis=0)
    robust = result.robust_margin
    out = []
    for name, kind, t, er in top_options(result.problem.space):  # a few dozen options
        with_it = np.flatnonzero(names == name)
        use = with_it[result.feasible[with_it]]
        ok = use[result.meets[use]]
        out.append(PrepregRow(
            name, kind, t, er,
            cheapest=_first(use, ev.unit_cost, -ev.margin),
            cheapest_meeting=_first(ok, ev.unit_cost, -ev.margin),
            most_robust=_first(use, -robust, -ev.margin, ev.unit_cost),
            nearest=None if len(use) else _first(with_it, broken, total)))
    return out


def row_boards(rows: list[PrepregRow]) -> np.ndarray:
    """Every board the rows name (cheapest, cheapest meeting, most robust), sorted."""
    idx = {i for r in rows for i in (r.cheapest, r.cheapest_meeting, r.most_robust)
           if i is not None}
    return np.array(sorted(idx), dtype=np.int64)


def cheapest_meeting_row(result, rows: list[PrepregRow]) -> PrepregRow | None:
    """The row whose board meeting every requirement is the cheapest (ties: margin)."""
    ev = result.evaluation
    meet = [r for r in rows if r.cheapest_meeting is not None]
    return min(meet, key=lambda r: (ev.unit_cost[r.cheapest_meeting],
                                    -ev.margin[r.cheapest_meeting], r.name), default=None)


def most_robust_row(result, rows: list[PrepregRow]) -> PrepregRow | None:
    """The row whose most robust board has the highest yield (sampled), then the best
    worst margin over the via models, then the lowest cost."""
    ev, y = result.evaluation, result.yield_or_low
    rob = [r for r in rows if r.most_robust is not None]
    return min(rob, key=lambda r: (-y[r.most_robust], -result.robust_margin[r.most_robust],
                                   ev.unit_cost[r.most_robust], r.name), default=None)
