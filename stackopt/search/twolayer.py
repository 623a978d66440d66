"""The two-layer boards of a design space: every combination, the plain board, and the
boards nearest to feasible (the mitigation ladder's pool, :mod:`stackopt.search.ladder`,
and the report's two-layer blocker).
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence

import numpy as np

from stackopt.search.problem import Evaluation, Problem
from stackopt.search.space import Candidates, Space

__all__ = ["ENUMERATE_LIMIT", "two_layer_combinations", "plain_board", "least_violating",
           "nearest_alternatives", "no_candidates", "changes_from_plain"]

#: Two-layer combinations evaluated exhaustively up to this many.
ENUMERATE_LIMIT = 200_000
_NOMINAL = 1.6e-3  # the usual two-layer thickness (common practice, no source)


def no_candidates(space: Space) -> Candidates:
    """An empty batch of ``space``'s candidates."""
    z = np.zeros(0, dtype=np.int64)
    return Candidates(z, np.zeros((0, space.n_slots), np.int64), z, z, z,
                      np.zeros((0, len(space.mitigations)), bool))


def two_layer_combinations(space: Space) -> Candidates:
    """Every two-layer candidate of ``space`` (empty if it has none)."""
    parts = []
    for ai, a in enumerate(space.arrangements):
        if a.n_layers != 2:
            continue
        ranges: list[Sequence[int]] = [range(len(space.options["core"])),
                                       range(len(space.copper)), range(len(space.drills)),
                                       range(len(space.vias))]
        ranges += [(0, 1)] * len(space.mitigations)
        rows = np.array(list(itertools.product(*ranges)), dtype=np.int64).reshape(
            -1, len(ranges))
        slot = np.full((len(rows), space.n_slots), -1, dtype=np.int64)
        slot[:, 0] = rows[:, 0]
        parts.append(Candidates(arr=np.full(len(rows), ai), slot=slot, copper=rows[:, 1],
                                drill=rows[:, 2], vias=rows[:, 3],
                                mit=rows[:, 4:].astype(bool)))
    return Candidates.concat(parts) if parts else no_candidates(space)


def _nominal(problem: Problem) -> float:
    w = problem.scenario.space.thickness
    if w is None:
        return _NOMINAL
    return w.nominal if w.nominal is not None else 0.5 * sum(w.bounds)


def changes_from_plain(space: Space, c: Candidates) -> np.ndarray:
    """How far each board is from plain: mitigations (x100) plus rank of its via count."""
    rank = np.argsort(np.argsort(np.asarray(space.vias)))
    return c.mit.sum(axis=1) * 100 + rank[c.vias]


def plain_board(problem: Problem, pool: Candidates, ev: Evaluation) -> int | None:
    """Index in ``pool`` of the plain two-layer board (defined in
    :mod:`stackopt.search.ladder`); ``None`` if the pool is empty."""
    if not len(pool):
        return None
    g = ev.geometry
    near = np.abs(g.thickness - _nominal(problem))
    order = np.lexsort((np.arange(len(pool)), near, g.drill, ev.unit_cost,
                        changes_from_plain(problem.space, pool), ~ev.feasible))
    return int(order[0])


def least_violating(ev: Evaluation) -> int | None:
    """The board of ``ev`` nearest to feasible: the fewest broken constraints, then the
    smallest total violation, then the first (``None`` for an empty batch)."""
    n = len(ev.unit_cost)
    if not n:
        return None
    v = np.stack(list(ev.violations.values())) if ev.violations else np.zeros((1, n))
    return int(np.lexsort((np.arange(n), v.sum(axis=0), (v > 0).sum(axis=0)))[0])


def nearest_alternatives(ev: Evaluation, k: int = 3) -> list[int]:
    """Boards of ``ev`` nearest to feasible by different routes: among those breaking the
    fewest constraints, the one with the smallest total violation for each distinct set of
    broken constraints, best first, at most ``k``."""
    n = len(ev.unit_cost)
    if not n or not ev.violations:
        return []
    v = np.stack(list(ev.violations.values()))
    broken = v > 0
    count = broken.sum(axis=0)
    idx = np.flatnonzero(count == count.min())
    idx = idx[np.lexsort((idx, v[:, idx].sum(axis=0)))]
    _, first = np.unique(broken[:, idx].T, axis=0, return_index=True)
    return [int(i) for i in idx[np.sort(first)][:k]]
