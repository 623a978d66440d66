"""Ground-connection parasitics per candidate: coupling, shared and own vias."""

import numpy as np
import pytest

from stackopt.circuit import (
    GroundBatch,
    attenuation_db,
    compile_circuit,
    ground_inductance_matrix,
    solve,
)
from stackopt.errors import InputError
from stackopt.model.circuit import Circuit
from stackopt.physics.lines import pad_trace_inductance
from stackopt.physics.parallel import parallel_via_inductance, row_positions

F = np.array([600e6, 1e9, 2e9])  # stopband of the pi filter below
BATCH = GroundBatch.broadcast(height=1.6e-3, drill=0.3e-3)


def _pi(sep=None, **g1):
    """C-L-C low-pass; the capacitors share g1 when ``sep`` is None."""
    grounds = [{"name": "g1", "at": [0, 0], **g1}]
    if sep is not None:
        grounds.append({"name": "g2", "at": [sep, 0]})
    els = [{"name": "C1", "type": "C", "value": 10e-12, "between": ["in", "gnd"], "ground": "g1"},
           {"name": "L2", "type": "L", "value": 50e-9, "between": ["in", "out"]},
           {"name": "C3", "type": "C", "value": 10e-12, "between": ["out", "gnd"],
            "ground": "g1" if sep is None else "g2"}]
    return compile_circuit(Circuit(elements=els, grounds=grounds))


def test_closer_vias_couple_more_and_cost_stopband():
    # Mutual partial inductance of parallel filaments falls with spacing (Rosa 1908 /
    # Grover 1946), so shared-return coupling between shunt branches falls too.
    seps = [1e-3, 2e-3, 5e-3, 20e-3]
    m = [ground_inductance_matrix(_pi(s), BATCH)[0, 0, 1] for s in seps]
    att = [attenuation_db(solve(_pi(s), F, BATCH))[0] for s in seps]
    assert all(a > b > 0 for a, b in zip(m, m[1:], strict=False))
    assert all(np.all(a < b) for a, b in zip(att, att[1:], strict=False))


def test_own_vias_beat_a_shared_via():
    # A shared via is one via carrying both currents (full coupling, k = 1); own vias
    # couple only through their mutual inductance (k < 1). Common practice, no source:
    # "give every shunt element its own ground via".
    c = _pi()
    shared = ground_inductance_matrix(c, BATCH)[0]
    assert shared[0, 1] == pytest.approx(shared[0, 0])
    own = GroundBatch.broadcast(height=1.6e-3, drill=0.3e-3, own_vias=True)
    lown = ground_inductance_matrix(c, own)[0]
    assert 0 < lown[0, 1] < lown[0, 0] == pytest.approx(shared[0, 0])
    gain = attenuation_db(solve(c, F, own)) - attenuation_db(solve(c, F, BATCH))
    # On 1.6 mm the own via one pitch (0.9 mm) away still couples strongly by image
    # theory (M = 1/2 M_fil(2h, s), Paul 2010): the gain is real but a few dB only.
    assert np.all(gain > 0.5) and np.all(gain[:, 1:] > 2)


def test_self_term_is_trace_plus_parallel_vias():
    c = _pi(5e-3, trace_length=6e-4, trace_width=4e-4, vias=3, pitch=0.8e-3)
    b = GroundBatch.broadcast(height=0.36e-3, drill=0.25e-3, copper=17e-6)
    lg = ground_inductance_matrix(c, b)[0]
    expect = (pad_trace_inductance(6e-4, 4e-4, 0.36e-3, 17e-6)
              + parallel_via_inductance(0.36e-3, 0.25e-3, row_positions(3, 0.8e-3)))
    assert lg[0, 0] == pytest.approx(float(expect), rel=1e-12)
    inpad = GroundBatch.broadcast(height=0.36e-3, drill=0.25e-3, copper=17e-6, via_in_pad=True)
    assert ground_inductance_matrix(c, inpad)[0, 0, 0] == pytest.approx(
        float(parallel_via_inductance(0.36e-3, 0.25e-3, row_positions(3, 0.8e-3))))
    assert np.allclose(lg, lg.T)
    assert np.linalg.eigvalsh(lg).min() > 0  # passive


def test_vias_from_the_candidate_and_the_circuit():
    c = _pi(5e-3, vias=2, drill=0.4e-3)  # g1 fixes its vias and drill; g2 takes the batch
    b = GroundBatch.broadcast(height=[0.2e-3, 0.2e-3], vias=[1, 4], drill=0.2e-3)
    lg = ground_inductance_matrix(c, b)
    assert lg[0, 0, 0] == pytest.approx(lg[1, 0, 0])  # fixed by the circuit
    # four vias in parallel beat one (by less than 4x: image-theory mutuals, Paul 2010)
    assert lg[1, 1, 1] < 0.75 * lg[0, 1, 1]
    assert lg[1, 1, 1] == pytest.approx(float(parallel_via_inductance(
        0.2e-3, 0.2e-3, row_positions(4, 0.6e-3))))  # default pitch: 3 drills


def test_mutual_false_keeps_only_self_and_shared_terms():
    lg = ground_inductance_matrix(_pi(2e-3), BATCH, mutual=False)[0]
    assert lg[0, 1] == 0 and lg[0, 0] > 0


def test_ground_batch_checks_and_broadcast():
    b = GroundBatch.broadcast(height=[1e-3, 2e-3], vias=2)
    assert b.n == 2 and b.vias.tolist() == [2, 2] and b.own_vias.dtype == bool
    with pytest.raises(InputError):
        GroundBatch.broadcast(height=[1e-3, -1e-3])
    with pytest.raises(InputError):
        GroundBatch(height=[1e-3], drill=[3e-4, 3e-4], vias=[1], via_in_pad=[False],
                    own_vias=[False], copper=[35e-6])
