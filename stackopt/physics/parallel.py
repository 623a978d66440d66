r"""Several conductors at once: parallel ground vias, a via pair in a cavity, plane pairs.

Vectorized like :mod:`stackopt.physics.inductance`: SI floats or arrays in, arrays out,
broadcast over any leading (batch) shape.
"""

from __future__ import annotations

import operator
from typing import Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from stackopt.physics.arrays import FloatArray
from stackopt.physics.constants import MU0
from stackopt.physics.inductance import (
    DEFAULT_VIA_MODEL,
    ViaModel,
    check_via_model,
    ground_via_inductance,
    mutual_partial_inductance,
)

__all__ = [
    "GUARD_FLOOR",
    "via_mutual_inductance",
    "guard_coupling",
    "parallel_via_inductance",
    "row_positions",
    "via_pair_cavity",
    "plane_sheet_inductance",
]

_F = FloatArray


#: Floor on the smallest eigenvalue of the normalised inductance matrix
#: :math:`D^{-1/2} L D^{-1/2} = I + K` kept by :func:`guard_coupling` (0.05: the matrix
#: stays positive definite with a condition number below about 40 per unit of spread;
#: a numerical choice, no source).
GUARD_FLOOR = 0.05


def via_mutual_inductance(h: ArrayLike, s: ArrayLike) -> _F:
    r"""Mutual inductance of two vertical vias of depth ``h`` ending on the same plane.

    .. math::

        M = \tfrac12\, M_{fil}(2h, s)

    Each via and its image in the plane form one conductor of length ``2h`` carrying the
    same current (the image of a vertical current flows the same way), so the quasi-
    static mutual of the real pair is half the filament mutual
    (:func:`~stackopt.physics.inductance.mutual_partial_inductance`) of the doubled
    length. This is geometry, not a via model: the models differ in their self term only,
    and every model uses this mutual.

    Parameters
    ----------
    h : array_like
        Depth of both vias from the top to the plane [m], > 0.
    s : array_like
        Centre spacing [m], > 0 (for round barrels of diameter ``d`` the filament form
        holds to about :math:`(d/2s)^2` relative error).

    Returns
    -------
    ndarray
        Mutual inductance [H], positive, falling with ``s``.

    Notes
    -----
    Assumes an infinite, perfectly conducting plane and uniform current along the vias
    (quasi-static, ``h`` well below a tenth of a wavelength). Check values (drill 0.3 mm,
    by direct quadrature): h 1.5 mm, s 3 mm → 140.1 pH; h 0.115 mm, s 3 mm → 0.881 pH.

    References
    ----------
    .. [1] C. R. Paul, *Inductance: Loop and Partial*, Hoboken, NJ: Wiley, 2010 (partial
       inductance, images in a ground plane).
    .. [2] F. W. Grover, *Inductance Calculations*, Van Nostrand, 1946 (mutual
       inductance of parallel filaments).

    """
    return 0.5 * mutual_partial_inductance(2.0 * np.asarray(h, dtype=float), s)


def guard_coupling(self_l: ArrayLike, mutual: ArrayLike, include: ArrayLike | None = None
                   ) -> tuple[_F, _F]:
    r"""Scale the mutual terms down only where the inductance matrix would fail.

    With :math:`D` the diagonal of self terms and :math:`K = D^{-1/2} M D^{-1/2}` the
    coupling coefficients, :math:`L = D^{1/2}(I + K)D^{1/2}` is positive definite iff
    :math:`\lambda_{min}(K) > -1`. A model whose self term is small next to the
    geometric (image) mutual — a fitted closed form for very short vias very close
    together — can break that. The guard uses

    .. math::

        M' = \alpha M,\qquad
        \alpha = \min\left(1,\ \frac{1 - f}{-\lambda_{min}(K)}\right)

    with :math:`f` = :data:`GUARD_FLOOR`: ``alpha`` is 1 (no change) wherever
    :math:`\lambda_{min}(I + K) \ge f`, and elsewhere it is just small enough to keep
    that floor; it is continuous in every input.

    Parameters
    ----------
    self_l : array_like, shape (..., N)
        Self terms [H], > 0.
    mutual : array_like, shape (..., N, N)
        Mutual terms [H], symmetric; the diagonal is ignored.
    include : array_like of bool, shape (..., N), optional
        Rows that take part in the test (e.g. one representative of terminals that share
        a via, whose rows are identical by construction); default all.

    Returns
    -------
    mutual : ndarray, shape (..., N, N)
        ``alpha * mutual`` with a zero diagonal [H].
    alpha : ndarray, shape (...)
        The factor applied; below 1 where the guard acted.

    """
    d = np.asarray(self_l, dtype=float)
    m = np.asarray(mutual, dtype=float)
    n = m.shape[-1]
    off = ~np.eye(n, dtype=bool)
    m = np.where(off, m, 0.0)
    root = np.sqrt(d)
    k = m / (root[..., :, None] * root[..., None, :])
    if include is not None:
        inc = np.asarray(include, dtype=bool)
        k = np.where(inc[..., :, None] & inc[..., None, :], k, 0.0)
    # Gershgorin: every eigenvalue of K is at least -max_i sum_j |K_ij|, so where that
    # bound keeps lambda_min(I + K) >= f the factor is exactly 1; the eigenvalues are
    # solved only for the other matrices (few: the guard rarely acts).
    need = np.abs(k).sum(axis=-1).max(axis=-1, initial=0.0) > 1.0 - GUARD_FLOOR
    lam = np.zeros(need.shape)
    if n > 1:
        lam[need] = np.linalg.eigvalsh(k[need])[..., 0]
    alpha = np.minimum(1.0, (1.0 - GUARD_FLOOR) / np.maximum(-lam, 1e-300))
    return alpha[..., None, None] * m, alpha


@overload
def parallel_via_inductance(h: ArrayLike, d: ArrayLike, xy: ArrayLike,
                            model: ViaModel = ..., *, with_guard: Literal[False] = ...
                            ) -> _F: ...
@overload
def parallel_via_inductance(h: ArrayLike, d: ArrayLike, xy: ArrayLike,
                            model: ViaModel = ..., *, with_guard: Literal[True]
                            ) -> tuple[_F, _F]: ...
def parallel_via_inductance(h: ArrayLike, d: ArrayLike, xy: ArrayLike,
                            model: ViaModel = DEFAULT_VIA_MODEL, *, with_guard: bool = False
                            ) -> _F | tuple[_F, _F]:
    r"""Effective inductance of N equal ground vias in parallel (one ground connection).

    .. math::

        L_{eff} = \frac{1}{\mathbf 1^\mathsf{T} \mathbf L^{-1} \mathbf 1},\qquad
        L_{ii} = L_{via}(h, d),\quad L_{ij} = \tfrac12 M_{fil}(2h, s_{ij})

    The N×N partial-inductance matrix has the chosen model's single-via inductance on
    the diagonal (:func:`~stackopt.physics.inductance.ground_via_inductance`) and the
    image-theory mutual at each centre spacing off it (:func:`via_mutual_inductance`,
    the same for every model), scaled down by :func:`guard_coupling` only where the
    matrix would otherwise not be positive definite. All vias share one voltage, so the
    currents are :math:`\mathbf L^{-1}\mathbf 1\,V/(j\omega)` and their sum gives
    :math:`L_{eff}`. Vias near the middle of a group carry less current than those at
    its edge, so the common shortcut :math:`(L + (N-1)M)/N` is exact only for ``N = 2``
    (by symmetry); for four in a row with ``M`` the neighbour mutual it overestimates.

    Parameters
    ----------
    h : array_like
        Via depth [m], > 0; broadcasts against the batch shape ``...`` of ``xy``.
    d : array_like
        Drill / barrel outer diameter [m], > 0; broadcasts likewise.
    xy : array_like, shape (..., N, 2)
        Via centre coordinates [m] (see :func:`row_positions`), at least a drill apart.
    model : str
        A key of :data:`stackopt.physics.inductance.VIA_MODELS`.
        The single-via model for the diagonal.
    with_guard : bool, default False
        Also return the guard factor ``alpha`` (shape ``...``; below 1 where it acted).

    Returns
    -------
    ndarray, shape (...)
        Effective inductance [H]; it lies between :math:`L/N` and :math:`L`.

    Raises
    ------
    ModelError
        For an unknown model name.
    ValueError
        If ``xy`` does not have shape ``(..., N, 2)`` with ``N >= 1``.

    References
    ----------
    .. [1] A. E. Ruehli, "Inductance calculations in a complex integrated circuit
       environment," IBM Journal of Research and Development, vol. 16, no. 5,
       pp. 470–481, 1972 (partial inductance).
    .. [2] C. R. Paul, *Inductance: Loop and Partial*, Wiley, 2010.

    """
    model = check_via_model(model)
    xy = np.asarray(xy, dtype=float)
    if xy.ndim < 2 or xy.shape[-1] != 2 or xy.shape[-2] < 1:
        raise ValueError(f"xy must have shape (..., N, 2) with N >= 1, got {xy.shape}")
    n = xy.shape[-2]
    diff = xy[..., :, None, :] - xy[..., None, :, :]
    eye = np.eye(n, dtype=bool)
    # The diagonal spacing is a placeholder (the guard zeroes the diagonal).
    s = np.where(eye, 1.0, np.hypot(diff[..., 0], diff[..., 1]))
    hh = np.asarray(h, dtype=float)
    lself = ground_via_inductance(hh, d, model)
    shape = np.broadcast_shapes(xy.shape[:-2], np.shape(lself))
    lself = np.broadcast_to(lself, shape)
    m, alpha = guard_coupling(np.broadcast_to(lself[..., None], shape + (n,)),
                              via_mutual_inductance(hh[..., None, None], s))
    lmat = m + lself[..., None, None] * eye
    ones = np.ones(lmat.shape[:-1] + (1,))
    currents = np.linalg.solve(lmat, ones)[..., 0]
    leff = 1.0 / currents.sum(axis=-1)
    return (leff, alpha) if with_guard else leff


def row_positions(n: int, pitch: ArrayLike) -> _F:
    r"""Centre coordinates of ``n`` vias in a straight row, centred on the origin.

    Parameters
    ----------
    n : int
        Number of vias, >= 1.
    pitch : array_like
        Centre-to-centre spacing [m]; any shape ``...``.

    Returns
    -------
    ndarray, shape (..., n, 2)
        ``x = (k - (n-1)/2) * pitch`` for ``k = 0..n-1``, ``y = 0`` [m].

    """
    n = operator.index(n)
    if n < 1:
        raise ValueError(f"n must be at least 1, got {n}")
    x = (np.arange(n) - 0.5 * (n - 1)) * np.asarray(pitch, dtype=float)[..., None]
    return np.stack([x, np.zeros_like(x)], axis=-1)


def via_pair_cavity(h: ArrayLike, s: ArrayLike, d: ArrayLike) -> _F:
    r"""Loop inductance of a signal via and its return via between two ideal planes.

    .. math::

        L = \frac{\mu_0 h}{\pi}\,\mathrm{acosh}\frac{s}{2r}

    Between two parallel perfect planes the field of two vertical round conductors is
    two-dimensional, so this is ``h`` times the per-length inductance of a two-wire line
    (exact, including proximity effect). Its large-``s`` limit is the thin-wire form
    :math:`(\mu_0 h/\pi)\ln(s/r)`.

    Parameters
    ----------
    h : array_like
        Plane-to-plane separation (via length in the cavity) [m], > 0.
    s : array_like
        Centre spacing of the two vias [m], ``s >= d``.
    d : array_like
        Barrel diameter of both vias [m], > 0.

    Returns
    -------
    ndarray
        Loop inductance [H]; ``nan`` where ``s < d`` (overlapping barrels).

    References
    ----------
    .. [1] S. Ramo, J. R. Whinnery and T. Van Duzer, *Fields and Waves in Communication
       Electronics*, 3rd ed., Wiley, 1994, two-wire line inductance per unit length
       :math:`(\mu/\pi)\,\mathrm{acosh}(D/2a)`.

    """
    h = np.asarray(h, dtype=float)
    ratio = np.asarray(s, dtype=float) / np.asarray(d, dtype=float)
    value = (MU0 / np.pi) * h * np.arccosh(np.maximum(ratio, 1.0))
    return np.where(ratio >= 1.0, value, np.nan)


def plane_sheet_inductance(h: ArrayLike) -> _F:
    r"""Sheet inductance of a pair of parallel planes, per square.

    .. math::

        L_\square = \mu_0 h

    About 32 pH per square per mil (25.4 um) of separation.

    Parameters
    ----------
    h : array_like
        Plane separation [m], > 0 (small compared with the plane size).

    Returns
    -------
    ndarray
        Inductance per square [H].

    References
    ----------
    .. [1] C. R. Paul, *Inductance: Loop and Partial*, Wiley, 2010 (parallel-plate
       inductance :math:`\mu_0 h\,l/w`).

    """
    return MU0 * np.asarray(h, dtype=float)
