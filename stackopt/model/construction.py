"""A fab's standard constructions: named builds whose dielectrics are fixed.

Where a cost table lists them, a scenario may restrict the search to them
(``space.constructions: standard``), as fabs often quote their own standard builds
cheapest and fastest. Each entry lists the dielectrics top to bottom by catalogue id, with
the number of plies for prepregs: ``[pp-7628 x1, core-1.1, pp-7628 x1]``.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from pydantic import BaseModel, Field

from stackopt.model.fields import FROZEN

__all__ = ["Construction", "parse_entry", "slot_kinds"]

_ENTRY = re.compile(r"^\s*(?P<id>\S+?)(?:\s*x\s*(?P<plies>\d+))?\s*$")


class Construction(BaseModel):
    """One standard build: a name and its dielectrics, top to bottom."""

    model_config = FROZEN
    name: str = Field(min_length=1, max_length=80)
    dielectrics: tuple[str, ...] = Field(min_length=1, max_length=31)

    @property
    def layers(self) -> int:
        """Copper layers of the build."""
        return len(self.dielectrics) + 1


def slot_kinds(layers: int) -> tuple[str, ...]:
    """Foil lamination: 'core' for a two-layer board; else outer dielectrics prepreg and the
    inner ones alternating core / prepreg (common practice, no source)."""
    if layers == 2:
        return ("core",)
    return tuple("prepreg" if i % 2 == 0 else "core" for i in range(layers - 1))


def parse_entry(entry: str) -> tuple[str, int]:
    """``"pp-2116 x2"`` -> ``("pp-2116", 2)``; ``"core-1.1"`` -> ``("core-1.1", 1)``."""
    m = _ENTRY.match(entry)
    if not m:
        raise ValueError(f"cannot read {entry!r}; write a material id, e.g. 'pp-2116 x2'")
    return m.group("id"), int(m.group("plies") or 1)


def check(constructions: Sequence[Construction], kinds_by_id: dict[str, str],
          priced: set[int]) -> tuple[str, list[str | int], str] | None:
    """The first problem as (message, key path, fix), or ``None``."""
    names = set()
    for i, c in enumerate(constructions):
        where: list[str | int] = ["constructions", i]
        if c.name in names:
            return (f"construction name {c.name!r} is used twice", [*where, "name"],
                    "give each construction its own name")
        names.add(c.name)
        if c.layers not in priced:
            return (f"construction {c.name!r} has {c.layers} layers, which have no base price",
                    [*where, "dielectrics"], f"add a {c.layers}-layer price or fix the list")
        for k, (entry, want) in enumerate(zip(c.dielectrics, slot_kinds(c.layers),
                                              strict=True)):
            try:
                mid, plies = parse_entry(entry)
            except ValueError as exc:
                return (str(exc), [*where, "dielectrics", k], "e.g. 'pp-2116 x2' or 'core-1.1'")
            kind = kinds_by_id.get(mid)
            if kind is None:
                return (f"construction {c.name!r}: no material {mid!r} in the catalogue",
                        [*where, "dielectrics", k],
                        f"use one of: {', '.join(sorted(kinds_by_id))}")
            if kind != want:
                return (f"construction {c.name!r}: dielectric {k + 1} must be a {want} "
                        f"(foil lamination), not {kind} {mid!r}", [*where, "dielectrics", k],
                        "outer dielectrics are prepreg, inner ones alternate core / prepreg")
            if plies < 1:
                return (f"construction {c.name!r}: {entry!r} has no plies",
                        [*where, "dielectrics", k], f"write '{mid}' or '{mid} x2'")
            if kind == "core" and plies != 1:
                return (f"construction {c.name!r}: a core has no plies ({entry!r})",
                        [*where, "dielectrics", k], f"write '{mid}'")
    return None
