"""Edge-coupled pairs (differential lines): coupled microstrip and coupled stripline.

Each returns a dict of arrays: ``z_even``, ``z_odd`` [ohm], ``z_diff = 2 z_odd`` and
``z_common = z_even / 2`` [ohm], and for microstrip ``eps_even``, ``eps_odd`` [-].
"""

from __future__ import annotations

import numpy as np

from stackopt.physics.arrays import ArrayLike
from stackopt.physics.arrays import FloatArray as _F
from stackopt.physics.constants import ETA0
from stackopt.physics.lines import _hj_eps, _hj_thickness, _hj_z01
from stackopt.physics.stripline import _wheeler_stripline_air, elliptic_ratio

__all__ = ["coupled_microstrip", "coupled_stripline"]


def _modes(z_even: _F, z_odd: _F, **extra: _F) -> dict[str, _F]:
    return {"z_even": z_even, "z_odd": z_odd, "z_diff": 2.0 * z_odd,
            "z_common": z_even / 2.0, **extra}


def _kj_static(u: _F, g: _F, er: _F) -> tuple[_F, _F, _F, _F]:
    """Kirschning–Jansen static even/odd impedances and permittivities (t = 0)."""
    eps = _hj_eps(u, er)
    z01 = _hj_z01(u)  # air impedance of the single strip: Z0 sqrt(eps) = Z01
    z0 = z01 / np.sqrt(eps)
    # even-mode permittivity: the Hammerstad–Jensen form at the modified width v
    v = u * (20.0 + g**2) / (10.0 + g**2) + g * np.exp(-g)
    eps_e = _hj_eps(v, er)
    # odd-mode permittivity
    a0 = 0.7287 * (eps - (er + 1.0) / 2.0) * (1.0 - np.exp(-0.179 * u))
    b0 = 0.747 * er / (0.15 + er)
    c0 = b0 - (b0 - 0.207) * np.exp(-0.414 * u)
    d0 = 0.593 + 0.694 * np.exp(-0.562 * u)
    eps_o = ((er + 1.0) / 2.0 + a0 - eps) * np.exp(-c0 * g**d0) + eps
    # even-mode impedance
    q1 = 0.8695 * u**0.194
    q2 = 1.0 + 0.7519 * g + 0.189 * g**2.31
    q3 = (0.1975 + (16.6 + (8.4 / g) ** 6) ** -0.387
          + np.log(g**10 / (1.0 + (g / 3.4) ** 10)) / 241.0)
    q4 = 2.0 * q1 / q2 / (u**q3 * np.exp(-g) + (2.0 - np.exp(-g)) * u**-q3)
    z_e = z0 * np.sqrt(eps / eps_e) / (1.0 - z01 / ETA0 * q4)
    # odd-mode impedance
    q5 = 1.794 + 1.14 * np.log(1.0 + 0.638 / (g + 0.517 * g**2.43))
    q6 = (0.2305 + np.log(g**10 / (1.0 + (g / 5.8) ** 10)) / 281.3
          + np.log(1.0 + 0.598 * g**1.154) / 5.1)
    q7 = (10.0 + 190.0 * g**2) / (1.0 + 82.3 * g**3)
    q8 = np.exp(-6.5 - 0.95 * np.log(g) - (g / 0.15) ** 5)
    q9 = np.log(q7) * (q8 + 1.0 / 16.5)
    q10 = q4 - q5 / q2 * np.exp(q6 * np.log(u) * u**-q9)
    z_o = z0 * np.sqrt(eps / eps_o) / (1.0 - z01 / ETA0 * q10)
    return z_e, z_o, eps_e, eps_o


def coupled_microstrip(w: ArrayLike, s: ArrayLike, h: ArrayLike, er: ArrayLike,
                       t: ArrayLike = 35e-6) -> dict[str, _F]:
    r"""Even/odd-mode impedances of two equal edge-coupled microstrips (Kirschning–Jansen).

    With :math:`u = w/h`, :math:`g = s/h` and the single-line Hammerstad–Jensen
    :math:`Z_0, \varepsilon_e` (zero thickness), the static even- and odd-mode values are

    .. math::

        Z_{0e} = Z_0\sqrt{\varepsilon_e/\varepsilon_{e,e}}\,\Big/\left(1 -
                 \frac{Z_0\sqrt{\varepsilon_e}}{\eta_0}\,Q_4\right),\qquad
        Z_{0o} = Z_0\sqrt{\varepsilon_e/\varepsilon_{e,o}}\,\Big/\left(1 -
                 \frac{Z_0\sqrt{\varepsilon_e}}{\eta_0}\,Q_{10}\right)

    where :math:`\varepsilon_{e,e}` is the Hammerstad–Jensen form at the modified width
    :math:`v = u(20 + g^2)/(10 + g^2) + g e^{-g}`,
    :math:`\varepsilon_{e,o} = [\tfrac{\varepsilon_r+1}{2} + a_o - \varepsilon_e]
    e^{-c_o g^{d_o}} + \varepsilon_e`, and :math:`Q_1 \dots Q_{10}`, :math:`a_o, b_o,
    c_o, d_o` are the authors' fitted functions of :math:`u, g, \varepsilon_r` (eqs. 3–5,
    8–13 of the paper; transcribed from memory of the paper and its 1985 correction).
    The differential impedance is :math:`Z_{\mathrm{diff}} = 2 Z_{0o}`.

    Strip thickness enters through Jansen's effective widths
    (:math:`\Delta u_r` the Hammerstad–Jensen single-strip correction,
    :math:`\Delta t = (t/h)/(g\,\varepsilon_r)`; from memory):

    .. math::

        u_e = u + \Delta u_r\,(1 - \tfrac12 e^{-0.69\,\Delta u_r/\Delta t}),\qquad
        u_o = u_e + \Delta t,

    and both mode permittivities take Hammerstad–Jensen's thick-strip factor
    :math:`[Z_{01}(u + \Delta u_1)/Z_{01}(u + \Delta u_r)]^2` (our choice, so that
    :math:`s \to \infty` gives :func:`~stackopt.physics.lines.microstrip` exactly).

    Parameters
    ----------
    w : array_like
        Width of each strip [m].
    s : array_like
        Edge-to-edge spacing [m].
    h : array_like
        Dielectric thickness to the plane [m].
    er : array_like
        Relative permittivity [-].
    t : array_like, optional
        Copper thickness [m], default 35 um.

    Returns
    -------
    dict
        ``z_even``, ``z_odd``, ``z_diff``, ``z_common`` [ohm]; ``eps_even``,
        ``eps_odd`` [-].

    Notes
    -----
    Validity stated by the authors: :math:`0.1 \le u \le 10`, :math:`0.1 \le g \le 10`,
    :math:`1 \le \varepsilon_r \le 18`, within about 1 % of full-wave results;
    quasi-static (no dispersion). The thickness correction is a first-order one.

    References
    ----------
    M. Kirschning and R. H. Jansen, "Accurate wide-range design equations for the
    frequency-dependent characteristic of parallel coupled microstrip lines," IEEE
    Transactions on Microwave Theory and Techniques, vol. 32, no. 1, pp. 83–90, 1984;
    corrections, vol. 33, no. 3, p. 288, 1985.

    R. H. Jansen, "High-speed computation of single and coupled microstrip parameters
    including dispersion, high-order modes, loss and finite strip thickness," IEEE
    Transactions on Microwave Theory and Techniques, vol. 26, no. 2, pp. 75–82, 1978.

    """
    w, s, h, er, t = (np.asarray(x, float) for x in (w, s, h, er, t))
    u, g, tn = w / h, s / h, t / h
    du1, dur = _hj_thickness(u, tn, er)
    dt = np.maximum(tn, 1e-300) / (g * er)
    u_e = u + dur * (1.0 - 0.5 * np.exp(-0.69 * dur / dt))
    u_o = u_e + np.where(tn > 0, dt, 0.0)
    z_e, _, eps_e, _ = _kj_static(u_e, g, er)
    _, z_o, _, eps_o = _kj_static(u_o, g, er)
    # Hammerstad–Jensen's own permittivity correction for the thick single strip
    fix = (_hj_z01(u + du1) / _hj_z01(u + dur)) ** 2
    eps_e, eps_o = eps_e * fix, eps_o * fix
    return _modes(z_e, z_o, eps_even=eps_e, eps_odd=eps_o)


def coupled_stripline(w: ArrayLike, s: ArrayLike, b: ArrayLike, er: ArrayLike,
                      t: ArrayLike = 0.0) -> dict[str, _F]:
    r"""Even/odd-mode impedances of two equal edge-coupled strips midway between planes.

    Cohn's (1955) exact zero-thickness conformal mapping:

    .. math::

        Z_{0e,o} = \frac{\eta_0}{4\sqrt{\varepsilon_r}}\frac{K(k_{e,o}')}{K(k_{e,o})},
        \quad k_e = \tanh\frac{\pi w}{2b}\tanh\frac{\pi(w+s)}{2b},\quad
        k_o = \tanh\frac{\pi w}{2b}\coth\frac{\pi(w+s)}{2b}.

    As :math:`s \to \infty` both tend to the single-strip :math:`Z_0` of
    :func:`~stackopt.physics.stripline.stripline_cohn`. Thickness scales both modes by the
    single strip's Wheeler (1978) thick/thin ratio, as in
    :func:`~stackopt.physics.stripline.stripline` (a first-order approximation; the odd
    mode is somewhat more sensitive to thickness than this gives).

    Parameters
    ----------
    w : array_like
        Width of each strip [m].
    s : array_like
        Edge-to-edge spacing [m].
    b : array_like
        Plane-to-plane spacing [m].
    er : array_like
        Relative permittivity [-].
    t : array_like, optional
        Strip thickness [m], default 0.

    Returns
    -------
    dict
        ``z_even``, ``z_odd``, ``z_diff``, ``z_common`` [ohm].

    Notes
    -----
    Exact for :math:`t = 0`, any :math:`w/b`, :math:`s/b`; TEM, so no dispersion.

    References
    ----------
    S. B. Cohn, "Shielded coupled-strip transmission line," IRE Transactions on
    Microwave Theory and Techniques, vol. 3, no. 5, pp. 29–38, 1955.

    H. A. Wheeler, "Transmission-line properties of a strip line between parallel
    planes," IEEE Transactions on Microwave Theory and Techniques, vol. 26, no. 11,
    pp. 866–876, Nov. 1978.

    """
    w, s, b, er, t = (np.asarray(x, float) for x in (w, s, b, er, t))
    a1, a2 = np.pi * w / (2.0 * b), np.pi * (w + s) / (2.0 * b)
    th1, th2 = np.tanh(a1), np.tanh(a2)
    sech1sq, sech2sq = 1.0 / np.cosh(a1) ** 2, 1.0 / np.cosh(a2) ** 2
    ke2 = (th1 * th2) ** 2
    kep2 = sech1sq + sech2sq - sech1sq * sech2sq  # 1 - ke^2, without cancellation
    ko2 = (th1 / th2) ** 2
    kop2 = (sech1sq - sech2sq) / th2**2  # 1 - ko^2
    ratio = _wheeler_stripline_air(w, b, t) / _wheeler_stripline_air(w, b, 0.0)
    scale = ETA0 / (4.0 * np.sqrt(er)) * ratio
    return _modes(scale * elliptic_ratio(kep2, ke2), scale * elliptic_ratio(kop2, ko2))
