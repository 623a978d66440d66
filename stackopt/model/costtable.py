"""A fab's cost table: panel, prices, material catalogue, adders, lead time, capabilities.

Frozen, strictly validated models (unknown keys are errors). Prices are plain numbers in
the table's ``currency``; lengths are SI floats parsed from ``"0.2 mm"``-style strings.
Cross-field rules (monotone prices, matching layer counts) raise :class:`TableRuleError`,
which carries the key path *below* the model it was raised in, so that the loader can
point at the exact row. The file format is documented in ``docs/cost_tables.md``.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Annotated, ClassVar, Literal

import numpy as np
from pydantic import AfterValidator, BaseModel, Field, field_validator, model_validator

from stackopt.errors import InputError
from stackopt.model import construction as _construction
from stackopt.model.construction import Construction
from stackopt.model.fields import (
    FROZEN,
    Count,
    NonNegativeLength,
    PositiveFloat,
    PositiveLength,
    Tolerance,
)

__all__ = [
    "TableRuleError", "Price", "Panel", "BasePrice", "Prepreg", "Core", "Materials",
    "CopperAdder", "DrillAdder", "FeatureAdder", "Features", "Capabilities", "CostTable",
    "CatalogueItem", "BoardOrder", "FEATURES", "SolderMask",
]

#: The optional features a table may price, in breakdown order.
FEATURES = ("impedance_control", "via_in_pad", "blind_vias", "buried_vias", "microvias",
            "non_standard_thickness")


class TableRuleError(InputError):
    """A cross-field rule of a cost table failed; ``path`` is relative to the model."""

    def __init__(self, message: str, path: Sequence[str | int], fix: str) -> None:
        self.path = tuple(path)
        super().__init__(message, key=list(path), fix=fix)


def _price(x: float) -> float:
    if not math.isfinite(x):
        raise InputError("a price must be a finite number", fix="give 0 or more in the table "
                         "currency")
    if x < 0:
        raise InputError("a price must not be negative (every adder is a cost, never a "
                         "discount)", fix="give 0 or more")
    return x


#: A price in the table's currency (finite, >= 0).
Price = Annotated[float, AfterValidator(_price)]
WorkingDays = Annotated[int, Field(ge=0, le=365)]


def _mm(x: float) -> str:
    return f"{x * 1e3:g} mm"


class Panel(BaseModel):
    """The production panel boards are nested on."""

    model_config = FROZEN
    width: PositiveLength
    height: PositiveLength
    edge_margin: NonNegativeLength = 0.0
    board_spacing: NonNegativeLength = 0.0

    @model_validator(mode="after")
    def _fits(self) -> Panel:
        if 2 * self.edge_margin >= min(self.width, self.height):
            raise TableRuleError(f"edge margin {_mm(self.edge_margin)} leaves no usable area",
                                 ["edge_margin"], "give a margin under half the panel size")
        return self

    @property
    def usable_width(self) -> float:
        """Width inside the edge margins, m."""
        return self.width - 2 * self.edge_margin

    @property
    def usable_height(self) -> float:
        """Height inside the edge margins, m."""
        return self.height - 2 * self.edge_margin


class BasePrice(BaseModel):
    """Processing price by layer count (rows) and order-quantity break (columns).

    ``basis`` is ``per_panel`` (price of one panel) or ``per_m2`` (price per square metre
    of board area). The price at quantity ``q`` is the column of the largest break
    ``<= q`` (the first column below the first break).
    """

    model_config = FROZEN
    basis: Literal["per_panel", "per_m2"]
    quantities: tuple[Annotated[int, Field(ge=1)], ...] = Field(min_length=1)
    layers: dict[Annotated[int, Field(ge=1, le=64)], tuple[Price, ...]] = Field(min_length=1)

    @model_validator(mode="after")
    def _matrix(self) -> BasePrice:
        q = self.quantities
        for j in range(1, len(q)):
            if q[j] <= q[j - 1]:
                raise TableRuleError(
                    f"quantity break {q[j]} does not increase (previous break {q[j - 1]})",
                    ["quantities", j], "list the breaks in strictly increasing order")
        for n, row in self.layers.items():
            if len(row) != len(q):
                raise TableRuleError(
                    f"{len(row)} prices for {n} layers but {len(q)} quantity breaks",
                    ["layers", n], "give one price per quantity break")
            for j in range(1, len(row)):
                if row[j] > row[j - 1]:
                    raise TableRuleError(
                        f"the {n}-layer price rises from {row[j - 1]:g} at {q[j - 1]} to "
                        f"{row[j]:g} at {q[j]} boards", ["layers", n, j],
                        "a larger quantity must not cost more per panel/m²; lower it")
        return self

    @property
    def layer_counts(self) -> tuple[int, ...]:
        """Priced layer counts, ascending."""
        return tuple(sorted(self.layers))


class _Stocked(BaseModel):
    """Fields every stocked dielectric has; ``per_panel`` is the price of one ply/core."""

    model_config = FROZEN
    thickness: PositiveLength = Field(description="pressed dielectric thickness, m")
    dk: float = Field(ge=1.0, le=20.0, description="relative permittivity near 1 GHz")
    df: float = Field(ge=0.0, lt=1.0, description="loss tangent")
    per_panel: Price
    name: str | None = Field(None, min_length=1, description="overrides the id suffix")
    thickness_tolerance: Tolerance | None = Field(
        None, description="± fraction of this material's pressed thickness; default the "
        "capabilities' thickness_tolerance")
    _prefix: ClassVar[str] = ""

    def _suffix(self) -> str:
        raise NotImplementedError

    @property
    def id(self) -> str:
        """Stable catalogue id: ``pp-<name or glass>`` or ``core-<name or mm>``."""
        return f"{self._prefix}-{self.name or self._suffix()}"


class Prepreg(_Stocked):
    """One prepreg ply by glass style (thickness is the pressed thickness per ply)."""

    glass: str = Field(min_length=1, description="glass style, e.g. '2116'")
    _prefix: ClassVar[str] = "pp"

    def _suffix(self) -> str:
        return self.glass


class Core(_Stocked):
    """One laminate core; ``thickness`` is the dielectric between its two foils."""

    _prefix: ClassVar[str] = "core"

    def _suffix(self) -> str:
        return f"{self.thickness * 1e3:g}"


class Materials(BaseModel):
    """The fab's stocked dielectrics."""

    model_config = FROZEN
    prepregs: tuple[Prepreg, ...] = Field(min_length=1)
    cores: tuple[Core, ...] = Field(min_length=1)

    @model_validator(mode="after")
    def _unique(self) -> Materials:
        seen: dict[str, tuple[str, int]] = {}
        for group in ("prepregs", "cores"):
            for i, m in enumerate(getattr(self, group)):
                if m.id in seen:
                    g0, i0 = seen[m.id]
                    raise TableRuleError(f"material id '{m.id}' already used by {g0}[{i0}]",
                                         [group, i], "give one of them a distinct 'name'")
                seen[m.id] = (group, i)
        return self


class CopperAdder(BaseModel):
    """Extra price of one copper layer of this foil weight on one panel."""

    model_config = FROZEN
    weight: PositiveLength = Field(description="foil thickness, m ('1 oz' = 34.3 um)")
    per_layer: Price


class DrillAdder(BaseModel):
    """Extra price per panel when the smallest drill is >= ``min_drill`` (< the next row)."""

    model_config = FROZEN
    min_drill: PositiveLength
    per_panel: Price


class FeatureAdder(BaseModel):
    """Price and extra lead time of one optional feature."""

    model_config = FROZEN
    per_panel: Price = 0.0
    per_lot: Price = 0.0
    days: WorkingDays = 0


class Features(BaseModel):
    """Optional features; a feature left out (or ``null``) is not offered by the fab."""

    model_config = FROZEN
    impedance_control: FeatureAdder | None = None
    via_in_pad: FeatureAdder | None = None
    blind_vias: FeatureAdder | None = None
    buried_vias: FeatureAdder | None = None
    microvias: FeatureAdder | None = None
    non_standard_thickness: FeatureAdder | None = None


class SolderMask(BaseModel):
    """Solder mask over the outer layers: cured thickness over a trace and Dk. The field
    solver puts it over outer-layer lines; the closed forms ignore it. A cost table gives
    the fab's mask; a scenario's ``solder_mask`` overrides it."""

    model_config = FROZEN
    thickness: PositiveLength = Field(20e-6, description="over the trace, m")
    er: float = Field(3.5, ge=1.0, le=20.0, description="relative permittivity")


class Capabilities(BaseModel):
    """What the fab can build. The maximum layer count is the largest priced row."""

    model_config = FROZEN
    min_trace: PositiveLength
    min_space: PositiveLength
    min_dielectric: PositiveLength
    min_drill: PositiveLength
    max_aspect_ratio: PositiveFloat = Field(description="finished thickness : smallest drill")
    thickness_tolerance: Tolerance = Field(
        description="fraction (0.1 = ±10 %), also the band that counts as a standard "
        "thickness, and the default tolerance of every dielectric in the tolerance "
        "Monte Carlo")
    standard_thicknesses: tuple[PositiveLength, ...] = Field(min_length=1)
    max_thickness: PositiveLength | None = None


@dataclass(frozen=True)
class CatalogueItem:
    """One stocked dielectric as the search sees it (SI units, price per panel)."""

    id: str
    kind: Literal["prepreg", "core"]
    thickness: float
    dk: float
    df: float
    per_panel: float
    glass: str | None = None
    thickness_tolerance: float | None = None  # ± fraction; None: the fab's default


class CostTable(BaseModel):
    """One fab's prices and capabilities (see ``docs/cost_tables.md``)."""

    model_config = FROZEN
    fab: str = Field(min_length=1)
    currency: str
    invented: bool = Field(description="true for example data that is not a real quote")
    notes: str | None = None
    panel: Panel
    base_price: BasePrice
    materials: Materials
    copper: tuple[CopperAdder, ...] = Field(min_length=1)
    drill: tuple[DrillAdder, ...] = Field(min_length=1)
    features: Features = Features()
    setup: dict[int, Price] = Field(description="setup/tooling/NRE per lot by layer count")
    lead_time: dict[int, WorkingDays] = Field(description="working days by layer count")
    capabilities: Capabilities
    constructions: tuple[Construction, ...] = Field(
        default=(), description="standard builds a scenario may restrict the search to")
    solder_mask: SolderMask | None = Field(
        None, description="the fab's mask over the outer layers (field-solver check of "
        "the lines); a scenario's solder_mask overrides it")

    @field_validator("currency")
    @classmethod
    def _currency(cls, v: str) -> str:
        if len(v) != 3 or not v.isalpha() or not v.isupper():
            raise InputError(f"currency {v!r} is not a three-letter code",
                             fix="write the ISO 4217 code in capitals, e.g. EUR or USD")
        return v

    @model_validator(mode="after")
    def _consistent(self) -> CostTable:
        priced = set(self.base_price.layers)
        for key in ("setup", "lead_time"):
            have = getattr(self, key)
            for n in sorted(set(have) - priced):
                raise TableRuleError(f"layer count {n} has no base price", [key, n],
                                     f"add a {n}-layer row to base_price.layers or remove it")
            for n in sorted(priced - set(have)):
                raise TableRuleError(f"no {key} for {n} layers", ["base_price", "layers", n],
                                     f"add '{n}: ...' under {key}")
        _ascending(self.copper, "weight", "per_layer", "copper", "heavier copper")
        _ascending(self.drill, "min_drill", "per_panel", "drill", "a larger drill", rising=False)
        problem = _construction.check(
            self.constructions, {m.id: m.kind for m in self.materials_list()}, priced)
        if problem is not None:
            raise TableRuleError(*problem)
        smallest = min(d.min_drill for d in self.drill)
        if smallest > self.capabilities.min_drill * (1 + 1e-9):
            raise TableRuleError(
                f"no drill price down to the minimum drill {_mm(self.capabilities.min_drill)}",
                ["capabilities", "min_drill"],
                f"add a drill row at {_mm(self.capabilities.min_drill)} or raise min_drill "
                f"to {_mm(smallest)}")
        return self

    # ---- derived views (computed, never stored) ----------------------------------------
    @property
    def max_layers(self) -> int:
        """Largest layer count the fab prices (and so builds)."""
        return max(self.base_price.layers)

    def materials_list(self) -> tuple[CatalogueItem, ...]:
        """Return the catalogue in its fixed search order: prepregs, then cores, as in the file.

        Index ``k`` of this tuple is column ``k`` of ``PriceBatch.material_counts``.
        """
        rows: list[tuple[_Stocked, Literal["prepreg", "core"]]] = [
            (m, "prepreg") for m in self.materials.prepregs]
        rows += [(m, "core") for m in self.materials.cores]
        return tuple(CatalogueItem(m.id, kind, m.thickness, m.dk, m.df, m.per_panel,
                                   getattr(m, "glass", None), m.thickness_tolerance)
                     for m, kind in rows)

    def thickness_tolerances(self) -> np.ndarray:
        """± fraction of every catalogue material's thickness, in catalogue order (M,): its
        own ``thickness_tolerance``, else the capabilities' one."""
        default = self.capabilities.thickness_tolerance
        return np.array([default if m.thickness_tolerance is None else m.thickness_tolerance
                         for m in self.materials_list()], dtype=float)

    def material_index(self, material_id: str) -> int:
        """Column of ``material_id`` in the catalogue; ``KeyError`` naming the ids if absent."""
        ids = [m.id for m in self.materials_list()]
        if material_id not in ids:
            raise KeyError(f"no material {material_id!r}; the catalogue has {', '.join(ids)}")
        return ids.index(material_id)


def _ascending(rows: Sequence[BaseModel], key: str, price: str, where: str, what: str,
               rising: bool = True) -> None:
    """Keys strictly increasing; price non-decreasing (``rising``) or non-increasing."""
    for i in range(1, len(rows)):
        a, b = rows[i - 1], rows[i]
        if getattr(b, key) <= getattr(a, key):
            raise TableRuleError(f"{key} {_mm(getattr(b, key))} is not larger than the row "
                                 f"before ({_mm(getattr(a, key))})", [where, i, key],
                                 f"list {where} rows by increasing {key}, each once")
        pa, pb = getattr(a, price), getattr(b, price)
        if (pb < pa) if rising else (pb > pa):
            raise TableRuleError(f"{what} is priced {'below' if rising else 'above'} the row "
                                 f"before ({pb:g} vs {pa:g})", [where, i, price],
                                 f"{what} must not cost {'less' if rising else 'more'}")


class BoardOrder(BaseModel):
    """The board being ordered: outline (a rectangle) and quantity."""

    model_config = FROZEN
    width: PositiveLength
    height: PositiveLength
    quantity: Count = Field(ge=1)

    @property
    def area(self) -> float:
        """Board area, m²."""
        return self.width * self.height
