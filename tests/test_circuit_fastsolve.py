"""The reduced nodal analysis against a plain LAPACK solve of the whole MNA matrix.

Reference: ``numpy.linalg.solve`` (LAPACK ``zgesv``) on the full (candidate x frequency)
matrices of :mod:`stackopt.circuit.mna`, and ``scipy.linalg.solve`` for the small-system
elimination; tolerance 1e-10 relative in |S| and 1e-9 rad in phase.
"""

import numpy as np
import pytest
import scipy.linalg

from stackopt.circuit import GroundBatch, compile_circuit, ground_inductance_matrix, mna
from stackopt.circuit.mna import mna_s, solve
from stackopt.circuit.smallsolve import SMALL, schur_small
from stackopt.errors import InputError
from stackopt.model.circuit import Circuit, Element

F = np.geomspace(10e6, 3e9, 23)
N = 40


def _batch(n=N, seed=7):
    rng = np.random.default_rng(seed)
    return GroundBatch.broadcast(height=rng.uniform(0.1e-3, 1.6e-3, n),
                                 drill=rng.choice([0.2e-3, 0.3e-3, 0.4e-3], n),
                                 vias=rng.integers(1, 4, n), own_vias=rng.random(n) < 0.5,
                                 via_in_pad=rng.random(n) < 0.5,
                                 coplanar=rng.random(n) < 0.3)


def _reference(c, f, lg):
    """S (N, F, 2, 2) from one np.linalg.solve of every whole MNA matrix."""
    base, rhs, term = mna._assemble(c, f, True)
    mat = np.repeat(base[None], lg.shape[0], axis=0)
    mat[:, :, term[:, None], term[None, :]] -= 2j * np.pi * f[None, :, None, None] * lg[:, None]
    s = np.linalg.solve(mat, np.broadcast_to(rhs, mat.shape[:-1] + (2,)))[..., list(c.ports), :]
    return s - np.eye(2)


def _agree(s, ref):
    assert np.max(np.abs(np.abs(s) - np.abs(ref)) / np.abs(ref)) < 1e-10
    assert np.max(np.abs(np.angle(s / ref))) < 1e-9


def _g(name, x, **kw):
    return {"name": name, "at": [x, 0.0], **kw}


def _ladder9():
    return compile_circuit(Circuit(filter={
        "family": "chebyshev", "order": 9, "cutoff": 250e6, "ripple": 0.1,
        "ground": {"trace_length": 6e-4, "trace_width": 4e-4}, "spacing": 3e-3,
        "capacitor": {"esl": 0.4e-9, "esr": 0.1}, "inductor": {"q": 40, "q_at": 5e8}}))


def _coupled_inductors():
    # high-pass: the shunt inductors are grounded through vias and magnetically coupled
    els = [{"name": "C1", "type": "C", "value": 8e-12, "between": ["in", "n2"]},
           {"name": "L2", "type": "L", "value": 20e-9, "between": ["n2", "gnd"], "ground": "g1",
            "q": 50},
           {"name": "C3", "type": "C", "value": 5e-12, "between": ["n2", "n4"]},
           {"name": "L4", "type": "L", "value": 20e-9, "between": ["n4", "gnd"], "ground": "g2"},
           {"name": "C5", "type": "C", "value": 8e-12, "between": ["n4", "out"]},
           {"name": "L6", "type": "L", "value": 15e-9, "between": ["in", "out"]}]
    return compile_circuit(Circuit(elements=els, grounds=[_g("g1", 0), _g("g2", 2e-3)],
                                   couplings=[{"between": ["L2", "L4"], "k": 0.1},
                                              {"between": ["L4", "L6"], "k": -0.05}]))


def _shared_and_zero_ohm():
    # two capacitors on one via (g1), a zero-ohm series link and a zero-ohm shunt to g2
    els = [{"name": "C1", "type": "C", "value": 10e-12, "between": ["in", "gnd"], "ground": "g1"},
           {"name": "R0", "type": "R", "value": 0, "between": ["in", "a"]},
           {"name": "L2", "type": "L", "value": 40e-9, "between": ["a", "out"], "q": 30},
           {"name": "C3", "type": "C", "value": 10e-12, "between": ["out", "gnd"], "ground": "g1",
            "esl": 0.3e-9},
           {"name": "R4", "type": "R", "value": 0, "between": ["a", "gnd"], "ground": "g2",
            "esl": 2e-9}]
    return compile_circuit(Circuit(elements=els, grounds=[_g("g1", 0), _g("g2", 3e-3)]))


def _single_shunt():
    return compile_circuit(Circuit(input="n", output="n", grounds=[_g("g1", 0, vias=1)],
                                   elements=[{"name": "C1", "type": "C", "value": 10e-12,
                                              "between": ["n", "gnd"], "ground": "g1"}]))


def _floating_resonator():
    # node m reaches the rest only through the ground vias' mutual inductance: with the
    # terminals open it floats, so the reduction does not exist and mna_s falls back
    els = [{"name": "C1", "type": "C", "value": 10e-12, "between": ["in", "gnd"], "ground": "g1"},
           {"name": "L2", "type": "L", "value": 30e-9, "between": ["in", "out"]},
           {"name": "C3", "type": "C", "value": 10e-12, "between": ["out", "gnd"], "ground": "g2"},
           {"name": "C9", "type": "C", "value": 5e-12, "between": ["m", "gnd"], "ground": "g3",
            "esr": 0.5},
           {"name": "L9", "type": "L", "value": 5e-9, "between": ["m", "gnd"], "ground": "g1"}]
    return compile_circuit(Circuit(elements=els, grounds=[_g("g1", 0), _g("g2", 2e-3),
                                                          _g("g3", 4e-3)]))


@pytest.mark.parametrize("build", [_ladder9, _coupled_inductors, _shared_and_zero_ohm,
                                   _single_shunt, _floating_resonator])
def test_reduced_solve_matches_the_whole_matrix(build, monkeypatch):
    c, batch = build(), _batch()
    for mutual in (True, False):
        lg = ground_inductance_matrix(c, batch, mutual=mutual)
        ref = _reference(c, F, lg)
        _agree(mna_s(c, F, lg), ref)
        assert np.array_equal(mna_s(c, F, lg, reduce=False), ref)  # the plain path as before
    monkeypatch.setattr(mna, "SMALL_CHUNK", 3 * len(F) + 1)  # several chunks, a short last
    _agree(mna_s(c, F, lg), ref)


@pytest.mark.parametrize("build", [_ladder9, _coupled_inductors, _floating_resonator])
def test_a_candidates_response_does_not_depend_on_its_batch(build):
    # an invariance, not a physics check: the response memo (stackopt.search.memo) hands
    # a response solved in one batch to a search that would have solved it in another,
    # so each candidate alone and in shuffled sub-batches must get the bits it gets in
    # the whole batch. The batch mixes 1-9 vias per connection (its padding crosses
    # numpy's 8-term pairwise summation block), own vias (uncoupled: the ABCD cascade
    # where the circuit is a ladder) and shared ones (coupled: nodal analysis)
    c, rng = build(), np.random.default_rng(5)
    n = 300
    batch = GroundBatch.broadcast(height=rng.uniform(0.1e-3, 1.6e-3, n),
                                  drill=rng.choice([0.2e-3, 0.3e-3, 0.4e-3], n),
                                  vias=rng.integers(1, 10, n), own_vias=rng.random(n) < 0.5,
                                  via_in_pad=rng.random(n) < 0.5, coplanar=rng.random(n) < 0.3)
    whole_lg = ground_inductance_matrix(c, batch)
    whole = solve(c, F, batch)
    assert np.array_equal(whole, solve(c, F, batch, lg=whole_lg))
    for size in (1, 1, 2, 3, 17, 200):
        idx = rng.permutation(n)[:size]
        part = batch.take(idx)
        assert np.array_equal(ground_inductance_matrix(c, part), whole_lg[idx]), size
        assert np.array_equal(solve(c, F, part), whole[idx]), size


def test_reduced_solve_on_random_candidates_and_a_fine_grid():
    c, batch = _ladder9(), _batch(n=600, seed=11)
    f = np.geomspace(1e6, 10e9, 301)
    lg = ground_inductance_matrix(c, batch)
    _agree(mna_s(c, f, lg), _reference(c, f, lg))


def test_lossless_tank_on_the_grid_falls_back():
    # node m: an ideal L9 to ground in parallel with C9 through via g3. With the vias
    # shorted the tank is an isolated lossless loop, singular at f0 = 1/(2 pi sqrt(LC))
    # (Pozar 2012, sec. 6.1); the candidates' via inductance detunes it, so their matrices
    # are regular there and that one frequency is solved whole
    els = [{"name": "C1", "type": "C", "value": 10e-12, "between": ["in", "gnd"], "ground": "g1"},
           {"name": "L2", "type": "L", "value": 30e-9, "between": ["in", "out"]},
           {"name": "C3", "type": "C", "value": 10e-12, "between": ["out", "gnd"], "ground": "g2"},
           {"name": "L9", "type": "L", "value": 8e-9, "between": ["m", "gnd"]},
           {"name": "C9", "type": "C", "value": 4e-12, "between": ["m", "gnd"], "ground": "g3"}]
    c = compile_circuit(Circuit(elements=els, grounds=[_g("g1", 0), _g("g2", 2e-3),
                                                       _g("g3", 1e-3)]))
    f = np.append(F, 1 / (2 * np.pi * np.sqrt(8e-9 * 4e-12)))
    base = mna._assemble(c, f, True)[0]
    assert list(np.flatnonzero(~mna._conditioned(base))) == [len(F)]
    lg = ground_inductance_matrix(c, _batch())
    _agree(mna_s(c, f, lg), _reference(c, f, lg))


def test_singular_circuit_is_still_an_input_error():
    # two zero-ohm parts in parallel through one shared via: a loop of zero-impedance
    # parts, found as an exactly zero pivot of the reduced system (validation bypassed)
    valid = Circuit(input="n", output="n", grounds=[_g("g1", 0)], elements=[
        {"name": "R1", "type": "R", "value": 0, "between": ["n", "gnd"], "ground": "g1"}])
    e2 = Element(name="R2", type="R", value=0.0, between=("n", "gnd"), ground="g1")
    c = compile_circuit(Circuit.model_construct(
        z0=50.0, input="n", output="n", elements=(valid.elements[0], e2),
        grounds=valid.grounds, couplings=(), filter=None))
    lg = ground_inductance_matrix(c, GroundBatch.broadcast(height=np.full(N, 1e-3)))
    assert lg[0, 0, 1] == lg[0, 0, 0]  # one via carrying both currents
    for reduce in (True, False):
        with pytest.raises(InputError, match="singular"):
            mna_s(c, F, lg, reduce=reduce)


@pytest.mark.parametrize("g", [1, 2, 5, SMALL, SMALL + 2])
def test_small_elimination_matches_scipy(g):
    # against scipy.linalg.solve per system; zero leading entries force row swaps
    rng = np.random.default_rng(g)
    q, m, b = 2, 3, 50
    a = rng.standard_normal((g + q, g + m, b)) + 1j * rng.standard_normal((g + q, g + m, b))
    if g > 1:
        a[0, 0, ::2] = 0.0
        a[1, 1, 1::3] = 0.0
    ref = np.stack([a[g:, g:, i] - a[g:, :g, i] @ scipy.linalg.solve(a[:g, :g, i], a[:g, g:, i])
                    for i in range(b)], axis=-1)
    got = schur_small(a.copy(), g)
    assert np.max(np.abs(got - ref)) < 1e-12 * np.max(np.abs(ref))


def test_small_elimination_reports_a_singular_system():
    a = np.ones((3, 4, 6), dtype=complex)  # rank one: the second pivot is exactly zero
    with pytest.raises(np.linalg.LinAlgError):
        schur_small(a, 2)
