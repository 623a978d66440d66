"""(candidate x frequency) solves per second for a 9-element ladder, 5 ground connections.

Run by hand on one core:  python benchmarks/bench_circuit.py
Compares, in one run, the ABCD ladder fast path, the batched nodal analysis (reduced to
the ground terminals, the default, and whole matrices, ``reduce=False``, the path before
the reduction) and a per-candidate Python loop around ``solve()``. Quote the output in
docs/performance.md with the machine.
"""

import os

for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[var] = "1"

import platform  # noqa: E402
import subprocess  # noqa: E402

import numpy as np  # noqa: E402
from timing import best_of  # noqa: E402

from stackopt.circuit import GroundBatch, compile_circuit, ground_inductance_matrix  # noqa: E402
from stackopt.circuit.ladder import ladder_s  # noqa: E402
from stackopt.circuit.mna import mna_s, solve  # noqa: E402
from stackopt.model.circuit import Circuit  # noqa: E402

POINTS, LOOP_N, GRIDS = 200_000, 200, (5, 21, 101)


def _circuit():
    c = compile_circuit(Circuit(filter={
        "family": "chebyshev", "order": 9, "cutoff": 250e6, "ripple": 0.1,
        "ground": {"trace_length": 6e-4, "trace_width": 4e-4}, "spacing": 3e-3,
        "capacitor": {"esl": 0.4e-9, "esr": 0.1}, "inductor": {"q": 40, "q_at": 5e8}}))
    assert c.n_elements == 9 and c.n_terminals == 5
    return c


def _batch(n):
    rng = np.random.default_rng(1)
    return GroundBatch.broadcast(height=rng.uniform(0.1e-3, 1.6e-3, n),
                                 drill=rng.choice([0.2e-3, 0.3e-3, 0.4e-3], n),
                                 vias=rng.integers(1, 4, n), own_vias=rng.random(n) < 0.5,
                                 via_in_pad=rng.random(n) < 0.5, copper=35e-6)


def _disagreement(s, ref):
    """Largest relative difference in |S| and in phase [rad]."""
    return (float(np.max(np.abs(np.abs(s) - np.abs(ref)) / np.abs(ref))),
            float(np.max(np.abs(np.angle(s / ref)))))


def run(nf: int) -> tuple[list[tuple[str, float]], dict[str, object]]:
    """Rates (points/s) for one frequency-grid size; and the paths' agreement."""
    circuit, n = _circuit(), POINTS // nf
    batch, freqs = _batch(n), np.geomspace(10e6, 3e9, nf)
    points = n * nf
    lg_coupled = ground_inductance_matrix(circuit, batch)
    lg_self = ground_inductance_matrix(circuit, batch, mutual=False)
    self_l = np.ascontiguousarray(np.diagonal(lg_self, axis1=1, axis2=2))
    rows = []
    t, s_lad = best_of(lambda: ladder_s(circuit, freqs, self_l), warm=True)
    rows.append(("ladder ABCD kernel (uncoupled grounds)", points / t))
    t, s_mna0 = best_of(lambda: mna_s(circuit, freqs, lg_self), warm=True)
    rows.append(("nodal analysis kernel, same uncoupled case", points / t))
    t, _ = best_of(lambda: mna_s(circuit, freqs, lg_self, reduce=False), warm=True)
    rows.append(("  same, whole matrices (reduce=False)", points / t))
    t, s_red = best_of(lambda: mna_s(circuit, freqs, lg_coupled), warm=True)
    rows.append(("nodal analysis kernel, coupled grounds", points / t))
    t, s_whole = best_of(lambda: mna_s(circuit, freqs, lg_coupled, reduce=False), warm=True)
    rows.append(("  same, whole matrices (reduce=False)", points / t))
    t, _ = best_of(lambda: solve(circuit, freqs, batch, mutual=False), warm=True)
    rows.append(("solve() uncoupled: grounds + ladder", points / t))
    t, _ = best_of(lambda: solve(circuit, freqs, batch), warm=True)
    rows.append(("solve() coupled: grounds + nodal analysis", points / t))
    sub = batch.take(np.arange(LOOP_N))
    t, _ = best_of(lambda: [solve(circuit, freqs, sub.take([i])) for i in range(LOOP_N)],
                    repeat=1, warm=True)
    rows.append(("per-candidate Python loop around solve() coupled", LOOP_N * nf / t))
    return rows, {"ladder": float(np.max(np.abs(s_lad - s_mna0))),
                  "reduced": _disagreement(s_red, s_whole)}


def main() -> None:
    try:
        cpu = subprocess.run(["lscpu"], capture_output=True, text=True).stdout
        model = next(ln.split(":", 1)[1].strip() for ln in cpu.splitlines()
                     if ln.startswith("Model name"))
    except (OSError, StopIteration):
        model = platform.processor()
    print(f"machine: {model}, {os.cpu_count()} logical CPUs, one thread; "
          f"numpy {np.__version__}, python {platform.python_version()}")
    print("circuit: 9-element Chebyshev ladder, 5 ground connections (one via set each)")
    for nf in GRIDS:
        rows, agree = run(nf)
        loop = rows[-1][1]
        d_mag, d_phase = agree["reduced"]
        print(f"F = {nf} frequencies, N = {POINTS // nf} candidates "
              f"(ladder vs nodal analysis: max |dS| = {agree['ladder']:.1e}; reduced vs "
              f"whole matrices: {d_mag:.1e} relative in |S|, {d_phase:.1e} rad)")
        for name, rate in rows:
            print(f"  {name:<50s} {rate:12,.0f} /s  {rate / loop:7.1f}x loop")


if __name__ == "__main__":
    main()
