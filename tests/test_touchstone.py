"""Touchstone v1 export, read back with scikit-rf (an independent reader)."""

import numpy as np
import pytest
import skrf

from stackopt.circuit import GroundBatch, compile_circuit, solve
from stackopt.errors import OutputError
from stackopt.model.circuit import Circuit
from stackopt.outputs.touchstone import touchstone_text, write_touchstone


def _response():
    c = compile_circuit(Circuit(filter={"family": "chebyshev", "order": 5, "cutoff": 250e6,
                                        "ripple": 0.1, "ground": {}}))
    f = np.linspace(10e6, 1e9, 11)
    s = solve(c, f, GroundBatch.broadcast(height=0.19e-3))[0]
    s[:, 0, 1] *= 0.5  # make S12 differ from S21 so that the column order is tested
    return f, s


def test_scikit_rf_reads_back_the_same_numbers(tmp_path):
    f, s = _response()
    path = write_touchstone(tmp_path / "cand.s2p", f, s, 50.0)
    net = skrf.Network(str(path))
    assert np.allclose(net.f, f, rtol=1e-11)
    assert np.allclose(net.s, s, rtol=0, atol=1e-11)
    assert np.allclose(net.z0, 50.0)


def test_header_and_column_order():
    f, s = _response()
    text = touchstone_text(f, s, 50, comment="stackopt candidate 3\ninvented demo")
    lines = text.splitlines()
    assert lines[:3] == ["! stackopt candidate 3", "! invented demo", "# Hz S RI R 50"]
    row = [float(x) for x in lines[3].split()]
    # Touchstone v1 two-port order: N11 N21 N12 N22 (IBIS Touchstone spec 1.1)
    assert row[3] + 1j * row[4] == pytest.approx(s[0, 1, 0])
    assert row[5] + 1j * row[6] == pytest.approx(s[0, 0, 1])


def test_bad_name_is_an_output_error(tmp_path):
    f, s = _response()
    with pytest.raises(OutputError, match="s2p"):
        write_touchstone(tmp_path / "x.txt", f, s, 50.0)
