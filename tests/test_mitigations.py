"""Two-layer mitigations, direction checks from physics: more vias, a thinner board,
via-in-pad, own vias, a coplanar ground pour (its ground model and its narrow 50 ohm
line, the latter against published closed forms written out here)."""

import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.special import ellipk

from stackopt.circuit import GroundBatch, attenuation_db, compile_circuit, ground_inductance_matrix
from stackopt.circuit import solve as solve_circuit
from stackopt.model.circuit import Circuit
from stackopt.physics.synthesis import synthesize_width

TRACE = {"trace_length": 0.6e-3, "trace_width": 0.3e-3}


def _shunt(n_elements=1, **ground):
    """``n_elements`` 100 nF capacitors across a through line, all on ground g1."""
    els = [{"name": "R0", "type": "R", "value": 1e-3, "between": ["in", "out"]}]
    els += [{"name": f"C{k}", "type": "C", "value": 100e-9, "between": ["in", "gnd"],
             "ground": "g1"} for k in range(n_elements)]
    grounds = [{"name": "g1", "at": [0, 0], **{**TRACE, **ground}}]
    return compile_circuit(Circuit(elements=els, grounds=grounds))


def _l(circuit, **kw):
    """Ground inductance of the one terminal, H, over a broadcast batch."""
    return ground_inductance_matrix(circuit, GroundBatch.broadcast(**kw))[:, 0, 0]


def test_more_vias_help_but_less_than_one_over_n():
    # Parallel partial inductances with a positive mutual term: L_eff = 1/(1' L^-1 1) lies
    # between L/N (no coupling) and L (full coupling); Rosa (1908), Grover (1946), and
    # C. R. Paul, Inductance: Loop and Partial (Wiley, 2010), ch. 5.
    c = _shunt(trace_length=0.0)  # vias only
    n = np.array([1, 2, 3, 4])
    lv = _l(c, height=1.5e-3, drill=0.3e-3, vias=n)
    assert np.all(np.diff(lv) < 0)
    assert np.all(lv[1:] > lv[0] / n[1:])


def test_a_thinner_board_and_a_larger_drill_help():
    # Goldfarb & Pucel (1991), eq. 3: L grows with the via length h and falls with its
    # radius; the pad trace over a closer plane has less inductance too (Hammerstad-Jensen
    # Z0 in air falls with h).
    c = _shunt()
    h = np.array([1.5e-3, 1.1e-3, 0.8e-3, 0.4e-3])
    assert np.all(np.diff(_l(c, height=h)) < 0)
    assert np.all(np.diff(_l(c, height=1.5e-3, drill=np.array([0.2e-3, 0.3e-3, 0.4e-3]))) < 0)


def test_via_in_pad_removes_the_trace():
    # Via-in-pad drops the pad-to-via trace (its partial inductance is positive:
    # Hammerstad & Jensen 1980 in air, L = Z0 l / c0); the via itself is unchanged.
    c = _shunt()
    plain, vip = _l(c, height=1.5e-3, via_in_pad=np.array([False, True]))
    assert vip < plain
    assert vip == pytest.approx(_l(_shunt(trace_length=0.0), height=1.5e-3)[0], rel=1e-12)


def test_shared_vias_are_worse_than_own_vias():
    # A shared via carries both elements' currents (coupling 1); own vias couple through
    # the mutual partial inductance only (coupling < 1, Rosa 1908). Two 100 nF shunts at
    # 1 GHz are far above their series resonance: less inductance, more attenuation.
    # Common practice, no source: "give every shunt element its own ground via".
    c = _shunt(2)
    b = GroundBatch.broadcast(height=1.5e-3, own_vias=np.array([False, True]))
    m = ground_inductance_matrix(c, b)
    assert m[0, 0, 1] == pytest.approx(m[0, 0, 0])
    assert m[1, 0, 1] < m[1, 0, 0]
    att = attenuation_db(solve_circuit(c, np.array([1e9]), b))[:, 0]
    assert att[1] > att[0]


def test_coplanar_pour_is_the_stated_model():
    # The model (docs/circuit.md): the trace becomes the pad-to-pour bridge (the pour gap
    # long) and the pour adds one stitching via beyond each end of the via row. So a
    # coplanar connection with n vias equals a plain one with n + 2 vias and a trace the
    # gap long, and it lowers the ground inductance (directions as above).
    gap = 0.2e-3
    for n in (1, 2, 3):
        cop = _l(_shunt(), height=1.5e-3, vias=n, coplanar=True, pour_gap=gap)
        ref = _l(_shunt(trace_length=gap), height=1.5e-3, vias=n + 2)
        plain = _l(_shunt(), height=1.5e-3, vias=n)
        assert cop == pytest.approx(ref, rel=1e-12)
        assert cop < plain
    # a pour lands every element beside its own pad: no shared via any more
    m = ground_inductance_matrix(_shunt(2), GroundBatch.broadcast(height=1.5e-3,
                                                                  coplanar=True))[0]
    assert m[0, 1] < m[0, 0]


def test_coplanar_default_keeps_the_old_batch():
    c = _shunt(2)
    old = ground_inductance_matrix(c, GroundBatch(np.array([1e-3]), np.array([3e-4]),
                                                  np.array([2]), np.array([False]),
                                                  np.array([True]), np.array([35e-6])))
    new = ground_inductance_matrix(c, GroundBatch.broadcast(height=1e-3, vias=2,
                                                            own_vias=True))
    np.testing.assert_array_equal(old, new)


def _cpwg_wadell(w, g, h, er):
    # Wadell, Transmission Line Design Handbook (Artech House, 1991), sec. 3.4.3,
    # coplanar waveguide with ground (conformal mapping after Ghione & Naldi 1984), with
    # half-widths a = w/2, b = w/2 + g:
    #   k = a/b, k3 = tanh(pi a / 2h) / tanh(pi b / 2h), r(k) = K(k)/K(k'),
    #   eps_eff = (1 + er r(k3)/r(k)) / (1 + r(k3)/r(k)),
    #   Z0 = 60 pi / sqrt(eps_eff) / (r(k) + r(k3)).   scipy's ellipk takes m = k^2.
    a, b = w / 2, w / 2 + g
    k, k3 = a / b, np.tanh(np.pi * a / (2 * h)) / np.tanh(np.pi * b / (2 * h))
    r, r3 = ellipk(k**2) / ellipk(1 - k**2), ellipk(k3**2) / ellipk(1 - k3**2)
    eps = (1 + er * r3 / r) / (1 + r3 / r)
    return 60 * np.pi / np.sqrt(eps) / (r + r3)


def _microstrip_width_pozar(z0, h, er):
    # Microstrip synthesis (Hammerstad 1975), as in D. M. Pozar, Microwave Engineering,
    # 4th ed. (Wiley, 2012), eq. 3.197, zero thickness.
    a = z0 / 60 * np.sqrt((er + 1) / 2) + (er - 1) / (er + 1) * (0.23 + 0.11 / er)
    b = 377 * np.pi / (2 * z0 * np.sqrt(er))
    wd = 8 * np.exp(a) / (np.exp(2 * a) - 2)
    if wd > 2:
        wd = 2 / np.pi * (b - 1 - np.log(2 * b - 1) + (er - 1) / (2 * er)
                          * (np.log(b - 1) + 0.39 - 0.61 / er))
    return wd * h


def test_coplanar_ground_narrows_the_50_ohm_line_on_1_6_mm():
    h, er, gap = 1.57e-3, 4.5, 0.2e-3
    w_cp_ref = brentq(lambda w: _cpwg_wadell(w, gap, h, er) - 50.0, 0.05e-3, 8e-3)
    w_ms_ref = _microstrip_width_pozar(50.0, h, er)
    w_cp, ok_cp = synthesize_width(50.0, h, er, 0.0, kind="cpwg", gap=gap)
    w_ms, ok_ms = synthesize_width(50.0, h, er, 0.0, kind="microstrip")
    assert ok_cp and ok_ms
    assert float(w_cp) == pytest.approx(w_cp_ref, rel=0.01)
    assert float(w_ms) == pytest.approx(w_ms_ref, rel=0.02)
    assert w_ms_ref == pytest.approx(2.9e-3, rel=0.05)  # the usual ~2.9 mm (from memory)
    assert w_cp_ref / w_ms_ref < 0.45  # a fraction of the microstrip width


def test_problem_passes_the_pour_to_the_circuit():
    # The search's coplanar switch reaches both the line (CPWG width) and the grounds.
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario
    from stackopt.search.ladder import two_layer_combinations
    from stackopt.search.problem import Problem

    p = Problem(load_scenario("scenarios/two_layer_only.yaml"),
                load_cost_table("cost_tables/quickturn.yaml"))
    c = two_layer_combinations(p.space)
    k = p.space.mitigations.index("coplanar")
    off = np.flatnonzero(~c.mit[:, k])
    on_mit = c.mit[off].copy()
    on_mit[:, k] = True
    on = c.take(off)
    on = type(on)(on.arr, on.slot, on.copper, on.drill, on.vias, on_mit)
    e_off, e_on = p.evaluate(c.take(off)), p.evaluate(on)
    assert np.all(e_on.inductance < e_off.inductance)
    thick = e_off.geometry.thickness > 1e-3  # on thick boards the pour narrows the line
    assert thick.any()
    assert np.all(e_on.widths[thick, 0] < 0.5 * e_off.widths[thick, 0])
