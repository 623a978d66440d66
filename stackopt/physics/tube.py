r"""Partial inductance of a thin-walled tube (a plated via barrel) of any length.

The closed form :func:`stackopt.physics.inductance.partial_self_inductance` treats the
barrel as two filaments at the geometric mean distance ``r``; that is exact only for long
tubes and reads 8–21 % low for a barrel as short as its radius (every four-layer
prepreg). Here the surface current is spread over the rim and the Neumann mutual of two
axial filaments is averaged over every chord of the rim:

.. math::

    L_{tube}(l, r) = \frac1\pi\int_0^\pi M_{fil}\!\left(l,\ 2r\sin\frac\varphi2\right)d\varphi,
    \qquad M_{fil}(l, s) = \frac{\mu_0}{2\pi}\left[l\,\mathrm{asinh}\frac ls
    - \sqrt{l^2+s^2} + s\right]

The logarithmic singularity at :math:`\varphi = 0` is taken out analytically
(:math:`\mathrm{asinh}(l/s) = \ln(l + \sqrt{l^2+s^2}) - \ln s` and
:math:`\frac1\pi\int_0^\pi \ln(2r\sin\frac\varphi2)\,d\varphi = \ln r`, the geometric mean
distance of a circle from itself), leaving a smooth integrand that one fixed
:data:`GAUSS_NODES`-point Gauss–Legendre rule integrates to better than 1e-7 relative for
``l/r`` from 0.1 to 1e4 (5e-4 at ``l/r`` = 0.01; checked against adaptive scipy
quadrature in the tests).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from stackopt.physics.constants import MU0_OVER_2PI

__all__ = ["GAUSS_NODES", "tube_self_inductance"]

#: Points of the fixed Gauss–Legendre rule over the rim angle.
GAUSS_NODES = 24

_X, _W = np.polynomial.legendre.leggauss(GAUSS_NODES)
_PHI = 0.5 * np.pi * (_X + 1.0)  # nodes on (0, pi)
_WPHI = 0.5 * _W  # weights for (1/pi) * integral over (0, pi): sum to 1
_CHORD = 2.0 * np.sin(0.5 * _PHI)  # chord length / r at each node


def tube_self_inductance(length: ArrayLike, radius: ArrayLike) -> NDArray[np.float64]:
    r"""High-frequency partial self-inductance of a thin-walled round tube.

    .. math::

        L = \frac{\mu_0}{2\pi}\left[\frac1\pi\int_0^\pi\left(
            l\ln\!\left(l + \sqrt{l^2+s^2}\right) - \sqrt{l^2+s^2} + s\right)d\varphi
            - l\ln r\right],\qquad s = 2r\sin\frac\varphi2

    the chord average of the Neumann filament mutual (module docstring) with its
    logarithmic singularity integrated in closed form.

    Parameters
    ----------
    length : array_like
        Tube length ``l`` [m], > 0.
    radius : array_like
        Tube radius ``r`` [m], > 0 (the plated barrel's outer radius, half the drill).

    Returns
    -------
    ndarray
        Partial self-inductance [H] with all current on the tube's surface (above about
        100 MHz for a plated barrel); broadcast over the arguments.

    Notes
    -----
    Exact for an infinitely thin wall and a uniform current along the tube (quasi-static,
    ``l`` well below a tenth of a wavelength). For ``l/r`` above about 10 it agrees with
    the geometric-mean-distance closed form to 1 %; for ``l/r`` near 1 that form is
    about 20 % low. Validity: any ``l/r`` (0.1–1e4 checked to 1e-7).

    References
    ----------
    .. [1] F. W. Grover, *Inductance Calculations: Working Formulas and Tables*, Van
       Nostrand, 1946 (Dover reprint): mutual inductance of parallel filaments and the
       geometric mean distance of a circle (the ``ln r`` term).
    .. [2] C. R. Paul, *Inductance: Loop and Partial*, Wiley, 2010 (partial inductance as
       the Neumann integral over the conductor's current distribution).

    """
    ell = np.asarray(length, dtype=float)[..., None]
    r = np.asarray(radius, dtype=float)[..., None]
    s = r * _CHORD
    root = np.hypot(ell, s)
    smooth = ell * np.log(ell + root) - root + s
    avg = (smooth * _WPHI).sum(axis=-1)
    return MU0_OVER_2PI * (avg - ell[..., 0] * np.log(r[..., 0]))
