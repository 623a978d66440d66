"""Metrics on a Butterworth response, against its analytic magnitude."""

import numpy as np
import pytest

from stackopt.circuit import (
    GroundBatch,
    at_frequencies,
    attenuation_db,
    compile_circuit,
    difference_from_ideal_db,
    passband_insertion_loss_db,
    solve,
    worst_in_band,
)
from stackopt.errors import InputError
from stackopt.model.circuit import Circuit

FC, N = 100e6, 5
F = np.geomspace(1e6, 1e9, 301)


def _ref(f):  # Butterworth: 10 log10(1 + (f/fc)^2n) (Matthaei, Young & Jones 1964)
    return 10 * np.log10(1 + (np.asarray(f) / FC) ** (2 * N))


@pytest.fixture(scope="module")
def circuit():
    return compile_circuit(Circuit(filter={"family": "butterworth", "order": N, "cutoff": FC,
                                           "ground": {}}))


def test_values_at_requirement_frequencies(circuit):
    att = attenuation_db(solve(circuit, F))
    on_grid = F[[100, 250]]
    assert at_frequencies(F, att, on_grid)[0] == pytest.approx(_ref(on_grid), abs=1e-6)
    # between grid points: linear interpolation of the dB values (a bounded error)
    assert at_frequencies(F, att, [300e6])[0, 0] == pytest.approx(_ref(300e6), abs=0.05)
    with pytest.raises(InputError, match="outside"):
        at_frequencies(F, att, [2e9])


def test_worst_in_band_and_passband_loss(circuit):
    s = solve(circuit, F)
    att = attenuation_db(s)
    # monotone response: the worst stopband value is at the lower band edge
    assert worst_in_band(F, att, (300e6, 600e6))[0] == pytest.approx(_ref(300e6), abs=0.05)
    assert passband_insertion_loss_db(F, s, (1e6, FC))[0] == pytest.approx(3.0103, abs=1e-3)


def test_difference_from_ideal(circuit):
    ideal = solve(circuit, F)
    batch = GroundBatch.broadcast(height=[0.19e-3, 1.6e-3])
    diff = difference_from_ideal_db(solve(circuit, F, batch), ideal)
    assert diff.shape == (2, len(F))
    assert np.max(np.abs(diff[:, F < 20e6])) < 1e-3  # grounds do not matter far below fc
    deep = F > 500e6
    assert np.all(diff[1, deep] < diff[0, deep])  # the thick board costs more stopband
