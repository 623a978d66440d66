"""Coplanar waveguide with a ground plane below (conductor-backed CPW), quasi-static.

A strip flanked by coplanar ground copper on the same layer, over a plane. The side
grounds carry much of the return current, so a thick two-layer board can reach 50 ohm
with a narrow trace where plain microstrip would need one several millimetres wide.
"""

from __future__ import annotations

import numpy as np

from stackopt.physics.constants import ETA0
from stackopt.physics.stripline import elliptic_ratio

__all__ = ["cpwg"]


def _tanh_ratio_sq(a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    r"""Return :math:`k^2` and :math:`1-k^2` for :math:`k = \tanh a/\tanh b`, 0 < a < b.

    Written with :math:`e^{-2a}` so that neither square loses precision when
    :math:`k \to 1` (thin substrates) and nothing overflows.
    """
    ea, eb = np.exp(-2.0 * a), np.exp(-2.0 * b)
    ta, tb = (1.0 - ea) / (1.0 + ea), (1.0 - eb) / (1.0 + eb)
    diff = -2.0 * ea * np.expm1(-2.0 * (b - a)) / ((1.0 + ea) * (1.0 + eb))  # tb - ta
    return (ta / tb) ** 2, diff * (ta + tb) / tb**2


def cpwg(w, gap, h, er, t=0.0) -> tuple[np.ndarray, np.ndarray]:
    r"""Impedance and effective permittivity of a conductor-backed coplanar waveguide.

    Conformal mapping of Ghione & Naldi (1984) for a strip of width :math:`w` between
    two semi-infinite coplanar grounds at gap :math:`g`, on a substrate of thickness
    :math:`h` over a ground plane (upper half-space air):

    .. math::

        k_1 = \frac{w}{w + 2g},\qquad
        k_3 = \frac{\tanh(\pi w / 4h)}{\tanh(\pi (w + 2g) / 4h)}

        \varepsilon_{\mathrm{eff}} = \frac{1 + \varepsilon_r\,q}{1 + q},\quad
        q = \frac{K(k_3)/K(k_3')}{K(k_1)/K(k_1')}

        Z_0 = \frac{\eta_0}{2\sqrt{\varepsilon_{\mathrm{eff}}}}\,
              \frac{1}{K(k_1)/K(k_1') + K(k_3)/K(k_3')}

    (:math:`\eta_0/2 = 60\pi` ohm). Strip thickness :math:`t > 0` uses the usual CPW
    correction of Gupta et al., applied here to the upper (coplanar) part only: the
    strip widens and each gap narrows by
    :math:`\Delta = \frac{1.25t}{\pi}[1 + \ln(4\pi w/t)]` (:math:`w_e = w + \Delta`,
    :math:`g_e = g - \Delta`, :math:`k_{1e} = w_e / (w_e + 2g_e)`) and

    .. math::

        \varepsilon_{\mathrm{eff}}^{(t)} = \varepsilon_{\mathrm{eff}}
        - \frac{0.7(\varepsilon_{\mathrm{eff}} - 1)\,t/g}{K(k_1)/K(k_1') + 0.7\,t/g}.

    Parameters
    ----------
    w : array_like
        Strip width [m].
    gap : array_like
        Gap from each strip edge to the coplanar ground copper [m].
    h : array_like
        Substrate thickness from the strip's layer to the plane below [m].
    er : array_like
        Relative permittivity of the substrate [-].
    t : array_like, optional
        Copper thickness [m], default 0 (the closed form is for a thin strip).

    Returns
    -------
    z0 : ndarray
        Characteristic impedance [ohm] (NaN where the thickness correction would close
        the gap, :math:`\Delta \ge g`).
    eps_eff : ndarray
        Effective relative permittivity [-].

    Notes
    -----
    Assumes coplanar grounds much wider than :math:`w + 2g` and stitched to the plane
    below by vias close to the gap edge (otherwise a parallel-plate mode can propagate).
    Quasi-static TEM; the thickness correction wants :math:`t \ll g` and is from memory.

    References
    ----------
    G. Ghione and C. U. Naldi, "Analytical formulas for coplanar lines in hybrid and
    monolithic MICs," Electronics Letters, vol. 20, no. 4, pp. 179–181, 1984.

    B. C. Wadell, *Transmission Line Design Handbook*, Artech House, 1991, sec. 3.4
    (coplanar waveguide with ground).

    K. C. Gupta, R. Garg, I. Bahl and P. Bhartia, *Microstrip Lines and Slotlines*,
    2nd ed., Artech House, 1996, ch. 7 (CPW strip-thickness correction).

    """
    w, g, h, er, t = (np.asarray(x, float) for x in (w, gap, h, er, t))
    span = w + 2.0 * g
    r1 = elliptic_ratio((w / span) ** 2, 4.0 * g * (w + g) / span**2)
    k3sq, k3psq = _tanh_ratio_sq(np.pi * w / (4.0 * h), np.pi * span / (4.0 * h))
    r3 = elliptic_ratio(k3sq, k3psq)
    q_inv = r1 / r3  # -> 0 on a very thin substrate (r3 -> inf): eps_eff -> er
    eps0 = (q_inv + er) / (q_inv + 1.0)
    # thickness (t = 0 gives delta = 0: t ln(1/t) -> 0; a floor avoids log(0))
    ts = np.maximum(t, 1e-300)
    delta = np.where(t > 0, 1.25 * ts / np.pi * (1.0 + np.log(4.0 * np.pi * w / ts)), 0.0)
    we, ge = w + delta, g - delta
    ok = ge > 0
    ge = np.where(ok, ge, g)
    spane = we + 2.0 * ge
    r1e = elliptic_ratio((we / spane) ** 2, 4.0 * ge * (we + ge) / spane**2)
    tg = 0.7 * t / g
    eps_eff = eps0 - (eps0 - 1.0) * tg / (r1 + tg)
    z0 = ETA0 / (2.0 * np.sqrt(eps_eff)) / (r1e + r3)
    return np.where(ok, z0, np.nan), eps_eff
