"""Robust margin: the worst margin over the listed via models at the nominal build.

The four single-via models disagree by 2-8x (see :mod:`stackopt.physics.inductance`); a
board whose margin holds under each of them does not hinge on that choice. Each model
costs one more circuit solve per electrical phenotype (:meth:`Problem.response`), never
one per candidate.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from dataclasses import replace

import numpy as np

from stackopt.analyses.limits import pick_limits
from stackopt.analyses.prepregs import prepreg_rows, row_boards
from stackopt.analyses.tolerances import build_draws, monte_carlo, yield_key
from stackopt.circuit.metrics import attenuation_db
from stackopt.physics.inductance import VIA_MODELS
from stackopt.rows import unique_rows
from stackopt.search.problem import Problem
from stackopt.search.results import Result
from stackopt.search.space import Geometry

__all__ = ["margin_under", "margins_by_model", "analyse", "ROBUST_CHUNK"]

#: Most candidates sampled per Monte Carlo batch while looking for the cheapest robust one
#: (batches grow 1, 4, 16, ... up to this).
ROBUST_CHUNK = 32
#: At most this many distinct ground batches are sampled in that search (bounds the time
#: when many boards meet under every model but few reach the yield target).
MAX_ROBUST_SAMPLED = 2048


def margin_under(problem: Problem, g: Geometry, model: str) -> np.ndarray:
    """Margin [dB] (N,) of a batch under one via model, solved once per phenotype; a
    non-finite response counts as a failure (-999 dB), as in the search's evaluation."""
    s, _ = problem.response(g, model)
    _, margin = problem.attenuation(attenuation_db(s))
    return np.nan_to_num(margin, nan=-999.0, posinf=999.0, neginf=-999.0)


def margins_by_model(problem: Problem, g: Geometry, models: Iterable[str],
                     known: Mapping[str, np.ndarray] | None = None) -> dict[str, np.ndarray]:
    """Margin [dB] (N,) of a batch under each model; ``known`` margins (e.g. the ranking
    model's, already in the evaluation) are reused, not solved again."""
    known = known or {}
    return {m: (np.asarray(known[m]) if m in known else margin_under(problem, g, m))
            for m in models}


Progress = Callable[[int, int], None]


class _Sampler:
    """Monte Carlo yields and impedance ranges, filled in batches of candidates;
    ``progress(done, total)`` counts builds (candidate phenotypes x samples) over every
    batch so far (the total grows when a batch is added)."""

    def __init__(self, result: Result, progress: Progress | None = None) -> None:
        self.result = result
        self.progress = progress
        self.done = 0
        self.problem = result.problem
        self.draws = build_draws(self.problem)
        n, lines = result.n, len(self.problem.routes)
        self.yields = np.full(n, np.nan)
        self.zrange = np.full((n, lines, 2), np.nan)
        self.margins: dict[int, np.ndarray] = {}

    def sample(self, idx: np.ndarray) -> None:
        """Build every not yet sampled candidate of ``idx`` ``S`` times (one batch)."""
        idx = np.unique(np.asarray(idx, dtype=np.int64))
        idx = idx[np.isnan(self.yields[idx])]
        if not len(idx):
            return
        r = self.result
        g = self.problem.space.geometry(r.candidates.take(idx))
        base, report = self.done, self.progress

        def tick(done: int, total: int) -> None:  # this batch after the earlier ones
            self.done = base + done
            if report is not None:
                report(base + done, base + total)

        mc = monte_carlo(self.problem, g, r.evaluation.widths[idx],
                         self.problem.scenario.search.via_model, self.draws, progress=tick)
        self.yields[idx] = mc.yields
        self.zrange[idx, :, 0] = mc.impedance_min
        self.zrange[idx, :, 1] = mc.impedance_max
        self.margins.update(zip(idx.tolist(), mc.margin, strict=True))


def _cheapest_robust(r: Result, sampler: _Sampler) -> int | None:
    """The cheapest candidate meeting every requirement under every listed model whose
    yield reaches the target; candidates are sampled cheapest first, a batch at a time."""
    target = r.problem.scenario.search.robustness.yield_target
    idx = np.flatnonzero(r.robust_meets)
    order = idx[np.lexsort((idx, r.complexity[idx], -r.robust_margin[idx],
                            r.evaluation.unit_cost[idx]))]
    if len(order):  # one candidate per distinct yield (circuit input and layer tolerances)
        p = r.problem
        g = p.space.geometry(r.candidates.take(order))
        first, _ = unique_rows(yield_key(p, g, sampler.draws.thickness_tolerance))
        order = order[np.sort(first)][:MAX_ROBUST_SAMPLED]  # cheapest of each, cost order
    i0, size = 0, 1
    while i0 < len(order):  # growing batches: usually the first (cheapest) one is robust
        chunk = order[i0:i0 + size]
        sampler.sample(chunk)
        ok = chunk[sampler.yields[chunk] >= target - 1e-12]
        if len(ok):
            return int(ok[0])
        i0, size = i0 + size, min(4 * size, ROBUST_CHUNK)
    return None


def analyse(result: Result, progress: Progress | None = None) -> Result:
    """The search's result with robust margins (every candidate), the model spread and
    Monte Carlo yields (the front, the picks and the boards of the prepreg answer,
    :mod:`stackopt.analyses.prepregs`), the ``cheapest_robust`` pick, what limits
    each pick's circuit and the mitigation ladder (``Result.ladder``).

    Cost: one more solve per phenotype for each listed model other than the ranking
    one; one batch of ``samples`` builds per sampled candidate. ``progress(done,
    total)`` is called as the Monte Carlo builds are solved (a chunk at a time).
    """
    problem, ev = result.problem, result.evaluation
    sc = problem.scenario
    rank = sc.search.via_model
    robust = margins_by_model(problem, ev.geometry, sc.search.robustness.models,
                              known={rank: ev.margin})
    r = replace(result, robust=robust)
    sampler = _Sampler(r, progress)
    keep = r.on_front.copy()
    for v in r.picks.values():
        if v is not None:
            keep[v] = True
    rows = prepreg_rows(r)
    r = replace(r, prepregs=rows)  # found once; every output reads these rows
    keep[row_boards(rows)] = True  # the same batch: each row's boards
    sampler.sample(np.flatnonzero(keep))
    pick = _cheapest_robust(r, sampler)
    r = replace(r, yields=sampler.yields, impedance_range=sampler.zrange, robust_pick=pick)
    picked = np.array([v for v in r.picks.values() if v is not None], dtype=np.int64)
    sampler.sample(picked)  # a tie broken by yield may pick an unsampled candidate
    keep[picked] = True
    idx = np.flatnonzero(keep)
    g = problem.space.geometry(result.candidates.take(idx))
    known = {m: v[idx] for m, v in robust.items()}
    spread = {}
    for m, margin in margins_by_model(problem, g, VIA_MODELS, known=known).items():
        full = np.full(result.n, np.nan)
        full[idx] = margin
        spread[m] = full
    r = replace(r, spread=spread, yields=sampler.yields, impedance_range=sampler.zrange,
                build_margins={i: sampler.margins[i] for i in picked.tolist()})
    r = replace(r, limits=pick_limits(r))
    _ = r.ladder  # the mitigation ladder (stackopt.search.ladder), built with the analyses
    return r
