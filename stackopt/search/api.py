"""``stackopt.optimize``: the library entry point of the search."""

from __future__ import annotations

import warnings
from collections.abc import Callable
from pathlib import Path

from stackopt.errors import InputError, StackoptWarning
from stackopt.model.costtable import CostTable
from stackopt.model.scenario import Scenario
from stackopt.model.searchspec import Method
from stackopt.search.exact import exact_candidates, exact_cost
from stackopt.search.feasibility import empty_space_message, fab_findings
from stackopt.search.memo import ResponseMemo
from stackopt.search.problem import Problem
from stackopt.search.results import Result

__all__ = ["optimize", "EXACT_TIME_LIMIT", "EXACT_MEMORY_LIMIT"]

#: "auto" searches exactly whenever the exact search is predicted to finish within this
#: time (s, on the reference machine) and memory (bytes); NSGA-II only beyond. The exact
#: front is the answer; NSGA-II an approximation of it (docs/performance.md).
EXACT_TIME_LIMIT = 300.0
EXACT_MEMORY_LIMIT = 4e9



def _load(scenario: Scenario | str | Path, cost_table: CostTable | str | Path | None
          ) -> tuple[Scenario, CostTable]:
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario, scenario_cost_table

    if not isinstance(scenario, Scenario):
        path = Path(scenario)
        scenario = load_scenario(path)
        if cost_table is None:
            cost_table = scenario_cost_table(scenario, path)
    if cost_table is None:
        raise InputError("no cost table given", key="cost_table",
                         fix="pass cost_table=... or name one in the scenario's 'cost_table'")
    if not isinstance(cost_table, CostTable):
        cost_table = load_cost_table(cost_table)
    return scenario, cost_table


def _counting(progress: Callable[[int, int], None], total: int) -> Callable[[int], None]:
    """NSGA-II's ``on_eval``: add up the evaluations, call ``progress(done, total)``."""
    done = 0

    def on_eval(k: int) -> None:
        nonlocal done
        done += k
        progress(done, total)

    return on_eval


def optimize(
    scenario: Scenario | str | Path,
    cost_table: CostTable | str | Path | None = None,
    *,
    seed: int | None = None,
    method: Method | None = None,
    budget: int | None = None,
    progress: Callable[[int, int], None] | None = None,
    monte_carlo_progress: Callable[[int, int], None] | None = None,
    memo: ResponseMemo | None = None,
    searched: Callable[[Result], None] | None = None,
) -> Result:
    """Search the scenario's design space priced by ``cost_table``.

    Parameters
    ----------
    scenario, cost_table
        Models, or paths to YAML files (the cost table may be named in the scenario).
    seed
        Seed of the evolutionary search (default: the scenario's ``search.seed``).
    method
        ``"exact"`` (pruned, exact front), ``"nsga2"``, or ``"auto"`` (exact wherever it
        finishes in time; default: the scenario's ``search.method``).
    budget
        Evaluations for NSGA-II (default: the scenario's ``search.budget``).
    progress
        Called as ``progress(done, total)`` during NSGA-II.
    monte_carlo_progress
        Called as ``progress(done, total)`` while the tolerance Monte Carlo solves its
        builds (:func:`stackopt.analyses.robust.analyse`; the total grows with each batch).
    memo
        Circuit responses shared with other searches of the same scenario (other
        quantities, other fabs): phenotypes it holds are not solved again.
    searched
        Called with the result before its analyses (the front and the nominal picks are
        known; robustness, spread, yields and limits are not): work that needs only
        those may start elsewhere while the analyses run.

    Returns
    -------
    Result
        Its ``to_summary()`` is the JSON contract.
    """
    scenario, cost_table = _load(scenario, cost_table)
    sp = scenario.search
    seed = sp.seed if seed is None else int(seed)
    method = method or sp.method
    budget = sp.budget if budget is None else int(budget)
    if method not in ("auto", "exact", "nsga2"):
        raise InputError(f"unknown method {method!r}", key="method",
                         fix="use auto, exact or nsga2")
    for f in fab_findings(scenario, cost_table):
        if f.level == "warning":  # part of the space dropped: say so, never silently
            warnings.warn(StackoptWarning(f.message, key=f.key, fix=f.fix), stacklevel=2)
    problem = Problem(scenario, cost_table, memo=memo)
    if not problem.space.arrangements or not problem.space.drills:
        message, key, fix = empty_space_message(scenario, cost_table)
        raise InputError(message, key=key, fix=fix)
    cost = exact_cost(problem)
    if problem.space.constructions:
        if method == "nsga2":
            raise InputError("NSGA-II does not search a space of standard constructions",
                             key="method", fix="use method auto or exact (such a space is "
                             "small and is evaluated whole)")
        method = "exact"
    if method == "auto":
        method = ("exact" if cost.seconds <= EXACT_TIME_LIMIT
                  and cost.bytes <= EXACT_MEMORY_LIMIT else "nsga2")
    stats: dict = {"exact_estimate": {"priced": cost.priced,
                                      "representatives": cost.representatives,
                                      "seconds": round(cost.seconds, 3)}}
    if method == "exact":
        plan = exact_candidates(problem)
        cands = plan.representatives
        stats.update(dp_states=plan.states, thickness_totals_priced=plan.priced)
        evaluated = len(cands)
    else:
        from stackopt.search.nsga2 import run_nsga2

        archive = run_nsga2(problem, budget, seed,
                            on_eval=_counting(progress, budget) if progress else None)
        cands = archive.candidates(problem.space.n_slots)
        evaluated = archive.evaluations
    ev = problem.evaluate(cands)
    result = Result(problem, cands, ev, method, evaluated, seed, stats=stats)
    if searched is not None:
        searched(result)
    from stackopt.analyses.robust import analyse

    # robust margins, model spread, yields, cheapest_robust, limits
    return analyse(result, monte_carlo_progress)
