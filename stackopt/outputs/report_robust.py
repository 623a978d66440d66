"""The report's robustness blocks: the recommendation (``cheapest_robust``) against the
nominal cheapest, what limits the circuit, and the per-pick table beside
``robustness.png``. Small, separate functions so that the first screen can place them
where it wants (sentences from :mod:`stackopt.outputs.robust_text`)."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from stackopt.outputs.facts import db, selected_index, unique_picks
from stackopt.outputs.robust_text import (
    MODEL_RULE,
    limit_line,
    model_mark,
    percent,
    recommendation_line,
)
from stackopt.search.picks import PICKS

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["recommendation_blocks", "robustness_section", "margin_cell", "ROBUSTNESS_SENTENCE"]

#: The report's sentence beside ``robustness.png``.
ROBUSTNESS_SENTENCE = (
    "Each pick's margin under every via model (markers) and over the simulated builds "
    "within the fab's and the parts' tolerances (box: middle half, whiskers: 5-95 %, "
    "dots beyond); a pick is robust when every marker and nearly all builds lie right "
    "of the 0 dB line.")


def margin_cell(result: Result, i: int) -> str:
    """A pick's nominal margin, marked when it is model-dependent."""
    text = db(result.evaluation.margin[i], sign=True)
    return text + model_mark(result, i)


def _limit_of(result: Result, i: int) -> str | None:
    for name, j in result.picks.items():
        if j == i and limit_line(result, name):
            return limit_line(result, name)
    return None


def recommendation_blocks(result: Result) -> list[tuple]:
    """One answer line on the recommended board and one on what limits it."""
    out: list[tuple] = []
    line = recommendation_line(result, result.problem.table.currency)
    if line:
        out.append(("answer", "Recommended: " + line))
    sel = selected_index(result)
    lim = None if sel is None else _limit_of(result, sel)
    if lim:
        out.append(("p", "What limits it: " + lim))
    return out


def robustness_section(result: Result) -> list[tuple]:
    """Margin under every via model, yield and impedance spread of every pick."""
    if not result.robust:
        return []
    rb = result.problem.scenario.search.robustness
    routes = result.problem.routes
    rows = []
    for i, names in unique_picks(result):
        v = [float(a[i]) for a in result.spread.values() if math.isfinite(a[i])]
        spread = f"{max(v) - min(v):.1f} dB" if v else "n/a"
        y = None if result.yields is None else float(result.yields[i])
        z = ""
        if result.impedance_range is not None and routes:
            z = "; ".join(f"{rt.name} {result.impedance_range[i, r, 0]:.1f}-"
                          f"{result.impedance_range[i, r, 1]:.1f} ohm"
                          for r, rt in enumerate(routes)
                          if all(map(math.isfinite, result.impedance_range[i, r])))
        rows.append([" / ".join(PICKS[n].report for n in names), result.ids[i],
                     margin_cell(result, i), db(result.robust_margin[i], sign=True), spread,
                     percent(y), z or "-"])
    models = ", ".join(rb.models)
    out: list[tuple] = [
        ("h2", "Does the choice survive the uncertainty?"),
        ("p", f"Robust margin: the worst margin over the via models {models} at the nominal "
              f"build. Yield: the share of {rb.samples} simulated builds within the fab's "
              "and the parts' tolerances that meet every requirement under the ranking "
              f"model. {MODEL_RULE}"),
        ("table", ["Pick", "Candidate", "Margin", "Robust margin", "Spread over models",
                   "Yield", "Impedance over the builds"], rows),
        ("img", "robustness", ROBUSTNESS_SENTENCE),
    ]
    lims = [f"{PICKS[n].report}: {d['sentence']}" for n, d in result.limits.items()]
    if lims:
        out += [("p", "What limits the circuit of each pick:"), ("ul", lims)]
    return out
