"""Edge-coupled pairs (stackopt.physics.coupled)."""

import numpy as np
import pytest
from scipy.constants import c as c0_scipy
from scipy.constants import mu_0
from scipy.special import ellipk

from stackopt.physics.coupled import coupled_microstrip, coupled_stripline
from stackopt.physics.lines import microstrip, stripline

ETA0 = mu_0 * c0_scipy
S = np.geomspace(0.05e-3, 2e-3, 12)


@pytest.mark.parametrize("t", [0.0, 35e-6])
def test_coupled_microstrip_ordering_and_limit(t):
    # Even/odd ordering of any coupled TEM-like pair (Kirschning & Jansen 1984):
    # z_odd < z_single < z_even, converging to the single line as the gap grows.
    w, h, er = 0.3e-3, 0.2e-3, 4.2
    z0, e0 = microstrip(w, h, er, t)
    m = coupled_microstrip(w, S, h, er, t)
    assert np.all(m["z_odd"] < z0) and np.all(z0 < m["z_even"])
    assert np.all(np.diff(m["z_odd"]) > 0) and np.all(np.diff(m["z_even"]) < 0)
    far = coupled_microstrip(w, 1000 * h, h, er, t)  # Jansen's odd-mode shift ~ 1/g
    assert far["z_diff"] == pytest.approx(2 * z0, rel=1e-4)
    assert far["z_even"] == pytest.approx(z0, rel=1e-4)
    assert far["eps_even"] == pytest.approx(e0, rel=1e-4)
    assert far["eps_odd"] == pytest.approx(e0, rel=1e-4)
    # odd-mode field sits more in the air: eps_odd < eps_even (Kirschning & Jansen 1984)
    assert np.all(m["eps_odd"] < m["eps_even"])


def test_coupled_microstrip_common_practice_pair():
    # Common practice, no source: ~0.2 mm traces at ~0.2 mm gap over ~0.2 mm FR-4 give a
    # differential impedance near 100 ohm.
    z = coupled_microstrip(0.2e-3, 0.2e-3, 0.2e-3, 4.2, 35e-6)["z_diff"]
    assert 90 < z < 120


def _cohn_coupled(w, s, b, er):
    # Cohn 1955 (IRE T-MTT 3(5)), written out independently with ellipk(m = k^2):
    # ke = tanh(pi w/2b) tanh(pi (w+s)/2b), ko = tanh(pi w/2b) coth(pi (w+s)/2b),
    # Z0 = eta0/(4 sqrt(er)) K(k')/K(k).
    a1, a2 = np.pi * w / (2 * b), np.pi * (w + s) / (2 * b)
    ke = np.tanh(a1) * np.tanh(a2)
    ko = np.tanh(a1) / np.tanh(a2)

    def z(k):
        return ETA0 / (4 * np.sqrt(er)) * ellipk(1 - k**2) / ellipk(k**2)

    return z(ke), z(ko)


def test_coupled_stripline_against_cohn_1955():
    b, er = 0.5e-3, 4.2
    w = np.array([0.1e-3, 0.2e-3, 0.4e-3])[:, None]
    m = coupled_stripline(w, S, b, er)
    ze, zo = _cohn_coupled(w, S, b, er)
    np.testing.assert_allclose(m["z_even"], ze, rtol=1e-8)
    np.testing.assert_allclose(m["z_odd"], zo, rtol=1e-8)
    np.testing.assert_allclose(m["z_diff"], 2 * m["z_odd"])


@pytest.mark.parametrize("t", [0.0, 17e-6])
def test_coupled_stripline_ordering_and_limit(t):
    w, b, er = 0.15e-3, 0.5e-3, 4.2
    z0 = stripline(w, b, er, t)
    m = coupled_stripline(w, S, b, er, t)
    assert np.all(m["z_odd"] < z0) and np.all(z0 < m["z_even"])
    far = coupled_stripline(w, 20 * b, b, er, t)
    assert far["z_diff"] == pytest.approx(2 * z0, rel=1e-9)
