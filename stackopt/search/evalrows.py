"""Rows of evaluated batches: take rows of an :class:`~stackopt.search.problem.Evaluation`,
join batches, and find which boards of a batch were evaluated already (so that a later
step reads the search's arrays instead of solving a board again).

Every array field of an evaluation (and of its geometry) has the candidates on its first
axis; dict fields hold such arrays by name.
"""

from __future__ import annotations

import dataclasses
from typing import Any, TypeVar

import numpy as np

from stackopt.search.problem import Evaluation, Problem
from stackopt.search.space import Candidates

__all__ = ["take_rows", "concat_rows", "KnownRows"]

T = TypeVar("T")


def _take(value: Any, idx: np.ndarray) -> Any:
    if isinstance(value, np.ndarray):
        return value[idx]
    if isinstance(value, dict):
        return {k: _take(v, idx) for k, v in value.items()}
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return take_rows(value, idx)
    return value  # not per candidate


def take_rows(batch: T, idx: np.ndarray) -> T:
    """The rows ``idx`` of a batch dataclass (an evaluation, a geometry, a layer stack)."""
    idx = np.asarray(idx, dtype=np.int64)
    return dataclasses.replace(batch, **{  # type: ignore[type-var]
        f.name: _take(getattr(batch, f.name), idx) for f in dataclasses.fields(batch)  # type: ignore[arg-type]
        if f.init})


def _concat(values: list[Any]) -> Any:
    first = values[0]
    if isinstance(first, np.ndarray):
        return np.concatenate(values)
    if isinstance(first, dict):
        return {k: _concat([v[k] for v in values]) for k in first}
    if dataclasses.is_dataclass(first) and not isinstance(first, type):
        return concat_rows(values)
    return first


def concat_rows(parts: list[T]) -> T:
    """The rows of several batches of one dataclass, in order."""
    first = parts[0]
    return dataclasses.replace(first, **{  # type: ignore[type-var]
        f.name: _concat([getattr(p, f.name) for p in parts])
        for f in dataclasses.fields(first) if f.init})  # type: ignore[arg-type]


class KnownRows:
    """Evaluations of boards, each evaluated once: boards already known (e.g. the search's
    own rows) are read from their arrays; the others are evaluated in one batch per call
    and kept for the next."""

    def __init__(self, problem: Problem, known: Candidates | None = None,
                 evaluation: Evaluation | None = None) -> None:
        self.problem = problem
        self.candidates = known
        self.evaluation = evaluation
        #: Boards evaluated here (not read from known rows), for tests and diagnostics.
        self.solved = 0

    def _find(self, c: Candidates) -> np.ndarray:
        """Row of each board of ``c`` among the known ones, -1 where unknown."""
        if self.candidates is None or not len(self.candidates) or not len(c):
            return np.full(len(c), -1, dtype=np.int64)
        known, query = self.candidates.matrix(), c.matrix()
        _, inv = np.unique(np.vstack([known, query]), axis=0, return_inverse=True)
        inv = inv.reshape(-1)
        pos = np.full(int(inv.max()) + 1, -1, dtype=np.int64)
        pos[inv[:len(known)][::-1]] = np.arange(len(known))[::-1]  # first occurrence
        return pos[inv[len(known):]]

    def evaluate(self, c: Candidates) -> Evaluation:
        """The evaluation of ``c``, row for row (:meth:`Problem.evaluate`)."""
        rows = self._find(c)
        new = np.flatnonzero(rows < 0)
        if len(new):
            # each unknown board once, even if listed twice
            _, first, back = np.unique(c.take(new).matrix(), axis=0, return_index=True,
                                       return_inverse=True)
            fresh = c.take(new[first])
            ev = self.problem.evaluate(fresh)
            self.solved += len(fresh)
            start = 0 if self.candidates is None else len(self.candidates)
            if self.candidates is None or self.evaluation is None:
                self.candidates, self.evaluation = fresh, ev
            else:
                self.candidates = Candidates.concat([self.candidates, fresh])
                self.evaluation = concat_rows([self.evaluation, ev])
            rows = rows.copy()
            rows[new] = start + back.reshape(-1)
        assert self.evaluation is not None
        return take_rows(self.evaluation, rows)
