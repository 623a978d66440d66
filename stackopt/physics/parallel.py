r"""Several conductors at once: parallel ground vias, a via pair in a cavity, plane pairs.

Vectorized like :mod:`stackopt.physics.inductance`: SI floats or arrays in, arrays out,
broadcast over any leading (batch) shape.
"""

from __future__ import annotations

import operator

import numpy as np
from numpy.typing import ArrayLike, NDArray

from stackopt.physics.constants import MU0
from stackopt.physics.inductance import (
    ViaModel,
    check_via_model,
    ground_via_inductance,
    mutual_partial_inductance,
)

__all__ = [
    "via_mutual_inductance",
    "parallel_via_inductance",
    "row_positions",
    "via_pair_cavity",
    "plane_sheet_inductance",
]

_F = NDArray[np.float64]


def via_mutual_inductance(h: ArrayLike, s: ArrayLike, d: ArrayLike,
                          model: ViaModel = "goldfarb-pucel") -> _F:
    r"""Mutual inductance of two parallel ground vias of depth ``h`` at spacing ``s``.

    .. math::

        M = L_{via}(h, d)\, k(s), \qquad
        k = rac{M_{fil}(\ell, s)}{M_{fil}(\ell, r)},\quad
        \ell = 2h 	ext{ (image model)},\ h 	ext{ (others)}

    :math:`M_{fil}` is the filament mutual inductance
    (:func:`~stackopt.physics.inductance.mutual_partial_inductance`) and
    :math:`M_{fil}(\ell, r)` the barrel's own partial self-inductance, so ``k`` is the
    coupling coefficient of the partial-inductance picture. For the ``rosa`` model this
    is exactly :math:`M_{fil}(h, s)`; for ``image`` it is the image-consistent
    :math:`	frac12 M_{fil}(2h, s)` (each via with its image). The two fitted or rough
    models (``goldfarb-pucel``, ``johnson``) have no mutual term of their own: their
    single-via value is scaled by the same coupling coefficient. Using the bare
    :math:`M_{fil}(h, s)` with them instead is not consistent — for short vias
    (``h`` well below ``d``) Goldfarb–Pucel is about half the filament self term, and a
    row of such vias at a pitch near one drill gives a matrix that is not positive
    definite (e.g. 3 vias, h = 0.05 mm, d = 0.3 mm, pitch 0.35 mm: a negative
    "effective inductance").

    Parameters
    ----------
    h : array_like
        Via depth [m], > 0.
    s : array_like
        Centre spacing [m], ``s >= d`` (barrels not overlapping).
    d : array_like
        Drill / barrel outer diameter [m], > 0.
    model : {"goldfarb-pucel", "johnson", "rosa", "image"}
        The single-via model (:data:`~stackopt.physics.inductance.VIA_MODELS`).

    Returns
    -------
    ndarray
        Mutual inductance [H]; equal to the single-via inductance at ``s = d/2``.

    References
    ----------
    .. [1] E. B. Rosa, "The self and mutual inductances of linear conductors," Bulletin
       of the Bureau of Standards, vol. 4, no. 2, pp. 301–344, 1908.
    .. [2] C. R. Paul, *Inductance: Loop and Partial*, Wiley, 2010 (partial inductance,
       images).

    """
    model = check_via_model(model)
    h = np.asarray(h, dtype=float)
    ell = 2.0 * h if model == "image" else h
    coupling = (mutual_partial_inductance(ell, s)
                / mutual_partial_inductance(ell, 0.5 * np.asarray(d, dtype=float)))
    return ground_via_inductance(h, d, model) * coupling


def parallel_via_inductance(h: ArrayLike, d: ArrayLike, xy: ArrayLike,
                            model: ViaModel = "goldfarb-pucel") -> _F:
    r"""Effective inductance of N equal ground vias in parallel (one ground connection).

    .. math::

        L_{eff} = \frac{1}{\mathbf 1^\mathsf{T} \mathbf L^{-1} \mathbf 1},\qquad
        L_{ii} = L_{via}(h, d),\quad L_{ij} = M(h, s_{ij}, d)

    The N×N partial-inductance matrix has the chosen model's single-via inductance on
    the diagonal (:func:`~stackopt.physics.inductance.ground_via_inductance`) and the
    mutual inductance at each centre spacing off it (:func:`via_mutual_inductance`: the
    model's own value times the partial-inductance coupling coefficient, which keeps the
    matrix positive definite; the image model uses its image-consistent mutual). All
    vias share one voltage, so the currents are :math:`\mathbf L^{-1}\mathbf 1\,V/(j\omega)`
    and their sum gives :math:`L_{eff}`. Vias near the middle of a group carry less
    current than those at its edge, so the common shortcut :math:`(L + (N-1)M)/N` is
    exact only for ``N = 2`` (by symmetry); for four in a row with ``M`` the neighbour
    mutual it overestimates.

    Parameters
    ----------
    h : array_like
        Via depth [m], > 0; broadcasts against the batch shape ``...`` of ``xy``.
    d : array_like
        Drill / barrel outer diameter [m], > 0; broadcasts likewise.
    xy : array_like, shape (..., N, 2)
        Via centre coordinates [m] (see :func:`row_positions`). Centres should be at
        least a drill apart; coincident vias make the matrix singular (``nan``/``inf``).
    model : {"goldfarb-pucel", "johnson", "rosa", "image"}
        The single-via model for the diagonal.

    Returns
    -------
    ndarray, shape (...)
        Effective inductance [H]; for a positive-definite matrix with positive mutual
        terms it lies between :math:`L/N` and :math:`L`.

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
    # The diagonal spacing is a placeholder (replaced by the self term below).
    s = np.where(eye, 1.0, np.hypot(diff[..., 0], diff[..., 1]))
    hh = np.asarray(h, dtype=float)[..., None, None]
    dd = np.asarray(d, dtype=float)[..., None, None]
    lmat = np.where(eye, ground_via_inductance(hh, dd, model),
                    via_mutual_inductance(hh, s, dd, model))
    ones = np.ones(lmat.shape[:-1] + (1,))
    currents = np.linalg.solve(lmat, ones)[..., 0]
    return 1.0 / currents.sum(axis=-1)


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
