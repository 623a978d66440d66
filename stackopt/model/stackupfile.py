"""A stackup file: one stackup with the via choices, as ``selected.yaml`` writes it and
``stackopt eval --stackup FILE`` reads it.

.. code-block:: yaml

    stackup:                      # top to bottom
      - {kind: copper, thickness: 34.3 um, role: signal}
      - {kind: prepreg, material: 2116 x1, thickness: 0.115 mm, er: 4.2, df: 0.019}
      - {kind: copper, thickness: 34.3 um, role: ground}
      - {kind: core, material: core-1.1, thickness: 1.1 mm, er: 4.5, df: 0.018}
      ...
    drill: 0.3 mm
    vias_per_ground: 1
    mitigations: []               # via_in_pad, own_vias, coplanar
"""

from __future__ import annotations

from typing import Any, Literal

from pydantic import BaseModel, Field, model_validator

from stackopt.model.fields import FROZEN, PositiveFloat, PositiveLength
from stackopt.model.scenario import Mitigation
from stackopt.model.stackup import Copper, Dielectric, Role, Stackup

__all__ = ["StackupLayer", "StackupFile"]


class StackupLayer(BaseModel):
    """One layer of a stackup file (copper or dielectric)."""

    model_config = FROZEN
    kind: Literal["copper", "prepreg", "core"]
    thickness: PositiveLength
    role: Role | None = None
    name: str | None = None
    material: str | None = None
    er: PositiveFloat | None = None
    df: float | None = Field(None, ge=0.0, lt=1.0)
    plies: int | None = Field(None, ge=1, le=6)

    @model_validator(mode="after")
    def _kind(self) -> StackupLayer:
        if self.kind == "copper":
            if self.role is None:
                raise ValueError("a copper layer needs 'role' (signal, ground, power, mixed)")
            if self.er is not None or self.df is not None:
                raise ValueError("'er'/'df' belong to dielectric layers, not copper")
        else:
            if self.er is None or not self.material:
                raise ValueError(f"a {self.kind} layer needs 'material' and 'er' (its Dk)")
            if self.role is not None:
                raise ValueError("'role' belongs to copper layers, not dielectrics")
        return self


class StackupFile(BaseModel):
    """A stackup plus the ground-via choices that go with it."""

    model_config = FROZEN
    stackup: tuple[StackupLayer, ...] = Field(min_length=3)
    drill: PositiveLength = 0.3e-3
    vias_per_ground: int = Field(1, ge=1, le=16)
    mitigations: tuple[Mitigation, ...] = ()
    # informational, written by stackopt and ignored when read:
    candidate: str | None = None
    scenario: str | None = None
    fab: str | None = None
    note: str | None = None
    finished_thickness: PositiveLength | None = None
    thickness_tolerance: float | None = None
    controlled_impedance: dict[str, Any] | None = None

    @model_validator(mode="after")
    def _alternate(self) -> StackupFile:
        kinds = [layer.kind == "copper" for layer in self.stackup]
        want = [i % 2 == 0 for i in range(len(kinds))]
        if kinds != want or len(kinds) % 2 == 0:
            raise ValueError("layers must alternate copper / dielectric, starting and ending "
                             "with copper")
        return self

    def to_stackup(self) -> Stackup:
        """The :class:`Stackup` this file describes."""
        cu = tuple(Copper(thickness=x.thickness, role=x.role, name=x.name)  # type: ignore
                   for x in self.stackup[0::2])
        di = tuple(Dielectric(kind=x.kind, material=x.material, thickness=x.thickness,  # type: ignore
                              er=x.er, df=0.02 if x.df is None else x.df, plies=x.plies or 1)
                   for x in self.stackup[1::2])
        return Stackup(copper=cu, dielectrics=di)
