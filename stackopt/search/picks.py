"""The registry of named picks: which candidate each names, and its labels for people.

A pick is one entry: a rule that chooses a row of a
:class:`~stackopt.search.results.Result` (or ``None`` when nothing qualifies) and the
labels the console, the report and the plots show. ``Result.picks``, ``summary.json``,
``stackups/``, the console table, the report and the plots all iterate :data:`PICKS`, in
its order; adding a pick is adding an entry here.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["Pick", "PICKS"]


@dataclass(frozen=True)
class Pick:
    """A named pick."""

    #: Chooses the candidate: a row index of the result, or ``None``.
    select: Callable[[Result], int | None]
    #: Label in the console table (lower case, compact).
    console: str
    #: Label in the report (sentence case).
    report: str
    #: Short label for plot annotations.
    plot: str


def _two_layer(r: Result):
    return r.feasible & (r.evaluation.geometry.layers == 2)


#: Named picks, in the order they are reported.
PICKS: dict[str, Pick] = {
    "cheapest_robust": Pick(  # found by stackopt.analyses.robust (needs yields)
        lambda r: r.robust_pick, console="cheapest robust",
        report="Cheapest robust (every listed model, yield target)", plot="robust"),
    "cheapest_meeting_requirements": Pick(
        lambda r: r.best(r.meets, "cost"), console="cheapest meeting requirements",
        report="Cheapest meeting the requirements", plot="cheapest OK"),
    "cheapest_two_layer": Pick(
        lambda r: r.best(_two_layer(r), "cost"), console="cheapest two-layer",
        report="Cheapest two-layer", plot="cheapest 2L"),
    "best_two_layer": Pick(
        lambda r: r.best(_two_layer(r), "perf"), console="best two-layer",
        report="Best two-layer", plot="best 2L"),
    "best_overall": Pick(
        lambda r: r.best(r.feasible, "robust" if r.problem.scenario.search.objective
                         == "margin" else "perf"), console="best overall",
        report="Best overall", plot="best"),
}
