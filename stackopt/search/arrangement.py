"""Arrangements: a board's layer count and the role of every copper layer (signal, ground,
power, mixed), the slots each gene of the search sets, and which plane the top layer's
vias reach.

The arrangements offered per layer count are :data:`ARRANGEMENT_CODES` (the top layer
carries the components and RF lines; common practice, no source).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from stackopt.model.construction import slot_kinds
from stackopt.model.geometry import LayerStack, role_codes

__all__ = ["Arrangement", "ARRANGEMENT_CODES", "arrangements"]


@dataclass(frozen=True)
class Arrangement:
    """Layer count and roles; which slots a gene sets; where the ground plane is."""

    name: str
    roles: tuple[str, ...]
    symmetric: bool
    #: Dielectric slots that set a controlled-impedance line's cross-section (the
    #: scenario's lines on this arrangement, :func:`stackopt.model.routing.line_slots`).
    line_slots: frozenset[int] = frozenset()

    @property
    def n_layers(self) -> int:
        """Copper layers."""
        return len(self.roles)

    @property
    def slot_kinds(self) -> tuple[str, ...]:
        """'prepreg' or 'core' for each dielectric slot, top to bottom."""
        return slot_kinds(self.n_layers)

    @property
    def ground(self) -> int:
        """0-based copper index of the ground plane that the top layer's vias reach
        (:meth:`stackopt.model.geometry.LayerStack.ground_plane`)."""
        return int(self.stack().ground_plane(0)[0, 0])

    @property
    def genes(self) -> tuple[tuple[int, ...], ...]:
        """Slot indices each gene sets (a mirrored pair in symmetric constructions)."""
        s = self.n_layers - 1
        if not self.symmetric:
            return tuple((i,) for i in range(s))
        pairs: list[tuple[int, ...]] = [(i, s - 1 - i) for i in range(s // 2)]
        if s % 2:
            pairs.append((s // 2,))
        return tuple(pairs)

    @property
    def head(self) -> tuple[int, ...]:
        """Genes that set the electrical response: the depth from the top copper to the
        ground plane, and every line's cross-section (:attr:`line_slots`)."""
        return tuple(k for k, slots in enumerate(self.genes)
                     if min(slots) < self.ground or self.line_slots.intersection(slots))

    def stack(self) -> LayerStack:
        """A one-stackup :class:`LayerStack` of this arrangement's roles (unit heights):
        for questions of topology (which plane, which layer)."""
        roles = role_codes(self.roles)[None, :]
        return LayerStack(np.ones((1, self.n_layers - 1)), np.ones((1, self.n_layers - 1)),
                          np.ones((1, self.n_layers)), roles)

    def with_lines(self, lines) -> Arrangement:
        """A copy with the slots that set the scenario ``lines`` marked."""
        from stackopt.model.routing import line_routes, line_slots

        slots: set[int] = set()
        for route in line_routes(lines, [self.stack()]):  # a handful of routes
            slots |= line_slots(self.stack(), route.layer)
        return replace(self, line_slots=frozenset(slots))


def _roles(code: str) -> tuple[str, ...]:
    names = {"S": "signal", "G": "ground", "P": "power", "M": "mixed"}
    return tuple(names[c] for c in code.split("-"))


#: Arrangements offered per layer count (top layer carries the components and RF lines).
ARRANGEMENT_CODES: dict[int, tuple[str, ...]] = {
    2: ("S-G",),
    4: ("S-G-P-S", "S-G-G-S", "S-P-G-S"),
    6: ("S-G-S-S-P-S", "S-G-S-P-G-S"),
    8: ("S-G-S-G-P-S-G-S",),
}


def arrangements(n: int, symmetric: bool) -> tuple[Arrangement, ...]:
    """The arrangements offered for ``n`` copper layers."""
    codes = ARRANGEMENT_CODES.get(n)
    if codes is None:  # 10 and more: S-G then alternate signal / plane, end G-S
        inner = ["S" if i % 2 == 0 else ("P" if i % 4 == 1 else "G") for i in range(n - 4)]
        codes = ("-".join(["S", "G", *inner, "G", "S"]),)
    return tuple(Arrangement(c, _roles(c), symmetric) for c in codes)
