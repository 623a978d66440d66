r"""What the user specifies: attenuation at frequencies and over bands, passband loss.

All functions take arrays with frequency on the last axis (after
:func:`attenuation_db`) and work for any leading batch shape.

.. math:: A(f) = -20\log_{10}|S_{21}(f)|\ \text{dB}\quad(\text{positive = attenuation})
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from stackopt.errors import InputError
from stackopt.physics.shunt import DB_FLOOR

__all__ = ["attenuation_db", "at_frequencies", "worst_in_band", "passband_insertion_loss_db",
           "difference_from_ideal_db"]


def attenuation_db(s: ArrayLike) -> np.ndarray:
    """Attenuation -20 log10 |S21| [dB] of S-parameters (..., F, 2, 2) -> (..., F).

    |S21| is floored at 1e-15 (300 dB) so that an exact short gives a finite number.
    """
    s21 = np.abs(np.asarray(s)[..., 1, 0])
    return -20.0 * np.log10(np.maximum(s21, DB_FLOOR))


def _grid(freqs: ArrayLike) -> np.ndarray:
    f = np.asarray(freqs, dtype=float).reshape(-1)
    if f.size == 0 or np.any(np.diff(f) <= 0):
        raise InputError("the frequency grid must be increasing", fix="sort the frequencies")
    return f


def at_frequencies(freqs: ArrayLike, values: ArrayLike, at: ArrayLike) -> np.ndarray:
    """Values (..., F) on the grid ``freqs`` [Hz] at the frequencies ``at`` (..., R).

    Exact where ``at`` is a grid point; linear in between (solve on a grid that holds
    the requirement frequencies to avoid interpolating).
    """
    f = _grid(freqs)
    y = np.asarray(values, dtype=float)
    at = np.atleast_1d(np.asarray(at, dtype=float))
    tol = 1e-9 * f[-1]
    if np.any(at < f[0] - tol) or np.any(at > f[-1] + tol):
        raise InputError("a requirement frequency lies outside the solved grid",
                         fix=f"keep it within {f[0]:g} to {f[-1]:g} Hz")
    i = np.clip(np.searchsorted(f, at) - 1, 0, max(len(f) - 2, 0))
    if len(f) == 1:
        return y[..., np.zeros(at.shape, dtype=int)]
    t = np.clip((at - f[i]) / (f[i + 1] - f[i]), 0.0, 1.0)
    return y[..., i] * (1 - t) + y[..., i + 1] * t


def worst_in_band(freqs: ArrayLike, values: ArrayLike, band: tuple[float, float],
                  worst: str = "min") -> np.ndarray:
    """Smallest (``worst="min"``, e.g. stopband attenuation) or largest (``"max"``,
    e.g. passband loss) value over ``band = (f_lo, f_hi)`` [Hz], band edges included
    (interpolated)."""
    f = _grid(freqs)
    lo, hi = float(band[0]), float(band[1])
    if not lo <= hi:
        raise InputError(f"band ({lo:g}, {hi:g}) Hz is reversed", fix="give (low, high)")
    y = np.asarray(values, dtype=float)
    inside = (f >= lo) & (f <= hi)
    edges = at_frequencies(f, y, [lo, hi])
    pts = np.concatenate([y[..., inside], edges], axis=-1)
    return pts.min(axis=-1) if worst == "min" else pts.max(axis=-1)


def passband_insertion_loss_db(freqs: ArrayLike, s: ArrayLike, band: tuple[float, float]
                               ) -> np.ndarray:
    """Worst (largest) insertion loss -20 log10 |S21| over a passband [dB]."""
    return worst_in_band(freqs, attenuation_db(s), band, worst="max")


def difference_from_ideal_db(s: ArrayLike, s_ideal: ArrayLike) -> np.ndarray:
    """Attenuation with the stackup's grounds minus with ideal grounds [dB] (..., F).

    Negative where the ground parasitics cost stopband; ``s_ideal`` (1, F, 2, 2) from
    ``solve(compiled, freqs)`` broadcasts against a batch.
    """
    return attenuation_db(s) - attenuation_db(s_ideal)
