"""The first-screen question, "are more layers worth it?", as numbers.

The recommended board (:func:`~stackopt.outputs.facts.selected_index`) is set against the
cheapest two-layer board that can be built (feasible), not the best two-layer one: a
mitigation that buys 0.2 dB for half the price difference would otherwise hide the true
extra cost. The best two-layer option is named beside it. When no two-layer board is
feasible, the two-layer board nearest to feasible says which constraint blocks it and by
how much. The summary's ``four_layer_case`` is :meth:`FourLayerCase.to_summary`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from stackopt.outputs.facts import money, selected_index, shortfalls
from stackopt.outputs.reasons import because, would_work_if
from stackopt.search.order import lexmin

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["FourLayerCase", "four_layer_case", "fewer_layers_words", "STATUSES"]

#: What the case can say: compared (a multilayer board is recommended and a two-layer
#: board can be built), two_layer_meets (a two-layer board is recommended),
#: no_two_layer_in_space, no_feasible_two_layer, nothing_recommended.
STATUSES = ("compared", "two_layer_meets", "no_two_layer_in_space", "no_feasible_two_layer",
            "nothing_recommended")


@dataclass(frozen=True)
class FourLayerCase:
    """The recommendation against the cheapest feasible two-layer board."""

    status: str
    two: int | None  # cheapest feasible two-layer candidate
    best_two: int | None  # best two-layer candidate (most margin)
    multi: int | None  # the recommended board
    d_unit: float | None  # multi - two, per board
    d_lot: float | None
    d_margin: float | None  # dB of worst-requirement margin bought
    d_att: tuple[tuple[str, str, float], ...]  # (requirement key, label, dB bought)
    blocked_by: tuple[str, ...] = ()  # why no two-layer board can be built, in words
    unblock: tuple[str, ...] = ()  # what would make the nearest one feasible

    @property
    def cost_per_db(self) -> float | None:
        """Extra cost per board for each dB of margin (``None``: no margin bought)."""
        if self.d_unit is None or self.d_margin is None or self.d_margin <= 1e-9:
            return None
        return self.d_unit / self.d_margin

    @property
    def lot_per_db(self) -> float | None:
        """Extra cost of the lot for each dB of margin."""
        if self.d_lot is None or self.cost_per_db is None:
            return None
        assert self.d_margin is not None
        return self.d_lot / self.d_margin

    def blocked_words(self) -> str:
        """Why no two-layer board can be built and what would change that, in sentences
        (empty unless the status is ``no_feasible_two_layer``)."""
        if not self.blocked_by:
            return ""
        text = ("No two-layer board can be built for this fab and scenario: on the nearest "
                "one " + "; ".join(self.blocked_by) + ".")
        if self.unblock:
            text += " Two layers would be feasible if " + ", or if ".join(self.unblock) + "."
        return text

    def to_summary(self, result: Result) -> dict:
        """``summary.json``'s ``four_layer_case``."""
        ids = result.ids

        def rid(i: int | None) -> str | None:
            return None if i is None else ids[i]

        def num(x: float | None) -> float | None:
            return None if x is None or not math.isfinite(x) else float(x)

        return {"status": self.status, "two_layer_id": rid(self.two),
                "multilayer_id": rid(self.multi) if self.status == "compared" else None,
                "recommended_id": rid(self.multi), "best_two_layer_id": rid(self.best_two),
                "extra_cost_per_board": num(self.d_unit),
                "extra_cost_per_lot": num(self.d_lot),
                "margin_gain_dB": num(self.d_margin),
                "attenuation_gain_dB": {k: num(d) for k, _lab, d in self.d_att},
                "cost_per_dB": num(self.cost_per_db),
                "two_layer_blocked_by": list(self.blocked_by),
                "two_layer_would_work_if": list(self.unblock)}


def _two_layer_blocker(result: Result) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Why no two-layer board is feasible (what the nearest one breaks) and what would
    make one feasible, by up to three routes: from the ladder's two-layer pool (every
    two-layer combination where the ladder enumerates them, else the search's own
    two-layer candidates; evaluated once, by the ladder)."""
    from stackopt.search.twolayer import nearest_alternatives

    pb = result.problem
    lad = result.ladder
    if lad is None or lad.pool_evaluation is None:
        return (), ()
    ev = lad.pool_evaluation
    near = nearest_alternatives(ev)
    if not near:
        return (), ()
    fixes = [" and ".join(would_work_if(pb, ev, i)) for i in near]
    return tuple(because(pb, ev, near[0])), tuple(fixes)


def four_layer_case(result: Result) -> FourLayerCase:
    """Compute the :class:`FourLayerCase` of a search result."""
    ev, picks = result.evaluation, result.picks
    layers = ev.geometry.layers
    multi = selected_index(result)
    if multi is not None and not result.meets[multi]:
        multi = None  # nothing meets: no recommendation to weigh
    two, best = picks.get("cheapest_two_layer"), picks.get("best_two_layer")
    if not np.any(result.problem.space.layer_counts == 2):
        return FourLayerCase("no_two_layer_in_space", None, None, multi, None, None, None, ())
    if two is None:
        why, fix = _two_layer_blocker(result)
        return FourLayerCase("no_feasible_two_layer", None, None, multi, None, None, None, (),
                             why, fix)
    if multi is None:
        return FourLayerCase("nothing_recommended", two, best, None, None, None, None, ())
    if int(layers[multi]) == 2:
        return FourLayerCase("two_layer_meets", two, best, multi, None, None, None, ())
    reqs = result.problem.scenario.requirements
    d_att = tuple((r.key, r.label, float(ev.attenuation[multi, k] - ev.attenuation[two, k]))
                  for k, r in enumerate(reqs))
    return FourLayerCase("compared", two, best, multi,
                         float(ev.unit_cost[multi] - ev.unit_cost[two]),
                         float(ev.lot_cost[multi] - ev.lot_cost[two]),
                         float(ev.margin[multi] - ev.margin[two]), d_att)


def fewer_layers_words(result: Result, n: int) -> str:
    """For every layer count of the space below ``n`` (when the space has no two-layer
    boards, what the recommendation is set against): the cheapest board with it that can
    be built and what it misses, or why none can be built (the nearest: fewest broken
    constraints, then the smallest total violation). Empty when there is no such count."""
    ev, cur = result.evaluation, result.problem.table.currency
    text = []
    for k in sorted(set(result.problem.space.layer_counts)):  # a few layer counts
        idx = np.flatnonzero(ev.geometry.layers == k)
        if k >= n or not len(idx):
            continue
        ok = idx[result.feasible[idx]]
        if len(ok):
            i = int(ok[lexmin((-ev.margin[ok], ev.unit_cost[ok]))])
            fails = [f"{lab} by {-m:.1f} dB" for lab, _a, _r, m in shortfalls(result, i)
                     if m < 0]
            text.append(f"The cheapest {k}-layer board that can be built, {result.ids[i]} "
                        f"at {money(ev.unit_cost[i], cur)}, "
                        + ("misses " + ", ".join(fails) if fails
                           else "meets every requirement") + ".")
        else:
            v = np.stack([ev.violations[c][idx] for c in ev.violations])
            i = int(idx[lexmin((v.sum(axis=0), (v > 0).sum(axis=0)))])
            text.append(f"No {k}-layer board can be built (the nearest, {result.ids[i]}: "
                        f"{'; '.join(because(result.problem, ev, i))}).")
    return " ".join(text)
