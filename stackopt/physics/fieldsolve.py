r"""A 2-D quasi-static field solver for TEM lines: cell-centred finite volumes.

Solves Laplace's equation :math:`\nabla\cdot(\varepsilon_r\nabla\varphi) = 0` on a
rectangular cross-section ``[0, x_max] x [0, y_max]`` (the bottom wall is the reference
plane, the top wall a second plane or a far grounded lid) and returns the capacitance per
unit length of the driven conductors from Gauss's law,

.. math::

    C = \frac{Q}{V} = \frac{\varepsilon_0}{V}\oint \varepsilon_r\,
        \frac{\partial\varphi}{\partial n}\,dl,

once with the dielectrics and once with every permittivity set to 1, so that (TEM)

.. math::

    Z_0 = \frac{1}{c_0\sqrt{C\,C_{air}}},\qquad \varepsilon_{eff} = \frac{C}{C_{air}}

(D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, sec. 3.8).

Discretisation: the unknowns are the potentials at the centres of the cells of a graded
tensor grid; each cell has one permittivity; the flux through a face between two cells
uses the series (harmonic) combination of the two half cells, so dielectric interfaces
are exact for layered media. Thick conductors are cells held at their potential; a
zero-thickness strip is a run of horizontal faces held at its potential (the cells on
both sides see it at half a cell's distance). The charge is the sum of the fluxes into
the driven conductor's faces. The grid is graded geometrically away from every conductor
edge, where the field is singular; two nested grids (every cell halved) give a Richardson
extrapolation, and their difference is the error estimate.

Limits: quasi-static (no dispersion, no loss), perfect conductors, rectangles, and a
vertical symmetry plane at ``x = 0`` (mirror wall for a single line or an even mode,
grounded wall for an odd mode). Every solve is one sparse LU factorisation
(``scipy.sparse.linalg.splu``); cross-sections are solved one at a time (a field solve is
not a batch kernel: use it on a handful of picks, the closed forms for the search).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from stackopt.physics.constants import C0, EPS0

__all__ = ["ORDER_THICK", "ORDER_THIN", "Box", "Capacitance", "Grading", "axis", "capacitance",
           "solve_box"]


@dataclass(frozen=True)
class Grading:
    """Grid controls [m]: spacing at conductor edges, growth ratio away from them, cap."""

    fine: float
    coarse: float
    growth: float = 1.1
    far: float = np.inf
    far_growth: float = 1.3


@dataclass(frozen=True)
class Box:
    """One cross-section to solve, in the half-plane right of the symmetry wall ``x = 0``.

    ``conductors``: ``(x0, x1, y0, y1, volts)``; ``y0 == y1`` is a zero-thickness strip;
    volts 1 is driven, 0 a grounded conductor (coplanar ground). ``dielectrics``:
    ``(x0, x1, y0, y1, er)``, later entries over earlier ones; the rest is air.
    ``left``: ``"mirror"`` (zero normal field) or ``"ground"`` at ``x = 0``; the far side
    wall is a mirror; bottom and top walls are grounded. ``copies`` multiplies the
    charge (2 for a single line solved on its right half).
    """

    x_max: float
    y_max: float
    conductors: tuple[tuple[float, float, float, float, float], ...]
    dielectrics: tuple[tuple[float, float, float, float, float], ...]
    grading: Grading
    left: str = "mirror"
    copies: int = 2


@dataclass(frozen=True)
class Capacitance:
    """Per-unit-length result [F/m]; ``error`` the relative change of :math:`Z_0` between
    the extrapolated value and the finer grid (an error estimate)."""

    c: float
    c_air: float
    error: float = 0.0
    unknowns: int = 0
    z0: float = field(init=False)
    eps_eff: float = field(init=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "z0", 1.0 / (C0 * np.sqrt(self.c * self.c_air)))
        object.__setattr__(self, "eps_eff", self.c / self.c_air)


def axis(keys, edges, grading: Grading) -> np.ndarray:
    r"""Grid lines through every key coordinate, graded away from the ``edges``.

    The local cell size is :math:`\min(h_c,\; h_f + (g-1)\,d)` with :math:`d` the distance
    to the nearest edge (a geometric progression of ratio :math:`g`); each interval
    between keys gets :math:`\lceil\int dx/h(x)\rceil` cells placed at equal steps of that
    integral.
    """
    keys = np.unique(np.asarray(keys, float))
    edges = np.asarray(edges, float)
    hf, hc, g = grading.fine, grading.coarse, grading.growth - 1.0
    g2, d0 = grading.far_growth - grading.growth, grading.far
    parts = [keys[:1]]
    for a, b in zip(keys[:-1], keys[1:], strict=True):
        u = np.linspace(0.0, 1.0, 65) ** 3  # dense near both ends of the interval
        s = np.unique(np.concatenate([a + (b - a) * u, b - (b - a) * u]))
        d = (np.min(np.abs(s[:, None] - edges[None, :]), axis=1) if edges.size
             else np.full(s.shape, 1e30))  # no edge: the coarse cap rules
        inv = 1.0 / np.minimum(hc, hf + g * d + g2 * np.maximum(d - d0, 0.0))
        cum = np.concatenate([[0.0], np.cumsum(0.5 * (inv[1:] + inv[:-1]) * np.diff(s))])
        n = max(1, int(np.ceil(cum[-1] - 1e-9)))
        parts.append(np.interp(np.linspace(0.0, cum[-1], n + 1)[1:], cum, s))
    out = np.concatenate(parts)
    out[-1] = keys[-1]
    return out


def _grid(box: Box) -> tuple[np.ndarray, np.ndarray]:
    cs, ds = box.conductors, box.dielectrics
    xk = [0.0, box.x_max, *(v for r in cs + ds for v in r[:2])]
    yk = [0.0, box.y_max, *(v for r in cs + ds for v in r[2:4])]
    xk = [v for v in xk if 0.0 <= v <= box.x_max]
    xe = [v for r in cs for v in r[:2] if 0.0 < v < box.x_max]
    ye = [v for r in cs for v in r[2:4] if 0.0 < v < box.y_max]
    return axis(xk, xe, box.grading), axis(yk, ye, box.grading)


def _halve(x: np.ndarray) -> np.ndarray:
    return np.sort(np.concatenate([x, 0.5 * (x[1:] + x[:-1])]))


def capacitance(box: Box, x: np.ndarray, y: np.ndarray, air: bool = False
                ) -> tuple[float, int]:
    """Capacitance per unit length [F/m] of the driven conductors on grid lines x, y.

    Returns ``(C, unknowns)``; ``air=True`` sets every permittivity to 1.
    """
    dx, dy = np.diff(x), np.diff(y)
    nx, ny = dx.size, dy.size
    xc, yc = 0.5 * (x[1:] + x[:-1]), 0.5 * (y[1:] + y[:-1])
    eps = np.ones((nx, ny))
    if not air:
        for x0, x1, y0, y1, er in box.dielectrics:
            eps[np.ix_((xc > x0) & (xc < x1), (yc > y0) & (yc < y1))] = er
    fixed = np.zeros((nx, ny), bool)
    volts = np.zeros((nx, ny))
    strip = np.zeros((nx, ny - 1), bool)  # horizontal face between (i, j) and (i, j+1)
    strip_v = np.zeros((nx, ny - 1))
    tol = 1e-9 * box.y_max
    for x0, x1, y0, y1, cv in box.conductors:
        inx = (xc > x0) & (xc < x1)
        if y1 - y0 > tol:
            cells = np.ix_(inx, (yc > y0) & (yc < y1))
            fixed[cells], volts[cells] = True, cv
        else:
            j = int(np.argmin(np.abs(y[1:-1] - y0)))
            strip[inx, j], strip_v[inx, j] = True, cv
    idx = np.full((nx, ny), -1)
    free = ~fixed
    n = int(free.sum())
    idx[free] = np.arange(n)

    half_x, half_y = dx[:, None] / (2.0 * eps), dy[None, :] / (2.0 * eps)  # d / (2 eps)
    links: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []  # unknown-unknown
    bound: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []  # unknown-fixed (p, a, V)

    def pair(p_free, q_free, p_idx, q_idx, a, p_dir, q_dir, p_v, q_v, cut=None):
        both = p_free & q_free if cut is None else p_free & q_free & ~cut
        links.append((p_idx[both], q_idx[both], a[both]))
        for own, other, own_idx, a_own, v in ((p_free, q_free, p_idx, p_dir, q_v),
                                              (q_free, p_free, q_idx, q_dir, p_v)):
            m = own & ~other if cut is None else own & (~other | cut)
            bound.append((own_idx[m], a_own[m], v[m]))

    # faces between (i, j) and (i+1, j)
    ax = dy[None, :] / (half_x[:-1] + half_x[1:])
    pair(free[:-1], free[1:], idx[:-1], idx[1:], ax, dy[None, :] / half_x[:-1],
         dy[None, :] / half_x[1:], volts[:-1], volts[1:])
    # faces between (i, j) and (i, j+1); a strip face cuts the link
    ay = dx[:, None] / (half_y[:, :-1] + half_y[:, 1:])
    pv = np.where(strip, strip_v, volts[:, :-1])  # a strip face looks like a conductor
    qv = np.where(strip, strip_v, volts[:, 1:])  # cell to both of its neighbours
    pair(free[:, :-1], free[:, 1:], idx[:, :-1], idx[:, 1:], ay,
         dx[:, None] / half_y[:, :-1], dx[:, None] / half_y[:, 1:], pv, qv, cut=strip)
    # grounded bottom and top walls; the left wall if grounded (odd mode)
    zero = np.zeros(nx)
    for j in (0, ny - 1):
        row = free[:, j]
        bound.append((idx[row, j], (dx / half_y[:, j])[row], zero[row]))
    if box.left == "ground":
        col = free[0, :]
        bound.append((idx[0, col], (dy / half_x[0, :])[col], np.zeros(ny)[col]))

    p = np.concatenate([b[0] for b in bound])
    a = np.concatenate([b[1] for b in bound])
    v = np.concatenate([b[2] for b in bound])
    lp = np.concatenate([lk[0] for lk in links])
    lq = np.concatenate([lk[1] for lk in links])
    la = np.concatenate([lk[2] for lk in links])
    diag = np.bincount(lp, la, n) + np.bincount(lq, la, n) + np.bincount(p, a, n)
    mat = sp.csc_matrix((np.concatenate([diag, -la, -la]),
                         (np.concatenate([np.arange(n), lp, lq]),
                          np.concatenate([np.arange(n), lq, lp]))), shape=(n, n))
    rhs = np.bincount(p, a * v, n)
    lu = splu(mat, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
              options={"SymmetricMode": True})
    phi = lu.solve(rhs)
    driven = v == 1.0
    charge = np.sum(a[driven] * (1.0 - phi[p[driven]]))
    return box.copies * EPS0 * charge, n


def _homogeneous(box: Box) -> float | None:
    """The common permittivity if the dielectrics fill the whole box, else None."""
    ers = {d[4] for d in box.dielectrics}
    full = any(d[0] <= 0 and d[1] >= box.x_max and d[2] <= 0 and d[3] >= box.y_max
               for d in box.dielectrics)
    return ers.pop() if full and len(ers) == 1 else None


#: Observed convergence order on nested grids (docs/performance.md): a zero-thickness
#: strip's edge (field ~ r^-1/2) converges at about 1.1-1.2, a rectangular conductor's
#: corner (~ r^-1/3) at about 1.3.
ORDER_THIN, ORDER_THICK = 1.1, 1.3


def solve_box(box: Box, order: float | None = None, extrapolate: bool = True,
              level: int = 0) -> Capacitance:
    r"""Capacitances of ``box`` on its grid and on the nested grid with every cell halved,
    Richardson-extrapolated with the given convergence order (C and C_air separately;
    default :data:`ORDER_THIN` if any conductor has zero thickness, else
    :data:`ORDER_THICK`). ``level`` halves every cell of the base grid that many times
    first (for convergence studies).

    A box filled by one dielectric needs no air solve: :math:`C_{air} = C/\varepsilon_r`.
    ``extrapolate=False`` solves the base grid only.
    """
    er = _homogeneous(box)
    x, y = _grid(box)
    for _ in range(level):
        x, y = _halve(x), _halve(y)
    if order is None:
        thin = any(c[3] - c[2] <= 1e-9 * box.y_max for c in box.conductors)
        order = ORDER_THIN if thin else ORDER_THICK

    def both(xx, yy):
        c, n = capacitance(box, xx, yy)
        ca = c / er if er is not None else capacitance(box, xx, yy, air=True)[0]
        return c, ca, n

    c1, a1, n1 = both(x, y)
    if not extrapolate:
        return Capacitance(c1, a1, unknowns=n1)
    c2, a2, n2 = both(_halve(x), _halve(y))
    r = 1.0 / (2.0**order - 1.0)
    fine = Capacitance(c2, a2)
    ext = (c2 + r * (c2 - c1), a2 + r * (a2 - a1))
    z_ext = 1.0 / (C0 * np.sqrt(ext[0] * ext[1]))
    return Capacitance(*ext, error=abs(z_ext / fine.z0 - 1.0), unknowns=n1 + n2)
