r"""Ground-via, wire and mutual partial inductance: vectorized closed forms.

Every function takes SI floats or arrays (metres, henries), broadcasts its arguments
against each other and returns an ndarray (0-d for scalar inputs). Non-physical sizes
(zero or negative) give ``nan`` or meaningless numbers rather than an exception: checking
user input is the job of the edges (:mod:`stackopt.units`, :mod:`stackopt.cli.options`).

The four single-via models disagree by a factor of 2–8 for the same via, mostly because
each assumes a different return path. :data:`VIA_MODELS` lists them; the default is
Goldfarb–Pucel, fitted to vias into a plane below for depths of about 0.1–0.63 mm.
Several vias in parallel, a via pair in a plane cavity and plane-pair sheet inductance
live in :mod:`stackopt.physics.parallel` (``parallel_via_inductance`` and
``row_positions`` are also reachable from here).

Symbols: ``h`` via depth (pad to plane) or conductor length, ``d`` drill (plated barrel
outer diameter), ``r = d/2``, ``s`` centre spacing; :math:`\mu_0/2\pi` = 0.2 nH/mm.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from numpy.typing import ArrayLike, NDArray

from stackopt.errors import ModelError, did_you_mean
from stackopt.physics.arrays import FloatArray
from stackopt.physics.constants import MU0_OVER_2PI
from stackopt.physics.tube import tube_self_inductance

__all__ = [
    "VIA_MODELS",
    "ViaModel",
    "DEFAULT_VIA_MODEL",
    "GOLDFARB_PUCEL_FIT_RANGE",
    "via_goldfarb_pucel",
    "via_johnson_graham",
    "partial_self_inductance",
    "mutual_partial_inductance",
    "via_rosa",
    "via_image",
    "ground_via_inductance",
    "goldfarb_pucel_in_range",
    "check_via_model",
]

#: A ground-via model name: a key of :data:`VIA_MODELS`.
ViaModel = str
#: The default ground-via model (the first of :data:`VIA_MODELS`).
DEFAULT_VIA_MODEL: ViaModel = "goldfarb-pucel"

#: Via depths [m] over which Goldfarb & Pucel (1991) fitted their formula to data.
GOLDFARB_PUCEL_FIT_RANGE: tuple[float, float] = (0.1e-3, 0.63e-3)

_F = FloatArray


def _filament_bracket(length: ArrayLike, spacing: ArrayLike) -> _F:
    r"""Return :math:`l\,\mathrm{asinh}(l/s) - \sqrt{l^2+s^2} + s` [m], cancellation-free."""
    ell = np.asarray(length, dtype=float)
    s = np.asarray(spacing, dtype=float)
    # sqrt(l^2+s^2) - s written as l^2/(sqrt(l^2+s^2)+s): no cancellation for s >> l.
    return ell * np.arcsinh(ell / s) - ell * ell / (np.hypot(ell, s) + s)


def mutual_partial_inductance(length: ArrayLike, spacing: ArrayLike) -> _F:
    r"""Mutual partial inductance of two equal, parallel, side-by-side filaments.

    .. math::

        M = \frac{\mu_0 l}{2\pi}\left[\mathrm{asinh}\frac{l}{s}
            - \sqrt{1+\left(\frac{s}{l}\right)^2} + \frac{s}{l}\right]

    This is the Neumann double integral evaluated in closed form. The same expression
    with ``s = r`` is the partial self-inductance of a round conductor with surface
    current (:func:`partial_self_inductance`): :math:`L_{self}(l, r) = M(l, s=r)`.

    Parameters
    ----------
    length : array_like
        Length ``l`` of both filaments [m], > 0. Their ends are aligned.
    spacing : array_like
        Centre-to-centre spacing ``s`` [m], > 0.

    Returns
    -------
    ndarray
        Mutual partial inductance [H], positive, rising with ``l``, falling with ``s``.

    Notes
    -----
    Exact for filaments; for round conductors of radius ``r`` it holds to within
    about ``(r/s)^2`` relative error, i.e. whenever the conductors do not nearly touch.

    References
    ----------
    .. [1] E. B. Rosa, "The self and mutual inductances of linear conductors," Bulletin
       of the Bureau of Standards, vol. 4, no. 2, pp. 301–344, 1908.
    .. [2] F. W. Grover, *Inductance Calculations: Working Formulas and Tables*,
       New York: Van Nostrand, 1946 (Dover reprint), chapter on straight filaments.

    """
    return MU0_OVER_2PI * _filament_bracket(length, spacing)


def partial_self_inductance(length: ArrayLike, radius: ArrayLike, dc: bool = False) -> _F:
    r"""Partial self-inductance of a straight round conductor.

    .. math::

        L = \frac{\mu_0 l}{2\pi}\left[\mathrm{asinh}\frac{l}{r}
            - \sqrt{1+\left(\frac{r}{l}\right)^2} + \frac{r}{l}
            \;(+\tfrac14 \text{ at DC})\right]

    The high-frequency form assumes the current flows on the surface (a plated via
    barrel above ~100 MHz: the skin depth in copper is ~6.6 um at 100 MHz); the DC form
    adds the internal inductance :math:`\mu_0 l / 8\pi` of a uniform solid wire.

    Parameters
    ----------
    length : array_like
        Conductor length ``l`` [m], > 0.
    radius : array_like
        Conductor radius ``r`` [m], > 0.
    dc : bool or array_like of bool, default False
        Add the internal (DC, uniform current) term.

    Returns
    -------
    ndarray
        Partial self-inductance [H]. Positive for every ``l, r > 0`` (unlike the
        long-wire form :math:`\ln(2l/r) - 1`, which goes negative for short, fat
        conductors), which is why it is used for thin dielectrics.

    Notes
    -----
    The surface-current form is the mutual inductance of two filaments at the
    geometric mean distance ``r`` of a thin tube from itself; for ``l/r`` above ~10 it
    agrees with the exact tube integral to about 1 %. For ``l >> r`` it tends to
    Grover's :math:`(\mu_0 l/2\pi)(\ln(2l/r) - 1)` (DC: :math:`- 3/4`).

    References
    ----------
    .. [1] E. B. Rosa, "The self and mutual inductances of linear conductors," Bulletin
       of the Bureau of Standards, vol. 4, no. 2, pp. 301–344, 1908.
    .. [2] F. W. Grover, *Inductance Calculations: Working Formulas and Tables*,
       New York: Van Nostrand, 1946 (Dover reprint).

    """
    ell = np.asarray(length, dtype=float)
    return mutual_partial_inductance(ell, radius) + MU0_OVER_2PI * 0.25 * ell * np.asarray(dc)


def via_goldfarb_pucel(h: ArrayLike, d: ArrayLike) -> _F:
    r"""Inductance of a via from a microstrip pad to the ground plane (Goldfarb–Pucel).

    .. math::

        L = \frac{\mu_0}{2\pi}\left[h \ln\frac{h + \sqrt{r^2+h^2}}{r}
            + \frac32\left(r - \sqrt{r^2+h^2}\right)\right]

    Parameters
    ----------
    h : array_like
        Via depth from the pad to the plane (substrate height) [m], > 0.
    d : array_like
        Drill / barrel outer diameter [m], > 0 (``r = d/2``).

    Returns
    -------
    ndarray
        Via inductance [H]; positive and rising with ``h``, falling with ``d``.

    Notes
    -----
    Fitted to measurements and numerical results for depths of about 0.1–0.63 mm
    (:data:`GOLDFARB_PUCEL_FIT_RANGE`, :func:`goldfarb_pucel_in_range`) and for vias
    shorter than a few per cent of a wavelength. Outside that range it is an
    extrapolation. :math:`\ln((h+\sqrt{r^2+h^2})/r)` is evaluated as
    :math:`\mathrm{asinh}(h/r)`.

    References
    ----------
    .. [1] M. E. Goldfarb and R. A. Pucel, "Modeling via hole grounds in microstrip,"
       IEEE Microwave and Guided Wave Letters, vol. 1, no. 6, pp. 135–137, June 1991,
       eq. (3). (Page numbers from memory.)

    """
    h = np.asarray(h, dtype=float)
    r = 0.5 * np.asarray(d, dtype=float)
    # r - sqrt(r^2+h^2) written as -h^2/(sqrt(r^2+h^2)+r): no cancellation for h << r.
    return MU0_OVER_2PI * (h * np.arcsinh(h / r) - 1.5 * h * h / (np.hypot(r, h) + r))


def via_johnson_graham(h: ArrayLike, d: ArrayLike) -> _F:
    r"""Rough via inductance estimate of Johnson & Graham.

    .. math::

        L\,[\mathrm{nH}] = 5.08\, h\,[\mathrm{in}]\left(\ln\frac{4h}{d} + 1\right)
        \quad\Longleftrightarrow\quad
        L = \frac{\mu_0}{2\pi}\, h\left(\ln\frac{4h}{d} + 1\right)

    (5.08 nH/in is exactly 0.2 nH/mm = :math:`\mu_0/2\pi`.)

    Parameters
    ----------
    h : array_like
        Via length [m], > 0.
    d : array_like
        Via diameter [m], > 0.

    Returns
    -------
    ndarray
        Inductance [H]. A pessimistic (high) estimate: it is the long-wire form with
        ``+1`` where the partial self-inductance has ``-1``. It goes negative for
        ``h/d`` below :math:`e^{-1}/4 \approx 0.092`; treat it as meaningful only for
        ``h/d`` above about 1.

    References
    ----------
    .. [1] H. W. Johnson and M. Graham, *High-Speed Digital Design: A Handbook of Black
       Magic*, Englewood Cliffs, NJ: Prentice Hall, 1993 (section on via inductance;
       worked example: 0.063 in long, 0.016 in diameter, about 1.2 nH).

    """
    h = np.asarray(h, dtype=float)
    return MU0_OVER_2PI * h * (np.log(4.0 * h / np.asarray(d, dtype=float)) + 1.0)


def via_rosa(h: ArrayLike, d: ArrayLike, dc: bool = False) -> _F:
    r"""Via inductance as the partial self-inductance of its barrel of length ``h``.

    .. math::

        L = L_{tube}(h, r) = \frac1\pi\int_0^\pi M_{fil}\!\left(h,
            2r\sin\frac\varphi2\right)d\varphi

    the thin-tube partial self-inductance
    (:func:`stackopt.physics.tube.tube_self_inductance`), which keeps Rosa's and
    Grover's filament mutual but averages it over the rim instead of placing the
    filaments at the geometric mean distance; it holds for short vias too (the
    closed form :func:`partial_self_inductance` is 8–21 % low for ``h/r`` 0.8–2.3).

    Parameters
    ----------
    h : array_like
        Via depth [m], > 0.
    d : array_like
        Drill / barrel outer diameter [m], > 0.
    dc : bool, default False
        Use the DC (uniform current, solid wire) closed form
        :func:`partial_self_inductance` with its +1/4 term instead.

    Returns
    -------
    ndarray
        Partial self-inductance [H] of the barrel alone; the plane's effect on the
        return path is ignored (see :func:`via_image` for a model that includes it), so
        it is low against :func:`via_image` for the same via (by about a third for
        ``h/r`` near 10).

    References
    ----------
    .. [1] E. B. Rosa, Bulletin of the Bureau of Standards, vol. 4, no. 2, pp. 301–344,
       1908; F. W. Grover, *Inductance Calculations*, Van Nostrand, 1946.

    """
    r = 0.5 * np.asarray(d, dtype=float)
    if dc:
        return partial_self_inductance(h, r, dc=True)
    return tube_self_inductance(h, r)


def via_image(h: ArrayLike, d: ArrayLike) -> _F:
    r"""Via inductance by image theory: half the partial self-inductance of length ``2h``.

    .. math::

        L = \tfrac12\, L_{tube}(2h, r)

    A conductor ending perpendicular on a perfectly conducting plane, together with its
    image, is one conductor of length ``2h`` carrying the same current; the real half
    stores half of the energy. :math:`L_{tube}` is the thin-tube partial
    self-inductance (:func:`stackopt.physics.tube.tube_self_inductance`), accurate for
    short vias too.

    Parameters
    ----------
    h : array_like
        Via depth from the pad to the plane [m], > 0.
    d : array_like
        Drill / barrel outer diameter [m], > 0.

    Returns
    -------
    ndarray
        Inductance [H] (surface current, high frequency). Assumes an infinite, perfect
        plane and no other return conductor nearby.

    References
    ----------
    .. [1] C. R. Paul, *Inductance: Loop and Partial*, Hoboken, NJ: Wiley, 2010
       (partial inductance and images in a ground plane).
    .. [2] E. B. Rosa, Bulletin of the Bureau of Standards, vol. 4, no. 2, pp. 301–344,
       1908.

    """
    return 0.5 * tube_self_inductance(2.0 * np.asarray(h, dtype=float),
                                      0.5 * np.asarray(d, dtype=float))


#: The registry of ground-via models: name -> kernel ``f(h, d) -> L`` [H] (vectorized, SI),
#: in the order they are shown; the first is the default. Adding a model is one kernel
#: and one entry here: ``calc via --model``, a scenario's ``search.via_model``, the model
#: spread and the report read this dict.
VIA_MODELS: dict[str, Callable[[ArrayLike, ArrayLike], _F]] = {
    "goldfarb-pucel": via_goldfarb_pucel, "johnson": via_johnson_graham,
    "rosa": via_rosa, "image": via_image}


def check_via_model(model: str) -> ViaModel:
    r"""Return ``model`` if it names a via model, else raise :class:`ModelError`.

    The message lists the allowed names and suggests the closest one.
    """
    if model not in VIA_MODELS:
        raise ModelError(f"unknown via model {model!r}{did_you_mean(model, VIA_MODELS)}",
                         key="model", fix=f"use one of: {', '.join(VIA_MODELS)}")
    return model


def ground_via_inductance(h: ArrayLike, d: ArrayLike, model: ViaModel = DEFAULT_VIA_MODEL
                          ) -> _F:
    r"""Inductance of one ground via with the named model.

    Parameters
    ----------
    h : array_like
        Via depth from the pad to the plane [m], > 0.
    d : array_like
        Drill / barrel outer diameter [m], > 0.
    model : str
        A key of :data:`stackopt.physics.inductance.VIA_MODELS`.
        :func:`via_goldfarb_pucel` (default), :func:`via_johnson_graham`,
        :func:`via_rosa` (high-frequency form) or :func:`via_image`.

    Returns
    -------
    ndarray
        Inductance [H], broadcast over ``h`` and ``d``.

    Raises
    ------
    ModelError
        For a model name not in :data:`VIA_MODELS`.

    """
    return VIA_MODELS[check_via_model(model)](h, d)


def goldfarb_pucel_in_range(h: ArrayLike, d: ArrayLike) -> NDArray[np.bool_]:
    r"""Whether each via lies in the depth range Goldfarb & Pucel fitted (≈ 0.1–0.63 mm).

    Parameters
    ----------
    h : array_like
        Via depth [m].
    d : array_like
        Drill [m]; must be positive (it only takes part in broadcasting otherwise, as
        the 1991 letter states its range by substrate height).

    Returns
    -------
    ndarray of bool
        ``True`` where :math:`0.1\,\mathrm{mm} \le h \le 0.63\,\mathrm{mm}` and
        ``d > 0`` (with a 1e-9 relative tolerance at the ends).

    """
    h, d = np.broadcast_arrays(np.asarray(h, dtype=float), np.asarray(d, dtype=float))
    lo, hi = GOLDFARB_PUCEL_FIT_RANGE
    return (h >= lo * (1 - 1e-9)) & (h <= hi * (1 + 1e-9)) & (d > 0)


_FROM_PARALLEL = ("parallel_via_inductance", "row_positions", "via_mutual_inductance",
                  "via_pair_cavity", "plane_sheet_inductance")


def __getattr__(name: str) -> object:
    r"""Reach the multi-conductor kernels as ``inductance.<name>`` (lazy: no import cycle)."""
    if name in _FROM_PARALLEL:
        from stackopt.physics import parallel

        return getattr(parallel, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
