r"""A measured board of the user's own circuit against the model of that circuit.

The scenario's circuit on the given stackup is solved at the measured frequencies (the
same nodal analysis the search uses) three ways: with the via model as it is, with ideal
grounds (for scale: how much of the measured shape the ground inductance explains at
all), and — optionally — with one factor :math:`k` on every via self and mutual
inductance (:attr:`~stackopt.circuit.grounds.GroundBatch.via_scale`, the same field a
calibration file sets), fitted to minimize the rms dB error

.. math::

    e(k) = \sqrt{\tfrac1F \sum_f \left(|S_{21}^{model}(f; k)|_{dB} -
    |S_{21}^{meas}(f)|_{dB}\right)^2}.

Only the magnitude is compared: the board's connectors and feed lines add a phase the
circuit does not model. The fit first evaluates a log grid of factors as one batch (one
solve), then refines the best with ``scipy.optimize.least_squares``.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from stackopt.circuit import GroundBatch, solve
from stackopt.physics.shunt import db20

__all__ = ["BoardComparison", "compare_board", "FACTOR_RANGE"]

#: Factors searched on the ground inductances (a model 20x off is not a calibration).
FACTOR_RANGE = (0.05, 20.0)


@dataclass(frozen=True)
class BoardComparison:
    """Model against measurement over the band (arrays over the measured frequencies)."""

    f: np.ndarray
    measured: np.ndarray  # complex S21
    model: np.ndarray  # complex S21, the via model as it is
    ideal: np.ndarray  # complex S21, ideal grounds
    scaled: np.ndarray | None  # complex S21 with the fitted factor
    factor: float | None
    rms_error_db: float  # of the model as it is
    ideal_rms_error_db: float
    scaled_rms_error_db: float | None


def _rms_db(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """rms dB difference along the last axis."""
    return np.sqrt(np.mean((db20(a) - db20(b)) ** 2, axis=-1))


def compare_board(compiled, batch: GroundBatch, f: np.ndarray, s21: np.ndarray, model: str,
                  *, scale: bool = False) -> BoardComparison:
    """Compare the circuit's S21 on one stackup (``batch`` of one) with a measurement.

    Parameters
    ----------
    compiled : CompiledCircuit
        The scenario's circuit.
    batch : GroundBatch
        The stackup as the circuit sees it (N = 1); its ``via_scale`` is replaced.
    f : ndarray
        Measured frequencies [Hz].
    s21 : ndarray
        Measured complex S21 at the circuit's reference impedance.
    model : str
        Via model.
    scale : bool
        Also fit one factor on the via inductances.
    """
    one = replace(batch, via_scale=np.ones(1))
    s_model = solve(compiled, f, one, model)[0, :, 1, 0]
    s_ideal = solve(compiled, f, None, model)[0, :, 1, 0]
    out = dict(f=f, measured=s21, model=s_model, ideal=s_ideal, scaled=None, factor=None,
               rms_error_db=float(_rms_db(s_model, s21)),
               ideal_rms_error_db=float(_rms_db(s_ideal, s21)), scaled_rms_error_db=None)
    if scale:
        from scipy.optimize import least_squares

        grid = np.geomspace(*FACTOR_RANGE, 97)
        many = replace(one.take(np.zeros(len(grid), dtype=np.int64)), via_scale=grid)
        errs = _rms_db(solve(compiled, f, many, model)[:, :, 1, 0], s21[None, :])
        k0 = float(grid[int(np.argmin(errs))])

        def resid(x: np.ndarray) -> np.ndarray:
            b = replace(one, via_scale=np.exp(x))
            return db20(solve(compiled, f, b, model)[0, :, 1, 0]) - db20(s21)

        lo, hi = np.log(FACTOR_RANGE)
        res = least_squares(resid, [np.log(k0)], bounds=([lo], [hi]), xtol=1e-10)
        k = float(np.exp(res.x[0]))
        s_k = solve(compiled, f, replace(one, via_scale=np.full(1, k)), model)[0, :, 1, 0]
        out.update(scaled=s_k, factor=k, scaled_rms_error_db=float(_rms_db(s_k, s21)))
    return BoardComparison(**out)  # type: ignore[arg-type]
