"""Search benchmarks (run by hand: ``python benchmarks/bench_search.py``).

1. Exact front of the demo fab's whole space (2-8 layers, every stocked material in every
   dielectric slot, not only symmetric builds, three copper weights, three drills, 1-4 vias
   per ground connection, three mitigations), including the circuit model: time, peak
   memory, space size and the share evaluated.
2. NSGA-II at 20,000 evaluations against the exact front (hypervolume ratio) for 10 seeds,
   and vectorized random sampling of the same number of candidates in the same run.
3. Vectorized evaluation against a per-candidate Python loop.
"""

from __future__ import annotations

import os

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")  # one core

import platform
import resource
import time

import numpy as np

import stackopt
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.search.front import hypervolume, nondominated
from stackopt.search.genome import decode_genome, genome_bounds
from stackopt.search.problem import Problem


def whole_space_scenario():
    sc = load_scenario("scenarios/harmonic_lowpass.yaml")
    space = sc.space.model_copy(update={
        "symmetric": False, "copper": (17.15e-6, 34.3e-6, 68.6e-6),
        "drills": (0.2e-3, 0.25e-3, 0.3e-3), "vias_per_ground": (1, 2, 3, 4)})
    return sc.model_copy(update={"space": space})


def front_hv(objs, lo, span, ref):
    f = (objs - lo) / span
    return hypervolume(f[nondominated(f)], ref)


def main() -> None:
    print(f"machine: {platform.processor() or platform.machine()}, python "
          f"{platform.python_version()}, numpy {np.__version__}")
    table = load_cost_table("cost_tables/quickturn.yaml")
    sc = whole_space_scenario()

    t = time.perf_counter()
    exact = stackopt.optimize(sc, table, method="exact")
    dt = time.perf_counter() - t
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"exact: {dt:.2f} s, peak RSS {rss:.0f} MB, space {exact.space_size:.3e} stackups, "
          f"evaluated {exact.evaluated} ({exact.evaluated / exact.space_size:.2e} of it), "
          f"front {int(exact.on_front.sum())}")

    fe = exact.objectives[exact.on_front]
    lo = fe.min(axis=0)
    span = np.ptp(fe, axis=0) * 1.5 + 1e-9
    ref = np.array([1.1, 1.1])
    hv_exact = front_hv(fe, lo, span, ref)

    problem = Problem(sc, table)
    xl, xu = genome_bounds(problem.space)
    budget = 20_000
    ratios_ga, ratios_rs = [], []
    for seed in range(1, 11):
        t = time.perf_counter()
        ga = stackopt.optimize(sc, table, method="nsga2", seed=seed, budget=budget)
        t_ga = time.perf_counter() - t
        fg = ga.objectives[ga.feasible]
        rg = front_hv(fg, lo, span, ref) / hv_exact
        rng = np.random.default_rng(seed)
        x = rng.integers(xl, xu + 1, size=(budget, len(xl)))
        ev = problem.evaluate(decode_genome(problem.space, x))
        fr = problem.objectives(ev)[ev.feasible]
        rr = front_hv(fr, lo, span, ref) / hv_exact
        ratios_ga.append(rg)
        ratios_rs.append(rr)
        print(f"  seed {seed:2d}: NSGA-II {100 * rg:.4f} % of exact HV ({t_ga:.1f} s), "
              f"random sampling {100 * rr:.4f} %")
    print(f"NSGA-II: min {100 * min(ratios_ga):.4f} %, seeds >= 99.9 %: "
          f"{sum(r >= 0.999 for r in ratios_ga)}/10; never below random: "
          f"{all(g >= r - 1e-12 for g, r in zip(ratios_ga, ratios_rs, strict=True))}")

    n = 2000
    rng = np.random.default_rng(0)
    c = decode_genome(problem.space, rng.integers(xl, xu + 1, size=(n, len(xl))))
    t = time.perf_counter()
    problem.evaluate(c)
    t_vec = time.perf_counter() - t
    k = 200
    t = time.perf_counter()
    for i in range(k):
        problem.evaluate(c.take(np.array([i])))
    t_loop = (time.perf_counter() - t) * n / k
    print(f"evaluation of {n}: vectorized {t_vec * 1e3:.1f} ms, per-candidate loop "
          f"{t_loop * 1e3:.0f} ms (extrapolated from {k}), speed-up {t_loop / t_vec:.0f}x")


if __name__ == "__main__":
    main()
