r"""A small 2-D quasi-static field solver for TEM lines: finite volumes on the cross-section.

Test reference code, independent of :mod:`stackopt.physics` (it imports nothing from the
package). It solves Laplace's equation :math:`\nabla\cdot(\varepsilon\nabla\varphi) = 0`
on a rectangular, grounded box on a graded tensor grid, with conductors as fixed-potential
nodes, and takes the capacitance per unit length from the stored field energy

.. math::

    C = \frac{2W}{V^2} = \frac{1}{V^2}\int \varepsilon |\nabla\varphi|^2 \,dA,

once with the dielectrics and once with every permittivity set to 1, so that
:math:`Z_0 = 1/(c_0\sqrt{C C_{air}})` and :math:`\varepsilon_{eff} = C/C_{air}` (the
quasi-static TEM relations; e.g. D. M. Pozar, *Microwave Engineering*, 4th ed., 2012,
sec. 3.8). Coupled pairs use a symmetry plane: a mirror (Neumann) wall for the even mode,
a grounded (Dirichlet) wall for the odd mode (Cohn 1955).

Discretisation (see ``tests/reference/README.md``): nodes on a tensor grid whose lines
pass through every conductor edge and dielectric interface; permittivity is constant on
each cell, so each flux face between two nodes crosses at most two cells and its
coefficient is their length-weighted (arithmetic) mean, with no harmonic mean needed along
the flux because interfaces lie on grid lines. Spacing grows geometrically away from
conductor edges (where the field is singular). Two nested grids (every cell halved)
give a Richardson extrapolation.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from scipy.constants import c as C0
from scipy.constants import epsilon_0 as EPS0
from scipy.sparse.linalg import spsolve

__all__ = ["Box", "Grid", "Line", "Rect", "capacitance", "coupled_microstrip_box",
           "coupled_stripline_box", "cpwg_box", "graded_axis", "microstrip_box", "nested",
           "solve_line", "stripline_box"]


@dataclass(frozen=True)
class Rect:
    """Axis-aligned rectangle [m]; ``y0 == y1`` is a zero-thickness strip.

    As a conductor ``value`` is its potential [V]; as a dielectric, its relative
    permittivity.
    """

    x0: float
    x1: float
    y0: float
    y1: float
    value: float = 1.0


@dataclass(frozen=True)
class Grid:
    """Grid controls [m]: finest spacing at conductor edges, growth ratio, coarsest."""

    h_min: float
    h_max: float
    growth: float = 1.1


@dataclass(frozen=True)
class Box:
    """A cross-section: the box [0, x_max] x [0, y_max], grounded on its bottom and top
    walls; each side wall is grounded (``"ground"``) or a mirror plane (``"mirror"``, zero
    normal field). ``copies`` multiplies the result (2 when the box is half of a
    symmetric single line); ``grid`` is the coarser of the two nested grids.
    """

    x_max: float
    y_max: float
    conductors: tuple[Rect, ...]
    grid: Grid
    dielectrics: tuple[Rect, ...] = ()
    left: str = "mirror"
    right: str = "ground"
    copies: int = 1


@dataclass(frozen=True)
class Line:
    """Result per unit length: capacitances [F/m], impedance [ohm], eps_eff [-]."""

    c: float
    c_air: float
    z0: float = field(init=False)
    eps_eff: float = field(init=False)

    def __post_init__(self):
        object.__setattr__(self, "z0", 1.0 / (C0 * np.sqrt(self.c * self.c_air)))
        object.__setattr__(self, "eps_eff", self.c / self.c_air)


def graded_axis(keys, fine, grid: Grid) -> np.ndarray:
    """Grid coordinates through every key, fine near the ``fine`` coordinates.

    The target spacing is ``min(h_max, h_min + (growth - 1) * distance to the nearest
    fine key)``, i.e. a geometric progression of ratio ``growth`` away from each fine key;
    each interval between consecutive keys gets the whole number of cells closest to the
    integral of 1/spacing (at least one), equidistributed in that stretched coordinate.
    """
    keys = np.unique(np.asarray(keys, float))
    fine = np.asarray(fine, float)
    g = grid.growth - 1.0
    out = [keys[:1]]
    for a, b in zip(keys[:-1], keys[1:], strict=True):
        length = b - a
        near = np.geomspace(grid.h_min * 1e-3, length, 200)
        s = np.unique(np.concatenate([[0.0], near, length - near, np.linspace(0, length, 200)]))
        s = s[(s >= 0) & (s <= length)]
        dist = (np.min(np.abs((a + s)[:, None] - fine[None, :]), axis=1) if fine.size
                else np.full(s.shape, np.inf))
        spacing = np.minimum(grid.h_max, grid.h_min + g * dist)
        inv = 1.0 / spacing
        xi = np.concatenate([[0.0], np.cumsum(0.5 * (inv[1:] + inv[:-1]) * np.diff(s))])
        n = max(1, int(np.rint(xi[-1])))
        out.append(a + np.interp(np.linspace(0.0, xi[-1], n + 1)[1:], xi, s))
    return np.concatenate(out)


def _refine(x: np.ndarray) -> np.ndarray:
    """Insert the midpoint of every interval (nested grid, every cell halved)."""
    mid = 0.5 * (x[1:] + x[:-1])
    return np.sort(np.concatenate([x, mid]))


def _axes(box: Box, grid: Grid) -> tuple[np.ndarray, np.ndarray]:
    rects = box.conductors + box.dielectrics
    xk = [0.0, box.x_max] + [v for r in rects for v in (r.x0, r.x1)]
    yk = [0.0, box.y_max] + [v for r in rects for v in (r.y0, r.y1)]
    xf = [v for r in box.conductors for v in (r.x0, r.x1)]
    yf = [v for r in box.conductors for v in (r.y0, r.y1)]
    xk = [v for v in xk if 0.0 <= v <= box.x_max]
    # a conductor face on a wall or the mirror plane is no edge: no refinement there
    xf = [v for v in xf if 0.0 < v < box.x_max]
    yf = [v for v in yf if 0.0 < v < box.y_max]
    return graded_axis(xk, xf, grid), graded_axis(yk, yf, grid)


def capacitance(box: Box, x: np.ndarray, y: np.ndarray, air: bool = False
                ) -> tuple[float, int]:
    """Energy capacitance ``copies * 2W / V^2`` [F/m] on the grid ``x`` by ``y``.

    Conductors at potential 1 are driven, those at 0 (and the grounded walls) return the
    charge. ``air=True`` sets every permittivity to 1. Returns (C, number of unknowns).
    """
    nx, ny = len(x), len(y)
    dx, dy = np.diff(x), np.diff(y)
    xc, yc = 0.5 * (x[1:] + x[:-1]), 0.5 * (y[1:] + y[:-1])
    eps = np.ones((nx - 1, ny - 1))
    if not air:
        for d in box.dielectrics:
            inside = ((xc[:, None] > d.x0) & (xc[:, None] < d.x1)
                      & (yc[None, :] > d.y0) & (yc[None, :] < d.y1))
            eps = np.where(inside, d.value, eps)
    # Face coefficients: flux face between node (i, j) and (i+1, j) spans half of cell
    # (i, j-1) and half of cell (i, j); eps there is the length-weighted mean.
    ew = np.zeros((nx - 1, ny))
    ew[:, :-1] += eps * dy[None, :] / 2
    ew[:, 1:] += eps * dy[None, :] / 2
    ax = ew / dx[:, None]
    en = np.zeros((nx, ny - 1))
    en[:-1, :] += eps * dx[:, None] / 2
    en[1:, :] += eps * dx[:, None] / 2
    ay = en / dy[None, :]

    idx = np.arange(nx * ny).reshape(nx, ny)
    rows = np.concatenate([idx[:-1, :].ravel(), idx[:, :-1].ravel()])
    cols = np.concatenate([idx[1:, :].ravel(), idx[:, 1:].ravel()])
    vals = np.concatenate([ax.ravel(), ay.ravel()])
    off = sp.coo_matrix((vals, (rows, cols)), shape=(nx * ny, nx * ny))
    off = off + off.T
    k = (sp.diags(np.asarray(off.sum(axis=1)).ravel()) - off).tocsr()

    fixed = np.zeros((nx, ny), bool)
    phi = np.zeros((nx, ny))
    fixed[:, 0] = fixed[:, -1] = True
    fixed[0, :] = box.left == "ground"
    fixed[-1, :] = box.right == "ground"
    tol = 1e-9 * max(box.x_max, box.y_max)
    for r in box.conductors:
        on = ((x[:, None] >= r.x0 - tol) & (x[:, None] <= r.x1 + tol)
              & (y[None, :] >= r.y0 - tol) & (y[None, :] <= r.y1 + tol))
        fixed |= on
        phi = np.where(on, r.value, phi)
    f, u = fixed.ravel(), ~fixed.ravel()
    p = phi.ravel().copy()
    p[u] = spsolve(k[u][:, u].tocsc(), -(k[u][:, f] @ p[f]))
    phi = p.reshape(nx, ny)
    energy2 = np.sum(ax * np.diff(phi, axis=0) ** 2) + np.sum(ay * np.diff(phi, axis=1) ** 2)
    return box.copies * EPS0 * energy2, int(u.sum())


def solve_line(box: Box, order: float = 1.0, refine: bool = True) -> tuple[Line, dict]:
    """Line parameters of ``box``, Richardson-extrapolated over two nested grids.

    ``C_ext = C_fine + (C_fine - C_coarse) / (2**order - 1)`` for both C and C_air
    (``order`` is the observed convergence order, measured in the README). With
    ``refine=False`` only the coarse grid is solved and returned. The dict holds the
    coarse and fine results and the number of unknowns.
    """
    x, y = _axes(box, box.grid)
    c1, n1 = capacitance(box, x, y)
    a1, _ = capacitance(box, x, y, air=True)
    coarse = Line(c1, a1)
    if not refine:
        return coarse, {"coarse": coarse, "unknowns": n1}
    xf, yf = _refine(x), _refine(y)
    c2, n2 = capacitance(box, xf, yf)
    a2, _ = capacitance(box, xf, yf, air=True)
    r = 1.0 / (2.0**order - 1.0)
    fine = Line(c2, a2)
    ext = Line(c2 + (c2 - c1) * r, a2 + (a2 - a1) * r)
    # |ext - fine| bounds the remaining error in practice (README: it overestimates it)
    err = abs(ext.z0 / fine.z0 - 1.0)
    return ext, {"coarse": coarse, "fine": fine, "unknowns": (n1, n2), "z0_error": err}


def nested(box: Box, levels: int = 3) -> list[Line]:
    """Un-extrapolated results on ``levels`` nested grids, each halving every cell of the
    one before (for convergence studies: observed order, Richardson error)."""
    x, y = _axes(box, box.grid)
    out = []
    for _ in range(levels):
        out.append(Line(capacitance(box, x, y)[0], capacitance(box, x, y, air=True)[0]))
        x, y = _refine(x), _refine(y)
    return out


# ------------------------------------------------------------------ cross-sections
#: Finest spacing as a fraction of the smallest in-plane feature, and the growth ratio.
FINE, GROWTH = 1.0 / 80.0, 1.1


def _grid(feature: float, h_max: float) -> Grid:
    return Grid(h_min=FINE * feature, h_max=h_max, growth=GROWTH)


def _strip(x0, x1, y0, t, v=1.0) -> Rect:
    return Rect(x0, x1, y0, y0 + t, v)


def microstrip_box(w, h, er, t=0.0, wall=40.0) -> Box:
    """Half of a microstrip: strip of width w, thickness t on a substrate h over the
    bottom wall (the plane), air above; side wall and lid ``wall`` * h away."""
    x_max = w / 2 + wall * h
    return Box(x_max=x_max, y_max=(wall + 1) * h, conductors=(_strip(0.0, w / 2, h, t),),
               dielectrics=(Rect(0.0, x_max, 0.0, h, er),), copies=2,
               grid=_grid(min(w, h), 5 * h))


def stripline_box(w, b, er, t=0.0, offset=0.0, wall=4.0) -> Box:
    """Half of a stripline: strip centred ``offset`` above the midplane between the
    bottom and top walls (the planes, spacing b), homogeneous dielectric; side wall
    ``wall`` * b beyond the strip edge (the field decays as exp(-pi x / b))."""
    yc = b / 2 + offset
    x_max = w / 2 + wall * b
    return Box(x_max=x_max, y_max=b, conductors=(Rect(0.0, w / 2, yc - t / 2, yc + t / 2),),
               dielectrics=(Rect(0.0, x_max, 0.0, b, er),), copies=2,
               grid=_grid(min(w, b / 2 - abs(offset) - t / 2), b / 20))


def cpwg_box(w, gap, h, er, t=0.0, wall=40.0) -> Box:
    """Half of a conductor-backed CPW: strip w, coplanar grounds (potential 0) from
    w/2 + gap to the side wall ``wall`` * h away, substrate h over the plane."""
    x_max = w / 2 + gap + wall * h
    return Box(x_max=x_max, y_max=(wall + 1) * h,
               conductors=(_strip(0.0, w / 2, h, t), _strip(w / 2 + gap, x_max, h, t, 0.0)),
               dielectrics=(Rect(0.0, x_max, 0.0, h, er),), copies=2,
               grid=_grid(min(w, gap, h), 5 * h))


def _mode(mode: str) -> str:
    if mode not in ("even", "odd"):
        raise ValueError(f"mode must be 'even' or 'odd', not {mode!r}")
    return "mirror" if mode == "even" else "ground"


def coupled_microstrip_box(w, s, h, er, t=0.0, mode="even", wall=40.0) -> Box:
    """One strip of an edge-coupled microstrip pair beside the symmetry plane x = 0
    (mirror wall for the even mode, grounded for the odd mode); per-strip results."""
    x_max = s / 2 + w + wall * h
    return Box(x_max=x_max, y_max=(wall + 1) * h,
               conductors=(_strip(s / 2, s / 2 + w, h, t),),
               dielectrics=(Rect(0.0, x_max, 0.0, h, er),), left=_mode(mode),
               grid=_grid(min(w, s, h), 5 * h))


def coupled_stripline_box(w, s, b, er, t=0.0, mode="even", wall=4.0) -> Box:
    """One strip of an edge-coupled stripline pair (centred between the planes) beside
    the symmetry plane x = 0; per-strip results."""
    x_max = s / 2 + w + wall * b
    return Box(x_max=x_max, y_max=b,
               conductors=(Rect(s / 2, s / 2 + w, b / 2 - t / 2, b / 2 + t / 2),),
               dielectrics=(Rect(0.0, x_max, 0.0, b, er),), left=_mode(mode),
               grid=_grid(min(w, s, b / 2 - t / 2), b / 20))
