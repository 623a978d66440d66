"""The product's 2-D field solver (stackopt.physics.fieldsolve / fieldlines).

Checked against exact results written out here (parallel plates; Cohn's zero-thickness
stripline 1954 and coupled stripline 1955, with scipy.special.ellipk), against the
published closed forms inside their stated validity, against itself on nested grids
(Richardson), and against the independent test solver tests/reference/fd2d.py (node-centred
finite volumes with energy capacitance; the product is cell-centred with Gauss's-law
charge and harmonic face permittivities) where no exact result exists.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from reference import fd2d
from scipy.constants import c as c0
from scipy.constants import epsilon_0, mu_0
from scipy.special import ellipk

from stackopt.physics.coplanar import cpwg
from stackopt.physics.coupled import coupled_microstrip
from stackopt.physics.fieldlines import Section, field_width, solve_section
from stackopt.physics.fieldsolve import Box, Grading, axis, capacitance
from stackopt.physics.lines import microstrip
from stackopt.physics.stripline import stripline

ETA0 = mu_0 * c0
ER, T, MM = 4.3, 35e-6, 1e-3


def _k_ratio(k):
    return ellipk(k**2) / ellipk(1.0 - k**2)  # scipy's ellipk takes m = k^2


def _cohn_stripline(w, b, er):
    # S. B. Cohn, IRE T-MTT 2(2), 1954: Z0 = eta0/(4 sqrt(er)) K(k)/K(k'), k = sech(pi w/2b)
    return ETA0 / (4 * np.sqrt(er)) * _k_ratio(1.0 / np.cosh(np.pi * w / (2 * b)))


def _cohn_coupled(w, s, b, er):
    # S. B. Cohn, IRE T-MTT 3(5), 1955: Z0e,o = eta0/(4 sqrt(er)) K(k'e,o)/K(ke,o)
    a1, a2 = np.pi * w / (2 * b), np.pi * (w + s) / (2 * b)
    ke, ko = np.tanh(a1) * np.tanh(a2), np.tanh(a1) / np.tanh(a2)
    return ETA0 / (4 * np.sqrt(er)) / _k_ratio(ke), ETA0 / (4 * np.sqrt(er)) / _k_ratio(ko)


def _centred(w, b, er=ER, t=0.0, **kw):
    return Section(w, (b - t) / 2, er, t, h_above=(b + t) / 2, top_plane=True, **kw)


# ------------------------------------------------------------------ exact results
def _plate(dielectrics):
    # a slice of an infinitely wide parallel-plate capacitor: plate on top at 1 V, mirror
    # side walls; 1 mm wide, 1 mm high
    g = Grading(fine=0.05 * MM, coarse=0.1 * MM)
    box = Box(x_max=MM, y_max=1.2 * MM, conductors=((0.0, MM, MM, 1.2 * MM, 1.0),),
              dielectrics=dielectrics, grading=g, copies=1)
    x = axis([0, 0.4 * MM, MM], [], g)
    y = axis([0, 0.3 * MM, MM, 1.2 * MM], [], g)
    return capacitance(box, x, y)[0]


def test_parallel_plate_layers_in_series_exact():
    # elementary electrostatics: C = eps0 W / sum(h_i / er_i) (harmonic face means)
    c = _plate(((0, MM, 0, 0.3 * MM, 4.0), (0, MM, 0.3 * MM, MM, 2.0)))
    assert c == pytest.approx(epsilon_0 * MM / (0.3 * MM / 4.0 + 0.7 * MM / 2.0), rel=1e-10)


def test_parallel_plate_side_by_side_exact():
    # elementary electrostatics: C = eps0 sum(er_i W_i) / h
    c = _plate(((0, 0.4 * MM, 0, MM, 4.0),))
    assert c == pytest.approx(epsilon_0 * (4.0 * 0.4 + 1.0 * 0.6), rel=1e-10)


@pytest.mark.parametrize("w_over_b", [0.1, 0.4, 1.0, 2.0])
def test_stripline_against_cohn_exact(w_over_b):
    # Cohn 1954, exact for a zero-thickness centred strip: within 0.5 % (the solver's
    # accuracy goal at its default resolution); a homogeneous dielectric gives er exactly
    b = 0.5 * MM
    r = solve_section(_centred(w_over_b * b, b))
    assert r["z0"] == pytest.approx(_cohn_stripline(w_over_b * b, b, ER), rel=5e-3)
    assert r["eps_eff"] == pytest.approx(ER, rel=1e-12)


@pytest.mark.parametrize("w,s", [(0.15, 0.15), (0.1, 0.3), (0.3, 0.1)])
def test_coupled_stripline_against_cohn_exact(w, s):
    # Cohn 1955, exact for zero-thickness coupled strips midway between planes
    b = 0.5 * MM
    r = solve_section(_centred(w * MM, b, s=s * MM))
    even, odd = _cohn_coupled(w * MM, s * MM, b, ER)
    assert r["z_even"] == pytest.approx(even, rel=5e-3)
    assert r["z_odd"] == pytest.approx(odd, rel=5e-3)
    assert r["z_diff"] == 2 * r["z_odd"] and r["z_common"] == r["z_even"] / 2


# ----------------------------------------------------------- published closed forms
@pytest.mark.parametrize("u", [0.3, 1.0, 3.0])
@pytest.mark.parametrize("t", [0.0, T])
def test_microstrip_against_hammerstad_jensen(u, t):
    # Hammerstad & Jensen 1980 (stated 0.01 % in Z0 of the air line, 0.2 % in eps_eff for
    # t = 0; thickness correction first order): within 1 %
    h = 0.2 * MM
    z, e = microstrip(u * h, h, ER, t)
    r = solve_section(Section(u * h, h, ER, t))
    assert r["z0"] == pytest.approx(float(z), rel=0.01)
    assert r["eps_eff"] == pytest.approx(float(e), rel=0.01)


@pytest.mark.parametrize("u,g", [(0.5, 0.5), (1.0, 1.0), (2.0, 0.5), (1.0, 3.0)])
def test_coupled_microstrip_against_kirschning_jansen(u, g):
    # Kirschning & Jansen 1984 at t = 0 (stated within about 1 % for 0.1 <= u, g <= 10)
    h = 0.2 * MM
    kj = coupled_microstrip(u * h, g * h, h, ER, 0.0)
    r = solve_section(Section(u * h, h, ER, 0.0, s=g * h))
    for key in ("z_even", "z_odd", "eps_even", "eps_odd"):
        assert r[key] == pytest.approx(float(kj[key]), rel=0.01), key


@pytest.mark.parametrize("w_over_b", [0.2, 0.4])
def test_thick_centred_stripline_against_wheeler(w_over_b):
    # Cohn 1954 scaled by Wheeler's 1978 thick-strip ratio (Wheeler: 0.5 %): within 1 %
    b = 0.5 * MM
    r = solve_section(_centred(w_over_b * b, b, t=T))
    assert r["z0"] == pytest.approx(float(stripline(w_over_b * b, b, ER, T)), rel=0.01)


def test_cpwg_thin_strip_against_ghione_naldi():
    # Ghione & Naldi 1984 conformal mapping, exact for t = 0 with the backing plane: 1 %
    w, g, h = 0.5 * MM, 0.2 * MM, 1.6 * MM
    z, e = cpwg(w, g, h, ER, 0.0)
    r = solve_section(Section(w, h, ER, 0.0, gap=g))
    assert r["z0"] == pytest.approx(float(z), rel=0.01)
    assert r["eps_eff"] == pytest.approx(float(e), rel=0.01)


# ------------------------------------------------------------------- convergence
def _richardson_limit(sec, key):
    # un-extrapolated values on nested grids 1, 2, 3 (every cell halved each time), the
    # observed order from them, and the extrapolated limit from the two finest
    z = np.array([solve_section(sec, extrapolate=False, level=k)[key] for k in (1, 2, 3)])
    p = np.log2((z[1] - z[0]) / (z[2] - z[1]))
    assert 0.8 < p < 2.0  # a genuine asymptotic range
    return z[2] + (z[2] - z[1]) / (2**p - 1)


@pytest.mark.slow
@pytest.mark.parametrize("sec,key", [
    (Section(0.1 * MM, 0.2 * MM, ER, T), "z0"),
    (_centred(0.15 * MM, 0.5 * MM, s=0.15 * MM), "z_odd"),
    (Section(0.3 * MM, 1.6 * MM, ER, T, gap=0.15 * MM), "z0"),
], ids=["microstrip", "coupled-stripline-odd", "cpwg"])
def test_default_resolution_within_half_percent_of_richardson(sec, key):
    limit = _richardson_limit(sec, key)
    r = solve_section(sec)
    assert r[key] == pytest.approx(limit, rel=5e-3)
    assert r["error"] > abs(r[key] / limit - 1)  # the estimate is conservative here


# ------------------------------------------ cross-sections with no exact result
def _fd2d(box):
    return fd2d.solve_line(box)[0]


def test_solder_mask_against_independent_solver():
    # microstrip under a conformal solder mask: no closed form; the independent
    # node-centred solver of tests/reference with the same dielectric rectangles
    w, h, tm, em = 0.2 * MM, 0.2 * MM, 20e-6, 3.5
    r = solve_section(Section(w, h, ER, T, mask_t=tm, mask_er=em))
    bare = solve_section(Section(w, h, ER, T))
    base = fd2d.microstrip_box(w, h, ER, T)
    xm = base.x_max
    mask = (fd2d.Rect(0, xm, h, h + tm, em), fd2d.Rect(0, w / 2 + tm, h, h + T + tm, em))
    ref = _fd2d(replace(base, dielectrics=base.dielectrics + mask))
    assert r["z0"] == pytest.approx(ref.z0, rel=0.01)
    assert r["eps_eff"] == pytest.approx(ref.eps_eff, rel=0.01)
    assert r["z0"] < bare["z0"] and r["eps_eff"] > bare["eps_eff"]  # mask adds C


def test_asymmetric_two_dielectric_stripline_against_independent_solver():
    # trace on a 0.2 mm core (Dk 4.6) under a 0.3 mm prepreg (Dk 3.9): both planes, both
    # Dk; the reference builds the same box by hand
    w, h1, h2, e1, e2 = 0.15 * MM, 0.2 * MM, 0.3 * MM, 4.6, 3.9
    r = solve_section(Section(w, h1, e1, T, h_above=h2, er_above=e2, top_plane=True))
    b = h1 + h2
    base = fd2d.stripline_box(w, b, e1, T, offset=h1 + T / 2 - b / 2)
    diel = (fd2d.Rect(0, base.x_max, 0, h1, e1), fd2d.Rect(0, base.x_max, h1, b, e2))
    ref = _fd2d(replace(base, dielectrics=diel))
    assert r["z0"] == pytest.approx(ref.z0, rel=0.01)
    assert r["eps_eff"] == pytest.approx(ref.eps_eff, rel=0.01)
    assert e2 < r["eps_eff"] < e1


def test_thick_coupled_microstrip_against_independent_solver():
    w, s, h = 0.2 * MM, 0.2 * MM, 0.2 * MM
    r = solve_section(Section(w, h, ER, T, s=s))
    for mode in ("even", "odd"):
        ref = _fd2d(fd2d.coupled_microstrip_box(w, s, h, ER, T, mode))
        assert r[f"z_{mode}"] == pytest.approx(ref.z0, rel=0.01)
        assert r[f"eps_{mode}"] == pytest.approx(ref.eps_eff, rel=0.01)


def test_embedded_microstrip_between_microstrip_and_stripline_limits():
    # a cover layer of the substrate's Dk raises eps_eff from the microstrip value toward
    # er (physics: more of the field in dielectric) and lowers Z0
    w, h = 0.2 * MM, 0.2 * MM
    bare = solve_section(Section(w, h, ER, T))
    emb = solve_section(Section(w, h, ER, T, h_above=0.3 * MM))
    assert bare["eps_eff"] < emb["eps_eff"] < ER and emb["z0"] < bare["z0"]


# ------------------------------------------------------------------ width finding
def test_field_width_hits_the_target():
    sec = Section(0.3 * MM, 0.2 * MM, ER, T)
    w, z = field_width(50.0, sec)
    assert z == pytest.approx(50.0, rel=1e-3)
    assert solve_section(replace(sec, w=w))["z0"] == pytest.approx(50.0, rel=1e-3)
    wd, zd = field_width(100.0, replace(sec, w=0.15 * MM, s=0.2 * MM))
    assert zd == pytest.approx(100.0, rel=1e-3) and wd < w


def test_field_width_from_a_known_start_skips_one_solve(monkeypatch):
    from stackopt.physics import fieldlines

    sec = Section(0.3 * MM, 0.2 * MM, ER, T)
    z0 = solve_section(sec)["z0"]
    calls = []
    real = fieldlines.solve_section
    monkeypatch.setattr(fieldlines, "solve_section",
                        lambda *a, **k: calls.append(1) or real(*a, **k))
    plain = field_width(50.0, sec)
    n_plain = len(calls)
    started = field_width(50.0, sec, z_start=z0)
    assert started == plain  # the same iterations, bit for bit
    assert len(calls) - n_plain == n_plain - 1


def test_bad_section_is_refused():
    with pytest.raises(ValueError, match="h_above"):
        Section(0.1 * MM, 0.2 * MM, ER, T, top_plane=True)
