"""Report section "Can we stay on two layers?": the mitigation ladder, the Pareto set of
two-layer combinations and the four-layer board (plain-text blocks, see
:mod:`stackopt.outputs.report_render`)."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from stackopt.model.mitigations import MITIGATIONS
from stackopt.outputs.facts import db, mm, money
from stackopt.outputs.reasons import because, would_work_if

if TYPE_CHECKING:
    from stackopt.search.ladder import Ladder
    from stackopt.search.results import Result

__all__ = ["ladder_section"]


def _misses(ladder: Ladder, k: int) -> str:
    ev, reqs = ladder.evaluation, ladder.problem.scenario.requirements
    fails = [f"{r.label} by {r.min_attenuation - ev.attenuation[k, j]:.1f} dB"
             for j, r in enumerate(reqs) if ev.attenuation[k, j] < r.min_attenuation]
    return ", ".join(fails) or "nothing"


def _answer(ladder: Ladder, cur: str, q: int) -> str:
    ev = ladder.evaluation
    c0, end = float(ev.unit_cost[0]), len(ev.unit_cost) - 1
    k = ladder.first_meeting
    if ladder.blocked:
        pb = ladder.problem
        text = (f"No: none of the {ladder.combinations:,} two-layer combinations can be "
                "built for this fab and scenario. The nearest one ("
                + ladder.changes[0] + ") fails because " + "; ".join(because(pb, ev, 0))
                + "; it would be feasible if " + " and ".join(would_work_if(pb, ev, 0))
                + ".")
        fev = ladder.four_layer_evaluation
        if fev is not None:
            text += (f" The cheapest four-layer board that meets every requirement costs "
                     f"{money(fev.unit_cost[0], cur)} per board with "
                     f"{db(fev.margin[0], sign=True)} of margin.")
        else:
            text += " " + ladder.four_layer_note
        return text
    if k == 0:
        text = (f"Yes: the plain two-layer board already meets every requirement, at "
                f"{money(c0, cur)} per board with {db(ev.margin[0], sign=True)} of margin.")
    elif k is not None:
        d = float(ev.unit_cost[k]) - c0
        d_lot = float(ev.lot_cost[k] - ev.lot_cost[0])
        text = (f"Yes, with mitigations: step {k} meets every requirement at "
                f"{money(ev.unit_cost[k], cur)} per board, {money(d, cur)} more than the plain "
                f"two-layer board ({money(d_lot, cur, 0)} more for the lot of {q:,}), with "
                f"{db(ev.margin[k], sign=True)} of margin.")
    else:
        text = (f"Not with the mitigations modelled: the best two-layer board reachable "
                f"(step {end}, {money(ev.unit_cost[end], cur)} per board) still misses "
                f"{_misses(ladder, end)}. This is where two layers stop being enough.")
    fev = ladder.four_layer_evaluation
    if fev is not None:
        c4 = float(fev.unit_cost[0])
        ref = float(ev.unit_cost[k]) if k is not None else c0
        what = "the two-layer board that meets them" if k is not None else "the plain board"
        text += (f" The cheapest four-layer board that meets every requirement costs "
                 f"{money(c4, cur)} per board ({money(c4 - ref, cur)} more than {what}) with "
                 f"{db(fev.margin[0], sign=True)} of margin.")
    else:
        text += " " + ladder.four_layer_note
    return text


def _step_rows(ladder: Ladder, cur: str) -> list[list[str]]:
    ev, reqs = ladder.evaluation, ladder.problem.scenario.requirements
    rows = []
    for k in range(len(ev.unit_cost)):
        dc = 0.0 if k == 0 else float(ev.unit_cost[k] - ev.unit_cost[k - 1])
        free = abs(dc) <= 1e-9 * max(1.0, float(ev.unit_cost[k]))
        dm = 0.0 if k == 0 else float(ev.margin[k] - ev.margin[k - 1])
        per_db = ("" if k == 0 else "free" if free else
                  money(dc / dm, cur, 3) if dm > 1e-9 else "no gain")
        row = [str(k), ladder.changes[k],
               "" if k == 0 else ("free" if free else money(dc, cur, 3)),
               money(ev.unit_cost[k], cur, 3), per_db]
        for j in range(len(reqs)):
            row.append(db(ev.attenuation[k, j]) if k == 0 else
                       db(ev.attenuation[k, j] - ev.attenuation[k - 1, j], sign=True))
        row += [db(ev.margin[k], sign=True),
                "yes" if ev.feasible[k] and ev.margin[k] >= 0 else "no"]
        rows.append(row)
    return rows


def _pareto_rows(ladder: Ladder, cur: str) -> list[list[str]]:
    sp, pev = ladder.problem.space, ladder.pareto_evaluation
    rows = []
    for i in range(len(pev.unit_cost)):
        mits = [MITIGATIONS[m].words for k, m in enumerate(sp.mitigations)
                if ladder.pareto.mit[i, k]]
        rows.append([money(pev.unit_cost[i], cur, 3), db(pev.margin[i], sign=True),
                     mm(pev.geometry.thickness[i]), mm(pev.geometry.drill[i]),
                     str(int(pev.geometry.vias[i])), ", ".join(mits) or "none"])
    return rows


def ladder_section(result: Result, ladder: Ladder | None) -> list[tuple]:
    """The section's blocks (empty when the space has no two-layer boards)."""
    if ladder is None:
        return []
    cur = result.problem.table.currency
    q = result.problem.scenario.board.quantity
    reqs = result.problem.scenario.requirements
    if ladder.blocked:
        return [("h2", "Can we stay on two layers? The mitigation ladder"),
                ("answer", _answer(ladder, cur, q)),
                ("p", "The ladder starts only from a two-layer board that can be built; here "
                      "none can, so there is no ladder to climb and nothing to plot.")]
    head = ["Step", "Change", "Δ cost per board", "Cost per board", "Δ cost per dB of margin",
            *[f"Δ at {r.label} (dB)" for r in reqs], "Margin", "Meets"]
    out: list[tuple] = [
        ("h2", "Can we stay on two layers? The mitigation ladder"),
        ("answer", _answer(ladder, cur, q)),
        ("p", "The ladder starts from the plain two-layer board (the cheapest feasible one "
              "with no mitigation and the fewest vias per ground connection) and applies, "
              "one at a time, the single change that buys the most dB of margin per unit "
              "cost, a free one first: one more via, a larger drill, a thinner core within "
              "the thickness window, via-in-pad, a coplanar ground pour with stitching vias, "
              "an own via for every element. Cost and margin never fall along it. A "
              "'combination' step jumps to the best costlier two-layer combination where "
              "no single change helps any more (a filter's margin is not monotone in the "
              "ground inductance). Step 0 shows the attenuation itself, later steps its "
              "change."),
        ("table", head, _step_rows(ladder, cur)),
        ("img", "mitigations", "Cost per board against margin along the ladder (numbered "
         "steps), the Pareto set of two-layer combinations and the cheapest four-layer "
         "board meeting the requirements."),
    ]
    n = ladder.combinations
    out += [("h3", "Every worthwhile two-layer combination (Pareto set)"),
            ("p", f"Non-dominated in cost and margin among {n:,} two-layer combinations"
                  + (" (all of them)." if ladder.exhaustive else
                     " evaluated by the search (not all of them).")),
            ("table", ["Cost per board", "Margin", "Thickness", "Drill", "Vias per ground",
                       "Mitigations"], _pareto_rows(ladder, cur))]
    if not np.any(ladder.pareto_evaluation.margin >= 0) and len(reqs):
        out.append(("note", "No two-layer combination meets every requirement."))
    return out
