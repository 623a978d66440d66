"""The scenario's ``space:`` and ``search:`` sections: what the search may vary (layer
counts, thickness window, copper, drills, vias, mitigations) and how it searches
(objective, method, budget, seed, via model, calibration, robustness).
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, Field, field_validator, model_validator

from stackopt.errors import InputError, did_you_mean
from stackopt.model.calibration import CalibrationRef
from stackopt.model.fields import (
    FROZEN,
    Count,
    Frequency,
    NonNegativeFloat,
    NonNegativeLength,
    PositiveLength,
    Tolerance,
)
from stackopt.model.mitigations import mitigation_error
from stackopt.physics.inductance import DEFAULT_VIA_MODEL, VIA_MODELS
from stackopt.plausible import SEED_MAX
from stackopt.units import COPPER_M_PER_OZ

__all__ = ["Objective", "Method", "ThicknessWindow", "SpaceSpec", "RobustnessSpec", "SearchSpec"]

Objective = Literal["margin", "attenuation", "inductance"]
#: Search methods (:func:`stackopt.search.api.optimize`).
Method = Literal["auto", "exact", "nsga2"]


def _mm(x: float) -> str:
    return f"{x * 1e3:g} mm"


class ThicknessWindow(BaseModel):
    """Allowed finished thickness: ``nominal`` ± ``tolerance`` (fraction), or min/max."""

    model_config = FROZEN
    nominal: PositiveLength | None = None
    tolerance: NonNegativeFloat = 0.10
    min: PositiveLength | None = None
    max: PositiveLength | None = None

    @model_validator(mode="after")
    def _check(self) -> ThicknessWindow:
        both = self.min is not None and self.max is not None
        if self.nominal is None and not both:
            raise ValueError("give 'nominal' (with 'tolerance') or both 'min' and 'max'")
        if self.nominal is not None and (self.min is not None or self.max is not None):
            raise InputError(f"both 'nominal: {_mm(self.nominal)}' and 'min'/'max' are "
                             "given; one of them would be ignored", key=["nominal"],
                             fix="keep 'nominal' with 'tolerance', or 'min' and 'max'")
        if self.tolerance >= 1:
            t = self.tolerance
            said = (f"tolerance {t:g} is read as {t * 100:g} %" if t >= 2
                    else f"tolerance {t * 100:g} %")
            hint = f"; did you mean '{t:g} %'?" if t >= 2 else ""
            raise InputError(f"{said}, which would reach zero thickness{hint}",
                             key=["tolerance"],
                             fix="give a fraction below 100 %, e.g. '10 %' or 0.1")
        lo, hi = self.bounds
        if both and not lo < hi:
            raise InputError(f"the window min {_mm(lo)} .. max {_mm(hi)} is empty",
                             key=["min"], fix="make 'min' smaller than 'max' (swapped?)")
        return self

    @property
    def bounds(self) -> tuple[float, float]:
        """(min, max) finished thickness, m."""
        if self.min is not None and self.max is not None:
            return self.min, self.max
        assert self.nominal is not None
        return self.nominal * (1 - self.tolerance), self.nominal * (1 + self.tolerance)


class SpaceSpec(BaseModel):
    """What the search may vary (intersected with what the fab's table offers)."""

    model_config = FROZEN
    layers: tuple[Count, ...] = (2, 4, 6)
    thickness: ThicknessWindow | None = None
    symmetric: bool = True
    copper: tuple[PositiveLength, ...] = (COPPER_M_PER_OZ,)
    drills: tuple[PositiveLength, ...] = (0.3e-3,)
    vias_per_ground: tuple[Count, ...] = (1,)
    max_plies: Count = Field(default=3, ge=1, le=4,
                             description="prepreg plies per opening, at most")
    mitigations: tuple[str, ...] = Field(default=(), description="names in "
                                         ":data:`stackopt.model.mitigations.MITIGATIONS`")
    constructions: Literal["any", "standard"] = Field(
        default="any", description="'standard': only the fab's listed constructions")

    @field_validator("mitigations")
    @classmethod
    def _mitigations(cls, v: tuple[str, ...]) -> tuple[str, ...]:
        for name in v:
            msg = mitigation_error(name)
            if msg:
                raise ValueError(msg)
        return v

    @model_validator(mode="after")
    def _check(self) -> SpaceSpec:
        for n in self.layers:
            if n < 2 or n % 2:
                raise ValueError(f"layer count {n} is not supported; use even counts from 2")
        for v in self.vias_per_ground:
            if not 1 <= v <= 16:
                raise ValueError(f"vias_per_ground {v} is out of range; use 1 to 16")
        if not (self.layers and self.copper and self.drills and self.vias_per_ground):
            raise ValueError("layers, copper, drills and vias_per_ground need one value each")
        if len(set(self.mitigations)) != len(self.mitigations):
            raise ValueError("a mitigation is listed twice")
        return self


class RobustnessSpec(BaseModel):
    """How a decision is tested against what the tool knows it does not know.

    ``models``: via models every candidate is also scored under; its *robust margin* is
    the worst margin over them at the nominal build. The default pair is the lowest
    (Goldfarb-Pucel) and the highest (Johnson-Graham) single-via inductance of the four
    models at every depth, i.e. the envelope of their spread; it costs one extra circuit
    solve per phenotype. List all four for the strictest test.

    Monte Carlo over the fab's and the parts' tolerances (``samples`` builds, Latin
    hypercube from the search seed): every dielectric layer's thickness, each with its
    material's ``thickness_tolerance`` from the cost table (else the table's capabilities'
    one; ``thickness``, a fraction, overrides them all), the Dk of every dielectric
    (``dk``, fraction), etched trace width (``etch``, m) and drill (``drill``, m) as normal
    deviates with the tolerance at 3 sigma (``distribution: uniform`` spreads them evenly
    over ± tolerance instead), and every part's value uniform over ± its ``tolerance`` (default
    :data:`stackopt.analyses.tolerances.PART_TOLERANCE`).
    """

    model_config = FROZEN
    models: tuple[str, ...] = Field(default=("goldfarb-pucel", "johnson"), min_length=1,
                                    description="keys of stackopt.physics.inductance."
                                    "VIA_MODELS")
    samples: int = Field(default=256, ge=16, le=100_000)
    yield_target: float = Field(default=0.95, gt=0.0, le=1.0)
    thickness: Tolerance | None = None
    dk: Tolerance = 0.05
    etch: NonNegativeLength = 25e-6
    drill: NonNegativeLength = 25e-6
    distribution: Literal["normal", "uniform"] = "normal"

    @model_validator(mode="after")
    def _check(self) -> RobustnessSpec:
        if len(set(self.models)) != len(self.models):
            raise ValueError("a via model is listed twice in robustness.models")
        for m in self.models:
            if m not in VIA_MODELS:
                raise ValueError(f"unknown via model {m!r} in robustness.models"
                                 f"{did_you_mean(m, VIA_MODELS)}; use some of: "
                                 f"{', '.join(VIA_MODELS)}")
        return self


class SearchSpec(BaseModel):
    """How to search: objective, method, budget, seed."""

    model_config = FROZEN
    objective: Objective = "margin"
    at: Frequency | None = Field(default=None, description="frequency for objective 'attenuation'")
    third_objective: Literal["lead_time"] | None = None
    method: Method = "auto"
    budget: Count = Field(default=20_000, ge=100, le=10_000_000)
    seed: Count = Field(default=1, ge=0, le=SEED_MAX)
    via_model: str = Field(default=DEFAULT_VIA_MODEL, description="a key of "
                           ":data:`stackopt.physics.inductance.VIA_MODELS`")
    calibration: str | CalibrationRef | None = Field(
        default=None, description="calibration file written by 'stackopt fit', relative to "
        "the scenario file; once loaded, its content")

    @field_validator("via_model")
    @classmethod
    def _via_model(cls, v: str) -> str:
        if v not in VIA_MODELS:
            raise ValueError(f"unknown via model {v!r}{did_you_mean(v, VIA_MODELS)}; use one "
                             f"of: {', '.join(VIA_MODELS)}")
        return v
    robustness: RobustnessSpec = RobustnessSpec()

    def via_scale(self, model: str) -> float:
        """The calibration factor on via model ``model``'s inductances (1 uncalibrated).

        Raises
        ------
        InputError
            When ``calibration`` still holds a file name (not loaded through
            :func:`stackopt.inputs.scenario.load_scenario`).
        """
        if self.calibration is None:
            return 1.0
        if isinstance(self.calibration, str):
            from stackopt.errors import InputError

            raise InputError(f"calibration file {self.calibration!r} was named but not loaded",
                             key="search.calibration",
                             fix="load the scenario with stackopt.inputs.scenario."
                             "load_scenario (or stackopt.inputs.calibration.with_calibration)")
        return self.calibration.factor(model)

    @model_validator(mode="after")
    def _check(self) -> SearchSpec:
        if self.objective == "attenuation" and self.at is None:
            raise ValueError("objective 'attenuation' needs 'at: <frequency>'")
        return self
