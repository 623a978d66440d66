"""Stripline (stackopt.physics.stripline): Cohn 1954 exact form, thickness, offset."""

import numpy as np
import pytest
from scipy.constants import c as c0_scipy
from scipy.constants import mu_0
from scipy.special import ellipk

from stackopt.physics.lines import stripline
from stackopt.physics.stripline import _wheeler_stripline_air, stripline_cohn

ETA0 = mu_0 * c0_scipy


def _cohn_reference(w, b, er):
    # Cohn 1954, written out independently: Z0 = eta0/(4 sqrt(er)) K(k)/K(k'),
    # k = sech(pi w / 2b); scipy's ellipk takes the parameter m = k^2.
    k = 1.0 / np.cosh(np.pi * w / (2 * b))
    kp = np.tanh(np.pi * w / (2 * b))
    return ETA0 / (4 * np.sqrt(er)) * ellipk(k**2) / ellipk(kp**2)


def test_cohn_against_independent_ellipk():
    b = 1e-3
    w = np.geomspace(0.05, 5.0, 25) * b
    for er in (1.0, 3.0, 4.4):
        np.testing.assert_allclose(stripline(w, b, er), _cohn_reference(w, b, er),
                                   rtol=1e-9)


def test_cohn_wide_strip_limit():
    # Cohn 1954 wide-strip form Z0 sqrt(er) = (eta0/4) / (w/b + (2/pi) ln 2), exact up
    # to terms in exp(-pi w / b).
    b = 1e-3
    w = np.array([1.5, 2.0, 4.0, 8.0]) * b
    ref = ETA0 / 4 / (w / b + 2 * np.log(2) / np.pi)
    np.testing.assert_allclose(stripline_cohn(w, b, 1.0), ref, rtol=2e-3)


def test_cohn_known_values():
    # From memory: an air stripline of w/b = 1 is about 65 ohm and 50 ohm needs w/b of
    # about 1.4; a very narrow strip (k -> 1) must stay finite and accurate (ellipkm1).
    b = 1e-3
    assert stripline(b, b, 1.0) == pytest.approx(65.35, abs=0.1)
    assert stripline(1.44 * b, b, 1.0) == pytest.approx(50.0, abs=0.3)
    narrow = stripline(1e-6 * b, b, 1.0)
    # thin-strip limit K(k)/K(k') -> (2/pi) ln(8 b / (pi w)), i.e. Z0 = (eta0/2pi)
    # ln(8b/(pi w)): the round-wire stripline 60 ln(4b/(pi d)) with d = w/2 (Cohn 1954)
    assert narrow == pytest.approx(ETA0 / (2 * np.pi) * np.log(8 / (np.pi * 1e-6)), rel=1e-6)


def test_thickness_lowers_impedance_and_wheeler_matches_cohn_at_zero():
    # Wheeler 1978 claims 0.5 % against the exact result for w'/(b-t) < 10.
    b = 1e-3
    w = np.geomspace(0.05, 5.0, 20) * b
    np.testing.assert_allclose(_wheeler_stripline_air(w, b, 0.0), stripline_cohn(w, b, 1.0),
                               rtol=5e-3)
    z = stripline(w[:, None], b, 4.2, t=np.array([0.0, 17e-6, 35e-6, 70e-6]))
    assert np.all(np.diff(z, axis=1) < 0)


def test_thickness_against_ipc2141_stripline_roughly():
    # IPC-2141A stripline Z0 = 60/sqrt(er) ln(1.9 b / (0.8 w + t)), quoted for
    # w/(b-t) < 0.35 and t/b < 0.25: within a few per cent of the thick-strip result.
    b, er, t = 0.5e-3, 4.2, 35e-6
    w = np.linspace(0.05, 0.15, 6) * 1e-3
    ipc = 60 / np.sqrt(er) * np.log(1.9 * b / (0.8 * w + t))
    np.testing.assert_allclose(stripline(w, b, er, t), ipc, rtol=0.05)


def test_offset_symmetry_and_limits():
    b, t, w, er = 1e-3, 35e-6, 0.3e-3, 4.2
    off = np.array([0.0, 0.1e-3, 0.2e-3, 0.4e-3])
    z = stripline(w, b, er, t, off)
    assert z[0] == pytest.approx(stripline(w, b, er, t))  # exact at zero offset
    np.testing.assert_allclose(stripline(w, b, er, t, -off), z)  # either plane
    assert np.all(np.diff(z) < 0)  # nearer one plane: more capacitance, lower Z0
    # touching or beyond a plane has no meaning
    assert np.isnan(stripline(w, b, er, t, (b - t) / 2))
    # parallel combination (Wadell 1991): 1/Z = (1/Z(2h1+t) + 1/Z(2h2+t)) / 2
    h1, h2 = (b - t) / 2 + 0.2e-3, (b - t) / 2 - 0.2e-3
    z1, z2 = stripline(w, 2 * h1 + t, er, t), stripline(w, 2 * h2 + t, er, t)
    assert z[2] == pytest.approx(2 * z1 * z2 / (z1 + z2))


def test_elliptic_ratio_by_the_agm_against_scipy():
    # K(k)/K(k') by the arithmetic-geometric mean (DLMF 19.8.5) against scipy's ellipkm1
    # (Cephes), over k^2 from near the smallest normal double to 1 - 1e-16 and both ways
    # round, so both tails (k -> 0, k -> 1) are covered; and its limits
    from scipy.special import ellipkm1

    from stackopt.physics.stripline import elliptic_ratio

    small = np.logspace(-307, -0.31, 3000)  # up to about 0.49
    for k2, kp2 in ((small, 1.0 - small), (1.0 - small, small)):
        ref = ellipkm1(kp2) / ellipkm1(k2)
        np.testing.assert_allclose(elliptic_ratio(k2, kp2), ref, rtol=2e-15, atol=0)
    assert elliptic_ratio(0.5, 0.5) == pytest.approx(1.0, abs=1e-15)  # K(k) = K(k') there
    assert elliptic_ratio(0.0, 1.0) == 0.0 and elliptic_ratio(1.0, 0.0) == np.inf
    assert elliptic_ratio(np.full((2, 3), 0.2), 0.8).shape == (2, 3)  # broadcasts
