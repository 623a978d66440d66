"""Shunt S21 across a matched line, checked against scikit-rf's network algebra."""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from hypothesis import given, settings
from hypothesis import strategies as st
from skrf.media import DefinedGammaZ0

from stackopt.physics.shunt import DB_FLOOR, db20, shunt_inductor_s21_db, shunt_s21

FREQ = skrf.Frequency(1e6, 20e9, 201, unit="Hz")


@pytest.mark.parametrize("z0", [50.0, 75.0])
@pytest.mark.parametrize("inductance", [12e-12, 0.5e-9, 5e-9])
def test_shunt_inductor_matches_scikit_rf(inductance, z0):
    # scikit-rf: Media.shunt_inductor(L) = shunt(inductor(L) ** short()) on a line with
    # port impedance z0; compare complex S21, |S21| in dB and phase over a sweep.
    net = DefinedGammaZ0(frequency=FREQ, z0=z0).shunt_inductor(inductance)
    s21 = shunt_s21(1j * 2 * np.pi * FREQ.f * inductance, z0)
    np.testing.assert_allclose(s21, net.s[:, 1, 0], rtol=1e-10, atol=1e-14)
    np.testing.assert_allclose(shunt_inductor_s21_db(inductance, FREQ.f, z0),
                               net.s_db[:, 1, 0], rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(np.angle(s21, deg=True), net.s_deg[:, 1, 0], atol=1e-8)


def test_shunt_resistor_matches_scikit_rf():
    # scikit-rf: a shunt resistor two-port; S21 = 2R/(2R + Z0) is real.
    media = DefinedGammaZ0(frequency=FREQ, z0=50.0)
    for r in (1.0, 25.0, 1e3):
        net = media.shunt(media.resistor(r) ** media.short())
        np.testing.assert_allclose(shunt_s21(r), net.s[:, 1, 0], rtol=1e-12)


def test_shunt_inductor_closed_form():
    # |S21|^2 = 1 / (1 + (Z0 / 2 omega L)^2) for S21 = 2Z/(2Z+Z0), Z = j omega L
    # (Pozar, Microwave Engineering, ch. 4).
    L, f = 0.5e-9, np.array([100e6, 800e6, 5e9])
    expected = -10 * np.log10(1 + (50 / (2 * 2 * np.pi * f * L)) ** 2)
    np.testing.assert_allclose(shunt_inductor_s21_db(L, f, 50.0), expected, rtol=1e-12)


def test_limits_and_floor():
    assert shunt_s21(0.0) == 0.0
    assert shunt_s21(1e30) == pytest.approx(1.0)
    assert db20(0.0) == pytest.approx(20 * np.log10(DB_FLOOR))
    assert np.isfinite(db20(np.zeros(3))).all()
    assert db20(10.0) == pytest.approx(20.0)
    assert db20(-1j) == pytest.approx(0.0)


def test_broadcasting_matches_scalar_calls():
    L = np.array([10e-12, 100e-12, 1e-9])[:, None]
    f = np.array([1e8, 1e9])[None, :]
    got = shunt_inductor_s21_db(L, f, 50.0)
    assert got.shape == (3, 2)
    for i in range(3):
        for j in range(2):
            assert got[i, j] == pytest.approx(float(shunt_inductor_s21_db(L[i, 0], f[0, j])))


@settings(max_examples=100, deadline=None)
@given(L=st.floats(1e-13, 1e-7), f=st.floats(1e6, 1e11), k=st.floats(1.01, 10.0))
def test_more_inductance_transmits_more(L, f, k):
    # Physical expectation: a larger ground inductance shorts the line less.
    low = shunt_inductor_s21_db(L, f)
    assert low < 0
    assert shunt_inductor_s21_db(k * L, f) > low
