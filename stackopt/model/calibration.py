"""The calibration file's content: measured coupons and one factor per via model.

The file format (YAML, documented in ``docs/calibration.md``) starts with the version key
``stackopt_calibration: 1``. Each coupon records where it came from (file name and
SHA-256), its geometry, what was fitted and, per via model, the ratio measured /
predicted; ``factors`` holds, per model, the factor fitted over all coupons and each
coupon's residual. All values are SI floats (the key names carry the unit).
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, Field, model_validator

from stackopt.model.fields import FROZEN

__all__ = ["CALIBRATION_VERSION", "ModelRatio", "CouponRecord", "FactorRecord",
           "CalibrationData", "CalibrationRef"]

#: The format version written in the file's first key.
CALIBRATION_VERSION = 1


class ModelRatio(BaseModel):
    """One via model at a coupon: its prediction and measured / predicted."""

    model_config = FROZEN
    predicted_H: float | None = Field(None, gt=0)
    ratio: float | None = Field(None, gt=0)


class CouponRecord(BaseModel):
    """One measured coupon: a shunt-via coupon (``kind: via``) or a board of the user's
    circuit (``kind: board``)."""

    model_config = FROZEN
    name: str = Field(min_length=1, max_length=200)
    kind: Literal["via", "board"]
    file: str
    sha256: str = Field(pattern=r"^[0-9a-f]{64}$")
    z0_ohm: float = Field(gt=0)
    band_Hz: tuple[float, float]
    points: int = Field(ge=3)
    rms_error_dB: float = Field(ge=0)
    models: dict[str, ModelRatio]
    best_model: str | None = None
    # kind: via
    depth_m: float | None = Field(None, gt=0)
    drill_m: float | None = Field(None, gt=0)
    count: int | None = Field(None, ge=1)
    pitch_m: float | None = Field(None, ge=0)
    inductance_H: float | None = Field(None, gt=0)
    inductance_ci_H: tuple[float, float] | None = None
    resistance_ohm: float | None = Field(None, ge=0)
    capacitance_F: float | None = Field(None, ge=0)
    used_phase: bool | None = None
    thru: str | None = None  # the thru the coupon was divided by (--thru) ...
    thru_sha256: str | None = None  # ... and its hash
    # kind: board
    scenario: str | None = None
    scenario_sha256: str | None = None
    stackup: str | None = None
    stackup_sha256: str | None = None
    model: str | None = None
    uncalibrated_rms_error_dB: float | None = None
    ideal_rms_error_dB: float | None = None

    @model_validator(mode="after")
    def _kind_fields(self) -> CouponRecord:
        need = (("depth_m", "drill_m", "count", "inductance_H") if self.kind == "via"
                else ("scenario", "stackup", "model"))
        missing = [k for k in need if getattr(self, k) is None]
        if missing:
            raise ValueError(f"a '{self.kind}' coupon needs {', '.join(missing)}; refit it "
                             "with 'stackopt fit ... --write'")
        if not self.band_Hz[0] <= self.band_Hz[1]:
            raise ValueError("band_Hz must be [low, high]")
        return self


class FactorRecord(BaseModel):
    """A model's factor over the coupons and each coupon's residual (ratio / factor - 1)."""

    model_config = FROZEN
    factor: float = Field(gt=0)
    rms_log_error: float = Field(ge=0)
    coupons: int = Field(ge=1)
    residuals: dict[str, float]


class CalibrationData(BaseModel):
    """A whole calibration file."""

    model_config = FROZEN
    stackopt_calibration: Literal[1]
    note: str = ""
    coupons: tuple[CouponRecord, ...] = Field(min_length=1)
    factors: dict[str, FactorRecord]

    @model_validator(mode="after")
    def _unique(self) -> CalibrationData:
        names = [c.name for c in self.coupons]
        if len(set(names)) != len(names):
            raise ValueError("two coupons have the same name; rename one")
        return self

    def factor(self, model: str) -> float | None:
        """The factor for via model ``model`` (None: no coupon calibrates it)."""
        rec = self.factors.get(model)
        return None if rec is None else rec.factor

    @property
    def best_model(self) -> str | None:
        """The model whose one factor explains the coupons best: most coupons covered,
        then the smallest rms log residual, then the factor closest to 1."""
        import math

        if not self.factors:
            return None
        f = self.factors
        return min(f, key=lambda m: (-f[m].coupons, round(f[m].rms_log_error, 9),
                                     abs(math.log(f[m].factor))))


class CalibrationRef(BaseModel):
    """A loaded calibration file as a scenario carries it (``search.calibration``): where
    it came from and its content."""

    model_config = FROZEN
    file: str
    sha256: str
    data: CalibrationData

    def factor(self, model: str) -> float:
        """The factor on via model ``model``'s inductances (1.0 when no coupon
        calibrates it)."""
        k = self.data.factor(model)
        return 1.0 if k is None else k

    def factors(self) -> dict[str, float]:
        """Factor per calibrated via model."""
        return {m: r.factor for m, r in self.data.factors.items()}

    def echo(self) -> dict:
        """What ``summary.json`` records: ``{file, sha256, factors, best_model, coupons}``,
        each coupon with its fit error and its residual under every model's factor."""
        d = self.data
        return {
            "file": self.file, "sha256": self.sha256, "factors": self.factors(),
            "best_model": d.best_model,
            "coupons": [{"name": c.name, "kind": c.kind, "file": c.file, "sha256": c.sha256,
                         "rms_error_dB": c.rms_error_dB,
                         "residuals": {m: r.residuals[c.name] for m, r in d.factors.items()
                                       if c.name in r.residuals}}
                        for c in d.coupons]}
