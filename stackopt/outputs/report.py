"""The decision report: what to buy, in words a manager can forward.

:func:`report_document` builds the content as plain-text blocks (see
:mod:`stackopt.outputs.report_render`); :func:`report_markdown` and :func:`report_html`
render it. The first screen answers "are more layers worth it?": the best two-layer option
against the cheapest stackup meeting every requirement, per board, per lot, in dB at each
requirement and per dB of margin; or, if nothing meets them, the closest candidates and
what they miss by.
"""

from __future__ import annotations

from stackopt.outputs.facts import (
    comparison,
    db,
    mm,
    money,
    shortfalls,
    top_dielectric,
    unique_picks,
)
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

__all__ = ["report_document", "report_markdown", "report_html", "IMAGE_FILES"]

#: Image keys and the file names :func:`stackopt.outputs.bundle.write_all` gives them.
IMAGE_FILES = {"pareto": "pareto.png", "response": "response.png",
               "stackups": "stackups.png", "costs": "costs.png", "prepregs": "prepregs.png",
               "mitigations": "mitigations.png", "quantities": "quantities.png",
               "robustness": "robustness.png"}
_WORDS = {2: "two", 4: "four", 6: "six", 8: "eight", 10: "ten", 12: "twelve"}


def _layers(result, i: int) -> int:
    return int(result.evaluation.geometry.layers[i])


def _words(n: int) -> str:
    return _WORDS.get(n, str(n))


def _misses(result, i: int) -> str:
    """``"misses 3rd harmonic by 9.0 dB"`` (the failing requirements of ``i``)."""
    fails = [(lab, m) for lab, _a, _r, m in shortfalls(result, i) if m < 0]
    if not fails:
        return "meets every requirement"
    return "misses " + ", ".join(f"{lab} by {-m:.1f} dB" for lab, m in fails)


def _compare_table(result, two: int, meet: int) -> tuple:
    ev, cur = result.evaluation, result.problem.table.currency
    a, b = two, meet
    rows = [
        ["Candidate", result.ids[a], result.ids[b], ""],
        ["Copper layers", str(_layers(result, a)), str(_layers(result, b)),
         f"{_layers(result, b) - _layers(result, a):+d}"],
        ["Cost per board", money(ev.unit_cost[a], cur), money(ev.unit_cost[b], cur),
         money(ev.unit_cost[b] - ev.unit_cost[a], cur)],
        ["Cost of the lot", money(ev.lot_cost[a], cur, 0), money(ev.lot_cost[b], cur, 0),
         money(ev.lot_cost[b] - ev.lot_cost[a], cur, 0)],
        ["Lead time", f"{ev.lead_time_days[a]:g} days", f"{ev.lead_time_days[b]:g} days",
         f"{ev.lead_time_days[b] - ev.lead_time_days[a]:+g} days"],
    ]
    for k, r in enumerate(result.problem.scenario.requirements):
        rows.append([f"Attenuation at {r.label} (need {r.min_attenuation:g} dB)",
                     db(ev.attenuation[a, k]), db(ev.attenuation[b, k]),
                     db(ev.attenuation[b, k] - ev.attenuation[a, k], sign=True)])
    rows += [
        ["Margin (worst requirement)", db(ev.margin[a], sign=True), db(ev.margin[b], sign=True),
         db(ev.margin[b] - ev.margin[a], sign=True)],
        ["Ground inductance (sum)", f"{ev.inductance[a] * 1e9:.3g} nH",
         f"{ev.inductance[b] * 1e9:.3g} nH", ""],
        ["Finished thickness", mm(ev.geometry.thickness[a]), mm(ev.geometry.thickness[b]), ""],
    ]
    return ("table", ["", "Best two-layer", "Cheapest meeting the requirements",
                      "Difference"], rows)


def first_screen(result) -> list[tuple]:
    """The answer, then the comparison table (or the closest candidates)."""
    ev, cur = result.evaluation, result.problem.table.currency
    q = result.problem.scenario.board.quantity
    c = comparison(result)
    out: list[tuple] = []
    if c.meet is None:
        out.append(("h2", "Does any stackup meet the requirements?"))
        close = result.closest(3)
        out.append(("answer", "No. None of the evaluated stackups meets every requirement. "
                    + (f"The closest, {result.ids[close[0]]} ({_layers(result, close[0])} "
                       f"layers, {money(ev.unit_cost[close[0]], cur)} per board), "
                       f"{_misses(result, close[0])}." if close else
                       "No candidate is even feasible for this fab.")))
        out.append(("p", "Relax a requirement, allow more layers, thinner dielectrics, more "
                    "vias per ground or the mitigations, or choose another fab."))
        if close:
            rows = []
            for i in close:
                fails = "; ".join(f"{lab}: {a:.1f} of {r:g} dB ({m:+.1f} dB)"
                                  for lab, a, r, m in shortfalls(result, i) if m < 0)
                rows.append([result.ids[i], str(_layers(result, i)),
                             money(ev.unit_cost[i], cur), db(ev.margin[i], sign=True),
                             fails or "none"])
            out.append(("table", ["Candidate", "Layers", "Cost per board", "Margin",
                                  "Failing requirement (got of needed)"], rows))
        return out
    n = _layers(result, c.meet)
    if c.two_meets:
        out.append(("h2", "Are more layers worth it?"))
        best = result.picks.get("best_overall")
        text = (f"No: a two-layer board meets every requirement. The cheapest, "
                f"{result.ids[c.meet]}, costs {money(ev.unit_cost[c.meet], cur)} per board "
                f"({money(ev.lot_cost[c.meet], cur, 0)} for the lot of {q:,}) with "
                f"{db(ev.margin[c.meet], sign=True)} of margin.")
        if best is not None and best != c.meet:
            text += (f" The best candidate overall ({_layers(result, best)} layers) reaches "
                     f"{db(ev.margin[best], sign=True)} for "
                     f"{money(ev.unit_cost[best] - ev.unit_cost[c.meet], cur)} more per board.")
        out.append(("answer", text))
        return out
    out.append(("h2", f"Is {_words(n)} layers worth it?"))
    if c.two is None:
        out.append(("answer", f"Only a multilayer board works here: no two-layer candidate is "
                    f"feasible for this fab and scenario. The cheapest stackup meeting every "
                    f"requirement is {result.ids[c.meet]}, {n} layers, "
                    f"{money(ev.unit_cost[c.meet], cur)} per board "
                    f"({money(ev.lot_cost[c.meet], cur, 0)} for the lot of {q:,})."))
        return out
    d_unit, d_lot = c.d_unit, c.d_lot
    assert d_unit is not None and d_lot is not None  # both sides exist here
    gains = ", ".join(f"{d:+.1f} dB at {lab}" for lab, d in c.d_att)
    if d_unit > 0:
        price_words = (f"cost {money(d_unit, cur)} more per board "
                       f"({money(d_lot, cur, 0)} more for the lot of {q:,})")
    else:  # the multilayer board is no dearer than the best (mitigated) two-layer one
        price_words = (f"cost {money(-d_unit, cur)} less per board than the best "
                       f"two-layer option ({money(-d_lot, cur, 0)} less for the lot of "
                       f"{q:,})")
    text = (f"{_words(n).capitalize()} layers {price_words} and buy {gains}. "
            f"The best two-layer option ({result.ids[c.two]}) {_misses(result, c.two)}; "
            f"the cheapest {n}-layer stackup that meets every requirement "
            f"({result.ids[c.meet]}) has {db(ev.margin[c.meet], sign=True)} of margin.")
    if d_unit <= 0:
        text += (" Against the best two-layer option there is no trade-off: the multilayer "
                 "board is both cheaper and better.")
    if d_unit > 0 and c.cost_per_db is not None:
        text += (f" That is {money(c.cost_per_db, cur, 3)} per board "
                 f"({money(c.lot_per_db, cur, 0)} per lot) for each dB of margin.")
    cheap2 = result.picks.get("cheapest_two_layer")
    if cheap2 is not None and cheap2 != c.two:
        d = ev.unit_cost[c.meet] - ev.unit_cost[cheap2]
        text += (f" Against the cheapest two-layer board ({result.ids[cheap2]}, "
                 f"{db(ev.margin[cheap2], sign=True)}) it costs {money(abs(d), cur)} per "
                 f"board {'more' if d > 0 else 'less'}.")
    out.append(("answer", text))
    out.append(_compare_table(result, c.two, c.meet))
    return out


def picks_table(result) -> tuple:
    """Every named pick in one table."""
    ev, cur = result.evaluation, result.problem.table.currency
    rows = []
    tops = top_dielectric(result)
    for i, names in unique_picks(result):
        mit = [m for m in result.problem.space.mitigations if ev.geometry.flags[m][i]]
        rows.append([" / ".join(PICKS[n].report for n in names), result.ids[i],
                     str(_layers(result, i)), money(ev.unit_cost[i], cur),
                     money(ev.lot_cost[i], cur, 0), margin_cell(result, i),
                     f"{ev.lead_time_days[i]:g} days",
                     f"{tops[i]}, {mm(ev.geometry.trace_height[i])}",
                     ", ".join(m.replace("_", " ") for m in mit) or "none"])
    return ("table", ["Pick", "Candidate", "Layers", "Per board", "Lot", "Margin",
                      "Lead time", "Top dielectric", "Mitigations"], rows)


def report_document(result, sweep=None) -> list[tuple]:
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
    from stackopt.search.ladder import mitigation_ladder

    blocks += ladder_section(result, mitigation_ladder(result))
    blocks += [("h2", "Risks"), ("ul", risks(result))]
    blocks += stackup_table(result)
    blocks += [("h2", "The picks"), picks_table(result),
               ("img", "response", "|S21| of the picks against the same circuit with ideal "
                "grounding; the red marks are the requirements."),
               ("img", "stackups", "Cross-sections of the picks."),
               ("img", "costs", "Itemised cost per board of the picks."),
               ("img", "prepregs", "Choice of the dielectric under the top copper.")]
    from stackopt.outputs.report_calibration import calibration_section

    blocks += calibration_section(result)
    blocks += spread_table(result)
    blocks += robustness_section(result)
    if sweep is not None:
        from stackopt.outputs.sweep import sweep_section

        blocks += sweep_section(sweep)
    blocks += [("h2", "Assumptions"), ("ul", assumptions(result)),
               ("h2", "Cautions"), ("ul", cautions(result))]
    return blocks


def report_markdown(result, images: dict[str, str] | None = None, sweep=None) -> str:
    """The report as Markdown; ``images`` maps image keys to relative file names
    (default :data:`IMAGE_FILES`, the names written next to ``report.md``)."""
    return render_markdown(report_document(result, sweep),
                           IMAGE_FILES if images is None else images)


def report_html(result, images: dict[str, bytes] | None = None, sweep=None) -> str:
    """The report as one standalone HTML page; ``images`` maps image keys to PNG bytes,
    which are inlined (no image is shown for a missing key)."""
    return render_html(report_document(result, sweep), images,
                       title=f"stackopt: {result.problem.scenario.name}")
