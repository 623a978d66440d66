"""Cost against quantity: the picks chosen again at other lot sizes.

Physics does not depend on the order quantity; the price does (quantity breaks of the base
price, setup and per-lot adders spread over the lot). The picks can change with quantity:
a per-lot adder (a non-standard thickness, impedance control) weighs less in a large lot,
so the cheapest build of an electrical group — and with it the exact search's
representatives and its front — can differ. So each quantity is searched again exactly as
a separate run at that quantity would be (same method, seed and budget), sharing one
:class:`~stackopt.search.memo.ResponseMemo`: only the price-dependent part runs again; no
phenotype is solved twice. ``tests/test_analyses_quantities.py`` checks the picks against
separate runs.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from stackopt.cost import price
from stackopt.errors import InputError
from stackopt.model.costtable import CostTable
from stackopt.model.scenario import Scenario, check_lot_sizes
from stackopt.model.searchspec import Method
from stackopt.search.memo import ResponseMemo
from stackopt.search.problem import min_trace
from stackopt.search.results import Result

__all__ = ["check_quantities", "scenario_at", "QuantitySweep",
           "quantity_sweep", "unit_cost_curve", "quantity_grid"]

def check_quantities(values: Iterable[object], key: str) -> tuple[int, ...]:
    """Lot sizes, ascending (:func:`~stackopt.model.scenario.check_lot_sizes`); ``key``
    names the option or scenario key in the error.

    Raises
    ------
    InputError
        A value that is not a whole number of boards, a repeated one, or none.
    """
    try:
        return check_lot_sizes(list(values))
    except ValueError as exc:
        msg, _, fix = str(exc).partition("; ")
        raise InputError(msg, key=key, fix=fix or None) from None


def scenario_at(scenario: Scenario, quantity: int) -> Scenario:
    """The scenario with its main lot set to ``quantity`` (nothing else changes)."""
    board = scenario.board.model_copy(update={"quantity": int(quantity)})
    return scenario.model_copy(update={"board": board})


@dataclass(frozen=True, eq=False)
class QuantitySweep:
    """One search per lot size (``results[k]`` at ``quantities[k]``, ascending)."""

    quantities: tuple[int, ...]
    results: tuple[Result, ...]

    def at(self, quantity: int) -> Result:
        """The search at ``quantity``."""
        return self.results[self.quantities.index(int(quantity))]

    @property
    def currency(self) -> str:
        """The cost table's currency."""
        return self.results[0].problem.table.currency


def quantity_sweep(scenario: Scenario, table: CostTable, quantities: Sequence[int], *,
                   seed: int | None = None, method: Method | None = None,
                   budget: int | None = None, memo: ResponseMemo | None = None,
                   main: Result | None = None) -> QuantitySweep:
    """Search the scenario at every lot size in ``quantities``.

    Parameters
    ----------
    scenario, table
        The scenario (its ``board.quantity`` is replaced per lot) and the fab.
    quantities
        Lot sizes (validated by :func:`check_quantities`).
    seed, method, budget
        As for :func:`stackopt.optimize`; give the main run's values so that each lot's
        search is the one a separate run at that lot would make.
    memo
        Responses shared with the main run (default: the main run's, else a new one).
    main
        The main run; reused as is for its own lot size.
    """
    from stackopt.search.api import optimize

    qs = check_quantities(quantities, "quantities")
    if memo is None:
        memo = main.problem.memo if main is not None and main.problem.memo else ResponseMemo()
    results = []
    for q in qs:  # a handful of lot sizes; each search is batched
        if main is not None and main.problem.scenario.board.quantity == q:
            results.append(main)
            continue
        results.append(optimize(scenario_at(scenario, q), table, seed=seed, method=method,
                                budget=budget, memo=memo))
    return QuantitySweep(qs, tuple(results))


def quantity_grid(lo: int, hi: int, breaks: Sequence[int] = (), n: int = 96) -> np.ndarray:
    """Lot sizes for a cost-against-quantity curve: ``n`` log-spaced whole numbers from
    ``lo`` to ``hi`` plus every price break inside and the lot just below it (so each
    step shows as a step)."""
    grid = np.unique(np.rint(np.geomspace(lo, hi, n)).astype(np.int64))
    b = np.asarray([x for x in breaks if lo < x <= hi], dtype=np.int64)
    return np.unique(np.concatenate([grid, b, b - 1]))


def unit_cost_curve(result: Result, idx: Sequence[int], quantities: Sequence[int]
                    ) -> np.ndarray:
    """Unit cost (Q, k) of the candidates ``idx`` of ``result`` at every lot size: the
    same boards, priced by the cost model at each quantity (no physics)."""
    pb = result.problem
    rows = np.asarray(idx, dtype=np.int64)
    batch = pb.price_batch(pb.space.geometry(result.candidates.take(rows)),
                           min_trace(result.evaluation.widths[rows]))
    out = np.empty((len(quantities), len(idx)))
    for k, q in enumerate(quantities):  # lot sizes, not candidates
        order = pb.order.model_copy(update={"quantity": int(q)})
        out[k] = price(pb.table, order, batch).unit_cost
    return out
