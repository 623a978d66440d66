"""Sentences on robustness shared by the console and the report: the recommendation
(``cheapest_robust``) against the nominal cheapest, the model-dependence mark and the
limiting mechanism. Numbers come from the result (:mod:`stackopt.analyses`); nothing is
solved here."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from stackopt.outputs.facts import money
from stackopt.search.results import MODEL_DEPENDENT_DB

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["recommendation_line", "limit_line", "model_mark", "MODEL_MARK", "MODEL_RULE",
           "percent", "robust_cells"]

#: Appended to a pick's margin or label wherever it is shown (console, report, every plot
#: that names picks) when it is model-dependent (:attr:`Result.model_dependent`).
MODEL_MARK = " (model-dependent)"
#: The sentence that explains the mark.
MODEL_RULE = (f"A pick whose margin differs by more than {MODEL_DEPENDENT_DB:g} dB between "
              f"the via models is marked \u201c{MODEL_MARK.strip(' ()')}\u201d: its "
              "ranking rests on which model is right.")


def percent(p: float | None) -> str:
    """A yield as ``99.5 %`` (``n/a`` when not sampled)."""
    if p is None or not math.isfinite(p):
        return "n/a"
    return f"{100 * p:.1f} %"


def model_mark(result: Result, i: int) -> str:
    """:data:`MODEL_MARK` for a model-dependent candidate ``i``, else ``""``."""
    return MODEL_MARK if bool(result.model_dependent[i]) else ""


def _models_met(result: Result, i: int) -> tuple[int, int]:
    ok = [bool(a[i] >= 0) for a in result.robust.values()]
    return sum(ok), len(ok)


def _yield(result: Result, i: int) -> float | None:
    return None if result.yields is None else float(result.yields[i])


def recommendation_line(result: Result, currency: str) -> str | None:
    """One line: the recommended (cheapest robust) board and how it differs from the
    nominal cheapest one (``None`` when neither exists or robustness was not run)."""
    if not result.robust:
        return None
    i = result.picks.get("cheapest_robust")
    j = result.picks.get("cheapest_meeting_requirements")
    ids, cost = result.ids, result.evaluation.unit_cost
    names = ", ".join(result.robust)
    if i is None and j is None:
        return None
    if i is None:
        assert j is not None  # one of them exists (checked above)
        k, n = _models_met(result, j)
        tgt = result.problem.scenario.search.robustness.yield_target
        return (f"No board meets every requirement under every listed via model ({names}) "
                f"in {percent(tgt)} of builds; the nominal cheapest, {ids[j]}, meets under "
                f"{k} of {n} models and in {percent(_yield(result, j))} of builds.")
    head = (f"{ids[i]} meets every requirement under every listed via model ({names}) and "
            f"in {percent(_yield(result, i))} of builds")
    if j is None or j == i:
        return head + "; it is also the cheapest board meeting them under the ranking model."
    k, n = _models_met(result, j)
    diff = float(cost[i] - cost[j])
    return (head + f"; {ids[j]} is {money(diff, currency)} cheaper but meets under {k} of "
            f"{n} models and in {percent(_yield(result, j))} of builds.")


def limit_line(result: Result, pick: str) -> str | None:
    """The limiting-mechanism sentence of a pick (``None`` when not analysed)."""
    d = result.limits.get(pick)
    return None if d is None else str(d["sentence"])


def robust_cells(result: Result, i: int) -> tuple[str, str]:
    """(robust margin with the model-dependence mark, yield) as table cells."""
    m = float(result.robust_margin[i]) if len(result.robust) else float("nan")
    text = f"{m:+.1f} dB" if np.isfinite(m) else "n/a"
    return text + model_mark(result, i), percent(_yield(result, i))
