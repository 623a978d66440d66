"""Swept S-parameters of chosen candidates, solved once per search result.

The plots and the Touchstone export show the picks over a dense sweep, not only at the
requirement frequencies the search solved. :class:`Sweeps` solves each candidate asked
for once, on one grid that holds every sweep the outputs draw
(:data:`PLOT_POINTS` and :data:`TOUCHSTONE_POINTS`, see :func:`sweep_freqs`, and the
passband's :func:`passband_freqs`), plus the
ideal-ground reference once; outputs take slices of it and never solve a circuit.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from stackopt.circuit import solve
from stackopt.search.problem import Problem
from stackopt.search.space import Candidates

__all__ = ["PLOT_POINTS", "TOUCHSTONE_POINTS", "PASSBAND_POINTS", "sweep_freqs",
           "passband_freqs", "Sweeps"]

#: Points of the response plot's sweep.
PLOT_POINTS = 361
#: Points of the Touchstone export's sweep.
TOUCHSTONE_POINTS = 401
#: Log-spaced points of the passband-loss sweep (band edges included).
PASSBAND_POINTS = 201


def sweep_freqs(problem: Problem, n: int = PLOT_POINTS) -> np.ndarray:
    """A linear sweep from near DC to 1.4 x the highest requirement frequency, Hz (with the
    requirement frequencies themselves included, so their marks sit on the curve)."""
    fs = np.asarray(problem.freqs, dtype=float)
    top = 1.4 * float(fs.max())
    grid = np.linspace(top / n, top, n)
    return np.unique(np.concatenate([grid, fs]))


def passband_freqs(problem: Problem) -> np.ndarray | None:
    """:data:`PASSBAND_POINTS` log-spaced frequencies over the scenario's passband
    (:attr:`~stackopt.model.scenario.Scenario.passband_hz`), Hz; ``None`` without one."""
    band = problem.scenario.passband_hz
    return None if band is None else np.geomspace(band[0], band[1], PASSBAND_POINTS)


@dataclass(frozen=True, eq=False)
class Sweeps:
    """S-parameters of candidates of one result over :attr:`freqs`, each solved once."""

    problem: Problem
    candidates: Candidates
    _solved: dict[int, np.ndarray] = field(default_factory=dict, repr=False)

    @cached_property
    def freqs(self) -> np.ndarray:
        """Every output sweep's frequencies in one sorted grid, Hz."""
        band = passband_freqs(self.problem)
        return np.unique(np.concatenate([sweep_freqs(self.problem, n)
                                         for n in (PLOT_POINTS, TOUCHSTONE_POINTS)]
                                        + ([] if band is None else [band])))

    @cached_property
    def ideal(self) -> np.ndarray:
        """The same circuit with ideal grounds (F, 2, 2)."""
        pb = self.problem
        return solve(pb.compiled, self.freqs, None, pb.scenario.search.via_model)[0]

    def s(self, rows, freqs: np.ndarray | None = None) -> np.ndarray:
        """S (k, F, 2, 2) of the candidates ``rows`` at ``freqs`` (a sub-grid of
        :attr:`freqs`; default all); rows not solved yet are solved together, once."""
        rows = [int(r) for r in np.atleast_1d(rows)]
        todo = sorted({r for r in rows if r not in self._solved})
        if todo:
            pb = self.problem
            g = pb.space.geometry(self.candidates.take(np.array(todo)))
            s = solve(pb.compiled, self.freqs, pb.ground_batch(g), pb.scenario.search.via_model)
            self._solved.update(zip(todo, s, strict=True))
        out = np.stack([self._solved[r] for r in rows]) if rows else np.zeros(
            (0, len(self.freqs), 2, 2), complex)
        return out if freqs is None else out[:, self.at(freqs)]

    def at(self, freqs: np.ndarray) -> np.ndarray:
        """Indices of ``freqs`` in :attr:`freqs` (they must lie on the grid)."""
        f = np.asarray(freqs, dtype=float)
        pos = np.clip(np.searchsorted(self.freqs, f), 0, len(self.freqs) - 1)
        if not np.array_equal(self.freqs[pos], f):
            raise ValueError("frequencies off the result's sweep grid: take them from "
                             "stackopt.search.responses.sweep_freqs")
        return pos
