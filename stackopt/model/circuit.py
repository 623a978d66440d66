"""The scenario's ``circuit:`` section: a two-port of R, L, C elements between named nodes.

Every element terminal that goes to the reserved node ``gnd`` may name a *ground
connection* (``ground: g1``): the pad-to-via trace and via(s) whose inductance each
candidate stackup sets. Two elements naming the same connection share its via(s). A
``filter:`` entry generates a Butterworth or Chebyshev ladder instead of listing
``elements`` (expanded by :func:`stackopt.circuit.compile.compile_circuit`). The schema is
documented, with an example, in ``docs/circuit.md``.

Cross-field mistakes (unknown node, missing value, a node connected to nothing, a loop of
zero-impedance elements) are found on validation (:mod:`stackopt.model.circuit_checks`) and
name the element and the fix.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import BaseModel, Field, model_validator

from stackopt.errors import InputError, did_you_mean
from stackopt.model.circuit_checks import GROUND_NODE, check_names, check_topology
from stackopt.model.fields import (
    FROZEN,
    Count,
    Decibel,
    Frequency,
    Impedance,
    Inductance,
    Length,
    NonNegativeFloat,
    NonNegativeLength,
    PositiveFloat,
    PositiveLength,
    Resistance,
)
from stackopt.physics.mounting import SIZE_CODES
from stackopt.units import Dimension, format_quantity, parse_quantity

__all__ = ["GROUND_NODE", "Mount", "Parasitics", "Element", "Interconnect",
           "InterconnectTemplate", "GroundGeometry", "Ground", "Coupling",
           "FilterSpec", "Circuit"]

Name = Annotated[str, Field(pattern=r"^[A-Za-z_][A-Za-z0-9_.+\-]*$", max_length=40)]
ElementType = Literal["R", "L", "C"]
_DIM: dict[str, Dimension] = {"R": "impedance", "L": "inductance", "C": "capacitance"}
_EXAMPLE = {"R": "10 ohm", "L": "12 nH", "C": "3.9 pF"}


class Mount(BaseModel):
    """How a two-terminal part sits on the board: an EIA size code (``size: 0402``, body
    dimensions from :data:`stackopt.physics.mounting.SIZE_CODES`) or its body ``length``,
    ``width`` and ``thickness``. Its loop over the candidate's plane adds a mounted
    inductance (:func:`stackopt.physics.mounting.mounted_inductance`)."""

    model_config = FROZEN
    size: str | None = None
    length: PositiveLength | None = None
    width: PositiveLength | None = None
    thickness: PositiveLength | None = None

    @model_validator(mode="before")
    @classmethod
    def _code(cls, data: Any) -> Any:
        if isinstance(data, int | str):  # mount: 0402 (YAML may read it as a number)
            data = {"size": f"{data:04d}" if isinstance(data, int) else data}
        return data

    @model_validator(mode="after")
    def _dims(self) -> Mount:
        codes = ", ".join(SIZE_CODES)
        if self.size is not None:
            if self.size not in SIZE_CODES:
                raise ValueError(f"unknown part size {self.size!r}"
                                 f"{did_you_mean(self.size, list(SIZE_CODES))}; use one of "
                                 f"{codes}, or give length, width and thickness")
            if any(v is not None for v in (self.length, self.width, self.thickness)):
                raise ValueError("give either a size code or length/width/thickness, "
                                 "not both")
        elif None in (self.length, self.width, self.thickness):
            raise ValueError(f"a mount needs 'size' ({codes}) or all of length, width "
                             "and thickness (e.g. 1.0 mm, 0.5 mm, 0.5 mm)")
        return self

    @property
    def body(self) -> tuple[float, float, float]:
        """Body length, width, thickness [m]."""
        if self.size is not None:
            return SIZE_CODES[self.size]
        return (float(self.length), float(self.width), float(self.thickness))  # type: ignore[arg-type]


class Parasitics(BaseModel):
    """Series parasitics of a part: ESL, ESR, a quality factor, its mount and, for an
    inductor, its self-resonance.

    ``q`` with ``q_at``: a fixed series resistance that gives that Q at ``q_at``.
    ``q`` alone: the same Q at every frequency. ``esl`` is the part's *intrinsic*
    inductance (the body alone); with ``mount`` the loop over the candidate's plane is
    added per stackup. ``mounted_esl`` is a *measured* mounted value: it replaces both
    ``esl`` and the mount model (the board no longer changes it). ``srf`` (inductors): the
    self-resonant frequency, modelled as a capacitance ``1/((2 pi srf)^2 L)`` in parallel.
    ``tolerance``: the part's value tolerance (± fraction), used by the Monte Carlo yield.
    """

    model_config = FROZEN
    esl: Inductance = 0.0
    esr: Resistance = 0.0
    q: PositiveFloat | None = None
    q_at: Frequency | None = None
    mount: Mount | None = None
    mounted_esl: Inductance | None = None
    srf: Frequency | None = None
    tolerance: NonNegativeFloat | None = Field(
        None, description="± fraction of the value (default by type, see "
        "stackopt.analyses.tolerances.PART_TOLERANCE)")

    @model_validator(mode="after")
    def _q(self) -> Parasitics:
        if self.q_at is not None and self.q is None:
            raise ValueError("'q_at' without 'q'; give the quality factor as 'q: 40'")
        if self.mounted_esl is not None and (self.mount is not None or self.esl):
            raise ValueError("'mounted_esl' (a measured mounted value) replaces 'esl' and "
                             "'mount'; give one or the other")
        if self.tolerance is not None and self.tolerance >= 0.5:
            raise ValueError("'tolerance' is a fraction of the value, e.g. '5 %'")
        return self


class Element(Parasitics):
    """One R, L or C between two nodes, optionally through a named ground connection."""

    name: Name
    type: ElementType
    value: float | None = Field(None, description="ohm, H or F (SI) by type")
    between: tuple[Name, Name]
    ground: Name | None = Field(None, description="ground connection of the gnd terminal")

    @model_validator(mode="before")
    @classmethod
    def _parse_value(cls, data: Any) -> Any:
        if isinstance(data, dict) and data.get("type") in _DIM and data.get("value") is not None:
            data = dict(data)
            data["value"] = parse_quantity(data["value"], _DIM[data["type"]])
        return data

    @model_validator(mode="after")
    def _check(self) -> Element:
        n, ex = self.name, _EXAMPLE[self.type]
        if self.value is None:
            raise InputError(f"element {n} has no value", key=["value"],
                             fix=f"add 'value: {ex}'")
        if self.value < 0:
            dim = _DIM[self.type]
            raise InputError(f"element {n} has a negative value "
                             f"({format_quantity(self.value, dim)})", key=["value"],
                             fix=f"write 'value: {format_quantity(-self.value, dim)}'")
        if self.type == "C" and self.value == 0:
            raise InputError(f"capacitor {n} is 0 F (an open circuit)", key=["value"],
                             fix=f"remove it or give {ex}")
        if self.type == "R" and self.q is not None:
            raise InputError(f"resistor {n} cannot have 'q'", key=["q"],
                             fix="use 'esl' for its inductance")
        if self.srf is not None and (self.type != "L" or not self.value):
            raise InputError(f"element {n}: 'srf' is for inductors with a value",
                             key=["srf"], fix="remove it")
        if self.between[0] == self.between[1]:
            raise InputError(f"element {n} has both ends on node {self.between[0]!r}",
                             key=["between"], fix="connect it between two different nodes")
        if self.ground is not None and GROUND_NODE not in self.between:
            raise InputError(f"element {n} names ground {self.ground!r} but neither end is "
                             f"'{GROUND_NODE}'", key=["ground"],
                             fix=f"write between: [{self.between[0]}, gnd]")
        return self

    @property
    def zero_impedance(self) -> bool:
        """True for a zero-ohm link (R or L of value 0 with no ESL or ESR)."""
        return self.type != "C" and self.value == 0 and self.esl == 0 and self.esr == 0


class GroundGeometry(BaseModel):
    """The pad-to-via trace and vias of a ground connection; unset parts come from the
    search candidate (vias, drill) or defaults (pitch = 3 drills)."""

    model_config = FROZEN
    trace_length: NonNegativeLength = 0.0
    trace_width: PositiveLength | None = None
    vias: Count | None = Field(None, ge=1, le=16)
    pitch: PositiveLength | None = None
    drill: PositiveLength | None = None

    @model_validator(mode="after")
    def _trace(self) -> GroundGeometry:
        if self.trace_length > 0 and self.trace_width is None:
            raise ValueError("a pad-to-via trace needs 'trace_width' (e.g. 0.4 mm)")
        return self


class Ground(GroundGeometry):
    """A named ground connection at a board position (centre of its via row)."""

    name: Name
    at: tuple[Length, Length]
    vias_at: tuple[tuple[Length, Length], ...] | None = Field(
        None, min_length=1, max_length=16, description="via offsets from 'at', m")

    @model_validator(mode="after")
    def _vias(self) -> Ground:
        if self.vias_at is not None:
            if self.vias is not None and self.vias != len(self.vias_at):
                raise ValueError(f"ground {self.name}: 'vias: {self.vias}' but "
                                 f"{len(self.vias_at)} 'vias_at'; give one of them")
            if self.pitch is not None:
                raise ValueError(f"ground {self.name}: 'pitch' and 'vias_at' both given; "
                                 "keep one")
            pts = self.vias_at
            for i in range(len(pts)):
                for j in range(i):
                    if pts[i] == pts[j]:
                        raise ValueError(f"ground {self.name}: two vias at the same place; "
                                         "give distinct 'vias_at'")
        return self


class Interconnect(BaseModel):
    """A trace between two nodes on the candidate's top layer: a microstrip over its plane
    (per candidate: Hammerstad–Jensen impedance and effective permittivity). ``width``
    absent: the width giving the circuit's ``z0`` on that candidate."""

    model_config = FROZEN
    between: tuple[Name, Name]
    length: PositiveLength
    width: PositiveLength | None = None


class InterconnectTemplate(BaseModel):
    """The filter generator's interconnect: one line of ``length`` at the input end of every
    series branch (``width`` absent: the ``z0`` width of each candidate)."""

    model_config = FROZEN
    length: PositiveLength
    width: PositiveLength | None = None


class Coupling(BaseModel):
    """Magnetic coupling coefficient k between two inductors (M = k sqrt(L1 L2))."""

    model_config = FROZEN
    between: tuple[Name, Name]
    k: float = Field(gt=-1.0, lt=1.0)


class FilterSpec(BaseModel):
    """A Butterworth, Chebyshev or elliptic (Cauer) ladder (generator)."""

    model_config = FROZEN
    family: Literal["butterworth", "chebyshev", "elliptic"]
    response: Literal["lowpass", "highpass"] = "lowpass"
    order: Count = Field(ge=1, le=15)
    cutoff: Frequency
    ripple: Decibel | None = Field(None, description="Chebyshev/elliptic passband ripple, dB")
    stopband_attenuation: Decibel | None = Field(None, description="elliptic: minimum "
                                                 "stopband attenuation, dB")
    first: Literal["shunt", "series"] = "shunt"
    ground: GroundGeometry | None = Field(None, description="template for every shunt "
                                          "element's own ground connection; none = ideal")
    spacing: PositiveLength = Field(3e-3, description="distance between ground connections")
    capacitor: Parasitics = Parasitics()
    inductor: Parasitics = Parasitics()
    coupling: float = Field(0.0, gt=-0.5, lt=0.5, description="magnetic coupling k "
                            "between neighbouring generated inductors")
    interconnect: InterconnectTemplate | None = None

    @model_validator(mode="after")
    def _family(self) -> FilterSpec:
        if self.family == "elliptic":
            if self.order % 2 == 0 or not 3 <= self.order <= 11:
                raise ValueError(f"an elliptic ladder here has an odd order from 3 to 11 "
                                 f"(got {self.order}); even orders need unequal "
                                 "terminations: use 3, 5, 7, 9 or 11")
            if self.ripple is None or not 0 < self.ripple <= 3:
                raise ValueError("an elliptic filter needs 'ripple' between 0 and 3 dB "
                                 "(e.g. 0.1 dB)")
            if self.stopband_attenuation is None or self.stopband_attenuation <= self.ripple:
                raise ValueError("an elliptic filter needs 'stopband_attenuation' above its "
                                 "ripple (e.g. 50 dB)")
            return self
        if self.stopband_attenuation is not None:
            raise ValueError("'stopband_attenuation' is for elliptic filters; remove it")
        if self.family == "chebyshev":
            if self.ripple is None or not 0 < self.ripple <= 3:
                raise ValueError("a Chebyshev filter needs 'ripple' between 0 and 3 dB "
                                 "(e.g. 0.1 dB)")
            if self.order % 2 == 0:
                raise ValueError(f"an even-order ({self.order}) Chebyshev ladder needs "
                                 "unequal terminations; use an odd order")
        elif self.ripple is not None:
            raise ValueError("'ripple' is for Chebyshev filters; remove it for Butterworth")
        return self


class Circuit(BaseModel):
    """The user's two-port: reference impedance, port nodes, elements, grounds."""

    model_config = FROZEN
    z0: Impedance = 50.0
    input: Name = "in"
    output: Name = "out"
    elements: tuple[Element, ...] = ()
    grounds: tuple[Ground, ...] = ()
    couplings: tuple[Coupling, ...] = ()
    interconnect: tuple[Interconnect, ...] = ()
    filter: FilterSpec | None = None

    @model_validator(mode="after")
    def _check(self) -> Circuit:
        if GROUND_NODE in (self.input, self.output):
            raise ValueError(f"a port cannot be the '{GROUND_NODE}' node; name a circuit node")
        if self.filter is not None:
            if self.elements or self.grounds or self.couplings or self.interconnect:
                raise ValueError("give either 'filter' or 'elements' (with 'grounds', "
                                 "'couplings'), not both")
            return self
        if not self.elements:
            raise ValueError("the circuit has no elements; list 'elements' or give 'filter'")
        check_names(self)
        check_topology(self)
        return self
