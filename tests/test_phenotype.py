"""The phenotype key builds itself from the batches the physics receives.

These checks are about bookkeeping, not physics: a field of the ground batch or of a line
batch that the key left out would let two electrically different candidates share one
response (``tests/test_crosscheck.py`` shows the consequence on margins)."""

from __future__ import annotations

from dataclasses import fields, replace

import numpy as np

from stackopt.circuit.grounds import GroundBatch
from stackopt.rows import unique_rows
from stackopt.search.phenotype import LineBatch, batch_key, exact_key, quantize


def test_every_field_of_each_batch_is_in_the_key():
    gb = GroundBatch.broadcast(height=[0.2e-3, 0.2e-3], drill=0.3e-3, vias=1, copper=35e-6)
    lb = LineBatch(*(np.array([0.2e-3, 0.2e-3]), np.array([4.2, 4.2]),
                     np.array([35e-6, 35e-6]), np.array([False, False]),
                     np.array([0.3e-3, 0.3e-3]), np.array([3.9, 3.9]), np.array([2, 2])))
    for key in (batch_key, exact_key):
        for batch in (gb, lb):
            base = key(batch)
            assert (base[0] == base[1]).all()
            for f in fields(batch):
                v = np.array(getattr(batch, f.name))
                v[1] = ~v[1] if v.dtype == bool else v[1] * 2 + 1
                changed = key(replace(batch, **{f.name: v}))
                assert (changed[0] != changed[1]).any(), (key.__name__, f.name)


def test_exact_key_tells_apart_what_the_quantum_joins():
    # one ulp (numpy.nextafter) apart: one quantized phenotype, two exact keys; equal
    # floats give equal exact keys (IEEE-754 bit patterns, numpy's view of float64)
    h = np.array([0.2e-3, np.nextafter(0.2e-3, 1.0), 0.2e-3])
    gb = GroundBatch.broadcast(height=h, drill=0.3e-3, vias=1, copper=35e-6)
    q, e = batch_key(gb), exact_key(gb)
    assert (q[0] == q[1]).all() and (q[0] == q[2]).all()
    assert (e[0] != e[1]).any() and (e[0] == e[2]).all()
    assert len(unique_rows(e)[0]) == 2 and len(unique_rows(q)[0]) == 1


def test_quantum_is_one_nanometre_for_lengths():
    # 1 oz copper (35 um) and 0.5 oz (17.5 um, often quoted as 18 um) stay apart; values
    # that differ below 1 nm (arithmetic rounding) share a key
    assert quantize([35e-6, 17.5e-6]).tolist() == [35_000, 17_500]
    assert quantize(0.1e-3 + 0.2e-3) == quantize(0.3e-3)
    first, inv = unique_rows(np.array([[3, 1], [1, 2], [3, 1]]))
    assert inv.tolist() == [1, 0, 1] and first.tolist() == [1, 0]
