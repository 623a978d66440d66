"""The line closed forms against an independent 2-D quasi-static field solver.

The solver (tests/reference/fd2d.py, finite volumes on the cross-section; how it works and
how accurate it is: tests/reference/README.md) is first checked against exact results:
the parallel-plate capacitor (layers in series and side by side), Cohn's exact
zero-thickness stripline (1954) and coupled stripline (1955), written out here with
scipy.special.ellipk, independent of stackopt. Then it checks stackopt.physics on a few
representative PCB cross-sections. ``python tests/test_lines_fieldsolver.py`` prints the
comparison table quoted in docs/models.md.
"""

from __future__ import annotations

import functools
from dataclasses import replace

import numpy as np
import pytest
from reference import fd2d
from scipy.constants import c as c0
from scipy.constants import epsilon_0, mu_0
from scipy.optimize import brentq
from scipy.special import ellipk

from stackopt.physics.coplanar import cpwg
from stackopt.physics.coupled import coupled_microstrip, coupled_stripline
from stackopt.physics.lines import microstrip
from stackopt.physics.stripline import stripline

ETA0 = mu_0 * c0
ER, T = 4.3, 35e-6  # FR-4-like substrate, 1 oz copper (common practice, no source)
MM = 1e-3


# ------------------------------------------------------- exact references (not stackopt)
def _k_ratio(k):
    # K(k)/K(k'); scipy.special.ellipk takes the parameter m = k^2
    return ellipk(k**2) / ellipk(1.0 - k**2)


def _cohn_stripline(w, b, er):
    # S. B. Cohn, IRE T-MTT 2(2), 1954: Z0 = eta0/(4 sqrt(er)) K(k)/K(k'), k = sech(pi w/2b)
    return ETA0 / (4 * np.sqrt(er)) * _k_ratio(1.0 / np.cosh(np.pi * w / (2 * b)))


def _cohn_coupled(w, s, b, er):
    # S. B. Cohn, IRE T-MTT 3(5), 1955: Z0e,o = eta0/(4 sqrt(er)) K(k'e,o)/K(ke,o),
    # ke = tanh(pi w/2b) tanh(pi (w+s)/2b), ko = tanh(pi w/2b) coth(pi (w+s)/2b)
    a1, a2 = np.pi * w / (2 * b), np.pi * (w + s) / (2 * b)
    ke, ko = np.tanh(a1) * np.tanh(a2), np.tanh(a1) / np.tanh(a2)
    return (ETA0 / (4 * np.sqrt(er)) / _k_ratio(ke),
            ETA0 / (4 * np.sqrt(er)) / _k_ratio(ko))


@functools.cache
def _solve(box: fd2d.Box):
    return fd2d.solve_line(box)


# ------------------------------------------------------------- the solver, exact checks
def _plate_box(dielectrics):
    # 1 mm x 1 mm, plate at 1 V on top, plane below, mirror side walls: a slice of an
    # infinitely wide parallel-plate capacitor
    return fd2d.Box(x_max=MM, y_max=MM, conductors=(fd2d.Rect(0.0, MM, MM, MM, 1.0),),
                    dielectrics=dielectrics, left="mirror", right="mirror",
                    grid=fd2d.Grid(h_min=0.05 * MM, h_max=0.1 * MM))


def test_parallel_plate_layers_in_series_exact():
    # Elementary electrostatics (capacitors in series): C = eps0 W / sum(h_i / er_i).
    # Interfaces across the flux: checks that each cell keeps its own permittivity.
    box = _plate_box((fd2d.Rect(0, MM, 0, 0.3 * MM, 4.0), fd2d.Rect(0, MM, 0.3 * MM, MM, 2.0)))
    x, y = fd2d.graded_axis([0, MM], [], box.grid), fd2d.graded_axis([0, 0.3 * MM, MM], [],
                                                                    box.grid)
    c, _ = fd2d.capacitance(box, x, y)
    assert c == pytest.approx(epsilon_0 * MM / (0.3 * MM / 4.0 + 0.7 * MM / 2.0), rel=1e-10)


def test_parallel_plate_side_by_side_exact():
    # Elementary electrostatics (capacitors in parallel): C = eps0 sum(er_i W_i) / h.
    # Interface along the flux: checks the length-weighted mean of eps on the faces.
    box = _plate_box((fd2d.Rect(0, 0.4 * MM, 0, MM, 4.0),))
    line, _ = _solve(box)
    assert line.c == pytest.approx(epsilon_0 * (4.0 * 0.4 + 1.0 * 0.6), rel=1e-10)
    assert line.c_air == pytest.approx(epsilon_0, rel=1e-10)


@pytest.mark.parametrize("w_over_b", [0.1, 0.4, 2.0])
def test_stripline_against_cohn_exact(w_over_b):
    # Cohn 1954, exact for a zero-thickness centred strip: the solver within 0.3 %, and a
    # homogeneous dielectric gives eps_eff = er exactly (TEM).
    b = 0.5 * MM
    line, info = _solve(fd2d.stripline_box(w_over_b * b, b, ER))
    assert line.z0 == pytest.approx(_cohn_stripline(w_over_b * b, b, ER), rel=3e-3)
    assert line.eps_eff == pytest.approx(ER, rel=1e-12)
    assert info["z0_error"] < 5e-3


@pytest.mark.parametrize("mode", ["even", "odd"])
def test_coupled_stripline_against_cohn_exact(mode):
    # Cohn 1955, exact for zero-thickness coupled strips: the solver within 0.3 %.
    w, s, b = 0.15 * MM, 0.15 * MM, 0.5 * MM
    line, _ = _solve(fd2d.coupled_stripline_box(w, s, b, ER, 0.0, mode))
    exact = _cohn_coupled(w, s, b, ER)[mode == "odd"]
    assert line.z0 == pytest.approx(exact, rel=3e-3)


def test_walls_far_enough():
    # Moving the box walls twice as far changes the results by less than 0.1 %
    # (microstrip: walls 40 h away; stripline: side wall 4 b beyond the strip edge).
    near, _ = _solve(fd2d.microstrip_box(0.2 * MM, 0.2 * MM, ER, T))
    far, _ = fd2d.solve_line(fd2d.microstrip_box(0.2 * MM, 0.2 * MM, ER, T, wall=80.0))
    assert near.z0 == pytest.approx(far.z0, rel=1e-3)
    assert near.eps_eff == pytest.approx(far.eps_eff, rel=1e-3)
    near, _ = _solve(fd2d.stripline_box(0.2 * MM, 0.5 * MM, ER))
    far, _ = fd2d.solve_line(fd2d.stripline_box(0.2 * MM, 0.5 * MM, ER, wall=8.0))
    assert near.z0 == pytest.approx(far.z0, rel=1e-4)


def test_nested_grids_converge():
    # Refining every cell shrinks the error by about 2^-1.2 (edge singularity): the
    # difference between successive grids falls by at least 2x, and the Richardson value
    # (order 1) lies within 0.3 % of Cohn's exact result already from the two coarser grids.
    w, b = 0.2 * MM, 0.5 * MM
    box = fd2d.stripline_box(w, b, ER)
    box = replace(box, grid=fd2d.Grid(2 * box.grid.h_min, box.grid.h_max, 1.2))  # coarser
    z = np.array([ln.z0 for ln in fd2d.nested(box, 3)])
    d = np.diff(z)
    assert np.all(d > 0) and d[1] < 0.5 * d[0]
    assert 2 * z[1] - z[0] == pytest.approx(_cohn_stripline(w, b, ER), rel=3e-3)


# --------------------------------------------------------------- the closed forms
def _cpwg_50_ohm_width(gap, h):
    return brentq(lambda w: float(cpwg(w, gap, h, ER, T)[0]) - 50.0, 0.05 * MM, 5 * MM,
                  xtol=1e-12)


def _coupled(fn, mode, *args):
    m = fn(*args)
    return m[f"z_{mode}"], m.get(f"eps_{mode}")


def _cases():
    """(label, closed form -> (z0, eps_eff or None), solver box, Z tol, eps tol, source)."""
    h = 0.2 * MM
    rows = []
    for u in (0.5, 1.0, 2.0, 4.0):
        rows.append((f"microstrip w/h = {u:g}, h = 0.2 mm", lambda u=u: microstrip(u * h, h, ER, T),
                     fd2d.microstrip_box(u * h, h, ER, T), 0.02, 0.02,
                     "Hammerstad & Jensen 1980"))
    rows.append(("microstrip w/h = 2, h = 1.6 mm", lambda: microstrip(3.2 * MM, 1.6 * MM, ER, T),
                 fd2d.microstrip_box(3.2 * MM, 1.6 * MM, ER, T), 0.02, 0.02,
                 "Hammerstad & Jensen 1980"))
    b, w = 0.5 * MM, 0.2 * MM
    rows.append(("stripline w = 0.2, b = 0.5 mm, centred",
                 lambda: (stripline(w, b, ER, T), None), fd2d.stripline_box(w, b, ER, T),
                 0.02, None, "Cohn 1954 x Wheeler 1978 ratio"))
    # offset: the parallel-combination approximation, known to be a few per cent off
    rows.append(("stripline w = 0.15, b = 0.5 mm, offset 0.1 mm",
                 lambda: (stripline(0.15 * MM, b, ER, T, 0.1 * MM), None),
                 fd2d.stripline_box(0.15 * MM, b, ER, T, 0.1 * MM), 0.03, None,
                 "Wadell 1991 parallel combination"))
    gap, hc = 0.2 * MM, 1.6 * MM
    wc = _cpwg_50_ohm_width(gap, hc)
    rows.append((f"CPWG w = {wc / MM:.3f}, gap 0.2, h = 1.6 mm", lambda: cpwg(wc, gap, hc, ER, T),
                 fd2d.cpwg_box(wc, gap, hc, ER, T), 0.02, 0.03,
                 "Ghione & Naldi 1984 + Gupta et al. t"))
    for mode in ("even", "odd"):
        rows.append((f"coupled microstrip 0.2/0.2/0.2 mm, t = 0, {mode}",
                     lambda mode=mode: _coupled(coupled_microstrip, mode, w, w, h, ER, 0.0),
                     fd2d.coupled_microstrip_box(w, w, h, ER, 0.0, mode), 0.02, 0.02,
                     "Kirschning & Jansen 1984"))
    # with copper: Jansen's first-order thickness correction, known to be rougher; the
    # solver finds the odd mode 2.7 % (Z) and 3.8 % (eps) off at t/h = 0.175
    for mode, tz, te in (("even", 0.03, 0.03), ("odd", 0.04, 0.05)):
        rows.append((f"coupled microstrip 0.2/0.2/0.2 mm, {mode}",
                     lambda mode=mode: _coupled(coupled_microstrip, mode, w, w, h, ER, T),
                     fd2d.coupled_microstrip_box(w, w, h, ER, T, mode), tz, te,
                     "Kirschning & Jansen 1984, Jansen 1978 t"))
    # coupled stripline with copper: both modes scaled by the single strip's thickness
    # ratio, documented as first-order; the odd mode is 4.6 % off at t/b = 0.07
    for mode, tz in (("even", 0.03), ("odd", 0.06)):
        rows.append((f"coupled stripline 0.15/0.15, b = 0.5 mm, {mode}",
                     lambda mode=mode: (_coupled(coupled_stripline, mode, 0.15 * MM, 0.15 * MM,
                                                 b, ER, T)[0], None),
                     fd2d.coupled_stripline_box(0.15 * MM, 0.15 * MM, b, ER, T, mode), tz, None,
                     "Cohn 1955 x Wheeler 1978 ratio"))
    return rows


CASES = _cases()


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_closed_form_against_field_solver(case):
    _, closed, box, tol_z, tol_e, _source = case  # source named in the case list above
    z_cf, e_cf = closed()
    line, info = _solve(box)
    assert info["z0_error"] < 5e-3  # the solver itself is converged to well under tol
    assert float(z_cf) == pytest.approx(line.z0, rel=tol_z)
    if tol_e is not None:
        assert float(e_cf) == pytest.approx(line.eps_eff, rel=tol_e)


def table() -> str:
    """The Markdown comparison table of docs/models.md (closed form vs field solver)."""
    out = ["| cross-section (er 4.3, t 35 um unless noted) | closed form | Z0 closed / solver "
           "[ohm] | diff | eps_eff closed / solver | diff | tol Z / eps |",
           "|---|---|---|---|---|---|---|"]
    for label, closed, box, tol_z, tol_e, source in CASES:
        z_cf, e_cf = closed()
        line, _ = _solve(box)
        row = (f"| {label} | {source} | {float(z_cf):.2f} / {line.z0:.2f} | "
               f"{100 * (float(z_cf) / line.z0 - 1):+.1f} % | ")
        if e_cf is None:
            row += f"— / {line.eps_eff:.3f} | | {100 * tol_z:.0f} % / — |"
        else:
            row += (f"{float(e_cf):.3f} / {line.eps_eff:.3f} | "
                    f"{100 * (float(e_cf) / line.eps_eff - 1):+.1f} % | "
                    f"{100 * tol_z:.0f} / {100 * tol_e:.0f} % |")
        out.append(row)
    return "\n".join(out)


if __name__ == "__main__":
    print(table())
