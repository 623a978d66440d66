r"""PCB line cross-sections for the field solver, and width refinement by field solve.

One :class:`Section` describes every line this package models: a strip (or an
edge-coupled pair) of copper on top of a dielectric of height ``h`` over the reference
plane; above it air (microstrip), a solder-mask coating (microstrip with mask), a
dielectric layer of height ``h_above`` and then air (embedded microstrip), or that layer
up to a second plane (stripline, symmetric or not, with its own Dk); optional coplanar
ground copper at ``gap`` beside the strips (grounded coplanar line). Heights are measured
from the plane to the strip's bottom face (``h``) and from that face to the upper plane
or the top of the cover (``h_above``), so the copper of thickness ``t`` is inside the
upper dielectric, as a prepreg fills around the traces of a pressed board.

:func:`solve_section` returns the same keys as the closed forms: ``z0``, ``eps_eff`` for a
single line; ``z_even``, ``z_odd``, ``z_diff = 2 z_odd``, ``z_common = z_even / 2``,
``eps_even``, ``eps_odd`` for a pair (per-strip modes with a mirror wall, even, or a
grounded wall, odd, on the symmetry plane: S. B. Cohn, IRE T-MTT 3(5), 1955).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from stackopt.physics.fieldsolve import Box, Capacitance, Grading, solve_box

__all__ = ["DEFAULT_RESOLUTION", "Section", "field_width", "solve_section"]

#: Cells across the smallest feature at a conductor edge, at resolution 1 (base grid).
DEFAULT_RESOLUTION = 1.0
_EDGE_CELLS = 12.0
_GROWTH = 1.1
_NEAR = 2.0
_FAR_GROWTH = 1.3
#: Open cross-sections: lid and side wall this many substrate heights away.
_FAR_OPEN = 30.0
#: Closed (two planes): side wall this many plane spacings beyond the last copper.
_FAR_CLOSED = 5.0
#: Open cross-sections: largest cell, in substrate heights.
_COARSE_OPEN = 4.0


@dataclass(frozen=True)
class Section:
    """A line cross-section [m, -]; see the module docstring for the conventions.

    ``s`` set: an edge-coupled pair of two strips of width ``w``, edge-to-edge ``s``.
    ``gap`` set: coplanar ground copper from ``gap`` beyond the outer strip edge(s).
    ``h_above`` with ``top_plane``: stripline; without: embedded microstrip.
    ``mask_t > 0``: a conformal solder mask of that thickness and ``mask_er`` over an
    open (outer-layer) line.
    """

    w: float
    h: float
    er: float
    t: float = 0.0
    h_above: float | None = None
    er_above: float | None = None
    top_plane: bool = False
    s: float | None = None
    gap: float | None = None
    mask_t: float = 0.0
    mask_er: float = 3.5

    def __post_init__(self) -> None:
        bad = [k for k in ("w", "h", "er") if not getattr(self, k) > 0]
        if self.top_plane and (self.h_above is None or self.h_above <= self.t):
            bad.append("h_above")
        if self.t < 0 or (self.s is not None and self.s <= 0) or (
                self.gap is not None and self.gap <= 0):
            bad.append("t/s/gap")
        if bad:
            raise ValueError(f"section has no valid geometry ({', '.join(bad)}): {self}")

    @property
    def pair(self) -> bool:
        """True for an edge-coupled pair."""
        return self.s is not None

    def _feature(self) -> float:
        sizes = [self.w, self.h]
        if self.s is not None:
            sizes.append(self.s)
        if self.gap is not None:
            sizes.append(self.gap)
        if self.h_above is not None:
            sizes.append(self.h_above - self.t)
        return min(sizes)

    def box(self, mode: str = "even", resolution: float = DEFAULT_RESOLUTION) -> Box:
        """The solver box: right half of a single line, or one strip of a pair beside the
        symmetry plane (``mode`` even: mirror wall, odd: grounded wall)."""
        x0 = 0.0 if self.s is None else self.s / 2
        x1 = x0 + (self.w / 2 if self.s is None else self.w)
        h, t = self.h, self.t
        ytop = h + (self.h_above or 0.0)
        closed = self.top_plane
        span = (ytop if closed else h)
        far = _FAR_CLOSED * ytop if closed else _FAR_OPEN * max(h, ytop)
        x_max = x1 + (self.gap or 0.0) + far
        y_max = ytop if closed else max(ytop, h + t) + _FAR_OPEN * h
        cond = [(x0, x1, h, h + t, 1.0)]
        if self.gap is not None:
            cond.append((x1 + self.gap, x_max, h, h + t, 0.0))
        diel = [(0.0, x_max, 0.0, h, self.er)]
        if self.h_above is not None:
            diel.append((0.0, x_max, h, ytop, self.er_above or self.er))
        if self.mask_t > 0 and not closed:
            m = self.mask_t
            base = max(ytop, h)
            diel.append((0.0, x_max, base, base + m, self.mask_er))
            diel += [(c[0] - m, c[1] + m, base, max(c[3], base) + m, self.mask_er)
                     for c in cond]
        fine = self._feature() / (_EDGE_CELLS * resolution)
        coarse = (span / 2.0 if closed else _COARSE_OPEN * h) / resolution
        grading = Grading(fine=fine, coarse=max(coarse, fine), growth=_GROWTH,
                          far=_NEAR * self._feature() / resolution, far_growth=_FAR_GROWTH)
        return Box(x_max=x_max, y_max=y_max, conductors=tuple(cond),
                   dielectrics=tuple(diel), grading=grading,
                   left="ground" if (self.s is not None and mode == "odd") else "mirror",
                   copies=1 if self.s is not None else 2)


def solve_section(sec: Section, resolution: float = DEFAULT_RESOLUTION,
                  extrapolate: bool = True, level: int = 0) -> dict[str, float]:
    r"""Field-solve one cross-section.

    Parameters
    ----------
    sec : Section
        The geometry [m] and permittivities [-].
    resolution : float
        Grid density relative to the default (2 halves every cell size).
    extrapolate : bool
        Richardson-extrapolate from the base grid and the grid with every cell halved
        (default); False solves the base grid only.
    level : int
        Halve every cell of the base grid this many times first (convergence studies).

    Returns
    -------
    dict
        Single line: ``z0`` [ohm], ``eps_eff`` [-]. Pair: ``z_even``, ``z_odd``,
        ``z_diff``, ``z_common`` [ohm], ``eps_even``, ``eps_odd`` [-]. Always ``error``:
        the largest relative change of an impedance from the finer grid to the
        extrapolated value (an error estimate), and ``unknowns``.
    """
    if not sec.pair:
        r = solve_box(sec.box("even", resolution), extrapolate=extrapolate, level=level)
        return {"z0": r.z0, "eps_eff": r.eps_eff, "error": r.error,
                "unknowns": float(r.unknowns)}
    ev: Capacitance = solve_box(sec.box("even", resolution), extrapolate=extrapolate, level=level)
    od: Capacitance = solve_box(sec.box("odd", resolution), extrapolate=extrapolate, level=level)
    return {"z_even": ev.z0, "z_odd": od.z0, "z_diff": 2.0 * od.z0,
            "z_common": ev.z0 / 2.0, "eps_even": ev.eps_eff, "eps_odd": od.eps_eff,
            "error": max(ev.error, od.error), "unknowns": float(ev.unknowns + od.unknowns)}


def _z(sec: Section, resolution: float) -> float:
    out = solve_section(sec, resolution)
    return out["z_diff"] if sec.pair else out["z0"]


def field_width(target: float, sec: Section, *, resolution: float = DEFAULT_RESOLUTION,
                rtol: float = 1e-3, iterations: int = 8, z_start: float | None = None
                ) -> tuple[float, float]:
    r"""Width [m] at which the field solver gives ``target`` [ohm] (:math:`Z_0`, or
    :math:`Z_{\mathrm{diff}}` for a pair), starting from ``sec.w`` (e.g. the closed
    form's width).

    Secant iterations on :math:`\ln Z(\ln w)`; the first step assumes
    :math:`Z \propto w^{-1/2}` (a mid-range slope of every line here). Stops when
    :math:`|Z/Z_t - 1| \le` ``rtol``. Returns ``(width, impedance at that width)``; NaN
    width if it does not converge. ``z_start``: the impedance at ``sec.w`` where the
    caller has solved it already (at ``resolution``); it is not solved again.
    """
    lw0, lz0 = np.log(sec.w), np.log(_z(sec, resolution) if z_start is None else z_start)
    lt = np.log(target)
    if abs(lz0 - lt) <= rtol:
        return sec.w, float(np.exp(lz0))
    lw1 = lw0 - 2.0 * (lt - lz0)
    for _ in range(iterations):
        lz1 = np.log(_z(replace(sec, w=float(np.exp(lw1))), resolution))
        if abs(lz1 - lt) <= rtol:
            return float(np.exp(lw1)), float(np.exp(lz1))
        slope = (lz1 - lz0) / (lw1 - lw0) if lw1 != lw0 else -0.5
        slope = min(slope, -0.05)  # Z falls with w; guard a flat secant
        lw0, lz0, lw1 = lw1, lz1, lw1 + (lt - lz1) / slope
    return float("nan"), float(np.exp(lz1))
