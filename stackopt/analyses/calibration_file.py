"""Build calibration files: one record per coupon, factors recomputed over all of them.

Writing to an existing calibration file adds the coupon (replacing one of the same name
or the same source hash) and refits every model's factor over all coupons
(:func:`stackopt.analyses.calibration.combine_factors`), so a two-layer and a four-layer
coupon fitted one after the other end up in one file.
"""

from __future__ import annotations

from stackopt.analyses.calibration import combine_factors
from stackopt.model.calibration import (
    CALIBRATION_VERSION,
    CalibrationData,
    CouponRecord,
    FactorRecord,
)

__all__ = ["with_coupon", "calibration_text", "via_record", "board_record", "HEADER"]

#: The comment block the file starts with.
HEADER = """\
# stackopt calibration file, format version 1 (see docs/calibration.md).
# Written by 'stackopt fit'; every value is SI (the key names carry the unit).
# factors: per via model, the factor that scales its via self and mutual inductances,
# fitted over all coupons below (geometric mean of measured / predicted); residuals are
# each coupon's ratio / factor - 1. Use it with 'search.calibration: <this file>' in a
# scenario or '--calibration <this file>' on optimize / eval.
"""


def with_coupon(existing: CalibrationData | None, record: CouponRecord,
                note: str = "") -> CalibrationData:
    """``existing`` with ``record`` added (replacing a coupon of the same name or source
    hash), factors refitted over every coupon."""
    old = () if existing is None else tuple(
        c for c in existing.coupons if c.name != record.name and c.sha256 != record.sha256)
    coupons = (*old, record)
    ratios = [(c.name, {m: r.ratio for m, r in c.models.items()}) for c in coupons]
    factors = {m: FactorRecord(**v) for m, v in combine_factors(ratios).items()}
    return CalibrationData(stackopt_calibration=CALIBRATION_VERSION,
                           note=note or (existing.note if existing else ""),
                           coupons=coupons, factors=factors)


def calibration_text(data: CalibrationData) -> str:
    """The file's text: :data:`HEADER`, the version key first, then note, coupons,
    factors (YAML; ``None`` values left out)."""
    import yaml

    body = data.model_dump(mode="json", exclude_none=True)
    ordered = {"stackopt_calibration": body.pop("stackopt_calibration"), **body}
    return HEADER + yaml.safe_dump(ordered, sort_keys=False, allow_unicode=True, width=100)


def via_record(name: str, meas, fit, models: dict, *, depth: float, drill: float,
               count: int, pitch: float | None, thru=None) -> CouponRecord:
    """The record of a fitted shunt-via coupon.

    Parameters
    ----------
    name : str
        Coupon name in the file.
    meas : Measurement
        :class:`~stackopt.inputs.measurement.Measurement` (the band that was fitted).
    fit : ShuntFit
        :class:`~stackopt.analyses.calibration.ShuntFit`.
    models : dict
        ``{model: {"predicted_H", "ratio"}}`` (:func:`compare_models`).
    depth : float
        Via depth [m].
    drill : float
        Drill [m].
    count : int
        Vias in the connection.
    pitch : float or None
        Their pitch [m] (None for one via).
    thru : Measurement, optional
        The thru the coupon was divided by.
    """
    from stackopt.analyses.calibration import best_model

    return CouponRecord(
        name=name, kind="via", file=meas.path.name, sha256=meas.sha256, z0_ohm=meas.z0,
        band_Hz=(float(meas.f[0]), float(meas.f[-1])), points=len(meas.f),
        rms_error_dB=fit.rms_error_db, models=models, best_model=best_model(models),
        depth_m=depth, drill_m=drill, count=count, pitch_m=pitch if count > 1 else None,
        inductance_H=fit.inductance, inductance_ci_H=fit.inductance_ci,
        resistance_ohm=fit.resistance,
        capacitance_F=fit.capacitance if fit.capacitance else None,
        used_phase=fit.used_phase, thru=None if thru is None else thru.path.name,
        thru_sha256=None if thru is None else thru.sha256)


def board_record(name: str, meas, cmp, model: str, *, scenario: str, scenario_sha256: str,
                 stackup: str, stackup_sha256: str) -> CouponRecord:
    """The record of a measured board of the user's circuit.

    Parameters
    ----------
    name : str
        Coupon name in the file.
    meas : Measurement
        The measurement in the band compared.
    cmp : BoardComparison
        :func:`~stackopt.analyses.calibration_board.compare_board`'s result.
    model : str
        The via model compared (the scenario's).
    scenario, scenario_sha256, stackup, stackup_sha256 : str
        The input files' names and hashes.
    """
    ratio = {"ratio": cmp.factor} if cmp.factor is not None else {}
    return CouponRecord.model_validate(dict(
        name=name, kind="board", file=meas.path.name, sha256=meas.sha256, z0_ohm=meas.z0,
        band_Hz=(float(meas.f[0]), float(meas.f[-1])), points=len(meas.f),
        rms_error_dB=(cmp.scaled_rms_error_db if cmp.scaled_rms_error_db is not None
                      else cmp.rms_error_db),
        models={model: ratio}, best_model=model if ratio else None, scenario=scenario,
        scenario_sha256=scenario_sha256, stackup=stackup, stackup_sha256=stackup_sha256,
        model=model, uncalibrated_rms_error_dB=cmp.rms_error_db,
        ideal_rms_error_dB=cmp.ideal_rms_error_db))
