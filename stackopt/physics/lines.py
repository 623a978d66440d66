"""Single transmission lines over planes: microstrip and stripline, quasi-static (TEM).

Every function takes SI floats or arrays (metres, relative permittivity) that broadcast
against each other and returns numpy arrays of the broadcast shape. Geometry outside a
model's validity range is computed anyway (the closed forms are smooth); values that have
no meaning (a negative impedance, an offset trace that touches a plane) come back as NaN.

Coplanar lines are in :mod:`stackopt.physics.coplanar`, edge-coupled pairs in
:mod:`stackopt.physics.coupled`, width synthesis in :mod:`stackopt.physics.synthesis`.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Literal, get_args

import numpy as np

from stackopt.errors import ModelError
from stackopt.physics.arrays import ArrayLike
from stackopt.physics.arrays import FloatArray as _F
from stackopt.physics.constants import C0, ETA0
from stackopt.physics.stripline import elliptic_ratio, stripline, stripline_cohn

__all__ = [
    "MICROSTRIP_MODELS",
    "MicrostripModel",
    "microstrip",
    "microstrip_hammerstad_jensen",
    "microstrip_ipc2141",
    "microstrip_wheeler",
    "check_microstrip_model",
    "pad_trace_inductance",
    "stripline",
    "stripline_cohn",
    "elliptic_ratio",
]

MicrostripModel = Literal["hammerstad-jensen", "ipc-2141", "wheeler"]
#: Microstrip models by name; the first is the default.
MICROSTRIP_MODELS: tuple[str, ...] = get_args(MicrostripModel)


# --------------------------------------------------------------------------- microstrip
def _hj_z01(u: _F) -> _F:
    """Hammerstad–Jensen impedance of a zero-thickness strip in air (eq. 1-2), ohm."""
    f = 6.0 + (2.0 * np.pi - 6.0) * np.exp(-((30.666 / u) ** 0.7528))
    return ETA0 / (2.0 * np.pi) * np.log(f / u + np.sqrt(1.0 + (2.0 / u) ** 2))


def _hj_eps(u: _F, er: _F) -> _F:
    """Hammerstad–Jensen effective permittivity of a zero-thickness strip (eq. 3-5)."""
    a = (1.0 + np.log((u**4 + (u / 52.0) ** 2) / (u**4 + 0.432)) / 49.0
         + np.log(1.0 + (u / 18.1) ** 3) / 18.7)
    b = 0.564 * ((er - 0.9) / (er + 3.0)) ** 0.053
    return (er + 1.0) / 2.0 + (er - 1.0) / 2.0 * (1.0 + 10.0 / u) ** (-a * b)


def _hj_thickness(u: _F, tn: _F, er: _F) -> tuple[_F, _F]:
    """Hammerstad–Jensen width corrections (Δu1 in air, Δur on the substrate), t/h = tn."""
    coth2 = 1.0 / np.tanh(np.sqrt(6.517 * u)) ** 2
    # T ln(1 + 4e/(T c)) -> 0 as T -> 0; a tiny floor keeps t = 0 free of 0 * inf.
    tn_s = np.maximum(tn, 1e-300)
    du1 = np.where(tn > 0, tn_s / np.pi * np.log1p(4.0 * np.e / (tn_s * coth2)), 0.0)
    dur = 0.5 * (1.0 + 1.0 / np.cosh(np.sqrt(np.maximum(er - 1.0, 0.0)))) * du1
    return du1, dur


def microstrip_hammerstad_jensen(w: ArrayLike, h: ArrayLike, er: ArrayLike,
                                 t: ArrayLike = 35e-6) -> tuple[_F, _F]:
    r"""Microstrip by Hammerstad & Jensen (1980), with their strip-thickness correction.

    With :math:`u = w/h` and :math:`\eta_0` the impedance of free space,

    .. math::

        Z_{01}(u) = \frac{\eta_0}{2\pi}\ln\left[\frac{f(u)}{u}
                    + \sqrt{1 + (2/u)^2}\right],\quad
        f(u) = 6 + (2\pi - 6)\,e^{-(30.666/u)^{0.7528}}

        \varepsilon_e(u) = \frac{\varepsilon_r+1}{2} + \frac{\varepsilon_r-1}{2}
                           \left(1 + \frac{10}{u}\right)^{-a(u)\,b(\varepsilon_r)}

    with :math:`a = 1 + \frac{1}{49}\ln\frac{u^4 + (u/52)^2}{u^4 + 0.432}
    + \frac{1}{18.7}\ln[1 + (u/18.1)^3]`,
    :math:`b = 0.564\,[(\varepsilon_r - 0.9)/(\varepsilon_r + 3)]^{0.053}`.
    Thickness :math:`T = t/h` widens the strip:

    .. math::

        \Delta u_1 = \frac{T}{\pi}\ln\left[1 + \frac{4e}{T\coth^2\sqrt{6.517u}}\right],
        \quad \Delta u_r = \tfrac12\left[1 + \mathrm{sech}\sqrt{\varepsilon_r - 1}\right]
        \Delta u_1

        Z_0 = \frac{Z_{01}(u_r)}{\sqrt{\varepsilon_e(u_r)}},\quad
        \varepsilon_{\mathrm{eff}} = \varepsilon_e(u_r)
        \left[\frac{Z_{01}(u_1)}{Z_{01}(u_r)}\right]^2

    with :math:`u_1 = u + \Delta u_1`, :math:`u_r = u + \Delta u_r`.

    Parameters
    ----------
    w : array_like
        Strip width [m], > 0.
    h : array_like
        Dielectric thickness from the strip to its plane [m], > 0.
    er : array_like
        Relative permittivity of the substrate [-], >= 1.
    t : array_like, optional
        Strip (copper) thickness [m], >= 0. Default 35 um (1 oz).

    Returns
    -------
    z0 : ndarray
        Quasi-static characteristic impedance [ohm].
    eps_eff : ndarray
        Effective relative permittivity [-].

    Notes
    -----
    Validity (stated by the authors): zero-thickness :math:`Z_{01}` better than 0.01 %
    for :math:`u \le 1` and 0.03 % for :math:`u \le 1000`; :math:`\varepsilon_e` better
    than 0.2 % for :math:`\varepsilon_r \le 128`, :math:`0.01 \le u \le 100`. Quasi-static:
    no dispersion (good while :math:`h \ll \lambda`, roughly below a few GHz on PCB
    substrates).

    References
    ----------
    E. Hammerstad and Ø. Jensen, "Accurate models for microstrip computer-aided design,"
    IEEE MTT-S International Microwave Symposium Digest, 1980, pp. 407–409.

    """
    w, h, er, t = (np.asarray(x, float) for x in (w, h, er, t))
    u = w / h
    du1, dur = _hj_thickness(u, t / h, er)
    u1, ur = u + du1, u + dur
    eps_r = _hj_eps(ur, er)
    z01_r = _hj_z01(ur)
    z0 = z01_r / np.sqrt(eps_r)
    eps_eff = eps_r * (_hj_z01(u1) / z01_r) ** 2
    return z0, eps_eff


def microstrip_ipc2141(w: ArrayLike, h: ArrayLike, er: ArrayLike, t: ArrayLike = 35e-6
                       ) -> tuple[_F, _F]:
    r"""Microstrip by the IPC-2141A closed form.

    .. math::

        Z_0 = \frac{87}{\sqrt{\varepsilon_r + 1.41}}
              \ln\frac{5.98\,h}{0.8\,w + t},\qquad
        \varepsilon_{\mathrm{eff}} = 0.475\,\varepsilon_r + 0.67

    (the effective permittivity is the one behind the same document's propagation-delay
    form :math:`t_{pd} = 85\sqrt{0.475\varepsilon_r + 0.67}` ps/in; from memory).

    Parameters
    ----------
    w, h, t : array_like
        Strip width, dielectric thickness and strip thickness [m].
    er : array_like
        Relative permittivity [-].

    Returns
    -------
    z0 : ndarray
        Characteristic impedance [ohm]; NaN where the logarithm is not positive
        (:math:`0.8w + t \ge 5.98h`, far outside the validity range).
    eps_eff : ndarray
        Effective relative permittivity [-].

    Notes
    -----
    Validity: about :math:`0.1 < w/h < 2` and :math:`1 < \varepsilon_r < 15`; several per
    cent off Hammerstad–Jensen on thin dielectrics. A quick estimate, not the default.

    References
    ----------
    IPC-2141A, "Design Guide for High-Speed Controlled Impedance Circuit Boards",
    IPC, 2004.

    """
    w, h, er, t = (np.asarray(x, float) for x in (w, h, er, t))
    z0 = 87.0 / np.sqrt(er + 1.41) * np.log(5.98 * h / (0.8 * w + t))
    z0 = np.where(z0 > 0, z0, np.nan)
    eps_eff = np.broadcast_to(0.475 * er + 0.67, z0.shape).copy()
    return z0, eps_eff


def _wheeler_z(w: _F, h: _F, er: _F, t: _F) -> _F:
    """Wheeler (1977) eq. (21) with the eq. (22) width correction, ohm."""
    tt = np.where(t > 0, t, h)  # any positive stand-in; masked out below for t = 0
    dw1 = np.where(t > 0, tt / np.pi * np.log(
        4.0 * np.e / np.sqrt((tt / h) ** 2 + (1.0 / np.pi / (w / tt + 1.1)) ** 2)), 0.0)
    dw = dw1 * (1.0 + 1.0 / er) / 2.0
    x = 4.0 * h / (w + dw)
    p = (14.0 + 8.0 / er) / 11.0 * x
    return ETA0 / (2.0 * np.pi * np.sqrt(2.0 * (er + 1.0))) * np.log(
        1.0 + x * (p + np.sqrt(p**2 + np.pi**2 * (1.0 + 1.0 / er) / 2.0)))


def microstrip_wheeler(w: ArrayLike, h: ArrayLike, er: ArrayLike, t: ArrayLike = 35e-6
                       ) -> tuple[_F, _F]:
    r"""Microstrip by Wheeler (1977), with his strip-thickness correction.

    .. math::

        Z_0 = \frac{\eta_0}{2\pi\sqrt{2(\varepsilon_r+1)}}\ln\left\{1 + \frac{4h}{w'}
              \left[\frac{14 + 8/\varepsilon_r}{11}\frac{4h}{w'} + \sqrt{\left(
              \frac{14 + 8/\varepsilon_r}{11}\frac{4h}{w'}\right)^2
              + \pi^2\frac{1 + 1/\varepsilon_r}{2}}\,\right]\right\}

        w' = w + \frac{1 + 1/\varepsilon_r}{2}\,\frac{t}{\pi}\ln\frac{4e}{\sqrt{(t/h)^2
             + \left[\frac{1/\pi}{w/t + 1.1}\right]^2}}

    and :math:`\varepsilon_{\mathrm{eff}} = [Z_0(\varepsilon_r = 1)/Z_0]^2`, both from
    the same formula (the air line with its own thickness correction).

    Parameters
    ----------
    w, h, t : array_like
        Strip width, dielectric thickness and strip thickness [m].
    er : array_like
        Relative permittivity [-].

    Returns
    -------
    z0 : ndarray
        Characteristic impedance [ohm].
    eps_eff : ndarray
        Effective relative permittivity [-].

    Notes
    -----
    Wheeler states about 1 % accuracy over all :math:`w/h` and :math:`\varepsilon_r`;
    the thickness correction assumes :math:`t < h` and :math:`t < w/2`.

    References
    ----------
    H. A. Wheeler, "Transmission-line properties of a strip on a dielectric sheet on a
    plane," IEEE Transactions on Microwave Theory and Techniques, vol. 25, no. 8,
    pp. 631–647, Aug. 1977.

    """
    w, h, er, t = (np.asarray(x, float) for x in (w, h, er, t))
    z0 = _wheeler_z(w, h, er, t)
    z_air = _wheeler_z(w, h, np.ones_like(er), t)
    return z0, (z_air / z0) ** 2


_MICROSTRIP: dict[str, Callable[..., tuple[np.ndarray, np.ndarray]]] = {
    "hammerstad-jensen": microstrip_hammerstad_jensen,
    "ipc-2141": microstrip_ipc2141,
    "wheeler": microstrip_wheeler,
}


def check_microstrip_model(model: str) -> None:
    """Raise :class:`~stackopt.errors.ModelError` unless ``model`` is a known name."""
    if model not in _MICROSTRIP:
        raise ModelError(f"unknown microstrip model {model!r}", key="model",
                         fix="choose one of: " + ", ".join(MICROSTRIP_MODELS))


def microstrip(w: ArrayLike, h: ArrayLike, er: ArrayLike, t: ArrayLike = 35e-6,
               model: MicrostripModel = "hammerstad-jensen") -> tuple[_F, _F]:
    r"""Quasi-static impedance and effective permittivity of a microstrip line.

    Dispatches to :func:`microstrip_hammerstad_jensen` (default),
    :func:`microstrip_ipc2141` or :func:`microstrip_wheeler`; see those for the
    equations, validity and citations.

    .. math::

        (Z_0, \varepsilon_{\mathrm{eff}}) = \mathrm{model}(w, h, \varepsilon_r, t)

    Parameters
    ----------
    w : array_like
        Strip width [m].
    h : array_like
        Dielectric thickness between strip and plane [m].
    er : array_like
        Relative permittivity [-].
    t : array_like, optional
        Copper thickness [m], default 35 um.
    model : {"hammerstad-jensen", "ipc-2141", "wheeler"}
        The closed form (:data:`MICROSTRIP_MODELS`).

    Returns
    -------
    z0 : ndarray
        Characteristic impedance [ohm].
    eps_eff : ndarray
        Effective relative permittivity [-].

    Raises
    ------
    ModelError
        ``model`` is not one of :data:`MICROSTRIP_MODELS`.

    """
    check_microstrip_model(model)
    return _MICROSTRIP[model](w, h, er, t)


def pad_trace_inductance(length: ArrayLike, width: ArrayLike, height: ArrayLike,
                         thickness: ArrayLike = 35e-6) -> _F:
    r"""Series inductance of a short trace over its plane (a pad-to-via connection).

    The trace is treated as a short line: its inductance per length is that of the same
    strip in air (the dielectric does not change the magnetic field),

    .. math::

        L = \frac{Z_0(\varepsilon_r = 1)}{c_0}\,\ell

    with :math:`Z_0` from :func:`microstrip_hammerstad_jensen`.

    Parameters
    ----------
    length : array_like
        Trace length [m], >= 0 (0 gives 0 H).
    width : array_like
        Trace width [m], > 0.
    height : array_like
        Dielectric thickness from the trace to its plane [m], > 0.
    thickness : array_like, optional
        Copper thickness [m], default 35 um.

    Returns
    -------
    ndarray
        Inductance [H].

    Notes
    -----
    Valid for electrically short traces (:math:`\ell \ll \lambda/10`) longer than about
    their height; for very short stubs it neglects end effects (the via's own
    inductance is computed separately).

    References
    ----------
    E. Hammerstad and Ø. Jensen, "Accurate models for microstrip computer-aided design,"
    IEEE MTT-S International Microwave Symposium Digest, 1980, pp. 407–409.

    """
    z_air, _ = microstrip_hammerstad_jensen(width, height, 1.0, thickness)
    return z_air * np.asarray(length, float) / C0

