"""Interconnect lines between parts, on each candidate's top layer, against scikit-rf.

Sources: scikit-rf's transmission-line media cascaded with ``**`` (an independent
network solver); Hammerstad & Jensen 1980 for the line's Z0 and eps_eff (already checked
against scikit-rf's MLine in test_lines.py).
"""

from __future__ import annotations

import numpy as np
import pytest
import skrf

from stackopt.circuit import GroundBatch, attenuation_db, compile_circuit, solve
from stackopt.circuit.compile import without_interconnect
from stackopt.circuit.interconnect import line_parameters
from stackopt.model.circuit import Circuit, FilterSpec
from stackopt.physics.constants import C0

F = np.linspace(0.2e9, 4e9, 23)


def _spec(**ic):
    return Circuit(filter=FilterSpec(family="chebyshev", order=5, cutoff=1e9, ripple=0.1,
                                     interconnect={"length": 3e-3, **ic}))


@pytest.mark.parametrize("width", [None, 0.6e-3])
def test_solver_equals_scikit_rf_cascade_with_lines(width):
    spec = _spec(width=width)
    c = compile_circuit(spec)
    b = GroundBatch.broadcast(height=[0.2e-3, 1.5e-3], line_er=4.3)
    ours = solve(c, F, b)
    w, z0, eeff = line_parameters(c, b)
    if width is None:  # the z0 width of each candidate: 50 ohm lines
        np.testing.assert_allclose(z0, 50.0, rtol=1e-5)
    freq = skrf.Frequency.from_f(F, unit="Hz")
    lumped = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=50.0)
    from stackopt.circuit.filters import filter_circuit

    el = {e.name: e.value for e in filter_circuit(spec.filter, 50.0).elements}
    for n in range(2):
        gamma = 1j * 2 * np.pi * F * np.sqrt(eeff[n, 0]) / C0
        tl = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=z0[n, 0],
                                       gamma=gamma)
        net = (lumped.shunt_capacitor(el["C1"]) ** tl.line(3e-3, "m")
               ** lumped.inductor(el["L2"]) ** lumped.shunt_capacitor(el["C3"])
               ** tl.line(3e-3, "m") ** lumped.inductor(el["L4"])
               ** lumped.shunt_capacitor(el["C5"]))
        assert np.max(np.abs(ours[n] - net.s)) < 1e-9


def test_lines_change_the_response_and_ideal_shorts_them():
    c = compile_circuit(_spec())
    b = GroundBatch.broadcast(height=1.5e-3, line_er=4.3)
    with_lines = attenuation_db(solve(c, F, b))[0]
    short = attenuation_db(solve(compile_circuit(without_interconnect(_spec())), F))[0]
    assert np.max(np.abs(with_lines - short)) > 1.0  # 3 mm lines matter at GHz


def test_negative_length_is_an_error():
    with pytest.raises(ValueError, match="length"):
        _spec(length=-1e-3)
    with pytest.raises(ValueError, match="not to 'gnd'"):
        Circuit(elements=[{"name": "R1", "type": "R", "value": 50,
                           "between": ["in", "gnd"]}],
                interconnect=[{"between": ["in", "gnd"], "length": 1e-3}], output="in")
