r"""A shunt impedance across a matched line: transmission past a ground connection.

Vectorized: SI floats or arrays in (ohm, H, Hz), complex or real arrays out.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["shunt_s21", "db20", "shunt_inductor_s21_db", "DB_FLOOR"]

#: Smallest magnitude :func:`db20` takes the logarithm of (-300 dB), so that an exact
#: zero gives a finite, very negative number instead of ``-inf``.
DB_FLOOR: float = 1e-15


def shunt_s21(z: ArrayLike, z0: ArrayLike = 50.0) -> NDArray[np.complex128]:
    r"""Transmission coefficient of an impedance shunted across a matched line.

    .. math::

        S_{21} = \frac{2Z}{2Z + Z_0}

    The two-port is a single shunt element ``Z`` between the line and ground, with both
    ports referenced to the same real impedance ``Z0``; ``S11 = S21 - 1``.

    Parameters
    ----------
    z : array_like, complex
        Shunt impedance [ohm], e.g. :math:`j\omega L` for a ground via.
    z0 : array_like, default 50.0
        Port reference impedance [ohm], real and > 0.

    Returns
    -------
    ndarray of complex
        :math:`S_{21}` (dimensionless), broadcast over ``z`` and ``z0``. ``Z = 0`` gives 0
        (a perfect short), ``Z -> inf`` gives 1.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, chapter 4 (ABCD
       matrix of a shunt admittance and its conversion to S-parameters).

    """
    z = np.asarray(z, dtype=complex)
    return 2.0 * z / (2.0 * z + np.asarray(z0, dtype=float))


def db20(x: ArrayLike) -> NDArray[np.float64]:
    r"""Magnitude in decibels of a field quantity (voltage wave, S-parameter).

    .. math::

        20\log_{10}\max(|x|,\ 10^{-15})

    Parameters
    ----------
    x : array_like, real or complex
        Dimensionless ratio.

    Returns
    -------
    ndarray
        Level [dB]; never ``-inf`` (floored at -300 dB, :data:`DB_FLOOR`).

    """
    return 20.0 * np.log10(np.maximum(np.abs(np.asarray(x)), DB_FLOOR))


def shunt_inductor_s21_db(inductance: ArrayLike, f: ArrayLike, z0: ArrayLike = 50.0
                          ) -> NDArray[np.float64]:
    r"""|S21| in dB of an ideal inductor to ground across a line matched at ``z0``.

    .. math::

        |S_{21}|_{dB} = 20\log_{10}\left|\frac{2 j\omega L}{2 j\omega L + Z_0}\right|
        = -10\log_{10}\left(1 + \left(\frac{Z_0}{2\omega L}\right)^2\right)

    Parameters
    ----------
    inductance : array_like
        Shunt inductance ``L`` [H], > 0.
    f : array_like
        Frequency [Hz], > 0.
    z0 : array_like, default 50.0
        Reference impedance [ohm].

    Returns
    -------
    ndarray
        Transmission [dB], negative; broadcast over all three arguments. The deeper
        (more negative), the better the ground connection shorts the line.

    """
    omega = 2.0 * np.pi * np.asarray(f, dtype=float)
    return db20(shunt_s21(1j * omega * np.asarray(inductance, dtype=float), z0))
