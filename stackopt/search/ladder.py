"""The mitigation ladder: how far a two-layer board gets, one change at a time, and at what
cost — set against the cheapest four-layer board that meets the requirements.

Definitions (the choices are ours; each is stated in the report and in ``docs/circuit.md``):

- **Plain board**: among the feasible two-layer combinations, the one with no mitigation
  switch and the fewest vias per ground connection; the cheapest of those, then the
  smallest drill, then the finished thickness nearest the window's nominal (its
  ``nominal``, else the middle of ``min``/``max``, else 1.6 mm). Where no plain board is
  feasible, the feasible two-layer board with the fewest changes from plain. Where no
  two-layer board is feasible at all, the ladder is *blocked*: it has no steps, only the
  two-layer board nearest to feasible (:func:`least_violating`), whose broken
  constraints the report names with their figures.
- **Single changes** from a board: one more via per ground connection (the next larger
  count of the space), the next larger drill, any thinner core whose finished board stays
  in the thickness window, and switching on one mitigation (``via_in_pad``, ``own_vias``,
  ``coplanar``). All neighbours of a step are evaluated in one batch
  (:meth:`Problem.evaluate`).
- **A step** takes the feasible neighbour that raises the margin (worst requirement) and
  does not lower the cost: a *free* one first (Δcost = 0, the largest ΔdB), else the one
  with the most dB per unit cost. Cost and margin therefore never fall along the ladder.
  A cheaper *and* better neighbour would break the cost order; it is left off the ladder
  (it shows in the Pareto set). The margin of a filter is not monotone in the ground
  inductance (a shunt capacitor and its ground inductance make a notch that moves with
  it), so a greedy walk can stall; where a costlier two-layer combination with more margin
  exists, one last *combination* step jumps to the best of them, so that the ladder ends
  at the best two-layer board reachable without cost or margin falling.
- **Pareto set**: the non-dominated (unit cost, margin) feasible two-layer combinations;
  every combination is evaluated when there are at most :data:`ENUMERATE_LIMIT`,
  otherwise the search's own two-layer candidates are used.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from stackopt.model.mitigations import MITIGATIONS
from stackopt.search.evalrows import KnownRows, take_rows
from stackopt.search.front import nondominated
from stackopt.search.order import lexmin
from stackopt.search.problem import Evaluation, Problem
from stackopt.search.space import Candidates, Space
from stackopt.search.twolayer import (
    ENUMERATE_LIMIT,
    changes_from_plain,
    least_violating,
    nearest_alternatives,
    no_candidates,
    plain_board,
    two_layer_combinations,
)

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["Ladder", "mitigation_ladder", "build_ladder", "climb", "plain_board",
           "least_violating", "nearest_alternatives",
           "two_layer_combinations", "ENUMERATE_LIMIT"]

_EPS_DB = 1e-6
#: The step table's columns when no two-layer board can be built.
_BLOCKED_COLUMNS = ("step", "kind", "change", "d_cost", "total_d_cost", "d_margin_dB",
                    "dB_per_cost")


def _neighbours(problem: Problem, c: Candidates) -> tuple[Candidates, list[str]]:
    """Every single change from the one board ``c`` (see the module docstring)."""
    sp = problem.space
    boards: list[Candidates] = []
    kinds: list[str] = []

    def add(board: Candidates, kind: str) -> None:
        boards.append(board)
        kinds.append(kind)

    for values, name in ((sp.vias, "vias"), (sp.drills, "drill")):
        vals = np.asarray(values, dtype=float)
        now = int(getattr(c, name)[0])
        larger = np.flatnonzero(vals > vals[now])
        if len(larger):
            add(c.replace(**{name: np.array([int(larger[np.argmin(vals[larger])])])}), name)
    core = sp.options["core"]
    cu = sp.copper[int(c.copper[0])]
    win = problem.scenario.space.thickness
    lo, hi = win.bounds if win is not None else (0.0, math.inf)
    for j in np.flatnonzero(core.thickness < core.thickness[c.slot[0, 0]]):
        if lo <= core.thickness[j] + 2 * cu <= hi:
            add(c.with_slot(0, int(j)), "thinner")
    for k, name in enumerate(sp.mitigations):
        if not c.mit[0, k]:
            add(c.with_switch(k), name)
    if not boards:
        return no_candidates(sp), []
    return Candidates.concat(boards), kinds


def _pick(cost0: float, margin0: float, ev: Evaluation) -> int | None:
    """The step to take among evaluated neighbours, or ``None`` (module docstring)."""
    dc = ev.unit_cost - cost0
    dm = ev.margin - margin0
    tol = 1e-9 * max(1.0, abs(cost0))
    ok = ev.feasible & (dc >= -tol) & (dm > _EPS_DB)
    if not ok.any():
        return None
    free = ok & (dc <= tol)
    if free.any():
        return int(np.argmax(np.where(free, dm, -np.inf)))
    return int(np.argmax(np.where(ok, dm / np.where(ok, dc, 1.0), -np.inf)))


def climb(problem: Problem, start: Candidates, max_steps: int = 64,
          known: KnownRows | None = None) -> tuple[Candidates, list[str]]:
    """The greedy single-change ladder from the one board ``start``.

    Returns the boards of every step (start first) and the kind of change of each
    (``"start"``, ``"vias"``, ``"drill"``, ``"thinner"`` or a mitigation name). Boards in
    ``known`` are read from its arrays, not evaluated again.
    """
    known = known if known is not None else KnownRows(problem)
    path, kinds = [start], ["start"]
    ev0 = known.evaluate(start)
    cost, margin = float(ev0.unit_cost[0]), float(ev0.margin[0])
    for _ in range(max_steps):
        nb, nk = _neighbours(problem, path[-1])
        if not len(nb):
            break
        ev = known.evaluate(nb)  # every neighbour of this step in one batch
        k = _pick(cost, margin, ev)
        if k is None:
            break
        path.append(nb.take(np.array([k])))
        kinds.append(nk[k])
        cost, margin = float(ev.unit_cost[k]), float(ev.margin[k])
    return Candidates.concat(path), kinds


def _words(space: Space, a: Candidates | None, b: Candidates) -> str:
    """What changes from the one board ``a`` to the one board ``b``, in words."""
    core = space.options["core"]
    t = core.thickness[b.slot[0, 0]]
    cu = space.copper[int(b.copper[0])]
    vias = space.vias[int(b.vias[0])]
    drill = space.drills[int(b.drill[0])]
    if a is None:
        mits = [MITIGATIONS[m].words for k, m in enumerate(space.mitigations) if b.mit[0, k]]
        plain = not mits and vias == min(space.vias)
        return (("plain two-layer board" if plain else
                 "simplest feasible two-layer board (no plain one is feasible)")
                + f": {t * 1e3:.3g} mm core ({(t + 2 * cu) * 1e3:.3g} mm "
                f"finished), {vias} {'via' if vias == 1 else 'vias'} per ground connection, "
                f"drill {drill * 1e3:.3g} mm"
                + (", " + ", ".join(mits) if mits else ""))
    out = []
    if a.slot[0, 0] != b.slot[0, 0]:
        out.append(f"{'thinner' if t < core.thickness[a.slot[0, 0]] else 'thicker'} core "
                   f"{t * 1e3:.3g} mm ({(t + 2 * cu) * 1e3:.3g} mm finished)")
    if a.copper[0] != b.copper[0]:
        out.append(f"copper {cu * 1e6:.0f} um")
    if a.drill[0] != b.drill[0]:
        out.append(f"drill {drill * 1e3:.3g} mm")
    if a.vias[0] != b.vias[0]:
        out.append(f"{vias} vias per ground connection")
    for k, m in enumerate(space.mitigations):
        if a.mit[0, k] != b.mit[0, k]:
            w = MITIGATIONS[m].words
            out.append(w if b.mit[0, k] else f"no {w}")
    return ", ".join(out) or "no change"


@dataclass(frozen=True, eq=False)
class Ladder:
    """The mitigation ladder of one search (see the module docstring)."""

    problem: Problem
    steps: Candidates  # K boards, the plain board first
    evaluation: Evaluation  # of ``steps``
    kinds: tuple[str, ...]
    changes: tuple[str, ...]  # what each step changes, in words
    pareto: Candidates  # Pareto set of the two-layer combinations, by increasing cost
    pareto_evaluation: Evaluation
    combinations: int  # two-layer combinations considered for the Pareto set
    exhaustive: bool  # every two-layer combination was evaluated
    four_layer: Candidates | None  # the cheapest four-layer board meeting the requirements
    four_layer_evaluation: Evaluation | None
    four_layer_note: str
    #: Every two-layer board considered (the start and Pareto pool) and its evaluation.
    pool: Candidates | None = None
    pool_evaluation: Evaluation | None = None

    @property
    def blocked(self) -> bool:
        """No two-layer board is feasible: ``steps`` holds only the one nearest to
        feasible (not a ladder step; never plotted)."""
        return not bool(self.evaluation.feasible[0])

    @property
    def first_meeting(self) -> int | None:
        """First step whose board meets every requirement (None: two layers never do)."""
        ok = np.flatnonzero(self.evaluation.feasible & (self.evaluation.margin >= 0))
        return int(ok[0]) if len(ok) else None

    def _columns(self, c: Candidates, ev: Evaluation) -> dict[str, object]:
        sp, g = self.problem.space, ev.geometry
        cols: dict[str, object] = {
            "core": [sp.options["core"].names[int(j)] for j in c.slot[:, 0]],
            "thickness_m": g.thickness, "drill_m": g.drill, "vias_per_ground": g.vias,
            "mitigations": [";".join(m for k, m in enumerate(sp.mitigations) if c.mit[i, k])
                            for i in range(len(c))],
            "unit_cost": ev.unit_cost, "lot_cost": ev.lot_cost, "margin_dB": ev.margin}
        for k, r in enumerate(self.problem.scenario.requirements):
            cols[f"attenuation_dB_{r.key}Hz"] = ev.attenuation[:, k]
        cols.update({"ground_inductance_H": ev.inductance, "feasible": ev.feasible,
                     "meets_requirements": ev.feasible & (ev.margin >= 0)})
        return cols

    def _step_columns(self) -> dict[str, object]:
        ev = self.evaluation
        dc = np.r_[0.0, np.diff(ev.unit_cost)]
        dm = np.r_[0.0, np.diff(ev.margin)]
        cols: dict[str, object] = {"step": np.arange(len(self.steps)), "kind": self.kinds,
                                   "change": self.changes, "d_cost": dc,
                                   "total_d_cost": ev.unit_cost - ev.unit_cost[0],
                                   "d_margin_dB": dm}
        for k, r in enumerate(self.problem.scenario.requirements):
            cols[f"d_attenuation_dB_{r.key}Hz"] = np.r_[0.0, np.diff(ev.attenuation[:, k])]
        tol = 1e-9 * max(1.0, float(np.max(np.abs(ev.unit_cost))))
        with np.errstate(divide="ignore", invalid="ignore"):
            cols["dB_per_cost"] = np.where(dc > tol, dm / dc, np.nan)
        cols.update(self._columns(self.steps, ev))
        return cols

    def parts(self) -> list[tuple[str, dict[str, object]]]:
        """The tables of :meth:`frame` as ``(set, columns)``: ``"ladder"`` (the steps of
        :attr:`table`), ``"pareto"`` and, with a four-layer board, ``"four_layer"``;
        columns are arrays or lists of one length (none for a blocked ladder's steps)."""
        steps = ({c: [] for c in _BLOCKED_COLUMNS} if self.blocked
                 else self._step_columns())
        out = [("ladder", steps), ("pareto", self._columns(self.pareto,
                                                           self.pareto_evaluation))]
        if self.four_layer is not None and self.four_layer_evaluation is not None:
            out.append(("four_layer", self._columns(self.four_layer,
                                                    self.four_layer_evaluation)))
        return out

    @property
    def table(self) -> pd.DataFrame:
        """One row per step: the change, Δcost per board, ΔdB at every requirement and of
        the margin, dB per unit cost (empty for a free step), and the board."""
        import pandas as pd

        return pd.DataFrame(self.parts()[0][1])

    @property
    def pareto_table(self) -> pd.DataFrame:
        """The Pareto set of two-layer combinations, by increasing unit cost."""
        import pandas as pd

        return pd.DataFrame(self.parts()[1][1])

    def frame(self) -> pd.DataFrame:
        """Ladder, Pareto set and the four-layer board in one table (``set`` column)."""
        import pandas as pd

        parts = [pd.DataFrame(cols).assign(set=name) for name, cols in self.parts()]
        cols = list(dict.fromkeys(c for p in parts for c in p.columns))
        kept = [p for p in parts if len(p)]  # an empty part would turn columns to object
        df = (pd.concat(kept, ignore_index=True) if kept else parts[0]).reindex(columns=cols)
        return df[["set", *[c for c in df.columns if c != "set"]]]

    def to_summary(self) -> dict:
        """JSON-ready summary (``summary.json``'s ``mitigation_ladder``): the rows of
        :attr:`table` and :attr:`pareto_table` as dicts (built from the same columns,
        without a data frame: the summary is written where pandas is not loaded)."""
        four = None
        if self.four_layer is not None and self.four_layer_evaluation is not None:
            four = _records(self._columns(self.four_layer, self.four_layer_evaluation))[0]
        blocked = ([f"{k} (+{float(v[0]):.3g})" for k, v in self.evaluation.violations.items()
                    if v[0] > 0] if self.blocked else [])
        return {"steps": [] if self.blocked else _records(self._step_columns()),
                "blocked_by": blocked,
                "first_meeting_step": self.first_meeting,
                "pareto": _records(self._columns(self.pareto, self.pareto_evaluation)),
                "combinations": self.combinations, "exhaustive": self.exhaustive,
                "four_layer": four, "four_layer_note": self.four_layer_note}


def _records(cols: dict[str, object]) -> list[dict]:
    """The rows of a table given as columns (arrays or lists of equal length), each a
    dict of Python values (numpy scalars converted), in column order."""
    lists = {k: v.tolist() if isinstance(v, np.ndarray) else list(v)  # type: ignore[call-overload]
             for k, v in cols.items()}
    n = len(next(iter(lists.values()))) if lists else 0
    return [{k: v[i] for k, v in lists.items()} for i in range(n)]


def _pareto(problem: Problem, pool: Candidates, ev: Evaluation) -> np.ndarray:
    """Indices of the Pareto set (cost, margin) of the feasible pool, by cost; of boards
    with equal objectives only the one with the fewest changes from plain."""
    idx = np.flatnonzero(ev.feasible)
    f = np.column_stack([ev.unit_cost[idx], -ev.margin[idx]])
    nd = idx[nondominated(f)]
    if not len(nd):
        return nd
    obj = np.round(np.column_stack([ev.unit_cost[nd], -ev.margin[nd]]), 9)
    order = np.lexsort((nd, changes_from_plain(problem.space, pool.take(nd)), obj[:, 1], obj[:, 0]))
    nd, obj = nd[order], obj[order]
    return nd[np.r_[True, np.any(obj[1:] != obj[:-1], axis=1)]]


def _four_layer(result) -> tuple[int | None, str]:
    layers = result.evaluation.geometry.layers
    if not np.any(result.problem.space.layer_counts == 4):
        return None, "The scenario's design space has no four-layer boards to compare with."
    idx = np.flatnonzero(result.meets & (layers == 4))
    if not len(idx):
        return None, "No four-layer board evaluated meets every requirement."
    ev = result.evaluation
    i = int(idx[lexmin((-ev.margin[idx], ev.unit_cost[idx]))])
    return i, "The cheapest four-layer board that meets every requirement."


def build_ladder(problem: Problem, pool: Candidates | None = None, *,
                 four: Candidates | None = None,
                 four_note: str = "No four-layer board to compare with.",
                 known: KnownRows | None = None) -> Ladder | None:
    """The ladder of ``problem`` (``None`` without two-layer combinations).

    ``pool``: the two-layer boards for the start and the Pareto set (default: every
    combination, see :func:`two_layer_combinations`); ``four``: a one-row
    :class:`Candidates` of the four-layer board to set the ladder against; ``known``:
    boards already evaluated (the search's), read instead of evaluated again. Every other
    board is evaluated once.
    """
    known = known if known is not None else KnownRows(problem)
    sp = problem.space
    exhaustive = pool is None
    if pool is None:
        pool = two_layer_combinations(sp)
    if not len(pool) or not len(sp.options["core"]):
        return None
    ev = known.evaluate(pool)
    if not ev.feasible.any():  # blocked: no step, only the board nearest to feasible
        k = least_violating(ev)
        assert k is not None
        near = pool.take(np.array([k]))
        par = pool.take(np.zeros(0, dtype=np.int64))
        four_ev = known.evaluate(four) if four is not None else None
        return Ladder(problem, near, known.evaluate(near), ("blocked",),
                      (_words(sp, None, near),), par, known.evaluate(par),
                      len(pool), exhaustive, four, four_ev, four_note, pool, ev)
    i0 = plain_board(problem, pool, ev)
    assert i0 is not None
    steps, kinds = climb(problem, pool.take(np.array([i0])), known=known)
    ev_s = known.evaluate(steps)
    end_cost, end_margin = float(ev_s.unit_cost[-1]), float(ev_s.margin[-1])
    tol = 1e-9 * max(1.0, abs(end_cost))
    jump = np.flatnonzero(ev.feasible & (ev.unit_cost >= end_cost - tol)
                          & (ev.margin > end_margin + _EPS_DB) & bool(ev_s.feasible[-1]))
    if len(jump):
        j = int(jump[np.lexsort((jump, changes_from_plain(sp, pool.take(jump)), ev.unit_cost[jump],
                                 -ev.margin[jump]))[0]])
        steps = Candidates.concat([steps, pool.take(np.array([j]))])
        kinds = [*kinds, "combination"]
        ev_s = known.evaluate(steps)
    one = [steps.take(np.array([k])) for k in range(len(steps))]  # a handful of steps
    changes = tuple(_words(sp, None if k == 0 else one[k - 1], one[k])
                    for k in range(len(one)))
    par = pool.take(_pareto(problem, pool, ev))
    four_ev = known.evaluate(four) if four is not None else None
    return Ladder(problem, steps, ev_s, tuple(kinds), changes, par, known.evaluate(par),
                  len(pool), exhaustive, four, four_ev, four_note, pool, ev)


def mitigation_ladder(result) -> Ladder | None:
    """The mitigation ladder of a search :class:`~stackopt.search.results.Result`, or
    ``None`` when its design space has no two-layer boards. Computed afresh: use
    ``result.ladder``, which computes it once per result. Boards the search evaluated are
    read from its arrays; only the others are evaluated."""
    pb = result.problem
    two = [a for a in pb.space.arrangements if a.n_layers == 2]
    lad = None
    if two:
        size = sum(pb.space.arrangement_size(a) for a in two)
        pool = None
        if size > ENUMERATE_LIMIT:
            pool = result.candidates.take(np.flatnonzero(
                result.evaluation.geometry.layers == 2))
        i4, note = _four_layer(result)
        four = result.candidates.take(np.array([i4])) if i4 is not None else None
        # the search's two-layer boards and the four-layer one are read, not solved again
        rows = np.flatnonzero(result.evaluation.geometry.layers == 2)
        rows = np.r_[rows, i4] if i4 is not None else rows
        known = KnownRows(pb, result.candidates.take(rows),
                          take_rows(result.evaluation, rows))
        lad = build_ladder(pb, pool, four=four, four_note=note, known=known)
    return lad
