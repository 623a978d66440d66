"""The via part of the ground matrix, computed once per distinct via batch row.

Sources: two equal vias in parallel carry equal currents by symmetry, so their
inductance is exactly (L + M) / 2 (elementary circuit theory; Paul, *Inductance: Loop and
Partial*, Wiley, 2010, ch. 5); N equal-current filaments' mean mutual is the average of
the pair terms (definition of the averaged partial inductance, same reference).
"""

from __future__ import annotations

import numpy as np

from stackopt.circuit import GroundBatch, compile_circuit
from stackopt.circuit.viasets import ViaBatch, _via_terms, via_terms
from stackopt.model.circuit import Circuit
from stackopt.physics.inductance import ground_via_inductance
from stackopt.physics.parallel import via_mutual_inductance

MM = 1e-3


def _two_grounds(vias: int | None = None) -> Circuit:
    extra = {} if vias is None else {"vias": vias, "pitch": 0.9e-3}
    return Circuit(elements=[
        {"name": "C1", "type": "C", "value": 10e-12, "between": ["in", "gnd"], "ground": "g1"},
        {"name": "C2", "type": "C", "value": 10e-12, "between": ["out", "gnd"], "ground": "g2"},
        {"name": "L1", "type": "L", "value": 10e-9, "between": ["in", "out"]}],
        grounds=[{"name": "g1", "at": [0, 0], **extra}, {"name": "g2", "at": [5e-3, 0]}],
        output="out")


def test_two_vias_in_parallel_are_the_symmetric_closed_form():
    # (L + M) / 2 for two equal vias one pitch apart (exact by symmetry).
    c = compile_circuit(_two_grounds(vias=2))
    h = np.array([0.115, 0.36, 1.5]) * MM
    b = ViaBatch.of(GroundBatch.broadcast(height=h, drill=0.3 * MM))
    t = via_terms(c, b, "goldfarb-pucel")
    want = 0.5 * (ground_via_inductance(h, 0.3 * MM, "goldfarb-pucel")
                  + via_mutual_inductance(h, 0.9e-3))
    np.testing.assert_allclose(t.via[:, 0], want, rtol=1e-12)
    # one via on the other connection, 5 mm from the pair's centre: the mean of the two
    # via-to-via mutuals at their own distances
    d = np.hypot(5e-3, 0.45e-3)
    np.testing.assert_allclose(t.mutual[:, 0, 1], via_mutual_inductance(h, d), rtol=1e-12)


def test_each_distinct_row_once_and_bit_identical_to_every_row():
    # A batch with repeated rows, rows differing in one bit of the height, and every field
    # varied: the cached terms equal the terms of every row computed on its own.
    c = compile_circuit(_two_grounds())
    rng = np.random.default_rng(3)
    n = 400
    h = rng.choice([0.115e-3, 0.2e-3, np.nextafter(0.2e-3, 1.0), 1.5e-3], n)
    gb = GroundBatch.broadcast(height=h, drill=rng.choice([0.2e-3, 0.3e-3], n),
                               vias=rng.integers(1, 4, n), own_vias=rng.random(n) < 0.3,
                               coplanar=rng.random(n) < 0.3,
                               via_scale=rng.choice([1.0, 1.2], n),
                               copper=rng.choice([18e-6, 35e-6], n))
    b = ViaBatch.of(gb)
    first, inv = b.distinct()
    assert 50 < len(first) < n  # repeats exist, and the one-bit height rows are apart
    assert len(np.unique(b.height[first])) == 4
    for model in ("goldfarb-pucel", "image"):
        got = via_terms(c, b, model)
        want = _via_terms(c, b, model, True)
        for name in ("via", "mutual", "guard"):
            np.testing.assert_array_equal(getattr(got, name), getattr(want, name))
