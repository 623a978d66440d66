"""Microstrip models and pad-trace inductance (stackopt.physics.lines)."""

import warnings

import numpy as np
import pytest
import skrf
from scipy.constants import c as c0_scipy
from scipy.constants import mu_0
from skrf.media import MLine

from stackopt.errors import ModelError
from stackopt.physics.lines import (
    MICROSTRIP_MODELS,
    microstrip,
    microstrip_ipc2141,
    pad_trace_inductance,
)
from stackopt.physics.synthesis import synthesize_width

U_SWEEP = np.geomspace(0.1, 10.0, 13)
H_SWEEP = [0.1e-3, 0.2e-3, 0.5e-3, 1.0e-3, 1.6e-3]
FREQ = skrf.Frequency(1, 1, 1, "MHz")


def _skrf_mline(w, h, er, t):
    """scikit-rf 2.x MLine, Hammerstad-Jensen quasi-static, no dispersion, no loss."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        m = MLine(frequency=FREQ, w=w, h=h, t=t if t > 0 else None, ep_r=er,
                  model="hammerstadjensen", disp="none", diel="frequencyinvariant",
                  rho=1.68e-8 if t > 0 else None, tand=0.0)
    return float(np.real(m.zl_eff)), float(np.real(m.ep_reff))


@pytest.mark.parametrize("t", [0.0, 17.5e-6, 35e-6, 70e-6])
@pytest.mark.parametrize("er", [2.2, 3.66, 4.5, 10.2])
def test_hammerstad_jensen_matches_scikit_rf(er, t):
    # Source: scikit-rf MLine (model='hammerstadjensen', disp='none'), an independent
    # implementation of Hammerstad & Jensen 1980 with the same thickness correction.
    # Measured agreement: 1.3e-10 in Z0 (eta0 definition) and 1e-15 in eps_eff.
    for h in H_SWEEP:
        w = U_SWEEP * h
        z, e = microstrip(w, h, er, t)
        ref = np.array([_skrf_mline(wi, h, er, t) for wi in w])
        np.testing.assert_allclose(z, ref[:, 0], rtol=1e-8)
        np.testing.assert_allclose(e, ref[:, 1], rtol=1e-8)


def test_hammerstad_jensen_spot_values():
    # From memory (common practice, no source): 50 ohm on alumina (er 9.8, thin strip)
    # at w/h about 0.95-1.0; on FR-4 (er 4.4) at w/h about 1.9-2.0; an air microstrip
    # at w/h about 5; zero-thickness air line of w/h = 1 near 126 ohm.
    h = 1e-3
    assert 0.95 < synthesize_width(50.0, h, 9.8, 0.0)[0] / h < 1.0
    assert 1.85 < synthesize_width(50.0, h, 4.4, 0.0)[0] / h < 2.0
    assert 4.7 < synthesize_width(50.0, h, 1.0, 0.0)[0] / h < 5.1
    z_air, e_air = microstrip(h, h, 1.0, 0.0)
    assert z_air == pytest.approx(126.4, abs=0.3)
    assert e_air == pytest.approx(1.0)


def test_quasi_static_limits():
    # Hammerstad & Jensen 1980: eps_eff -> (er+1)/2 for a very narrow strip and -> er for
    # a very wide one; the wide-strip impedance tends to the parallel-plate eta0 h/w/sqrt(er).
    h, er = 1e-3, 4.5
    _, e_narrow = microstrip(1e-4 * h, h, er, 0.0)
    z_wide, e_wide = microstrip(1e3 * h, h, er, 0.0)
    assert e_narrow == pytest.approx((er + 1) / 2, rel=0.05)
    assert e_wide == pytest.approx(er, rel=0.01)
    eta0 = mu_0 * c0_scipy
    assert z_wide == pytest.approx(eta0 / 1e3 / np.sqrt(er), rel=0.01)  # +fringing < 1 %


def test_ipc2141_closed_form_and_nan_outside():
    # Source: IPC-2141A, Z0 = 87/sqrt(er+1.41) ln(5.98h/(0.8w+t)), written out here.
    w, h, er, t = 0.3e-3, 0.2e-3, 4.2, 35e-6
    z, e = microstrip_ipc2141(w, h, er, t)
    assert z == pytest.approx(87 / np.sqrt(er + 1.41) * np.log(5.98 * h / (0.8 * w + t)))
    assert e == pytest.approx(0.475 * er + 0.67)  # IPC-2141 delay form (from memory)
    assert np.isnan(microstrip_ipc2141(10 * h, h, er, t)[0])  # log argument < 1


@pytest.mark.parametrize("model", MICROSTRIP_MODELS)
def test_models_agree_roughly_in_their_common_range(model):
    # PHYSICS.md: IPC-2141A is "several per cent off"; Wheeler 1977 claims ~1 %.
    # Compare with Hammerstad-Jensen over 0.2 <= w/h <= 2 on FR-4-like er.
    h = 0.5e-3
    w = np.linspace(0.2, 2.0, 10) * h
    z_ref, e_ref = microstrip(w, h, 4.3, 35e-6)
    z, e = microstrip(w, h, 4.3, 35e-6, model=model)
    tol = {"hammerstad-jensen": 1e-12, "wheeler": 0.02, "ipc-2141": 0.12}[model]
    np.testing.assert_allclose(z, z_ref, rtol=tol)
    # IPC-2141's eps_eff does not depend on width at all: up to ~16 % off here
    tol_e = {"hammerstad-jensen": 1e-12, "wheeler": 0.02, "ipc-2141": 0.2}[model]
    np.testing.assert_allclose(e, e_ref, rtol=tol_e)


def test_wheeler_zero_thickness_air_is_wheeler_air_form():
    # Wheeler 1977 eq. for er = 1: Z = 30 ln{1 + (4h/w)[8h/w + sqrt((8h/w)^2 + pi^2)]}
    # (eta0/4pi = 29.98 ohm); written out here independently.
    h = 1e-3
    w = np.array([0.1, 0.5, 1.0, 3.0, 10.0]) * h
    x = 4 * h / w
    ref = mu_0 * c0_scipy / (4 * np.pi) * np.log(1 + x * (2 * x + np.sqrt(4 * x**2 + np.pi**2)))
    z, e = microstrip(w, h, 1.0, 0.0, model="wheeler")
    np.testing.assert_allclose(z, ref, rtol=1e-9)  # scipy's CODATA mu_0 vs 4 pi 1e-7
    np.testing.assert_allclose(e, 1.0)


def test_unknown_model_lists_choices():
    with pytest.raises(ModelError) as err:
        microstrip(1e-3, 1e-3, 4.5, model="hammerstad")
    msg = str(err.value)
    assert "\n" not in msg
    for name in MICROSTRIP_MODELS:
        assert name in msg


def test_pad_trace_inductance():
    # L = Z0(er=1) l / c0 with Z0 from scikit-rf's Hammerstad-Jensen MLine in air.
    length, w, h, t = 1.5e-3, 0.4e-3, 0.2e-3, 35e-6
    z_air, _ = _skrf_mline(w, h, 1.0 + 1e-12, t)
    assert pad_trace_inductance(length, w, h, t) == pytest.approx(z_air * length / c0_scipy,
                                                                 rel=1e-6)
    # length 0 gives 0; linear in length; broadcasts
    out = pad_trace_inductance(np.array([0.0, 1e-3, 2e-3])[:, None], w, [h, 2 * h], t)
    assert out.shape == (3, 2)
    assert np.all(out[0] == 0.0)
    np.testing.assert_allclose(out[2], 2 * out[1])
    # a wide trace tends to the parallel-plate inductance mu0 h l / w (physics textbook
    # result); fringing makes the real value a little lower.
    wide = pad_trace_inductance(1e-3, 100 * h, h, 0.0)
    assert 0.94 * mu_0 * h * 1e-3 / (100 * h) < wide < mu_0 * h * 1e-3 / (100 * h)
    # the short-trace value is independent of er by construction: 0.4 mm over 0.2 mm is
    # a few tenths of a nH per mm (common practice, no source)
    assert 0.2e-9 < pad_trace_inductance(1e-3, w, h, t) < 0.4e-9
