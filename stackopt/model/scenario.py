"""The scenario: the user's board, circuit, requirements and what the search may vary.

A scenario names no prices; the fab's cost table is a separate file (it may be named here
with ``cost_table``, relative to the scenario file). The ``space:`` and ``search:`` sections
are in :mod:`stackopt.model.searchspec` (their names are importable from here too).
"""

from __future__ import annotations

from pydantic import BaseModel, Field, field_validator, model_validator

from stackopt.model.circuit import Circuit
from stackopt.model.costtable import SolderMask
from stackopt.model.fields import (
    FROZEN,
    Count,
    Decibel,
    Frequency,
    Impedance,
    PositiveLength,
    unique_names,
)
from stackopt.model.mitigations import MITIGATIONS
from stackopt.model.searchspec import (
    Objective,
    RobustnessSpec,
    SearchSpec,
    SpaceSpec,
    ThicknessWindow,
)
from stackopt.physics.linetypes import PAIR_TYPES, STRIPLINE_TYPES, check_line_type
from stackopt.units import format_quantity

__all__ = [
    "Board",
    "Requirement",
    "ControlledLine",
    "SolderMask",
    "ThicknessWindow",
    "SpaceSpec",
    "SearchSpec",
    "RobustnessSpec",
    "Scenario",
    "MITIGATIONS",
    "Objective",
    "MAX_QUANTITY",
    "check_lot_sizes",
]


#: Largest lot accepted.
MAX_QUANTITY = 10_000_000


def check_lot_sizes(values: object) -> tuple[int, ...]:
    """Lot sizes for a cost-against-quantity sweep: whole numbers from 1 to
    :data:`MAX_QUANTITY`, each once, returned ascending.

    Raises
    ------
    ValueError
        ``"message; fix"`` naming the first bad or repeated value.
    """
    items = list(values) if isinstance(values, list | tuple) else [values]
    out = []
    for v in items:
        text = str(v).strip()
        ok = text.isdigit() if isinstance(v, str) else (isinstance(v, int)
                                                        and not isinstance(v, bool))
        if not ok or not 1 <= int(text) <= MAX_QUANTITY:
            raise ValueError(f"{text!r} is not a number of boards; give whole numbers from "
                             f"1 to {MAX_QUANTITY:,}, e.g. 100,1000,10000")
        out.append(int(text))
    if not out:
        raise ValueError("no lot size given; list one or more, e.g. 100,1000,10000")
    seen = sorted(out)
    for a, b in zip(seen, seen[1:], strict=False):
        if a == b:
            raise ValueError(f"{a} boards is listed twice; list each lot size once")
    return tuple(seen)


class Board(BaseModel):
    """The board outline, the order quantity (the main lot) and, optionally, more lot
    sizes to price the picks at (``quantities``: cost against quantity)."""

    model_config = FROZEN
    width: PositiveLength
    height: PositiveLength
    quantity: Count = Field(gt=0, le=MAX_QUANTITY)
    quantities: tuple[Count, ...] | None = None

    @field_validator("quantities", mode="before")
    @classmethod
    def _lots(cls, v: object) -> object:
        return None if v is None else check_lot_sizes(v)


class Requirement(BaseModel):
    """A minimum attenuation (|S21| below 0 dB by at least ``min_attenuation``) at one
    frequency or over a band."""

    model_config = FROZEN
    name: str | None = None
    frequency: Frequency | None = None
    band: tuple[Frequency, Frequency] | None = None
    min_attenuation: Decibel
    points: Count = Field(21, ge=2, le=401, description="frequencies sampled across a band")

    @model_validator(mode="after")
    def _one_of(self) -> Requirement:
        if (self.frequency is None) == (self.band is None):
            raise ValueError("give either 'frequency' or 'band' (two frequencies), not both "
                             "or neither")
        if self.band is not None and not self.band[0] < self.band[1]:
            raise ValueError("band must be [low, high] with low < high")
        if self.min_attenuation <= 0:
            raise ValueError("min_attenuation is a positive number of dB, e.g. '40 dB'")
        return self

    @property
    def label(self) -> str:
        """A short name for people: the given name, or the frequency / band with its unit
        (``"1.736 GHz"``, ``"300 MHz to 1 GHz"``; six digits, so labels stay apart)."""
        if self.name:
            return self.name
        if self.frequency is not None:
            return format_quantity(self.frequency, "frequency", 6)
        assert self.band is not None  # guaranteed by the validator
        return (f"{format_quantity(self.band[0], 'frequency', 6)} to "
                f"{format_quantity(self.band[1], 'frequency', 6)}")

    @property
    def key(self) -> str:
        """The frequency in Hz as a string (for a band ``"low-high"``), the summary's key."""
        if self.frequency is not None:
            return f"{self.frequency:.10g}"
        lo, hi = self.band  # type: ignore[misc]
        return f"{lo:.10g}-{hi:.10g}"


class ControlledLine(BaseModel):
    """A controlled-impedance line that every candidate must carry with a manufacturable
    width: single-ended (``impedance``) or an edge-coupled pair (``differential``, the
    target Zdiff = 2 Zodd, with the pair's edge-to-edge ``spacing``; the width is
    synthesized for that spacing), on layers: ``outer`` (every outer signal layer over a
    plane), ``inner`` (every inner signal layer with a plane on each side) or one layer
    name ``L1``, ``L3``, ...; default: every signal layer where the type applies (the outer
    ones for microstrip, cpwg and diff-microstrip, the inner ones for the stripline types;
    :data:`stackopt.physics.linetypes.LINE_TYPES`). Each layer gets its own width and
    constraints, named ``<name>@L<k>`` (:mod:`stackopt.model.routing`)."""

    model_config = FROZEN
    name: str = Field(min_length=1, max_length=100)
    type: str = Field("microstrip", description="a key of "
                      ":data:`stackopt.physics.linetypes.LINE_TYPES`")
    layer: str | None = Field(None, description="'outer', 'inner' or L1, L2, ...")
    impedance: Impedance | None = None
    differential: Impedance | None = Field(None, description="target Zdiff of a pair")
    spacing: PositiveLength | None = Field(None, description="edge-to-edge gap of a pair")
    max_width: PositiveLength | None = None
    min_width: PositiveLength | None = None
    gap: PositiveLength | None = Field(None, description="CPWG gap to the coplanar ground")

    @field_validator("type")
    @classmethod
    def _type(cls, v: str) -> str:
        return check_line_type(v)

    @model_validator(mode="after")
    def _check(self) -> ControlledLine:
        pair, strip = self.type in PAIR_TYPES, self.type in STRIPLINE_TYPES
        if "@" in self.name:
            raise ValueError(f"line name {self.name!r} contains '@', which joins a line to "
                             "its layer in the outputs (rf50@L1); rename it")
        if pair and self.differential is None:
            raise ValueError(f"a {self.type} pair needs 'differential' (its target Zdiff, "
                             "e.g. 90 ohm) and 'spacing'")
        if pair and self.impedance is not None:
            raise ValueError(f"a {self.type} pair is sized for 'differential' (Zdiff = "
                             "2 Zodd); drop 'impedance' or use a single-ended type")
        if pair and self.spacing is None:
            raise ValueError(f"a {self.type} pair needs 'spacing' (edge to edge, e.g. "
                             "0.2 mm): the width is synthesized for that spacing")
        if not pair and self.impedance is None:
            raise ValueError(f"a {self.type} line needs 'impedance' (e.g. 50 ohm)")
        if not pair and (self.differential is not None or self.spacing is not None):
            raise ValueError("'differential' and 'spacing' are for the diff-microstrip and "
                             "diff-stripline types")
        rule = self.layer_rule
        if strip and rule in ("outer", 0):
            raise ValueError(f"a {self.type} runs between two planes, never on the top "
                             "layer; use layer 'inner' or an inner layer name such as L3")
        if not strip and rule == "inner":
            raise ValueError(f"a {self.type} runs on an outer layer; use layer 'outer' (or "
                             "type stripline / diff-stripline for an inner layer)")
        if self.min_width is not None and self.max_width is not None and (
                self.min_width > self.max_width):
            raise ValueError("min_width is above max_width; swap them")
        return self

    @property
    def target(self) -> float:
        """The target impedance the width is sized for, ohm (Zdiff for a pair)."""
        return float(self.differential if self.type in PAIR_TYPES else self.impedance)  # type: ignore[arg-type]

    @property
    def layer_rule(self) -> str | int:
        """``"outer"``, ``"inner"`` or a 0-based copper layer index."""
        if self.layer is None:
            return "inner" if self.type in STRIPLINE_TYPES else "outer"
        text = self.layer.strip().lower()
        if text in ("outer", "inner"):
            return text
        if text[:1] == "l" and text[1:].isdigit() and int(text[1:]) >= 1:
            return int(text[1:]) - 1
        raise ValueError(f"layer {self.layer!r} is not 'outer', 'inner' or a layer name "
                         "such as L1 or L3")


#: Said beside a passband taken from a generated filter's cutoff (not stated).
DESIGN_BAND_NOTE = ("the generated filter's design band; state 'passband' for the band the "
                    "signal uses")


class Scenario(BaseModel):
    """Everything the user states about the job (no prices)."""

    model_config = FROZEN
    name: str = Field(min_length=1, max_length=200)
    description: str = ""
    invented: bool = Field(False, description="true for demo data that is made up")
    cost_table: str | None = Field(None, description="path, relative to this file")
    board: Board
    circuit: Circuit
    requirements: tuple[Requirement, ...] = ()
    lines: tuple[ControlledLine, ...] = ()
    solder_mask: SolderMask | None = Field(
        None, description="over the outer layers, for the field-solver check of the lines; "
        "overrides the cost table's")
    space: SpaceSpec = SpaceSpec()
    search: SearchSpec = SearchSpec()
    passband: tuple[Frequency, Frequency] | None = Field(
        None, description="[low, high] where the circuit should pass the signal; default "
        "from a generated filter's cutoff")

    @model_validator(mode="after")
    def _check(self) -> Scenario:
        if self.passband is not None and not 0 < self.passband[0] < self.passband[1]:
            raise ValueError("passband must be [low, high] with 0 < low < high "
                             "(e.g. [10 MHz, 1 GHz])")
        if self.search.objective == "margin" and not self.requirements:
            raise ValueError("objective 'margin' needs at least one entry in 'requirements'")
        unique_names([r.name for r in self.requirements], "requirements", "requirements")
        unique_names([ln.name for ln in self.lines], "lines", "lines")
        for attr in ("label", "key"):
            names = [getattr(r, attr) for r in self.requirements]
            if len(set(names)) != len(names):
                raise ValueError("two requirements have the same frequency or name; "
                                 "merge them or name them apart")
        names = [ln.name for ln in self.lines]
        if len(set(names)) != len(names):
            raise ValueError("two lines have the same name; name them apart")
        most = max(self.space.layers)
        for ln in self.lines:
            rule = ln.layer_rule
            if isinstance(rule, int) and rule >= most:
                raise ValueError(
                    f"line {ln.name!r}: layer {ln.layer} does not exist on any board the "
                    f"space offers (at most {most} layers); pick a layer up to L{most} or "
                    "add a larger count to space.layers")
            if ln.type in STRIPLINE_TYPES and most < 4:
                raise ValueError(
                    f"line {ln.name!r}: a {ln.type} needs an inner layer between two planes "
                    f"and the space offers only {most}-layer boards; add 4 or more to "
                    "space.layers or use an outer-layer type (microstrip, cpwg, "
                    "diff-microstrip)")
        return self

    @property
    def passband_hz(self) -> tuple[float, float] | None:
        """Where the circuit should pass the signal, Hz: ``passband`` if given, else a
        generated low-pass filter's cutoff / 100 .. cutoff, a high-pass one's cutoff ..
        3 x cutoff (our convention); ``None`` for a listed circuit without ``passband``."""
        if self.passband is not None:
            return self.passband
        f = self.circuit.filter
        if f is None:
            return None
        if f.response == "lowpass":
            return (f.cutoff / 100.0, f.cutoff)
        return (f.cutoff, 3.0 * f.cutoff)

    @property
    def passband_words(self) -> str | None:
        """:attr:`passband_hz` in words, ``"863 MHz to 870 MHz"`` (the edges exact);
        ``None`` without a passband. Where ``passband`` is not stated, say
        :data:`DESIGN_BAND_NOTE` beside it."""
        band = self.passband_hz
        return None if band is None else f"{band[0] / 1e6:.6g} MHz to {band[1] / 1e6:.6g} MHz"

    @property
    def frequencies(self) -> tuple[float, ...]:
        """Every frequency the requirements sample, sorted, Hz."""
        import numpy as np

        fs: list[float] = []
        for r in self.requirements:
            if r.frequency is not None:
                fs.append(r.frequency)
            else:
                lo, hi = r.band  # type: ignore[misc]
                fs.extend(np.geomspace(lo, hi, r.points).tolist())
        if self.search.at is not None:
            fs.append(self.search.at)
        return tuple(sorted(set(fs)))
