"""Exact Pareto search without visiting the whole space.

Why it is exact: a stackup's electrical response depends only on the genes that set the
depth from the top copper to its ground plane (the *head*), plus copper, drill, vias and
mitigations; the other dielectric genes (the *tail*) change only the finished thickness
and the material cost, and the material cost is additive. So for every electrical group
(arrangement, head, copper, drill, vias, mitigations) only the cheapest tail that meets
the thickness rules can be on the front. The cheapest tail for every reachable thickness
is found by dynamic programming over the tail genes (states keyed by thickness in whole
quanta of :func:`stackopt.search.phenotype.quantize`, 1 nm, so sums are exact); the
thickness-dependent prices and limits (window, aspect
ratio, non-standard thickness) are then applied to each state. One representative per
group is evaluated in full; the front over the representatives equals the front over the
whole space (``tests/test_search.py`` checks this against brute force).
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from stackopt.cost import PriceBatch, price
from stackopt.search.arrangement import Arrangement
from stackopt.search.phenotype import QUANTUM, quantize
from stackopt.search.problem import Problem
from stackopt.search.space import Candidates, Space

__all__ = ["ExactPlan", "ExactCost", "cheapest_builds", "exact_candidates", "enumerate_all",
           "exact_cost", "construction_candidates"]

_BIG = 1e30


@dataclass(frozen=True)
class ExactPlan:
    """What the exact search visited."""

    representatives: Candidates
    states: int  # thickness states kept by the dynamic programme, summed
    priced: int  # (head x state x combination) totals priced


def _gene_tables(space: Space, a: Arrangement, coef: np.ndarray):
    """Per gene: thickness (nm, int) and unit material cost of every option."""
    out = []
    for slots in a.genes:
        o = space.options[a.slot_kinds[slots[0]]]
        mult = len(slots)
        t_nm = quantize(o.thickness) * mult
        cost = coef[o.material] * o.count * mult
        out.append((t_nm, cost))
    return out


def _tail_dp(tables):
    """Cheapest tail per total thickness; returns (t_nm, cost, backpointers)."""
    st_t = np.zeros(1, dtype=np.int64)
    st_c = np.zeros(1)
    back = []
    for t_nm, cost in tables:
        tt = (st_t[:, None] + t_nm[None, :]).ravel()
        cc = (st_c[:, None] + cost[None, :]).ravel()
        order = np.lexsort((cc, tt))
        keep = order[np.r_[True, tt[order][1:] != tt[order][:-1]]]
        k = len(t_nm)
        back.append((keep // k, keep % k))
        st_t, st_c = tt[keep], cc[keep]
    return st_t, st_c, back


def _backtrack(back, state_idx: np.ndarray) -> np.ndarray:
    """Option index of every tail gene for the chosen final states, (n, genes)."""
    opts = np.zeros((len(state_idx), len(back)), dtype=np.int64)
    cur = state_idx
    for g in range(len(back) - 1, -1, -1):
        parent, opt = back[g]
        opts[:, g] = opt[cur]
        cur = parent[cur]
    return opts


def _material_coef(problem: Problem, layers: int) -> np.ndarray:
    """Unit cost added by one ply/core of each catalogue item (pricing is linear in it)."""
    sp = problem.space
    m = sp.n_materials
    counts = np.vstack([np.zeros((1, m), dtype=np.int64), np.eye(m, dtype=np.int64)])
    pb = PriceBatch.broadcast(layers=layers, material_counts=counts,
                              copper=sp.copper[0], inner_copper=sp.copper[0],
                              min_drill=max(sp.drills), thickness=1.6e-3,
                              min_dielectric=1.0, min_trace=np.nan, via_in_pad=False,
                              impedance_control=bool(problem.scenario.lines))
    u = price(problem.table, problem.order, pb).unit_cost
    return u[1:] - u[0]


def _thickness_terms(problem: Problem, layers: int, cu: float, drill: float, vip: bool,
                     t: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(unit cost without materials, total violation, lead time) as functions of finished
    thickness."""
    n = len(t)
    pb = PriceBatch.broadcast(layers=layers,
                              material_counts=np.zeros((n, problem.space.n_materials),
                                                       dtype=np.int64),
                              copper=cu, inner_copper=cu, min_drill=drill, thickness=t,
                              min_dielectric=1.0, min_trace=np.nan, via_in_pad=vip,
                              impedance_control=bool(problem.scenario.lines))
    pr = price(problem.table, problem.order, pb)
    viol = np.zeros(n)
    for v in pr.violations.values():
        viol += v
    win = problem.scenario.space.thickness
    if win is not None:
        lo, hi = win.bounds
        viol += np.maximum(lo - t, 0) / lo + np.maximum(t - hi, 0) / hi
    return pr.unit_cost, viol, pr.lead_time_days


#: Seconds per (head x thickness state x copper x drill x via-in-pad) total priced, and
#: per representative evaluated in full (physics once per phenotype, pricing, widths);
#: bytes held per representative during its evaluation. Fitted to runs of
#: ``benchmarks/bench_auto.py`` on the machine of docs/performance.md (2-core Intel Xeon,
#: one thread; refitted 2026-12-03 after the evaluation got about three times faster);
#: the estimate's error against real runs is quoted there.
SECONDS_PER_PRICED = 0.15e-6
SECONDS_PER_REPRESENTATIVE = 15e-6
BYTES_PER_REPRESENTATIVE = 1400


@dataclass(frozen=True)
class ExactCost:
    """What the exact search of a space would do, counted before doing it."""

    priced: int  # (head x state x copper x drill x via-in-pad) totals priced
    representatives: int  # candidates evaluated in full (one per electrical group)

    @property
    def seconds(self) -> float:
        """Predicted time on the reference machine, s."""
        return (self.priced * SECONDS_PER_PRICED
                + self.representatives * SECONDS_PER_REPRESENTATIVE)

    @property
    def bytes(self) -> float:
        """Predicted peak memory of the evaluation, bytes."""
        return self.representatives * BYTES_PER_REPRESENTATIVE


def exact_cost(problem: Problem) -> ExactCost:
    """Count what :func:`exact_candidates` would price and evaluate, without pricing: the
    tail dynamic programme (cheap: thickness states only) gives the states per
    arrangement; the head options and the other choices multiply. Exact except for the
    extra representatives kept per lead time (``third_objective: lead_time``)."""
    sp = problem.space
    if sp.constructions:
        n = len(construction_candidates(sp))
        return ExactCost(n, n)
    vip = 2 if "via_in_pad" in sp.mitigations else 1
    other = 2 ** (len(sp.mitigations) - (vip == 2))
    priced = reps = 0
    for a in sp.arrangements:
        opts = sp.gene_options(a)
        head = int(np.prod([opts[k] for k in a.head], dtype=np.float64))
        tail = [k for k in range(len(opts)) if k not in a.head]
        tables = _gene_tables(sp, a, np.zeros(sp.n_materials))
        states = len(_tail_dp([tables[k] for k in tail])[0]) if tail else 1
        groups = head * len(sp.copper) * len(sp.drills) * vip
        priced += groups * states
        reps += groups * len(sp.vias) * other
    return ExactCost(int(priced), int(reps))


def cheapest_builds(problem: Problem) -> Candidates:
    """The cheapest build of every arrangement and copper weight that meets the thickness
    rules (the least violating where none does): a dynamic programme over *all* its
    dielectric genes (cheapest materials per finished thickness), priced at every drill;
    one via per connection, no mitigations. A handful of boards, found in milliseconds:
    the cost end of the front, used to seed the evolutionary search."""
    sp = problem.space
    if sp.constructions:
        return construction_candidates(sp).take(np.arange(0))
    parts: list[Candidates] = []
    for ai, a in enumerate(sp.arrangements):
        tables = _gene_tables(sp, a, _material_coef(problem, a.n_layers))
        st_t, st_c, back = _tail_dp(tables)
        for ci, cu in enumerate(sp.copper):
            t = (st_t + int(round(cu * 1e9)) * a.n_layers) * 1e-9
            best_key, best = np.inf, (0, 0)
            for di, drill in enumerate(sp.drills):  # a handful of drills
                base, viol, _ = _thickness_terms(problem, a.n_layers, cu, drill, False, t)
                key = np.where(viol > 0, _BIG * (1 + viol), base + st_c)
                k = int(np.argmin(key))
                if key[k] < best_key:
                    best_key, best = float(key[k]), (k, di)
            genes = _backtrack(back, np.array([best[0]]))[0]
            slot = np.full((1, sp.n_slots), -1, dtype=np.int64)
            for g, slots in enumerate(a.genes):
                slot[0, list(slots)] = genes[g]
            parts.append(Candidates(arr=np.array([ai]), slot=slot, copper=np.array([ci]),
                                    drill=np.array([best[1]]), vias=np.array([0]),
                                    mit=np.zeros((1, len(sp.mitigations)), dtype=bool)))
    return Candidates.concat(parts)


def construction_candidates(space: Space) -> Candidates:
    """Every stackup of a space restricted to the fab's standard constructions: each build
    on each arrangement of its layer count, with every copper, drill, via count and
    mitigation switch (such spaces are small, so all are evaluated)."""
    parts = []
    n_mit = len(space.mitigations)
    for ai, a in enumerate(space.arrangements):
        builds = [b for b in space.constructions if b[1] == a.n_layers]
        if not builds:
            continue
        grids = np.meshgrid(np.arange(len(builds)), np.arange(len(space.copper)),
                            np.arange(len(space.drills)), np.arange(len(space.vias)),
                            *[np.arange(2)] * n_mit, indexing="ij")
        cols = [g.ravel() for g in grids]
        n = len(cols[0])
        slots = np.full((len(builds), space.n_slots), -1, dtype=np.int64)
        for k, b in enumerate(builds):
            slots[k, : len(b[2])] = b[2]
        mit = (np.column_stack(cols[4:]).astype(bool) if n_mit
               else np.zeros((n, 0), dtype=bool))
        parts.append(Candidates(arr=np.full(n, ai), slot=slots[cols[0]], copper=cols[1],
                                drill=cols[2], vias=cols[3], mit=mit))
    return Candidates.concat(parts)


def exact_candidates(problem: Problem) -> ExactPlan:
    """One representative per electrical group: the cheapest tail meeting the thickness
    rules (or, if none does, the least violating one, so it is reported as infeasible).
    A space of standard constructions is enumerated whole."""
    sp = problem.space
    if sp.constructions:
        c = construction_candidates(sp)
        return ExactPlan(c, 0, len(c))
    vip_values = (False, True) if "via_in_pad" in sp.mitigations else (False,)
    lead_matters = problem.scenario.search.third_objective == "lead_time"
    other_mits = [m for m in sp.mitigations if m != "via_in_pad"]
    parts: list[Candidates] = []
    n_states = n_priced = 0
    for ai, a in enumerate(sp.arrangements):
        coef = _material_coef(problem, a.n_layers)
        tables = _gene_tables(sp, a, coef)
        head_ids = list(a.head)
        tail_ids = [k for k in range(len(tables)) if k not in a.head]
        st_t, st_c, back = _tail_dp([tables[k] for k in tail_ids])
        n_states += len(st_t)
        grids = np.meshgrid(*[np.arange(len(tables[k][0])) for k in head_ids], indexing="ij")
        head_opt = np.column_stack([g.ravel() for g in grids])  # (H, head genes)
        head_t = sum(tables[k][0][head_opt[:, j]] for j, k in enumerate(head_ids))
        head_c = sum(tables[k][1][head_opt[:, j]] for j, k in enumerate(head_ids))
        for (ci, cu), (di, drill), vip in itertools.product(
                enumerate(sp.copper), enumerate(sp.drills), vip_values):
            cu_nm = int(quantize(cu)) * a.n_layers
            tot = head_t[:, None] + st_t[None, :] + cu_nm  # (H, S) nm
            uniq, inv = np.unique(tot, return_inverse=True)
            base, viol, lead = _thickness_terms(problem, a.n_layers, cu, drill, vip,
                                                uniq * QUANTUM)
            inv = inv.reshape(tot.shape)
            cost = base[inv] + head_c[:, None] + st_c[None, :]
            v = viol[inv]
            key = np.where(v > 0, _BIG * (1 + v), cost)
            best = np.argmin(key, axis=1)  # (H,)
            rows = np.arange(len(best))
            if lead_matters and len(np.unique(lead)) > 1:
                # lead time also depends on thickness (e.g. a non-standard thickness adds
                # days): keep the cheapest feasible tail for every lead time as well
                lt = lead[inv]
                extra_b, extra_r = [], []
                for value in np.unique(lead):
                    k2 = np.where(lt == value, key, np.inf)
                    b2 = np.argmin(k2, axis=1)
                    ok = (k2[rows, b2] < _BIG) & (b2 != best)
                    extra_b.append(b2[ok])
                    extra_r.append(rows[ok])
                best = np.concatenate([best, *extra_b])
                rows = np.concatenate([rows, *extra_r])
            n_priced += tot.size
            tail_opt = _backtrack(back, best) if tail_ids else np.zeros((len(best), 0), int)
            genes = np.zeros((len(best), len(tables)), dtype=np.int64)
            genes[:, head_ids] = head_opt[rows]
            genes[:, tail_ids] = tail_opt
            slot = np.full((len(best), sp.n_slots), -1, dtype=np.int64)
            for k, slots in enumerate(a.genes):
                for s in slots:
                    slot[:, s] = genes[:, k]
            # every vias count and non-price mitigation shares this tail
            combos = list(itertools.product(range(len(sp.vias)),
                                            *[(False, True)] * len(other_mits)))
            for vi, *flags in combos:
                mit = np.zeros((len(best), len(sp.mitigations)), dtype=bool)
                for k, m in enumerate(sp.mitigations):
                    mit[:, k] = vip if m == "via_in_pad" else flags[other_mits.index(m)]
                n = len(best)
                parts.append(Candidates(arr=np.full(n, ai), slot=slot.copy(),
                                        copper=np.full(n, ci), drill=np.full(n, di),
                                        vias=np.full(n, vi), mit=mit))
    return ExactPlan(Candidates.concat(parts), n_states, n_priced)


def enumerate_all(space: Space, limit: int = 2_000_000) -> Candidates:
    """Every stackup of a small space (for brute-force checks); refuses large spaces."""
    if space.size > limit:
        raise ValueError(f"space of {space.size} stackups is too large to enumerate")
    if space.constructions:
        return construction_candidates(space)
    parts = []
    for ai, a in enumerate(space.arrangements):
        ranges: list[Sequence[int]] = [range(n) for n in space.gene_options(a)]
        ranges += [range(len(space.copper)), range(len(space.drills)), range(len(space.vias))]
        ranges += [(0, 1)] * len(space.mitigations)
        rows = np.array(list(itertools.product(*ranges)), dtype=np.int64)
        g = len(a.genes)
        slot = np.full((len(rows), space.n_slots), -1, dtype=np.int64)
        for k, slots in enumerate(a.genes):
            for s in slots:
                slot[:, s] = rows[:, k]
        parts.append(Candidates(arr=np.full(len(rows), ai), slot=slot, copper=rows[:, g],
                                drill=rows[:, g + 1], vias=rows[:, g + 2],
                                mit=rows[:, g + 3:].astype(bool)))
    return Candidates.concat(parts)
