"""Batched nodal analysis against independent references (scikit-rf, closed forms)."""

import numpy as np
import pytest
import skrf

from stackopt.circuit import (
    GroundBatch,
    attenuation_db,
    compile_circuit,
    ground_inductance_matrix,
    solve,
)
from stackopt.model.circuit import Circuit
from stackopt.physics.inductance import ground_via_inductance
from stackopt.physics.shunt import shunt_s21

F = np.geomspace(10e6, 3e9, 61)
CHEB = {"family": "chebyshev", "order": 7, "cutoff": 250e6, "ripple": 0.1,
        "ground": {"trace_length": 6e-4, "trace_width": 4e-4}}
BATCH = GroundBatch.broadcast(height=[1.6e-3, 0.19e-3, 0.36e-3], drill=[0.3e-3, 0.3e-3, 0.2e-3],
                              vias=[1, 2, 3], via_in_pad=[False, False, True],
                              own_vias=[False, True, False], copper=35e-6)


def _cheb(**kw):
    return compile_circuit(Circuit(filter={**CHEB, **kw}))


def test_ladder_fast_path_gives_the_nodal_analysis_numbers():
    c = _cheb(capacitor={"esl": 0.4e-9, "esr": 0.1}, inductor={"q": 40, "q_at": 5e8})
    for batch in (None, BATCH):
        a = solve(c, F, batch, method="ladder", mutual=False)
        b = solve(c, F, batch, method="mna", mutual=False)
        assert np.max(np.abs(a - b)) < 1e-12


def test_scikit_rf_cascade_cross_check():
    # independent implementation: scikit-rf media elements cascaded with `**`
    c = _cheb(capacitor={"esl": 0.4e-9, "esr": 0.1}, inductor={"q": 40, "q_at": 5e8})
    batch = BATCH.take([0])
    lg = ground_inductance_matrix(c, batch)[0].diagonal()
    ours = solve(c, F, batch, method="mna", mutual=False)[0]
    freq = skrf.Frequency.from_f(F, unit="Hz")
    m = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=50.0)
    r_l = 2 * np.pi * 5e8 / 40  # series loss of Q = 40 at 500 MHz, per henry
    spec = Circuit(filter=CHEB)
    from stackopt.circuit import filter_circuit
    parts = filter_circuit(spec.filter, 50.0).elements
    net, t = None, 0
    for e in parts:
        if e.type == "C":  # shunt C + ESL + ESR, through its ground connection
            branch = (m.capacitor(e.value) ** m.inductor(0.4e-9 + lg[t]) ** m.resistor(0.1)
                      ** m.short(nports=1))
            stage = m.shunt(branch) ** m.thru()
            t += 1
        else:
            stage = m.inductor(e.value) ** m.resistor(r_l * e.value)
        net = stage if net is None else net ** stage
    assert np.max(np.abs(ours - net.s)) < 1e-9


def test_lossless_is_unitary_and_every_circuit_is_reciprocal():
    # passive lossless two-port: |S11|^2 + |S21|^2 = 1; reciprocal: S21 = S12 (Pozar 2012,
    # sec. 4.3)
    c = _cheb()
    for s in (solve(c, F), solve(c, F, BATCH), solve(c, F, BATCH, method="mna")):
        power = np.abs(s[..., 0, 0]) ** 2 + np.abs(s[..., 1, 0]) ** 2
        assert np.max(np.abs(power - 1)) < 1e-9
        assert np.max(np.abs(s[..., 1, 0] - s[..., 0, 1])) < 1e-12
    lossy = _cheb(capacitor={"esr": 0.2, "q": 200}, inductor={"q": 30})
    s = solve(lossy, F, BATCH)
    assert np.max(np.abs(s[..., 1, 0] - s[..., 0, 1])) < 1e-12
    assert np.all(np.abs(s[..., 0, 0]) ** 2 + np.abs(s[..., 1, 0]) ** 2 < 1)


def test_coupled_inductors_are_reciprocal_and_change_the_response():
    els = [{"name": "C1", "type": "C", "value": 10e-12, "between": ["in", "gnd"]},
           {"name": "L2", "type": "L", "value": 30e-9, "between": ["in", "n2"]},
           {"name": "C3", "type": "C", "value": 20e-12, "between": ["n2", "gnd"]},
           {"name": "L4", "type": "L", "value": 30e-9, "between": ["n2", "out"]},
           {"name": "C5", "type": "C", "value": 10e-12, "between": ["out", "gnd"]}]
    plain = compile_circuit(Circuit(elements=els))
    coupled = compile_circuit(Circuit(elements=els,
                                      couplings=[{"between": ["L2", "L4"], "k": 0.05}]))
    assert coupled.ladder is None
    s0, s1 = solve(plain, F), solve(coupled, F)
    assert np.max(np.abs(s1[..., 1, 0] - s1[..., 0, 1])) < 1e-12
    power = np.abs(s1[..., 0, 0]) ** 2 + np.abs(s1[..., 1, 0]) ** 2
    assert np.max(np.abs(power - 1)) < 1e-9  # still lossless
    assert np.max(np.abs(attenuation_db(s1) - attenuation_db(s0))) > 0.5


def _shunt_c(c=10e-12, **ground):
    g = {"name": "g1", "at": [0, 0], "vias": 1, **ground}
    return compile_circuit(Circuit(input="n", output="n", grounds=[g], elements=[
        {"name": "C1", "type": "C", "value": c, "between": ["n", "gnd"], "ground": "g1"}]))


def test_capacitor_through_ground_inductance_notches_at_lc_resonance():
    # series resonance f0 = 1 / (2 pi sqrt(L C)) (Pozar 2012, sec. 6.1); deeper stopband
    # below f0 than an ideal capacitor, worse above it
    c = _shunt_c(10e-12)
    batch = GroundBatch.broadcast(height=1.6e-3, drill=0.3e-3)
    lg = ground_inductance_matrix(c, batch)[0, 0, 0]
    f0 = 1 / (2 * np.pi * np.sqrt(lg * 10e-12))
    f = np.linspace(0.8 * f0, 1.2 * f0, 20001)
    att = attenuation_db(solve(c, f, batch))[0]
    assert f[np.argmax(att)] == pytest.approx(f0, rel=1e-4)
    probe = np.array([0.5 * f0, 2 * f0])
    real, ideal = attenuation_db(solve(c, probe, batch))[0], attenuation_db(solve(c, probe))[0]
    assert real[0] > ideal[0] and real[1] < ideal[1]


def test_shunt_element_matches_closed_form_shunt_s21():
    # S21 = 2Z / (2Z + Z0) for a shunt impedance across a matched line (Pozar 2012, ch. 4)
    c = _shunt_c(10e-12, drill=3e-4)
    batch = GroundBatch.broadcast(height=[1.6e-3, 0.19e-3])
    s21 = solve(c, F, batch)[..., 1, 0]
    w = 2 * np.pi * F
    z = 1 / (1j * w * 10e-12) + 1j * w * ground_via_inductance(batch.height, 3e-4)[:, None]
    assert np.max(np.abs(s21 - shunt_s21(z, 50.0))) < 1e-12


# A "0.3 mm via" is a 0.3 mm finished hole; the fab drills it larger so that the plating
# (about 25 um per side) brings it back to 0.3 mm, so the barrel's outer diameter - the d
# of the via models - is about 0.35 mm (common practice, no source).
BARREL_OD = 0.35e-3


def _single_via():
    return compile_circuit(Circuit(input="n", output="n", elements=[
        {"name": "R1", "type": "R", "value": 0, "between": ["n", "gnd"], "ground": "g1"}],
        grounds=[{"name": "g1", "at": [0, 0], "vias": 1, "drill": BARREL_OD}]))


def _via_suppression():
    # one via, no pad trace, a zero-ohm shunt element: the via alone, at 800 MHz
    batch = GroundBatch.broadcast(height=[1.6e-3, 0.19e-3])
    return attenuation_db(solve(_single_via(), [800e6], batch))[:, 0]


def test_single_ground_via_suppression():
    # Facts of the trade (common practice, no source): a single ground via across a
    # 50 ohm line at 800 MHz suppresses about 22 dB through a 1.6 mm two-layer board and
    # about 58 dB with the plane 0.19 mm under the top, a difference of about 34-36 dB.
    # The default model (Goldfarb-Pucel) gives about 20.0 dB and 53.3 dB (difference
    # 33.3 dB): it errs on the pessimistic side in both cases (more inductance, less
    # suppression). It treats the via as an isolated round post with no credit for the
    # pad and the line's wide current entry, and 1.6 mm lies outside its fitted range
    # (0.1-0.63 mm). Pessimistic is the safe side for a stopband requirement.
    two, four = _via_suppression()
    assert abs(two - 22) <= 6
    assert abs(four - 58) <= 6
    assert abs((four - two) - 35) <= 4
    assert two < 22 and four < 58  # the direction of the error stated above


def test_batch_rows_are_independent():
    c = _cheb()
    whole = solve(c, F, BATCH, method="mna")
    for i in range(BATCH.n):
        assert np.allclose(solve(c, F, BATCH.take([i]), method="mna")[0], whole[i],
                           rtol=0, atol=1e-13)
