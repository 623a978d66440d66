"""Stripline (a strip between two planes), quasi-static TEM, with thickness and offset.

Also :func:`elliptic_ratio`, the complete-elliptic-integral ratio shared by every
conformal-mapping line model. Inputs are SI floats or arrays that broadcast.
"""

from __future__ import annotations

import numpy as np

from stackopt.physics.arrays import ArrayLike
from stackopt.physics.arrays import FloatArray as _F
from stackopt.physics.constants import ETA0

__all__ = ["AGM_STEPS", "elliptic_ratio", "stripline", "stripline_cohn"]


#: Arithmetic-geometric mean steps: enough for :math:`k^2` or :math:`k'^2` down to the
#: smallest normal double (quadratic convergence once the two means are close; about
#: :math:`\log_2\ln(4/k)` steps before that), so a fixed count serves every element.
AGM_STEPS = 16


def elliptic_ratio(k2: ArrayLike, kp2: ArrayLike) -> _F:
    r"""Return :math:`K(k)/K(k')` from :math:`k^2` and :math:`k'^2 = 1-k^2`.

    By the arithmetic-geometric mean :math:`M` (Gauss; DLMF 19.8.5,
    https://dlmf.nist.gov/19.8.E5; Abramowitz & Stegun, *Handbook of Mathematical
    Functions*, 1964, 17.6),

    .. math::

        K(k) = \frac{\pi}{2\,M(1, k')}\quad\Rightarrow\quad
        \frac{K(k)}{K(k')} = \frac{M(1, k)}{M(1, k')},

    with :math:`k = \sqrt{k^2}` and :math:`k' = \sqrt{k'^2}` taken from the two squares
    passed, so that neither is formed as ``1 - x`` (which loses all precision near 1).
    :data:`AGM_STEPS` steps for every element (no data-dependent branch); relative error
    a few units in the last place, for :math:`k^2, k'^2` from the smallest normal double
    to 1 (checked against ``scipy.special.ellipkm1`` in the tests). ``k2 = 0`` gives 0
    and ``kp2 = 0`` gives infinity, the limits of the ratio. Pure numpy: the search
    need not load scipy.
    """
    b = np.sqrt(np.stack(np.broadcast_arrays(np.asarray(k2, float), np.asarray(kp2, float))))
    a = np.ones_like(b)
    zero = b == 0.0  # M(1, 0) = 0 exactly (the steps would only halve 1)
    for _ in range(AGM_STEPS):
        a, b = 0.5 * (a + b), np.sqrt(a * b)
    a = np.where(zero, 0.0, a)
    with np.errstate(divide="ignore", invalid="ignore"):
        return a[0] / a[1]


# --------------------------------------------------------------------------- stripline
def stripline_cohn(w: ArrayLike, b: ArrayLike, er: ArrayLike) -> _F:
    r"""Zero-thickness centred stripline, exact conformal-mapping result of Cohn (1954).

    .. math::

        Z_0 = \frac{\eta_0}{4\sqrt{\varepsilon_r}}\frac{K(k)}{K(k')},\quad
        k = \mathrm{sech}\frac{\pi w}{2b},\quad k' = \tanh\frac{\pi w}{2b}

    Parameters
    ----------
    w : array_like
        Strip width [m].
    b : array_like
        Plane-to-plane spacing [m]; the strip lies midway.
    er : array_like
        Relative permittivity of the (homogeneous) dielectric [-].

    Returns
    -------
    ndarray
        Characteristic impedance [ohm]. Exact for an infinitely thin strip, any w/b.

    References
    ----------
    S. B. Cohn, "Characteristic impedance of the shielded-strip transmission line,"
    IRE Transactions on Microwave Theory and Techniques, vol. 2, no. 2, pp. 52–57, 1954.

    """
    w, b, er = (np.asarray(x, float) for x in (w, b, er))
    x = np.pi * w / (2.0 * b)
    return ETA0 / (4.0 * np.sqrt(er)) * elliptic_ratio(1.0 / np.cosh(x) ** 2,
                                                       np.tanh(x) ** 2)


def _wheeler_stripline_air(w: _F, b: _F, t: _F | float) -> _F:
    """Wheeler (1978) centred stripline in air, with finite strip thickness, ohm."""
    x = np.clip(t / b, 1e-12, 1.0 - 1e-12)
    m = 2.0 / (1.0 + 2.0 / 3.0 * x / (1.0 - x))
    dw = x / (np.pi * (1.0 - x)) * (1.0 - 0.5 * np.log(
        (x / (2.0 - x)) ** 2 + (0.0796 * x / (w / b + 1.1 * x)) ** m))
    q = 1.0 / (w / (b - t) + dw)  # (b - t) / w'
    p = 8.0 / np.pi * q
    return ETA0 / (4.0 * np.pi) * np.log(1.0 + 4.0 / np.pi * q * (p + np.sqrt(p**2 + 6.27)))


def stripline(w: ArrayLike, b: ArrayLike, er: ArrayLike, t: ArrayLike = 0.0,
              offset: ArrayLike = 0.0) -> _F:
    r"""Stripline impedance with strip thickness and an off-centre strip.

    Centred, zero thickness: :func:`stripline_cohn` (exact). Thickness scales it by
    Wheeler's (1978) thick-strip ratio, so that :math:`t = 0` stays exact:

    .. math::

        Z_0(t) = Z_{\mathrm{Cohn}}(w, b)\,\frac{Z_W(w, b, t)}{Z_W(w, b, 0)},\quad
        Z_W = \frac{\eta_0}{4\pi\sqrt{\varepsilon_r}}\ln\left\{1 + \frac{4}{\pi}
        \frac{b-t}{w'}\left[\frac{8}{\pi}\frac{b-t}{w'} + \sqrt{\left(\frac{8}{\pi}
        \frac{b-t}{w'}\right)^2 + 6.27}\,\right]\right\}

    with Wheeler's effective width (:math:`x = t/b`,
    :math:`n = 2/(1 + \tfrac23\,x/(1-x))`)

    .. math::

        \frac{w'}{b-t} = \frac{w}{b-t} + \frac{x}{\pi(1-x)}\left\{1 - \frac12\ln\left[
        \left(\frac{x}{2-x}\right)^2 + \left(\frac{0.0796\,x}{w/b + 1.1x}\right)^n
        \right]\right\}.

    An offset strip (gaps :math:`h_1, h_2` from its faces to the two planes) is the
    parallel combination of the two centred lines of spacing :math:`2h_i + t` (each
    plane carries the return current of its half of the strip's capacitance):

    .. math::

        Z_0 = \frac{2 Z(2h_1 + t)\,Z(2h_2 + t)}{Z(2h_1 + t) + Z(2h_2 + t)},\quad
        h_{1,2} = \frac{b - t}{2} \pm \mathrm{offset}.

    Parameters
    ----------
    w : array_like
        Strip width [m].
    b : array_like
        Plane-to-plane spacing [m].
    er : array_like
        Relative permittivity [-].
    t : array_like, optional
        Strip thickness [m], default 0.
    offset : array_like, optional
        Displacement of the strip's centre from the midplane [m] (either sign),
        default 0. NaN where the strip would touch a plane.

    Returns
    -------
    ndarray
        Characteristic impedance [ohm].

    Notes
    -----
    Wheeler states 0.5 % for :math:`w'/(b-t) < 10`; his form is used here only as a
    ratio. The offset approximation is good for moderate offsets (within a few per cent
    while the strip stays clear of the nearer plane by more than its width's worth of
    fringing); it is exact at zero offset.

    References
    ----------
    S. B. Cohn, "Characteristic impedance of the shielded-strip transmission line,"
    IRE Transactions on Microwave Theory and Techniques, vol. 2, no. 2, pp. 52–57, 1954.

    H. A. Wheeler, "Transmission-line properties of a strip line between parallel
    planes," IEEE Transactions on Microwave Theory and Techniques, vol. 26, no. 11,
    pp. 866–876, Nov. 1978.

    B. C. Wadell, *Transmission Line Design Handbook*, Artech House, 1991 (offset
    stripline as a parallel combination; from memory).

    """
    w, b, er, t, off = (np.asarray(x, float) for x in (w, b, er, t, offset))
    half = (b - t) / 2.0
    h1, h2 = half + off, half - off
    ok = (h1 > 0) & (h2 > 0)
    b1 = np.where(ok, 2.0 * h1 + t, b)
    b2 = np.where(ok, 2.0 * h2 + t, b)

    def centred(bb: _F) -> _F:
        ratio = _wheeler_stripline_air(w, bb, t) / _wheeler_stripline_air(w, bb, 0.0)
        return stripline_cohn(w, bb, er) * ratio

    z1, z2 = centred(b1), centred(b2)
    return np.where(ok, 2.0 * z1 * z2 / (z1 + z2), np.nan)
