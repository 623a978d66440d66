"""The search's answer: one table of evaluated candidates, the front, the named picks and
the JSON-ready summary (the contract the report, exports and users' scripts rely on)."""

from __future__ import annotations

import copy
from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np

from stackopt.search.front import nondominated
from stackopt.search.ladder import Ladder, mitigation_ladder
from stackopt.search.order import lexmin
from stackopt.search.picks import PICKS
from stackopt.search.problem import Evaluation, Problem
from stackopt.search.records import (
    MODEL_DEPENDENT_DB,
    candidate_frame,
    candidate_record,
    metrics_record,
    summary,
)
from stackopt.search.responses import Sweeps
from stackopt.search.space import Candidates, candidate_stackup
from stackopt.search.table import CandidateIds

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["Result", "PICKS", "MODEL_DEPENDENT_DB", "metrics_record"]


@dataclass(frozen=True, eq=False)
class Result:
    """Evaluated candidates of one search (row ``i`` of every array is candidate ``i``)."""

    problem: Problem
    candidates: Candidates
    evaluation: Evaluation
    method: str
    evaluated: int
    seed: int
    spread: dict[str, np.ndarray] = field(default_factory=dict)  # via model -> margin
    stats: dict = field(default_factory=dict)
    #: Margin (N,) of every candidate under each of ``search.robustness.models``.
    robust: dict[str, np.ndarray] = field(default_factory=dict)
    #: Monte Carlo yield (N,), NaN where not sampled (the front, the picks).
    yields: np.ndarray | None = None
    #: Controlled-impedance range over the builds (N, lines, 2) ohm, NaN where not sampled.
    impedance_range: np.ndarray | None = None
    #: Margin in every simulated build (S,) of the sampled picks, by candidate index.
    build_margins: dict[int, np.ndarray] = field(default_factory=dict)
    #: The cheapest candidate meeting every requirement under every listed model and
    #: reaching the yield target (found by :mod:`stackopt.analyses.robust`).
    robust_pick: int | None = None
    #: What limits each pick's circuit (:mod:`stackopt.analyses.limits`), by pick name.
    limits: dict[str, dict] = field(default_factory=dict)
    #: The prepreg answer's rows (:class:`stackopt.analyses.prepregs.PrepregRow`), found
    #: once by the robustness analysis; ``None`` before it ran.
    prepregs: list | None = None

    # ---- basic views -------------------------------------------------------------------
    @property
    def n(self) -> int:
        """Candidates evaluated and kept."""
        return len(self.candidates)

    @property
    def space_size(self) -> int:
        """Stackups in the design space."""
        return self.problem.space.size

    @cached_property
    def ids(self) -> CandidateIds:
        """Stable candidate ids (evaluation order; :data:`~stackopt.search.table.ID_FORMAT`),
        each built when asked."""
        return CandidateIds(self.n)

    @cached_property
    def feasible(self) -> np.ndarray:
        """Meets every fab and scenario constraint (not necessarily the requirements)."""
        return self.evaluation.feasible

    @cached_property
    def meets(self) -> np.ndarray:
        """Feasible and every attenuation requirement met."""
        return self.feasible & (self.evaluation.margin >= 0)

    @cached_property
    def robust_margin(self) -> np.ndarray:
        """Worst margin over ``search.robustness.models`` (N,) (the nominal margin until
        the robust margins are computed)."""
        if not self.robust:
            return self.evaluation.margin
        return np.min(np.stack(list(self.robust.values())), axis=0)

    @cached_property
    def robust_meets(self) -> np.ndarray:
        """Feasible and every requirement met under every listed via model (N,)."""
        return self.meets & (self.robust_margin >= 0)

    @cached_property
    def model_spread(self) -> np.ndarray:
        """Margin spread over every via model, max - min (N,) dB; NaN where the spread
        was not computed (only the front and the picks are)."""
        n = self.n
        if not self.spread:
            return np.full(n, np.nan)
        v = np.stack(list(self.spread.values()))  # (models, N)
        fin = np.isfinite(v)
        hi = np.where(fin, v, -np.inf).max(axis=0)
        lo = np.where(fin, v, np.inf).min(axis=0)
        return np.where(fin.any(axis=0), hi - lo, np.nan)

    @cached_property
    def model_dependent(self) -> np.ndarray:
        """Margin spread over the via models above
        :data:`~stackopt.search.records.MODEL_DEPENDENT_DB` (N,) bool: the one test
        behind every model-dependence mark (summary, console, report, plots)."""
        return np.nan_to_num(self.model_spread, nan=0.0) > MODEL_DEPENDENT_DB

    @cached_property
    def yield_or_low(self) -> np.ndarray:
        """Yields with -1 where not sampled (for ranking)."""
        return np.full(self.n, -1.0) if self.yields is None else np.nan_to_num(
            self.yields, nan=-1.0)

    @cached_property
    def objectives(self) -> np.ndarray:
        """Objectives minimised by the search (N, k)."""
        return self.problem.objectives(self.evaluation)

    @cached_property
    def complexity(self) -> np.ndarray:
        """How much a candidate asks of the fab and the layout: layers, then mitigations,
        then vias per ground connection (used to break ties between equal trade-offs)."""
        g = self.evaluation.geometry
        mits = sum((f.astype(np.int64) for f in g.flags.values()), np.zeros(self.n, np.int64))
        return g.layers * 1000 + mits * 100 + g.vias

    @cached_property
    def on_front(self) -> np.ndarray:
        """Non-dominated among every feasible candidate evaluated; where several boards
        give the same objective values, only the simplest is flagged."""
        mask = np.zeros(self.n, dtype=bool)
        idx = np.flatnonzero(self.feasible)
        nd = idx[nondominated(self.objectives[idx])]
        if len(nd):
            obj = np.round(self.objectives[nd], 9)
            order = np.lexsort((nd, self.complexity[nd], *obj.T[::-1]))
            nd, obj = nd[order], obj[order]
            first = np.r_[True, np.any(obj[1:] != obj[:-1], axis=1)]
            mask[nd[first]] = True
        return mask

    @cached_property
    def front_order(self) -> np.ndarray:
        """Front members by increasing unit cost."""
        idx = np.flatnonzero(self.on_front)
        return idx[np.lexsort((self.objectives[idx, 1], self.evaluation.unit_cost[idx]))]

    def best(self, mask: np.ndarray, by: str) -> int | None:
        """The best row of ``mask``: the cheapest (``by="cost"``; ties by the electrical
        objective, then the simplest) or the best electrical objective (``"perf"``; ties by
        cost, then the simplest); ``None`` if the mask is empty."""
        idx = np.flatnonzero(mask)
        if not len(idx):
            return None
        ev = self.evaluation
        cx = self.complexity[idx]
        keys: tuple[np.ndarray, ...]
        if by == "cost":  # cheapest; ties by better electrical objective, then simplest
            keys = (cx, self.objectives[idx, 1], ev.unit_cost[idx])
        elif by == "robust":  # best robust margin; ties by yield, cost, then simplest
            keys = (cx, ev.unit_cost[idx], -self.yield_or_low[idx], -self.robust_margin[idx])
        else:  # best electrical objective; ties by cost, then simplest
            keys = (cx, ev.unit_cost[idx], self.objectives[idx, 1])
        return int(idx[lexmin(keys)])  # then the first index

    @cached_property
    def picks(self) -> dict[str, int | None]:
        """Index of each named pick of :data:`~stackopt.search.picks.PICKS` (``None`` when
        nothing qualifies)."""
        return {name: p.select(self) for name, p in PICKS.items()}

    @cached_property
    def sweeps(self) -> Sweeps:
        """Dense-sweep responses of candidates the outputs show, each solved once
        (:mod:`stackopt.search.responses`)."""
        return Sweeps(self.problem, self.candidates)

    @cached_property
    def ladder(self) -> Ladder | None:
        """The mitigation ladder (:mod:`stackopt.search.ladder`), computed once per result;
        ``None`` without two-layer boards in the space."""
        return mitigation_ladder(self)

    def closest(self, k: int = 3) -> list[int]:
        """The ``k`` candidates nearest to meeting the requirements: the feasible ones with
        the best margin or, when none is feasible, the least violating ones."""
        ev = self.evaluation
        idx = np.flatnonzero(self.feasible)
        if len(idx):
            order = np.lexsort((ev.unit_cost[idx], -ev.margin[idx]))
            return [int(i) for i in idx[order[:k]]]
        total = sum((v for v in ev.violations.values()), np.zeros(self.n))
        order = np.lexsort((ev.unit_cost, -ev.margin, total))
        return [int(i) for i in order[:k]]

    def stackup(self, i: int):
        """The stackup of candidate ``i``."""
        return candidate_stackup(self.problem.space, self.candidates, i)

    # ---- records -----------------------------------------------------------------------
    @cached_property
    def line_solves(self) -> dict:
        """Field solves of line cross-sections by key
        (:func:`stackopt.analyses.lines.field_keys`), shared between candidates; may be
        filled ahead with :func:`~stackopt.analyses.lines.field_checks` of
        :meth:`field_keys` (e.g. solved in another process)."""
        return {}

    def _one(self, i: int):
        return self.problem.space.geometry(self.candidates.take(np.array([i])))

    def lines(self, i: int, check: bool = True) -> list:
        """The impedance table of candidate ``i``: every line's layer, width, spacing and
        achieved impedance; ``check`` adds the field-solver check and refined width
        (:func:`stackopt.analyses.lines.line_rows`; solves are cached)."""
        from stackopt.analyses.lines import line_rows

        return line_rows(self.problem, self._one(i), 0, self.evaluation.widths[i], check,
                         self.line_solves)

    def field_keys(self, indices) -> list:
        """The field solves the checked impedance tables of candidates ``indices`` need
        and :attr:`line_solves` does not hold yet (distinct, in order)."""
        from stackopt.analyses.lines import field_keys

        widths = self.evaluation.widths
        keys = (k for i in map(int, indices)
                for k in field_keys(self.problem, self._one(i), 0, widths[i]))
        return [k for k in dict.fromkeys(keys) if k not in self.line_solves]

    @cached_property
    def _records(self) -> dict[tuple[int, bool], dict]:
        """Candidate records made so far, by (row, check_lines)."""
        return {}

    def record(self, i: int, check_lines: bool = False) -> dict:
        """Candidate ``i`` as a JSON-ready dict (the summary's candidate record,
        :func:`stackopt.search.records.candidate_record`), made once per result (the
        summary, the stackup files and the comparisons read the same boards); each call
        returns its own copy."""
        key = (int(i), bool(check_lines))
        if key not in self._records:
            self._records[key] = candidate_record(self, key[0], key[1])
        return copy.deepcopy(self._records[key])

    @cached_property
    def table(self) -> pd.DataFrame:
        """Every evaluated candidate, one row each, with every metric and the front flag
        (the whole :meth:`frame`; writers of large results take it in row blocks)."""
        return self.frame()

    def frame(self, rows: np.ndarray | None = None) -> pd.DataFrame:
        """The rows ``rows`` (default: all) of the table of candidates
        (:func:`stackopt.search.table.candidate_frame`)."""
        return candidate_frame(self, rows)

    def to_summary(self, extra: dict | None = None) -> dict:
        """The JSON-ready summary (:func:`stackopt.search.records.summary`; see the README
        for the contract)."""
        return summary(self, extra)
