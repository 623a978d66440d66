"""What the quantity sweep and the fab comparison save (run by hand:
``python benchmarks/bench_money.py``).

Measured in one run, best of 5, one core: the demo's search alone; the main lot plus three
more lots as four separate searches against one sweep (the lots' searches sharing the
solved responses); the two demo tables as two separate searches against one comparison.
The floor ``python -c "import numpy"`` is measured beside the figures. Goal: a sweep of
three extra lots costs less than two separate searches; two fabs in one run cost no more
than two separate runs.
"""

from __future__ import annotations

import os

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")  # one core

import platform
import subprocess
import sys
import time

from timing import best_of

import stackopt
from stackopt.analyses.fabs import compare_fabs
from stackopt.analyses.quantities import quantity_sweep, scenario_at
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.search.memo import ResponseMemo

LOTS = (100, 10_000, 100_000)


def main() -> None:
    sc = load_scenario("scenarios/harmonic_lowpass.yaml")
    quick = load_cost_table("cost_tables/quickturn.yaml")
    volume = load_cost_table("cost_tables/volume.yaml")
    stackopt.optimize(sc, quick)  # imports and caches warm

    def sweep():
        memo = ResponseMemo()
        r = stackopt.optimize(sc, quick, memo=memo)
        quantity_sweep(sc, quick, LOTS, memo=memo, main=r)

    one = best_of(lambda: stackopt.optimize(sc, quick), 5)[0]
    separate = best_of(lambda: [stackopt.optimize(scenario_at(sc, q), quick)
                                for q in (sc.board.quantity, *LOTS)], 5)[0]
    swept = best_of(sweep, 5)[0]
    fabs_alone = best_of(lambda: [stackopt.optimize(sc, t) for t in (quick, volume)], 5)[0]
    fabs = best_of(lambda: compare_fabs(sc, [(quick, "quickturn"), (volume, "volume")]), 5)[0]
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", "import numpy"], check=True)
    floor = time.perf_counter() - t0
    print(f"{platform.processor() or platform.machine()}, load {os.getloadavg()[0]:.1f}; "
          f"floor 'python -c \"import numpy\"' {floor:.2f} s")
    print(f"one search (demo, exact)          {one:6.2f} s")
    print(f"main lot + {len(LOTS)} lots, separately    {separate:6.2f} s")
    print(f"main lot + {len(LOTS)} lots, one sweep     {swept:6.2f} s  "
          f"({swept / separate:.2f} of separate, {swept / one:.1f} searches)")
    print(f"two fabs, separately              {fabs_alone:6.2f} s")
    print(f"two fabs, one comparison          {fabs:6.2f} s  ({fabs / fabs_alone:.2f} of "
          "separate)")


if __name__ == "__main__":
    main()
