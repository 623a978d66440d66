r"""Elliptic (Cauer) low-pass ladders: element values by Darlington synthesis.

The normalized prototype (passband edge 1 rad/s, 1-ohm terminations, odd order ``n``)
starts from the poles and zeros of :func:`scipy.signal.ellipap`: :math:`S_{21} = N/E`. The
characteristic polynomial :math:`F` follows from Feldtkeller's equation
:math:`F(s)F(-s) = E(s)E(-s) - N(s)N(-s)`; for an odd elliptic filter it is
:math:`F = s\prod_k (s^2 + \omega_{r,k}^2)` (reflection zeros in the passband, found as
the double roots of the right-hand side in :math:`x = -s^2`). The input immittance
:math:`(E \pm F)/(E \mp F)` is then expanded into a ladder by *zero shifting* (partial
removal of a shunt capacitor — or series inductor — so that the remainder vanishes at the
next transmission zero :math:`j\omega_z`, then full removal of the pole it leaves there as a
parallel-LC series arm — or series-LC shunt trap). This is the procedure of Saal &
Ulbrich (1958); of the orders of the zeros that give every element a positive value, the one whose
smallest main element is largest is kept (the balanced arrangement a designer would pick)
among those whose response matches scipy's to 1e-3 dB.
Agreement with scipy's analog response: about 1e-8 dB to order 7, 1e-5 dB at 9, 0.02 dB
at 11 (polynomial conditioning in double precision).

``first="shunt"``: C1, (L2 ‖ C2), C3, … Cn — shunt capacitors, series arms that resonate
(open) at the notches. ``first="series"``: L1, (L2 — C2 to ground), L3, … Ln — series
inductors, shunt traps that short at the notches.

References
----------
.. [1] R. Saal and E. Ulbrich, "On the design of filters by synthesis," IRE Transactions
   on Circuit Theory, vol. CT-5, no. 4, pp. 284–327, Dec. 1958.
.. [2] P. Amstutz, "Elliptic approximation and elliptic filter design on small
   computers," IEEE Transactions on Circuits and Systems, vol. CAS-25, no. 12,
   pp. 1001–1011, Dec. 1978.
.. [3] S. Darlington, "Synthesis of reactance 4-poles which produce prescribed insertion
   loss characteristics," Journal of Mathematics and Physics, vol. 18, pp. 257–353, 1939.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np
from numpy.polynomial import polynomial as P

__all__ = ["EllipticPrototype", "elliptic_prototype"]


@dataclass(frozen=True)
class EllipticPrototype:
    """Normalized element values (1 ohm, 1 rad/s passband edge).

    ``main`` (n+1)/2 values of the main elements (shunt C for ``first="shunt"``, series
    L otherwise), ``arm_l`` and ``arm_c`` (n-1)/2 values of each resonant arm, ``notch``
    the arms' resonant frequencies [rad/s] (``1/sqrt(arm_l * arm_c)``).
    """

    first: str
    main: np.ndarray
    arm_l: np.ndarray
    arm_c: np.ndarray
    notch: np.ndarray


def _polys(n: int, ripple: float, stop: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """E, N, F as ascending real coefficient arrays (F monic, sign +)."""
    # lazy: scipy.signal costs ~0.7 s to import; only elliptic designs need it
    from scipy import signal

    z, p, k = signal.ellipap(n, ripple, stop)
    e = np.real(P.polyfromroots(p))
    nn = np.real(k * P.polyfromroots(z))
    # E(-s), N(-s): flip odd coefficients
    flip = (-1.0) ** np.arange(n + 1)
    rhs = P.polysub(P.polymul(e, e * flip), P.polymul(nn, nn * flip[:len(nn)]))
    # rhs is even in s: as a polynomial in x = -s^2, it is x * prod (x - w_r^2)^2 (scaled)
    q = rhs[::2] * (-1.0) ** np.arange(len(rhs[::2]))  # coefficients in x
    crit = P.polyroots(P.polyder(q))
    crit = np.real(crit[np.abs(np.imag(crit)) < 1e-6 * (1 + np.abs(crit))])
    crit = crit[(crit > 0) & (crit < 1.0 + 1e-9)]
    vals = np.abs(P.polyval(crit, q))
    w2 = np.sort(crit[np.argsort(vals)[:(n - 1) // 2]])
    f = np.array([0.0, 1.0])
    for x in w2:
        f = P.polymul(f, [x, 0.0, 1.0])
    return e, nn, f


def _divide(num: np.ndarray, w2: float) -> np.ndarray:
    """Quotient of ``num`` by (s^2 + w2), dropping the (tiny) remainder."""
    quo, _ = P.polydiv(num, np.array([w2, 0.0, 1.0]))
    return quo


def _expand(num: np.ndarray, den: np.ndarray, zeros: tuple[float, ...]
            ) -> tuple[list[float], list[float]] | None:
    """Zero-shifting expansion of the immittance num/den (a shunt-C / series-L side).

    Returns (main values, arm residues 1/C_arm or 1/L_arm) or None if a value is not
    positive.
    """
    main, arms = [], []
    for w in zeros:
        s = 1j * w
        c = (P.polyval(s, num) / P.polyval(s, den) / s).real
        if not c > 0:
            return None
        main.append(c)
        num1 = P.polysub(num, c * P.polymul([0.0, 1.0], den))
        q = _divide(num1, w * w)
        # Z' = den / ((s^2 + w^2) q): residue form a s / (s^2 + w^2)
        a = (P.polyval(s, den) / (s * P.polyval(s, q))).real
        if not a > 0:
            return None
        arms.append(a)
        rest = P.polysub(den, a * P.polymul([0.0, 1.0], q))
        den2 = _divide(rest, w * w)
        num, den = q, den2  # Y'' = q / den2
    # what is left: s C_n + 1 (the 1-ohm load)
    if len(num) < 2 or len(den) < 1:
        return None
    c_last = num[1] / den[0]
    if not c_last > 0:
        return None
    main.append(c_last)
    return main, arms


def _prototype(first: str, main, arms, notch) -> EllipticPrototype:
    w, a = np.asarray(notch, dtype=float), np.asarray(arms, dtype=float)
    if first == "shunt":  # arm: parallel L-C, Z = (1/C) s / (s^2 + w^2)
        arm_c = 1.0 / a
        arm_l = 1.0 / (arm_c * w * w)
    else:  # arm: series L-C to ground, Y = (1/L) s / (s^2 + w^2)
        arm_l = 1.0 / a
        arm_c = 1.0 / (arm_l * w * w)
    return EllipticPrototype(first=first, main=np.asarray(main, dtype=float), arm_l=arm_l,
                             arm_c=arm_c, notch=w)


def _s21(pr: EllipticPrototype, w: np.ndarray) -> np.ndarray:
    """S21 of the normalized ladder at ``w`` [rad/s] by ABCD cascade (1-ohm ports)."""
    s = 1j * np.asarray(w, dtype=float)
    a, b, c, d = np.ones_like(s), np.zeros_like(s), np.zeros_like(s), np.ones_like(s)
    for i, v in enumerate(pr.main):  # a handful of sections
        if pr.first == "shunt":
            a, c = a + b * s * v, c + d * s * v
            if i < len(pr.arm_l):
                z = 1.0 / (1.0 / (s * pr.arm_l[i]) + s * pr.arm_c[i])
                b, d = b + a * z, d + c * z
        else:
            b, d = b + a * s * v, d + c * s * v
            if i < len(pr.arm_l):
                y = 1.0 / (s * pr.arm_l[i] + 1.0 / (s * pr.arm_c[i]))
                a, c = a + b * y, c + d * y
    return 2.0 / (a + b + c + d)


def elliptic_prototype(n: int, ripple: float, stop: float, first: str = "shunt"
                       ) -> EllipticPrototype:
    """Element values of the odd-order elliptic low-pass prototype.

    Parameters
    ----------
    n : int
        Order, odd, 3–11.
    ripple : float
        Passband ripple [dB], > 0.
    stop : float
        Minimum stopband attenuation [dB], > ``ripple``.
    first : {"shunt", "series"}
        Which dual ladder (module docstring).

    Returns
    -------
    EllipticPrototype

    Raises
    ------
    ValueError
        Even or out-of-range order, or no zero order gives positive values.
    """
    if n % 2 == 0 or not 3 <= n <= 11:
        raise ValueError(f"elliptic order must be odd, 3-11 (got {n})")
    from scipy import signal  # lazy, see _polys

    e, _, f = _polys(n, ripple, stop)
    z, _, _ = signal.ellipap(n, ripple, stop)
    notches = np.sort(np.unique(np.round(np.abs(np.imag(z)), 12)))
    # S11 = -F/E: shunt-first expands Y = (E + F)/(E - F) (a shunt C at infinity);
    # series-first expands Z = (E + F)/(E - F) for S11 = +F/E, by the same algebra
    num, den = P.polyadd(e, f), P.polysub(e, f)
    w_grid = np.linspace(0.02, 4.0, 2000)
    _, h_ref = signal.freqs(*signal.ellip(n, ripple, stop, 1.0, analog=True), w_grid)
    ref_db = 20 * np.log10(np.abs(h_ref))
    found = []
    for perm in itertools.permutations(range(len(notches))):  # at most 5! = 120 orders
        res = _expand(num, den, tuple(notches[list(perm)]))
        if res is not None:
            pr = _prototype(first, res[0], res[1], notches[list(perm)])
            err = np.max(np.abs(20 * np.log10(np.abs(_s21(pr, w_grid))) - ref_db))
            ok = err <= 1e-3
            found.append((not ok, -float(pr.main.min()) if ok else err, pr))
    if found:  # accurate first, then the most balanced (largest smallest main element)
        return min(found, key=lambda t: t[:2])[2]
    raise ValueError("no positive elliptic ladder found; lower the stopband attenuation "
                     "or raise the order")
