"""How well the ``auto`` switch predicts the exact search (run by hand:
``python benchmarks/bench_auto.py``).

For several spaces — the demo, the demo fab's whole space, a six-layer space, and the
invented large benchmark space (``benchmarks/large/``, about 2.6e17 stackups) — the
exact search's predicted time (``ExactCost.seconds``, from counts that equal the work
done) is compared with its measured time (plan + full evaluation of the
representatives), and the method ``auto`` picks is shown. The floor
``python -c "import numpy"`` is measured in the same run, beside the figures.
"""

from __future__ import annotations

import os

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")  # one core

import platform
import time

from timing import import_numpy_floor

from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.search import api
from stackopt.search.exact import exact_candidates, exact_cost
from stackopt.search.problem import Problem


def spaces():
    demo = load_scenario("scenarios/harmonic_lowpass.yaml")
    quick = load_cost_table("cost_tables/quickturn.yaml")
    large = load_scenario("benchmarks/large/large_scenario.yaml")
    large_t = load_cost_table("benchmarks/large/large_costs.yaml")

    def with_space(sc, **upd):
        return sc.model_copy(update={"space": sc.space.model_copy(update=upd)})

    yield "demo", demo, quick
    yield "demo fab, whole space", with_space(
        demo, symmetric=False, copper=(17.15e-6, 34.3e-6, 68.6e-6),
        drills=(0.2e-3, 0.25e-3, 0.3e-3), vias_per_ground=(1, 2, 3, 4)), quick
    yield "six layers, large catalogue", with_space(large, layers=(6,)), large_t
    yield "2-6 layers, large catalogue", with_space(large, layers=(2, 4, 6)), large_t
    yield "2-12 layers, large catalogue", large, large_t


def main() -> None:
    print(f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
          f"load {os.getloadavg()[0]:.2f}; python {platform.python_version()}")
    f0 = import_numpy_floor()
    print(f"floor: python -c 'import numpy' {f0 * 1e3:.0f} ms (median of 5)")
    print(f"{'space':32s} {'stackups':>10s} {'priced':>10s} {'reps':>9s} "
          f"{'predicted':>9s} {'measured':>9s} {'ratio':>6s}  auto")
    ratios = []
    for name, sc, table in spaces():
        p = Problem(sc, table)
        cost = exact_cost(p)
        t = time.perf_counter()
        plan = exact_candidates(p)
        p.evaluate(plan.representatives)
        real = time.perf_counter() - t
        auto = ("exact" if cost.seconds <= api.EXACT_TIME_LIMIT
                and cost.bytes <= api.EXACT_MEMORY_LIMIT else "nsga2")
        ratios.append(cost.seconds / real)
        print(f"{name:32s} {p.space.size:10.2e} {cost.priced:10d} {cost.representatives:9d} "
              f"{cost.seconds:8.2f}s {real:8.2f}s {cost.seconds / real:6.2f}  {auto}")
    print(f"predicted / measured: {min(ratios):.2f} .. {max(ratios):.2f}; "
          f"load after: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
