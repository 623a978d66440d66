"""The registry of mitigations: the switches the search can turn on per candidate.

One entry per mitigation, in the order they are shown, with its wording for every
output. Adding a mitigation is an entry here plus the physics that uses it (a field of
:class:`~stackopt.circuit.grounds.GroundBatch` set by ``Problem.ground_batch``, and, if
the fab charges for it, ``Problem.price_batch``); the scenario schema, stackup files,
the ladder, the report, the plots and the console read this dict.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Mitigation", "MITIGATIONS", "mitigation_error"]


@dataclass(frozen=True)
class Mitigation:
    """How a mitigation is named for people."""

    #: A full phrase for the ladder's steps and the report's sentences.
    words: str
    #: A short label for tables, console lines and plot annotations.
    label: str


#: Mitigations by the name used in scenarios and files.
MITIGATIONS: dict[str, Mitigation] = {
    "via_in_pad": Mitigation(words="via-in-pad (filled and capped)", label="via in pad"),
    "own_vias": Mitigation(words="own via for every element", label="own vias"),
    "coplanar": Mitigation(words="coplanar ground pour with stitching vias", label="coplanar"),
}


def mitigation_error(name: str) -> str | None:
    """``None`` for a registered mitigation, else a message naming the allowed ones."""
    if name in MITIGATIONS:
        return None
    from stackopt.errors import did_you_mean

    return (f"unknown mitigation {name!r}{did_you_mean(name, MITIGATIONS)}; use one of: "
            + ", ".join(MITIGATIONS))
