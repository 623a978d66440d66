"""NSGA-II on the integer genome, for spaces the exact search cannot finish in time.

Following what was measured on this problem's shape: integer genes handled by SBX and PM
with ``vtype=float`` and rounding repair; duplicates eliminated on the *decoded* board
(many genomes decode to one board); an initial population stratified over layer counts
and seeded with the cheapest build of every arrangement and copper weight (from the exact
search's dynamic programme over the dielectrics, :func:`~stackopt.search.exact.cheapest_builds`,
milliseconds), so the cost end of the front is there from the first generation;
termination on an explicit evaluation budget or earlier once the front stops moving
(:func:`termination`); seeded through ``minimize(seed=...)``.
Two choices were measured on the demo fab's whole space (benchmarks/bench_search.py): a
survival that keeps an equal share of the population per layer count (two-layer boards
need several genes right at once and were otherwise crowded out), and a wide polynomial
mutation (eta 5 on half of the genes: tail dielectrics only move cost, so the search must
roam them). Every board evaluated is kept in an archive, so the reported front is
non-dominated among everything evaluated.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from pymoo.algorithms.moo.nsga2 import NSGA2
from pymoo.core.duplicate import DefaultDuplicateElimination
from pymoo.core.problem import Problem as PymooProblem
from pymoo.core.sampling import Sampling
from pymoo.core.survival import Survival
from pymoo.operators.crossover.sbx import SBX
from pymoo.operators.mutation.pm import PM
from pymoo.operators.repair.rounding import RoundingRepair
from pymoo.operators.survival.rank_and_crowding import RankAndCrowding
from pymoo.optimize import minimize

from stackopt.search.exact import cheapest_builds
from stackopt.search.genome import decode_genome, encode_candidates, genome_bounds
from stackopt.search.problem import Problem
from stackopt.search.space import Candidates

__all__ = ["run_nsga2", "Archive"]


class Archive:
    """Every distinct board evaluated, in first-seen order."""

    def __init__(self) -> None:
        self._parts: list[np.ndarray] = []

    def add(self, c: Candidates) -> None:
        """Record a batch (duplicates are removed in :meth:`candidates`)."""
        self._parts.append(c.matrix())

    def candidates(self, n_slots: int) -> Candidates:
        """All distinct boards recorded, in first-seen order."""
        m = np.concatenate(self._parts)
        _, first = np.unique(m, axis=0, return_index=True)
        return Candidates.from_matrix(m[np.sort(first)], n_slots)

    @property
    def evaluations(self) -> int:
        """Evaluations made (duplicates included)."""
        return int(sum(len(p) for p in self._parts))


class _StackupProblem(PymooProblem):
    def __init__(self, problem: Problem, archive: Archive, n_constr: int,
                 on_eval: Callable[[int], None] | None) -> None:
        xl, xu = genome_bounds(problem.space)
        n_obj = 3 if problem.scenario.search.third_objective else 2
        super().__init__(n_var=len(xl), n_obj=n_obj, n_ieq_constr=n_constr, xl=xl, xu=xu,
                         vtype=int)
        self.p = problem
        self.archive = archive
        self.on_eval = on_eval

    def _evaluate(self, x, out, *args, **kwargs):
        c = decode_genome(self.p.space, x)
        ev = self.p.evaluate(c)
        self.archive.add(c)
        out["F"] = self.p.objectives(ev)
        out["G"] = np.column_stack([v for _, v in sorted(ev.violations.items())])
        if self.on_eval:
            self.on_eval(len(x))


class _Stratified(Sampling):
    """Random genomes with the arrangement cycling over layer counts (then arrangements);
    the first rows are the ``seeds`` (genomes of known good boards), at most half."""

    def __init__(self, space, seeds: np.ndarray | None = None) -> None:
        super().__init__()
        self.space = space
        self.seeds = np.zeros((0, 0)) if seeds is None else seeds

    def _do(self, problem, n_samples, *args, random_state=None, **kwargs):
        xl, xu = problem.bounds()
        x = random_state.integers(xl, xu + 1, size=(n_samples, len(xl)))
        counts = self.space.layer_counts
        levels = np.unique(counts)
        i = np.arange(n_samples)
        level = levels[i % len(levels)]
        # within a layer count, cycle over its arrangements
        for n in levels:
            rows = level == n
            group = np.flatnonzero(counts == n)
            x[rows, 0] = group[np.arange(rows.sum()) % len(group)]
        k = min(len(self.seeds), n_samples // 2)
        x[:k] = self.seeds[:k]
        return x.astype(float)


def _quotas(total: int, sizes: list[int]) -> list[int]:
    """Split ``total`` survivors equally over groups, passing on what a small group cannot
    use (deterministic)."""
    quota = [0] * len(sizes)
    left, open_ = total, [i for i, n in enumerate(sizes) if n > 0]
    while left > 0 and open_:
        share = max(left // len(open_), 1)
        for i in list(open_):
            take = min(share, sizes[i] - quota[i], left)
            quota[i] += take
            left -= take
            if quota[i] >= sizes[i]:
                open_.remove(i)
            if left == 0:
                break
    return quota


class _LayerNiches(Survival):
    """Rank-and-crowding survival within each layer count, with an equal share of the
    population for each: a two-layer board needs several genes right at once (core, line
    width, thickness window) and would otherwise be crowded out by feasible multilayer
    boards before the first feasible one is found."""

    def __init__(self, space) -> None:
        super().__init__(filter_infeasible=False)
        self.space = space
        self.inner = RankAndCrowding()

    def _do(self, problem, pop, *args, n_survive=None, random_state=None, **kwargs):
        n_arr = len(self.space.arrangements)
        arr = np.clip(np.rint(pop.get("X")[:, 0]).astype(np.int64), 0, n_arr - 1)
        layers = self.space.layer_counts[arr]
        groups = [np.flatnonzero(layers == lv) for lv in np.unique(self.space.layer_counts)]
        n_survive = len(pop) if n_survive is None else n_survive
        keep = []
        for g, q in zip(groups, _quotas(n_survive, [len(g) for g in groups]), strict=True):
            if q:
                idx = self.inner.do(problem, pop[g], n_survive=q, random_state=random_state,
                                    return_indices=True)
                keep.append(g[np.asarray(idx, dtype=np.int64)])
        return pop[np.concatenate(keep)]


def _board_key(space):
    def key(pop):
        return decode_genome(space, pop.get("X")).matrix().astype(float)

    return key


#: Stop criterion besides the budget: pymoo's objective-space tolerance (the movement of
#: the normalized front, averaged over a sliding window of generations) below STOP_FTOL.
#: With the seeded start this halved the evaluations on the demo fab's whole space at
#: the same hypervolume (99.9998 % of the exact front, seeds 1-3; docs/performance.md).
STOP_FTOL = 0.0025
STOP_PERIOD = 30


def termination(budget: int):
    """The evolutionary search stops after ``budget`` evaluations, or earlier once the
    front has stopped moving (:data:`STOP_FTOL` over :data:`STOP_PERIOD` generations)."""
    from pymoo.termination.default import DefaultMultiObjectiveTermination

    return DefaultMultiObjectiveTermination(ftol=STOP_FTOL, period=STOP_PERIOD,
                                            n_max_evals=budget)


def run_nsga2(problem: Problem, budget: int, seed: int, pop_size: int = 100,
              on_eval: Callable[[int], None] | None = None, *, mutation_eta: float = 5.0,
              mutation_prob: float = 0.5) -> Archive:
    """Run NSGA-II for at most ``budget`` evaluations (see :func:`termination`); return the
    archive of boards evaluated."""
    space = problem.space
    # the constraint count is fixed by the problem: evaluate one board to learn it
    probe = decode_genome(space, genome_bounds(space)[0][None, :])
    n_constr = len(problem.evaluate(probe).violations)
    archive = Archive()
    pp = _StackupProblem(problem, archive, n_constr, on_eval)
    algo = NSGA2(
        pop_size=pop_size,
        sampling=_Stratified(space, encode_candidates(space, cheapest_builds(problem))),
        crossover=SBX(prob=0.9, eta=15, vtype=float, repair=RoundingRepair()),
        mutation=PM(eta=mutation_eta, prob_var=mutation_prob, vtype=float,
                    repair=RoundingRepair()),
        survival=_LayerNiches(space),
        eliminate_duplicates=DefaultDuplicateElimination(func=_board_key(space)),
    )
    minimize(pp, algo, termination(budget), seed=seed, verbose=False)
    return archive
