"""The board stackup: an ordered list of copper layers and the dielectrics between them.

Only thicknesses and materials are stored; z-positions, total thickness, distances to the
nearest plane, via heights and symmetry are computed from them by
:mod:`stackopt.model.geometry` (the one owner of stackup geometry), never stored twice.
Layers are numbered 1..n from the top (component side) down; dielectric ``i`` (0-based)
lies between copper layers ``i + 1`` and ``i + 2``.
"""

from __future__ import annotations

from typing import Literal

import numpy as np
from pydantic import BaseModel, Field, model_validator

from stackopt.model.fields import FROZEN, Count, PositiveFloat, PositiveLength
from stackopt.model.geometry import PLANE_ROLES, LayerStack

#: Copper roles (the same list as :data:`stackopt.model.geometry.ROLES`; a test keeps them equal).
Role = Literal["signal", "ground", "power", "plane", "mixed"]
DielectricKind = Literal["prepreg", "core"]

__all__ = ["Copper", "Dielectric", "Stackup", "Role", "DielectricKind", "PLANE_ROLES"]


def _opt(a: np.ndarray) -> float | None:
    v = float(np.asarray(a).reshape(-1)[0])
    return None if np.isnan(v) else v


def _index(a: np.ndarray) -> int | None:
    v = int(np.asarray(a).reshape(-1)[0])
    return None if v < 0 else v


class Copper(BaseModel):
    """One copper layer: its finished thickness and what it carries."""

    model_config = FROZEN
    thickness: PositiveLength = Field(description="finished copper thickness, m")
    role: Role = Field(description="signal, ground / power / plane (solid reference), or mixed "
                      "(pour + signals)")
    name: str | None = None


class Dielectric(BaseModel):
    """One dielectric: prepreg (one or more plies) or core."""

    model_config = FROZEN
    kind: DielectricKind
    material: str = Field(min_length=1, description="catalogue name, e.g. '2116' or 'core 0.2'")
    thickness: PositiveLength = Field(description="pressed thickness, m")
    er: PositiveFloat = Field(description="relative permittivity (Dk) near 1 GHz")
    df: float = Field(default=0.02, ge=0.0, lt=1.0, description="loss tangent (Df)")
    plies: Count = Field(default=1, ge=1, le=6)

    @model_validator(mode="after")
    def _ranges(self) -> Dielectric:
        if not 1.0 <= self.er <= 20.0:
            raise ValueError(f"Dk {self.er:g} is outside 1..20; give the relative permittivity")
        return self


class Stackup(BaseModel):
    """A board stackup, top (layer 1) to bottom.

    Examples
    --------
    >>> s = Stackup.two_layer(1.55e-3)
    >>> round(s.thickness * 1e3, 3)
    1.62
    """

    model_config = FROZEN
    copper: tuple[Copper, ...] = Field(min_length=1)
    dielectrics: tuple[Dielectric, ...] = ()

    @model_validator(mode="after")
    def _shape(self) -> Stackup:
        n = len(self.copper)
        if len(self.dielectrics) != n - 1:
            raise ValueError(
                f"{n} copper layers need {n - 1} dielectrics between them, "
                f"got {len(self.dielectrics)}; list one dielectric between each pair"
            )
        return self

    # ---- derived geometry: delegated to stackopt.model.geometry -----------------------
    @property
    def n_layers(self) -> int:
        """Number of copper layers."""
        return len(self.copper)

    @property
    def layer_stack(self) -> LayerStack:
        """The stackup as per-layer arrays (N = 1), the owner of every derived height."""
        return LayerStack.of([d.thickness for d in self.dielectrics],
                             [d.er for d in self.dielectrics],
                             [c.thickness for c in self.copper], [c.role for c in self.copper])

    @property
    def z_top(self) -> np.ndarray:
        """z of the top face of each copper layer, m (0 at the top surface, positive down)."""
        return self.layer_stack.z_top[0]

    @property
    def z_bottom(self) -> np.ndarray:
        """z of the bottom face of each copper layer, m."""
        return self.layer_stack.z_bottom[0]

    @property
    def thickness(self) -> float:
        """Total pressed thickness over copper, m (no mask or plating build-up)."""
        return float(self.layer_stack.thickness[0])

    @property
    def planes(self) -> list[int]:
        """0-based indices of the plane layers."""
        return [int(i) for i in np.flatnonzero(self.layer_stack.is_plane[0])]

    def plane_distance(self, layer: int) -> tuple[float | None, float | None]:
        """Dielectric height from copper ``layer`` to the nearest plane above and below, m
        (face to face: what a trace on ``layer`` sees). ``None`` where there is none."""
        tr = self.layer_stack.trace(layer)
        return _opt(tr.height_above), _opt(tr.height_below)

    def reference_plane(self, layer: int = 0) -> int | None:
        """The nearest plane to ``layer`` (0-based), or ``None`` if the board has none.

        For the top layer of a two-layer board with a bottom ground, that is layer 1.
        """
        return _index(self.layer_stack.reference_plane(layer))

    def ground_plane(self, layer: int = 0) -> int | None:
        """The ground plane a ground via from ``layer`` goes to: the nearest layer whose role
        is ``ground`` (else the nearest plane of any kind), or ``None``."""
        return _index(self.layer_stack.ground_plane(layer))

    def via_height(self, layer: int = 0) -> float | None:
        """Height ``h`` of a ground via from ``layer`` to its ground plane, m.

        The dielectric and inner copper between the two copper faces (the ``h`` of the
        ground-via models: substrate thickness for Goldfarb-Pucel). For the top layer of a
        four-layer board with 0.19 mm prepreg to layer 2 this is 0.19 mm; for a 1.6 mm
        two-layer board it is the core thickness. ``None`` if the board has no plane.
        """
        return _opt(self.layer_stack.via_height(layer))

    def via_span(self, a: int, b: int) -> float:
        """Barrel length of a via joining copper layers ``a`` and ``b`` outer face to face."""
        lo, hi = sorted((a, b))
        return float(self.z_bottom[hi] - self.z_top[lo])

    @property
    def is_symmetric(self) -> bool:
        """Mirror symmetric about the board's centre (thicknesses, kinds and Dk)."""
        cu = [round(c.thickness, 9) for c in self.copper]
        di = [(d.kind, round(d.thickness, 9), round(d.er, 3)) for d in self.dielectrics]
        return cu == cu[::-1] and di == di[::-1]

    # ---- convenience ------------------------------------------------------------------
    @classmethod
    def two_layer(cls, core: float, copper: float = 35e-6, er: float = 4.5,
                  material: str = "FR-4 core") -> Stackup:
        """A double-sided board: signal on top, ground plane on the bottom."""
        return cls(
            copper=(Copper(thickness=copper, role="signal"),
                    Copper(thickness=copper, role="ground")),
            dielectrics=(Dielectric(kind="core", material=material, thickness=core, er=er),),
        )

    def to_records(self) -> list[dict]:
        """Layers top to bottom as plain dicts (``kind``, ``material``, ``thickness_m``,
        and ``role`` for copper or ``er``/``df`` for dielectrics)."""
        out: list[dict] = []
        for i, c in enumerate(self.copper):
            out.append({"kind": "copper", "material": "copper", "thickness_m": c.thickness,
                        "role": c.role, "name": c.name or f"L{i + 1}"})
            if i < len(self.dielectrics):
                d = self.dielectrics[i]
                out.append({"kind": d.kind, "material": d.material, "thickness_m": d.thickness,
                            "er": d.er, "df": d.df, "plies": d.plies})
        return out
