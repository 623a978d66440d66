"""Ground-via, wire, mutual and parallel-via inductance against outside references."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from stackopt.errors import ModelError
from stackopt.physics import inductance as ind
from stackopt.physics import parallel as par
from stackopt.physics.constants import MU0, MU0_OVER_2PI

MM = 1e-3
INCH = 0.0254


def neumann_parallel(length: float, spacing: float) -> float:
    """Neumann formula for two parallel, aligned filaments, integrated by scipy."""
    value, _ = integrate.dblquad(
        lambda z2, z1: 1.0 / np.hypot(z1 - z2, spacing), 0.0, length, 0.0, length,
        epsabs=0.0, epsrel=1e-10)
    return MU0 / (4 * np.pi) * value


# --- constants ---------------------------------------------------------------------------

def test_mu0_over_2pi_is_0p2_nh_per_mm():
    # mu0 = 4 pi 1e-7 H/m (classical SI definition) -> mu0/2pi = 0.2 nH/mm.
    assert MU0_OVER_2PI == pytest.approx(0.2e-9 / MM, rel=1e-15)
    assert MU0 / (2 * np.pi) == pytest.approx(MU0_OVER_2PI, rel=1e-15)


# --- single-via models -------------------------------------------------------------------

def test_johnson_graham_worked_example():
    # Johnson & Graham, High-Speed Digital Design (1993): 0.063 in via, 0.016 in
    # diameter -> about 1.2 nH.
    L = ind.via_johnson_graham(0.063 * INCH, 0.016 * INCH)
    assert L == pytest.approx(1.2e-9, rel=0.01)


def test_johnson_graham_nh_per_inch_form():
    # Johnson & Graham (1993) as printed: L[nH] = 5.08 h[in] (ln(4h/d) + 1).
    h_in, d_in = np.array([0.02, 0.063, 0.1]), np.array([0.008, 0.016, 0.012])
    printed = 5.08 * h_in * (np.log(4 * h_in / d_in) + 1) * 1e-9
    np.testing.assert_allclose(ind.via_johnson_graham(h_in * INCH, d_in * INCH), printed,
                               rtol=1e-12)


@pytest.mark.parametrize(("h_mm", "expected_pH"), [(1.6, 500.0), (0.38, 47.0), (0.19, 12.0)])
def test_goldfarb_pucel_rules_of_thumb(h_mm, expected_pH):
    # Common practice, no source: with a 0.3 mm drill a via is about 500 pH through a
    # 1.6 mm board, 47 pH through 0.38 mm and 12 pH through 0.19 mm.
    L = ind.via_goldfarb_pucel(h_mm * MM, 0.3 * MM)
    assert L == pytest.approx(expected_pH * 1e-12, rel=0.10)


def test_goldfarb_pucel_printed_form():
    # Goldfarb & Pucel, IEEE MGWL 1(6) 1991, eq. 3, evaluated as printed (ln, not asinh).
    h, r = np.array([0.1, 0.254, 0.635]) * MM, 0.1 * MM
    R = np.sqrt(r**2 + h**2)
    printed = MU0 / (2 * np.pi) * (h * np.log((h + R) / r) + 1.5 * (r - R))
    np.testing.assert_allclose(ind.via_goldfarb_pucel(h, 2 * r), printed, rtol=1e-12)


def test_goldfarb_pucel_fit_range():
    # Goldfarb & Pucel (1991) fitted depths of about 0.1-0.63 mm.
    h = np.array([0.05, 0.1, 0.19, 0.63, 0.8, 1.6]) * MM
    assert ind.goldfarb_pucel_in_range(h, 0.3 * MM).tolist() == [
        False, True, True, True, False, False]
    assert ind.goldfarb_pucel_in_range(h[:, None], np.ones(3) * 0.3 * MM).shape == (6, 3)


def test_image_is_half_of_twice_the_length():
    # Image theory (PHYSICS.md; Paul, Inductance: Loop and Partial, 2010).
    h, d = 0.5 * MM, 0.3 * MM
    assert ind.via_image(h, d) == pytest.approx(0.5 * ind.via_rosa(2 * h, d), rel=1e-14)
    # Rosa/Grover now uses the thin-tube self term (long vias: the GMD form within 1 %).
    assert ind.via_rosa(20 * h, d) == pytest.approx(
        ind.partial_self_inductance(20 * h, d / 2), rel=0.01)


def test_dispatcher_and_model_names():
    assert next(iter(ind.VIA_MODELS)) == ind.DEFAULT_VIA_MODEL
    funcs = [ind.via_goldfarb_pucel, ind.via_johnson_graham, ind.via_rosa, ind.via_image]
    for name, fn in zip(ind.VIA_MODELS, funcs, strict=True):
        assert ind.ground_via_inductance(1 * MM, 0.3 * MM, name) == fn(1 * MM, 0.3 * MM)
    assert ind.ground_via_inductance(1 * MM, 0.3 * MM) == ind.via_goldfarb_pucel(1 * MM, 0.3 * MM)
    with pytest.raises(ModelError) as err:
        ind.ground_via_inductance(1 * MM, 0.3 * MM, "jonson")
    msg = str(err.value)
    assert "\n" not in msg and "did you mean 'johnson'" in msg
    assert all(name in msg for name in ind.VIA_MODELS)


def test_models_disagree_by_a_factor_of_two_to_eight():
    # PHYSICS.md: the closed forms disagree by 2-8x for the same via (thin dielectrics).
    values = [float(ind.ground_via_inductance(0.19 * MM, 0.3 * MM, m)) for m in ind.VIA_MODELS]
    assert 2 < max(values) / min(values) < 8


# --- partial self and mutual inductance --------------------------------------------------

@pytest.mark.parametrize(("l_mm", "s_mm"), [(1.0, 0.5), (1.6, 2.0), (0.2, 1.0), (5.0, 0.1)])
def test_mutual_matches_neumann_integral(l_mm, s_mm):
    # Neumann formula M = mu0/4pi ∫∫ dl1·dl2 / R, integrated numerically (scipy dblquad).
    ell, s = l_mm * MM, s_mm * MM
    assert ind.mutual_partial_inductance(ell, s) == pytest.approx(neumann_parallel(ell, s),
                                                                rel=1e-8)


@pytest.mark.parametrize("l_over_r", [0.5, 2.0, 10.0, 100.0])
def test_partial_self_matches_neumann_at_gmd(l_over_r):
    # GMD/filament approximation: the partial self-inductance of a thin tube is the
    # Neumann integral of two filaments at its geometric mean distance r (Grover 1946).
    r = 0.15 * MM
    ell = l_over_r * r
    assert ind.partial_self_inductance(ell, r) == pytest.approx(neumann_parallel(ell, r), rel=1e-8)
    assert ind.partial_self_inductance(ell, r) == ind.mutual_partial_inductance(ell, r)


@pytest.mark.parametrize("l_over_r", [200.0, 1e3, 1e4])
def test_partial_self_tends_to_grover_long_wire(l_over_r):
    # Grover, Inductance Calculations (1946), straight round wire, l >> r:
    # L = (mu0 l/2pi)(ln(2l/r) - 1) with surface current, (ln(2l/r) - 3/4) at DC.
    # The difference is r/l in the bracket, i.e. below r/l relative.
    r = 0.1 * MM
    ell = l_over_r * r
    hf = MU0_OVER_2PI * ell * (np.log(2 * ell / r) - 1)
    dc = MU0_OVER_2PI * ell * (np.log(2 * ell / r) - 0.75)
    assert ind.partial_self_inductance(ell, r) == pytest.approx(hf, rel=1 / l_over_r)
    assert ind.partial_self_inductance(ell, r, dc=True) == pytest.approx(dc, rel=1 / l_over_r)


def test_asinh_form_stays_positive_where_long_wire_form_fails():
    # PHYSICS.md: ln(2l/r) - 1 goes negative below h/d ≈ 0.68 (e/4); asinh forms do not.
    h, d = 0.05 * MM, 0.3 * MM
    assert np.log(4 * h / d) - 1 < 0
    for model in ("goldfarb-pucel", "rosa", "image"):
        assert ind.ground_via_inductance(h, d, model) > 0


def test_mutual_is_stable_for_far_filaments():
    # Far field of the Neumann integral: M -> (mu0/4pi) l^2 / s for s >> l.
    ell, s = 1 * MM, 1e4 * MM
    assert ind.mutual_partial_inductance(ell, s) == pytest.approx(MU0 / (4 * np.pi) * ell * ell / s,
                                                                rel=1e-6)


# --- parallel vias -----------------------------------------------------------------------

@pytest.mark.parametrize("model", ind.VIA_MODELS)
def test_two_vias_equal_l_plus_m_over_two(model):
    # Symmetry: two equal vias share the current equally, L_eff = (L + M)/2 exactly.
    h, d, s = 0.8 * MM, 0.3 * MM, 1.0 * MM
    L = ind.ground_via_inductance(h, d, model)
    M = par.via_mutual_inductance(h, s)
    got = par.parallel_via_inductance(h, d, par.row_positions(2, s), model)
    assert got == pytest.approx((L + M) / 2, rel=1e-12)


def test_mutual_is_geometry_for_every_model():
    # Image theory (Paul 2010): half the filament mutual (Rosa 1908) of length 2h,
    # whatever the self-term model.
    h, s = 0.5 * MM, 0.9 * MM
    assert par.via_mutual_inductance(h, s) == pytest.approx(
        0.5 * ind.mutual_partial_inductance(2 * h, s), rel=1e-14)


@pytest.mark.parametrize("model", ind.VIA_MODELS)
def test_four_in_a_row_below_shortcut(model):
    # PHYSICS.md: (L + (N-1)M)/N is exact only for N = 2; for 4 in a row it overestimates
    # (the end vias carry more current). Also below the equal-current value 1ᵀL1/N².
    h, d, p = 0.8 * MM, 0.3 * MM, 0.8 * MM
    xy = par.row_positions(4, p)
    L = ind.ground_via_inductance(h, d, model)
    M = par.via_mutual_inductance(h, p)
    got = par.parallel_via_inductance(h, d, xy, model)
    mutual = [par.via_mutual_inductance(h, k * p) for k in (1, 2, 3)]
    equal_current = (4 * L + 2 * (3 * mutual[0] + 2 * mutual[1] + mutual[2])) / 16
    assert got < equal_current < (L + 3 * M) / 4


def test_short_fat_vias_close_together_stay_physical():
    # Regression: bare filament mutuals with the Goldfarb-Pucel diagonal gave a
    # non-positive-definite matrix here (negative L_eff); the guard keeps it physical.
    h, d, p = 0.05 * MM, 0.3 * MM, 0.35 * MM
    L = ind.via_goldfarb_pucel(h, d)
    got, alpha = par.parallel_via_inductance(h, d, par.row_positions(3, p), with_guard=True)
    assert L / 3 < got < L
    assert alpha < 1


@settings(max_examples=150, deadline=None)
@given(h=st.floats(0.02, 3.0), d=st.floats(0.1, 0.6), ratio=st.floats(1.05, 20.0),
       n=st.integers(2, 8), model=st.sampled_from(tuple(ind.VIA_MODELS)))
def test_parallel_between_l_over_n_and_l(h, d, ratio, n, model):
    # Property of a positive-definite matrix with positive mutuals (energy argument).
    h, d = h * MM, d * MM
    if model == "johnson":  # meaningful only where the closed form is (h/d above ~1)
        h = max(h, d)
    L = ind.ground_via_inductance(h, d, model)
    got = par.parallel_via_inductance(h, d, par.row_positions(n, ratio * d), model)
    assert L / n < got < L


def test_parallel_batches_match_scalar_calls():
    h = np.array([0.1, 0.5, 1.6])[:, None] * MM
    pitch = np.array([0.6, 1.0])[None, :] * MM
    xy = par.row_positions(3, pitch)
    assert xy.shape == (1, 2, 3, 2)
    got = par.parallel_via_inductance(h, 0.3 * MM, xy, "image")
    assert got.shape == (3, 2)
    for i in range(3):
        for j in range(2):
            one = par.parallel_via_inductance(h[i, 0], 0.3 * MM,
                                              par.row_positions(3, pitch[0, j]), "image")
            assert got[i, j] == pytest.approx(float(one), rel=1e-12)


def test_row_positions_and_shape_errors():
    xy = par.row_positions(3, 1.0)
    np.testing.assert_allclose(xy, [[-1, 0], [0, 0], [1, 0]])
    assert par.parallel_via_inductance(1 * MM, 0.3 * MM, [[0.0, 0.0]]) == pytest.approx(
        ind.via_goldfarb_pucel(1 * MM, 0.3 * MM))
    with pytest.raises(ValueError, match=r"\(\.\.\., N, 2\)"):
        par.parallel_via_inductance(1 * MM, 0.3 * MM, [0.0, 0.0])
    with pytest.raises(ValueError):
        par.row_positions(0, 1.0)
    with pytest.raises(ModelError):
        par.parallel_via_inductance(1 * MM, 0.3 * MM, xy, "bogus")


def test_parallel_reachable_from_inductance_module():
    # DEVELOPERS.md contract: inductance.parallel_via_inductance(h, d, xy, model=...).
    assert ind.parallel_via_inductance is par.parallel_via_inductance
    assert ind.row_positions is par.row_positions
    with pytest.raises(AttributeError):
        ind.no_such_function  # noqa: B018


# --- cavity via pair and plane pair ------------------------------------------------------

def test_via_pair_cavity_large_spacing_limit():
    # Two-wire line (Ramo, Whinnery & Van Duzer): acosh(s/2r) -> ln(s/r) for s >> r.
    h, d = 1.0 * MM, 0.3 * MM
    s = np.array([100.0, 1e3]) * d
    thin = MU0 * h / np.pi * np.log(s / (d / 2))
    np.testing.assert_allclose(par.via_pair_cavity(h, s, d), thin, rtol=1e-4)
    exact = MU0 * h / np.pi * np.arccosh(2.0)
    assert par.via_pair_cavity(h, 2 * d, d) == pytest.approx(exact, rel=1e-14)


def test_via_pair_cavity_edges():
    h, d = 1.0 * MM, 0.3 * MM
    assert par.via_pair_cavity(h, d, d) == 0.0  # touching barrels: acosh(1) = 0
    assert np.isnan(par.via_pair_cavity(h, 0.5 * d, d))


def test_plane_sheet_inductance_per_mil():
    # PHYSICS.md / common practice: about 32 pH per square per mil of plane separation.
    assert par.plane_sheet_inductance(25.4e-6) == pytest.approx(32e-12, rel=0.01)


# --- vectorization and monotonicity ------------------------------------------------------

SCALAR_FUNCS = [ind.via_goldfarb_pucel, ind.via_johnson_graham, ind.via_rosa, ind.via_image,
                ind.partial_self_inductance, ind.mutual_partial_inductance,
                par.plane_sheet_inductance, lambda h, d: par.via_pair_cavity(h, 3 * d, d),
                lambda h, d: par.via_mutual_inductance(h, 2 * d)]


@pytest.mark.parametrize("fn", SCALAR_FUNCS)
def test_arrays_match_scalar_calls(fn):
    h = np.array([0.05, 0.19, 0.38, 1.6])[:, None] * MM
    d = np.array([0.1, 0.2, 0.3])[None, :] * MM
    if fn is par.plane_sheet_inductance:
        got, scalar = fn(h * d / MM), (lambda a, b: fn(a * b / MM))
    else:
        got, scalar = fn(h, d), fn
    assert got.shape == (4, 3)
    for i in range(4):
        for j in range(3):
            assert got[i, j] == pytest.approx(float(scalar(h[i, 0], d[0, j])), rel=1e-14)


@settings(max_examples=200, deadline=None)
@given(h=st.floats(0.005, 5.0), d=st.floats(0.05, 1.0), k=st.floats(1.01, 3.0),
       model=st.sampled_from(tuple(ind.VIA_MODELS)))
def test_inductance_rises_with_depth_and_falls_with_drill(h, d, k, model):
    # Physical expectation for every model where it is valid (Johnson: h/d >= 0.5).
    h, d = h * MM, d * MM
    if model == "johnson":
        h = max(h, 0.5 * k * d)
    L = ind.ground_via_inductance(h, d, model)
    assert L > 0
    assert ind.ground_via_inductance(k * h, d, model) > L
    assert ind.ground_via_inductance(h, k * d, model) < L
