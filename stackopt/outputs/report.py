"""The decision report: what to buy, in words a manager can forward.

:func:`report_document` builds the content as plain-text blocks (see
:mod:`stackopt.outputs.report_render`); :func:`report_markdown` and :func:`report_html`
render it. The first screen answers "are more layers worth it?": the recommended board
against the cheapest two-layer board that can be built, per board, per lot, in dB at each
requirement and per dB of margin, then the best two-layer option (see
:mod:`stackopt.outputs.case`); or, if nothing meets them, the closest candidates and what
they miss by.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from stackopt.analyses.prepregs import prepreg_rows
from stackopt.model.mitigations import MITIGATIONS
from stackopt.outputs.case import fewer_layers_words, four_layer_case
from stackopt.outputs.circuit_echo import ELEMENT_HEAD, GROUND_HEAD, element_rows, ground_rows
from stackopt.outputs.facts import (
    db,
    ground_figures,
    mm,
    money,
    money_digits,
    passband_losses,
    shortfalls,
    top_dielectric,
    unique_picks,
)
from stackopt.outputs.prepregs import prepreg_sentence, prepreg_table, unbuildable
from stackopt.outputs.reasons import because, sentence
from stackopt.outputs.report_ladder import ladder_section
from stackopt.outputs.report_render import render_html, render_markdown
from stackopt.outputs.report_robust import margin_cell, recommendation_blocks, robustness_section
from stackopt.outputs.report_sections import (
    assumptions,
    cautions,
    method_line,
    risks,
    spread_table,
    stackup_table,
)
from stackopt.search.picks import PICKS
from stackopt.units import format_quantity as fq

if TYPE_CHECKING:
    from stackopt.analyses.quantities import QuantitySweep
    from stackopt.search.results import Result

__all__ = ["report_document", "report_markdown", "report_html", "IMAGE_FILES"]

#: Image keys and the file names :func:`stackopt.outputs.bundle.write_all` gives them.
IMAGE_FILES = {"pareto": "pareto.png", "response": "response.png",
               "stackups": "stackups.png", "costs": "costs.png", "prepregs": "prepregs.png",
               "mitigations": "mitigations.png", "quantities": "quantities.png",
               "robustness": "robustness.png"}
_WORDS = {2: "two", 4: "four", 6: "six", 8: "eight", 10: "ten", 12: "twelve"}


def _layers(result: Result, i: int) -> int:
    return int(result.evaluation.geometry.layers[i])


def _words(n: int) -> str:
    return _WORDS.get(n, str(n))


def _misses(result: Result, i: int) -> str:
    """``"misses 3rd harmonic by 9.0 dB"`` (the failing requirements of ``i``)."""
    fails = [(lab, m) for lab, _a, _r, m in shortfalls(result, i) if m < 0]
    if not fails:
        return "meets every requirement"
    return "misses " + ", ".join(f"{lab} by {-m:.1f} dB" for lab, m in fails)


def _mits(result: Result, i: int) -> list[str]:
    g = result.evaluation.geometry
    return [MITIGATIONS[m].words
            for m in result.problem.space.mitigations if g.flags[m][i]]


def _compare_table(result: Result, c) -> tuple:
    """Cheapest feasible two-layer board, best two-layer board (if another) and the
    recommendation side by side; the difference is recommended minus cheapest two-layer."""
    ev, cur = result.evaluation, result.problem.table.currency
    cols = [c.two] + ([c.best_two] if c.best_two not in (None, c.two) else []) + [c.multi]
    a, b = c.two, c.multi
    digits = money_digits(ev.unit_cost[cols])
    own, mutual = ground_figures(result, cols)
    pband = passband_losses(result, cols)

    def row(label, cells, diff=""):
        return [label, *cells, diff]

    rows = [
        row("Candidate", [result.ids[i] for i in cols]),
        row("Copper layers", [str(_layers(result, i)) for i in cols],
            f"{_layers(result, b) - _layers(result, a):+d}"),
        row("Cost per board", [money(ev.unit_cost[i], cur, digits) for i in cols],
            money(ev.unit_cost[b] - ev.unit_cost[a], cur, digits)),
        row("Cost of the lot", [money(ev.lot_cost[i], cur, 0) for i in cols],
            money(ev.lot_cost[b] - ev.lot_cost[a], cur, 0)),
        row("Lead time", [f"{ev.lead_time_days[i]:g} days" for i in cols],
            f"{ev.lead_time_days[b] - ev.lead_time_days[a]:+g} days"),
    ]
    for k, r in enumerate(result.problem.scenario.requirements):
        rows.append(row(f"Attenuation at {r.label} (need {r.min_attenuation:g} dB)",
                        [db(ev.attenuation[i, k]) for i in cols],
                        db(ev.attenuation[b, k] - ev.attenuation[a, k], sign=True)))
    rows.append(row("Margin (worst requirement)", [db(ev.margin[i], sign=True) for i in cols],
                    db(ev.margin[b] - ev.margin[a], sign=True)))
    if pband is not None:
        il, rl = pband
        band = result.problem.scenario.passband_words
        rows += [row(f"Passband insertion loss (worst over {band})",
                     [db(x, 2) for x in il], db(il[-1] - il[0], 2, sign=True)),
                 row(f"Passband return loss (worst over {band})", [db(x) for x in rl])]
    rows += [
        row("Worst ground path (one element's inductance to the plane)",
            [fq(x, "inductance") for x in own]),
        row("Largest coupling between two ground connections (mutual inductance)",
            [fq(x, "inductance") if np.isfinite(x) else "none (one shared connection)"
             for x in mutual]),
        row("Mitigations", [", ".join(_mits(result, i)) or "none" for i in cols]),
        row("Finished thickness", [mm(ev.geometry.thickness[i]) for i in cols]),
    ]
    head = ["", "Cheapest two-layer"] + (["Best two-layer"] if len(cols) == 3 else []) + [
        "Recommended", "Recommended minus cheapest two-layer"]
    return ("table", head, rows)


def _nothing_meets(result: Result, c) -> list[tuple]:
    ev, cur = result.evaluation, result.problem.table.currency
    out: list[tuple] = [("h2", "Does any stackup meet the requirements?")]
    close = result.closest(3)
    text = "No. None of the evaluated stackups meets every requirement. "
    if close and result.feasible[close[0]]:
        text += (f"The closest, {result.ids[close[0]]} ({_layers(result, close[0])} layers, "
                 f"{money(ev.unit_cost[close[0]], cur)} per board), "
                 f"{_misses(result, close[0])}.")
    elif close:
        text += ("No candidate is even feasible for this fab: the nearest, "
                 f"{result.ids[close[0]]}, fails because "
                 + "; ".join(because(result.problem, ev, close[0])) + ".")
    else:
        text += "No candidate was evaluated."
    if c.status == "no_feasible_two_layer" and c.blocked_by:
        text += " " + c.blocked_words()
    out.append(("answer", text))
    out.append(("p", "Relax a requirement, allow more layers, thinner dielectrics, more "
                "vias per ground or the mitigations, or choose another fab."))
    if close:
        rows = []
        for i in close:
            fails = "; ".join(f"{lab}: {a:.1f} of {r:g} dB ({m:+.1f} dB)"
                              for lab, a, r, m in shortfalls(result, i) if m < 0)
            if not result.feasible[i]:
                fails = sentence(because(result.problem, ev, i))
            rows.append([result.ids[i], str(_layers(result, i)),
                         money(ev.unit_cost[i], cur), db(ev.margin[i], sign=True),
                         fails or "none"])
        out.append(("table", ["Candidate", "Layers", "Cost per board", "Margin",
                              "Failing requirement (got of needed) or constraint"], rows))
    return out


def first_screen(result: Result) -> list[tuple]:
    """The answer, then the comparison table (or the closest candidates)."""
    ev, cur = result.evaluation, result.problem.table.currency
    q = result.problem.scenario.board.quantity
    c = four_layer_case(result)
    if c.multi is None:
        return _nothing_meets(result, c)
    m = c.multi
    n = _layers(result, m)
    rec = (f"{result.ids[m]}, {n} layers, {money(ev.unit_cost[m], cur)} per board "
           f"({money(ev.lot_cost[m], cur, 0)} for the lot of {q:,}) with "
           f"{db(ev.margin[m], sign=True)} of margin")
    if c.status == "two_layer_meets":
        best = result.picks.get("best_overall")
        text = f"No: a two-layer board meets every requirement. The recommended one is {rec}."
        if best is not None and best != m:
            text += (f" The best candidate overall ({_layers(result, best)} layers) reaches "
                     f"{db(ev.margin[best], sign=True)} for "
                     f"{money(ev.unit_cost[best] - ev.unit_cost[m], cur)} more per board.")
        return [("h2", "Are more layers worth it?"), ("answer", text)]
    out: list[tuple] = [("h2", f"Are {_words(n)} layers worth it?")]
    if c.status == "no_two_layer_in_space":
        counts = ", ".join(str(x) for x in sorted(set(result.problem.space.layer_counts)))
        fewer = fewer_layers_words(result, n)
        out.append(("answer", f"The design space has no two-layer boards (layer counts "
                    f"searched: {counts}), so this report makes no claim about them. The "
                    f"recommended stackup is {rec}." + (" " + fewer if fewer else "")))
        return out
    if c.status == "no_feasible_two_layer":
        out.append(("answer", c.blocked_words() + f" The recommended stackup is {rec}."))
        return out
    d_unit, d_lot = c.d_unit, c.d_lot
    assert d_unit is not None and d_lot is not None and c.two is not None
    digits = money_digits([ev.unit_cost[c.two], ev.unit_cost[m]])
    gains = ", ".join(f"{d:+.1f} dB at {lab}" for _k, lab, d in c.d_att)
    more = "more" if d_unit > 0 else "less"
    text = (f"{_words(n).capitalize()} layers cost {money(abs(d_unit), cur, digits)} {more} "
            f"per board than the cheapest two-layer board that can be built "
            f"({money(abs(d_lot), cur, 0)} {more} for the lot of {q:,}) and buy {gains}")
    if d_unit > 0 and c.cost_per_db is not None:
        text += (f": {money(c.cost_per_db, cur, 3)} per board "
                 f"({money(c.lot_per_db, cur, 0)} per lot) for each dB of margin.")
    elif d_unit <= 0:
        text += ": no trade-off, the multilayer board is both cheaper and better."
    else:
        text += "."
    text += (f" The recommended board is {rec}; the cheapest two-layer board "
             f"({result.ids[c.two]}, {money(ev.unit_cost[c.two], cur, digits)}) "
             f"{_misses(result, c.two)}.")
    if c.best_two is not None and c.best_two != c.two:
        b = c.best_two
        mits = _mits(result, b)
        text += (f" The best two-layer option, {result.ids[b]} at "
                 f"{money(ev.unit_cost[b], cur, digits)} per board, "
                 + (f"adds {' and '.join(mits)} and " if mits else "")
                 + f"{'' if result.meets[b] else 'still '}"
                 f"{_misses(result, b)}.")
    out.append(("answer", text))
    out.append(_compare_table(result, c))
    return out


def picks_table(result: Result) -> tuple:
    """Every named pick in one table."""
    ev, cur = result.evaluation, result.problem.table.currency
    rows = []
    picks = unique_picks(result)
    idx = np.array([i for i, _ in picks], dtype=np.int64)
    tops = top_dielectric(result, idx)  # the picks' rows only, not every candidate's
    heights = result.problem.space.geometry(result.candidates.take(idx)).trace_height
    pband = passband_losses(result, idx.tolist())
    for k, (i, names) in enumerate(picks):
        mit = [m for m in result.problem.space.mitigations if ev.geometry.flags[m][i]]
        rows.append([" / ".join(PICKS[n].report for n in names), result.ids[i],
                     str(_layers(result, i)), money(ev.unit_cost[i], cur),
                     money(ev.lot_cost[i], cur, 0), margin_cell(result, i),
                     f"{ev.lead_time_days[i]:g} days",
                     f"{tops[k]}, {mm(heights[k])}",
                     ", ".join(m.replace("_", " ") for m in mit) or "none"])
        if pband is not None:
            rows[-1].insert(6, f"{db(pband[0][k], 2)} / {db(pband[1][k])}")
    head = ["Pick", "Candidate", "Layers", "Per board", "Lot", "Margin", "Lead time",
            "Top dielectric", "Mitigations"]
    if pband is not None:
        head.insert(6, "Passband loss / return loss (worst)")
    return ("table", head, rows)


def report_document(result: Result, sweep: QuantitySweep | None = None) -> list[tuple]:
    """The report's content as plain-text blocks, first screen first; ``sweep`` (a
    :class:`~stackopt.analyses.quantities.QuantitySweep`) adds the cost against quantity."""
    sc = result.problem.scenario
    blocks: list[tuple] = [("h1", f"Stackup decision: {sc.name}")]
    if sc.description:
        blocks.append(("p", sc.description))
    if sc.invented or result.problem.table.invented:
        blocks.append(("note", "Demo data: the scenario and/or the cost table are invented "
                       "for trying the tool; the prices are not a quote from any fab."))
    blocks += first_screen(result)
    blocks += recommendation_blocks(result)
    blocks.append(("img", "pareto", "Cost against margin of every candidate evaluated; the "
                   "Pareto front is bold, the picks are ringed."))
    blocks.append(("note", method_line(result)))

    blocks += ladder_section(result, result.ladder)
    blocks += [("h2", "Risks"), ("ul", risks(result))]
    blocks += stackup_table(result)
    blocks += [("h2", "The picks"), picks_table(result),
               ("img", "response", "|S21| of the picks against the same circuit with ideal "
                "grounding; the red marks are the requirements."),
               ("img", "stackups", "Cross-sections of the picks."),
               ("img", "costs", "Itemised cost per board of the picks.")]
    rows = prepreg_rows(result)
    head, table = prepreg_table(result, rows)
    blocks += [("h2", "Which dielectric under the top copper?"),
               ("answer", prepreg_sentence(result, rows)),
               ("p", "One row per stocked dielectric the design space can put directly under "
                     "the top copper and build: the cheapest board using it (among those the "
                     "search evaluated) with its margin, its worst margin over the listed via "
                     "models (robust margin) and its yield over the simulated builds, and the "
                     "most robust board with it."),
               ("table", head, table)]
    if none := unbuildable(result, rows):
        blocks += [("p", f"No board that can be built puts these {len(none)} stocked "
                    "dielectrics under the top copper:"), ("ul", none)]
    blocks.append(("img", "prepregs", "Cost and margin of the cheapest board with each top "
                   "dielectric."))
    from stackopt.outputs.report_calibration import calibration_section

    blocks += calibration_section(result)
    blocks += spread_table(result)
    blocks += robustness_section(result)
    if sweep is not None:
        from stackopt.outputs.sweep import sweep_section

        blocks += sweep_section(sweep)
    circ = result.problem.scenario.circuit
    blocks += [("h2", "Assumptions"), ("ul", assumptions(result)),
               ("h3", "The circuit analysed"),
               ("p", "Every element with its value (a generated filter expanded), its "
                     "parasitics and its ground connection; then each ground connection."),
               ("table", [h.capitalize() for h in ELEMENT_HEAD], element_rows(circ))]
    if ground_rows(circ):
        blocks.append(("table", [h.capitalize() for h in GROUND_HEAD], ground_rows(circ)))
    blocks += [("h2", "Cautions"), ("ul", cautions(result))]
    return blocks


def report_markdown(result: Result, images: dict[str, str] | None = None,
                    sweep: QuantitySweep | None = None) -> str:
    """The report as Markdown; ``images`` maps image keys to relative file names
    (default :data:`IMAGE_FILES`, the names written next to ``report.md``)."""
    return render_markdown(report_document(result, sweep),
                           IMAGE_FILES if images is None else images)


def report_html(result: Result, images: dict[str, bytes] | None = None,
                sweep: QuantitySweep | None = None) -> str:
    """The report as one standalone HTML page; ``images`` maps image keys to PNG bytes,
    which are inlined (no image is shown for a missing key)."""
    return render_html(report_document(result, sweep), images,
                       title=f"stackopt: {result.problem.scenario.name}")
