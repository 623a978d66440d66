r"""Fit the ground connection of a measured shunt-via coupon and compare the via models.

A shunt-via coupon is a line matched at :math:`Z_0` with one ground connection (one via,
or a row of vias) across it at the middle. The connection is a lumped branch
:math:`Z = R + j\omega L` (optionally with a small pad capacitance :math:`C` in parallel
to ground), and

.. math::

    S_{21} = \frac{2Z}{2Z + Z_0}\, e^{-j\omega\tau}

where :math:`\tau` is the delay of the two feed lines. Lossless matched feed lines change
only the phase, so the magnitude needs no de-embedding; the phase is used too when the
lumped-plus-delay model explains it (it separates :math:`R` from :math:`\omega L`).

:func:`fit_shunt` fits :math:`L, R` (and :math:`C`, :math:`\tau`) with
``scipy.optimize.least_squares`` on the complex log error (dB for the magnitude; the
phase error in radians times :math:`20/\ln 10`, the same scale) and gives a 95 %
confidence interval from the Jacobian. :func:`model_predictions` gives every registered
via model's value at the coupon's geometry; :func:`compare_models` the ratios
measured/predicted; :func:`combine_factors` one factor per model over several coupons
(the geometric mean of the ratios, which minimizes the squared log error) with each
coupon's residual.

The fit assumes a lumped connection (its size well below a wavelength), matched,
low-loss feed lines and reference planes that need no correction of magnitude; see
``docs/calibration.md``.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from stackopt.physics.inductance import VIA_MODELS, check_via_model
from stackopt.physics.parallel import parallel_via_inductance, row_positions
from stackopt.physics.shunt import db20, shunt_s21

__all__ = ["ShuntFit", "coupon_s21", "fit_shunt", "model_predictions", "compare_models",
           "best_model", "combine_factors", "CONFIDENCE", "PHASE_ACCEPT_DEG"]

#: Confidence level of the reported interval on L.
CONFIDENCE = 0.95
#: The phase joins the fit when the lumped-plus-delay model explains it to this rms [deg].
PHASE_ACCEPT_DEG = 5.0
#: Nepers (and radians) to dB: the scale of both parts of the complex log error.
_DB_PER_NEPER = 20.0 / math.log(10.0)

_NH, _PF, _NS = 1e-9, 1e-12, 1e-9


def coupon_s21(f: ArrayLike, resistance: ArrayLike, inductance: ArrayLike,
               capacitance: ArrayLike = 0.0, z0: ArrayLike = 50.0, delay: ArrayLike = 0.0
               ) -> NDArray[np.complex128]:
    r"""S21 of a shunt coupon: a branch :math:`R + j\omega L` (with :math:`C` in parallel)
    across a matched line, behind feed lines of total delay :math:`\tau`.

    .. math::

        Y = \frac{1}{R + j\omega L} + j\omega C,\qquad
        S_{21} = \frac{2/Y}{2/Y + Z_0}\, e^{-j\omega\tau}

    Parameters
    ----------
    f : array_like
        Frequency [Hz], > 0.
    resistance, inductance, capacitance : array_like
        Branch R [ohm] >= 0, L [H] > 0, pad capacitance C [F] >= 0.
    z0 : array_like, default 50.0
        Line and reference impedance [ohm].
    delay : array_like, default 0.0
        Total one-way delay of the feed lines [s] (phase only).

    Returns
    -------
    ndarray of complex
        S21, broadcast over all arguments.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, ch. 4 (shunt
       admittance in a matched line; a matched lossless line is a pure delay).
    """
    w = 2.0 * np.pi * np.asarray(f, dtype=float)
    y = 1.0 / (np.asarray(resistance, dtype=float) + 1j * w * np.asarray(inductance, float))
    y = y + 1j * w * np.asarray(capacitance, dtype=float)
    return shunt_s21(1.0 / y, z0) * np.exp(-1j * w * np.asarray(delay, dtype=float))


@dataclass(frozen=True)
class ShuntFit:
    """The fitted branch of a shunt coupon (SI units).

    ``inductance_ci`` is the :data:`CONFIDENCE` interval from the Jacobian (residuals
    taken as independent; systematic model error is not in it — see ``rms_error_db``).
    """

    inductance: float
    inductance_ci: tuple[float, float]
    resistance: float
    capacitance: float
    delay: float | None
    rms_error_db: float
    used_phase: bool
    points: int

    def s21(self, f: ArrayLike, z0: float, inductance: float | None = None
            ) -> NDArray[np.complex128]:
        """The fitted S21 at ``f`` (without the feed delay); ``inductance`` replaces L."""
        ind = self.inductance if inductance is None else inductance
        return coupon_s21(f, self.resistance, ind, self.capacitance, z0)


def _start_inductance(f: np.ndarray, mag: np.ndarray, z0: float) -> float:
    """L from each point with R = 0: omega L = Z0/2 |S| / sqrt(1 - |S|^2); the median."""
    ok = mag < 0.999
    est = z0 / 2 * mag[ok] / np.sqrt(1 - mag[ok] ** 2) / (2 * np.pi * f[ok])
    return float(np.median(est)) if est.size else 1e-9


def _solve(f: np.ndarray, s: np.ndarray, z0: float, x0: np.ndarray, lo: np.ndarray,
           hi: np.ndarray, with_c: bool, with_phase: bool):
    """One least-squares run; parameters scaled to nH, ohm, pF, ns."""
    from scipy.optimize import least_squares

    meas_db = db20(s)

    def model(x: np.ndarray) -> np.ndarray:
        c = x[2] * _PF if with_c else 0.0
        tau = x[-1] * _NS if with_phase else 0.0
        return coupon_s21(f, x[1], x[0] * _NH, c, z0, tau)

    def resid(x: np.ndarray) -> np.ndarray:
        m = model(x)
        r = db20(m) - meas_db
        if with_phase:
            r = np.concatenate([r, np.angle(m / s) * _DB_PER_NEPER])
        return r

    res = least_squares(resid, x0, bounds=(lo, hi), x_scale="jac", method="trf",
                        xtol=1e-12, ftol=1e-12, gtol=1e-12, max_nfev=2000)
    return res, model


def fit_shunt(f: ArrayLike, s21: ArrayLike, z0: float = 50.0, *, capacitance: bool = False,
              phase: bool | None = None) -> ShuntFit:
    """Fit a shunt coupon's branch R + jωL (+ C) to measured S21.

    Parameters
    ----------
    f : array_like
        Frequencies [Hz], shape (F,), F >= 3.
    s21 : array_like, complex
        Measured S21 at reference impedance ``z0``, shape (F,).
    z0 : float
        Line / reference impedance [ohm].
    capacitance : bool, default False
        Also fit a pad capacitance in parallel with the branch.
    phase : bool or None, default None
        Use the phase (with a feed-line delay as a nuisance parameter): True, False, or
        None = when the model explains it to :data:`PHASE_ACCEPT_DEG` rms.

    Returns
    -------
    ShuntFit
    """
    from scipy.stats import t as student_t

    f = np.asarray(f, dtype=float)
    s = np.asarray(s21, dtype=complex)
    mag = np.abs(s)
    l0 = _start_inductance(f, mag, z0) / _NH
    npar = 3 if capacitance else 2
    lo = np.array([1e-7, 0.0, 0.0][:npar])
    hi = np.array([1e4, 1e4, 1e3][:npar])
    best = None
    for r0 in (1e-3, 0.05 * z0 * float(mag.min())):  # two starts for R
        x0 = np.array([l0, r0, 0.01][:npar])
        res, model = _solve(f, s, z0, np.clip(x0, lo, hi), lo, hi, capacitance, False)
        if best is None or res.cost < best[0].cost:
            best = (res, model)
    assert best is not None
    res, model = best
    used_phase = False
    if phase is not False:
        resid_phase = np.unwrap(np.angle(s) - np.angle(model(res.x)))
        slope, icpt = np.polyfit(2 * np.pi * f, resid_phase, 1)
        x0 = np.append(res.x, -slope / _NS)
        resp, model_p = _solve(f, s, z0, x0, np.append(lo, -1e6), np.append(hi, 1e6),
                               capacitance, True)
        ph_rms = float(np.sqrt(np.mean(np.angle(model_p(resp.x) / s) ** 2)))
        if phase or (np.degrees(ph_rms) <= PHASE_ACCEPT_DEG and resp.success):
            res, model, used_phase = resp, model_p, True
    m = len(res.fun)
    dof = max(m - len(res.x), 1)
    s2 = 2 * res.cost / dof
    cov = np.linalg.pinv(res.jac.T @ res.jac) * s2
    sig = math.sqrt(max(float(cov[0, 0]), 0.0)) * _NH
    ind = float(res.x[0]) * _NH
    k = float(student_t.ppf(0.5 + CONFIDENCE / 2, dof))
    rms = float(np.sqrt(np.mean((db20(model(res.x)) - db20(s)) ** 2)))
    return ShuntFit(inductance=ind, inductance_ci=(ind - k * sig, ind + k * sig),
                    resistance=float(res.x[1]),
                    capacitance=float(res.x[2]) * _PF if capacitance else 0.0,
                    delay=float(res.x[-1]) * _NS if used_phase else None,
                    rms_error_db=rms, used_phase=used_phase, points=len(f))


def model_predictions(depth: float, drill: float, count: int = 1, pitch: float = 0.0,
                      models: Iterable[str] = VIA_MODELS) -> dict[str, float]:
    """Every via model's inductance [H] of the coupon's connection (``count`` vias in a
    row at ``pitch``); NaN where a model gives no positive value."""
    xy = row_positions(count, pitch if count > 1 else 0.0)
    out: dict[str, float] = {}
    for name in models:  # a handful of models
        value = float(parallel_via_inductance(depth, drill, xy,
                                              check_via_model(name)))
        out[name] = value if value > 0 and math.isfinite(value) else math.nan
    return out


def compare_models(measured: float, predicted: Mapping[str, float]
                   ) -> dict[str, dict[str, float | None]]:
    """``{model: {"predicted_H", "ratio"}}`` with ratio = measured / predicted (None where
    the model gives nothing)."""
    out: dict[str, dict[str, float | None]] = {}
    for name, p in predicted.items():
        ok = math.isfinite(p) and p > 0
        out[name] = {"predicted_H": p if ok else None, "ratio": measured / p if ok else None}
    return out


def best_model(models: Mapping[str, Mapping[str, float | None]]) -> str | None:
    """The model whose prediction is closest to the measurement (smallest |ln ratio|)."""
    scored = [(abs(math.log(r)), n) for n, v in models.items() if (r := v.get("ratio"))]
    return min(scored)[1] if scored else None


def combine_factors(coupons: Sequence[tuple[str, Mapping[str, float | None]]]
                    ) -> dict[str, dict]:
    r"""One factor per model over several coupons, and each coupon's residual.

    For model :math:`m` with ratios :math:`\rho_{cm}` (measured / predicted) on coupons
    :math:`c`, the factor minimizing :math:`\sum_c (\ln k_m - \ln\rho_{cm})^2` is the
    geometric mean :math:`k_m = \exp(\overline{\ln\rho_{cm}})`; the residual of coupon
    :math:`c` is :math:`\rho_{cm}/k_m - 1`.

    Parameters
    ----------
    coupons : sequence of (name, {model: ratio or None})
        Each coupon's name and its ratio measured / predicted per model.

    Returns
    -------
    dict
        ``{model: {"factor", "rms_log_error", "coupons", "residuals": {name: r}}}`` for
        every model with at least one ratio.
    """
    names = sorted({m for _, r in coupons for m in r})
    out: dict[str, dict] = {}
    for m in names:
        pairs = [(c, r[m]) for c, r in coupons if r.get(m)]
        if not pairs:
            continue
        logs = np.log([float(v) for _, v in pairs])  # type: ignore[arg-type]
        k = float(np.exp(logs.mean()))
        out[m] = {"factor": k,
                  "rms_log_error": float(np.sqrt(np.mean((logs - logs.mean()) ** 2))),
                  "coupons": len(pairs),
                  "residuals": {c: float(v) / k - 1 for c, v in pairs}}  # type: ignore[arg-type]
    return out
