"""What of the scenario's design space the fab actually offers, and why not the rest.

One owner for the reasons a scenario's choices drop out of the search: layer counts the
fab does not price (or above its largest), drills below its minimum, a restriction to
standard constructions the table does not list (or lists for other layer counts), a
board larger than the panel, a thickness window beyond the fab's maximum. ``check``
shows every finding; ``optimize`` names them when nothing is left to search.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from stackopt.units import format_quantity

__all__ = ["Finding", "fab_findings", "empty_space_message"]


@dataclass(frozen=True)
class Finding:
    """A problem: ``error`` when it leaves nothing to search (or no board possible),
    ``warning`` when only part of the scenario's choices is dropped."""

    level: Literal["error", "warning"]
    key: str
    message: str
    fix: str


def _mm(x: float) -> str:
    return format_quantity(x, "length")


def _ints(xs) -> str:
    return ", ".join(str(x) for x in xs)


def fab_findings(scenario, table) -> list[Finding]:
    """Every reason the fab's table removes part (or all) of the scenario's space.

    Parameters
    ----------
    scenario : stackopt.model.scenario.Scenario
        What the user asks for (its ``space`` and ``board``).
    table : stackopt.model.costtable.CostTable
        What the fab prices and can build.

    Returns
    -------
    list of Finding
        Errors first; empty when the fab offers everything the scenario asks for.
    """
    from stackopt.cost.panel import boards_per_panel

    out: list[Finding] = []
    sp, fab = scenario.space, table.fab
    priced = table.base_price.layer_counts
    missing = [n for n in sp.layers if n not in priced]
    offered = [n for n in sp.layers if n in priced]
    if missing:
        out.append(Finding(
            "warning" if offered else "error", "space.layers",
            f"layer count{'s' if len(missing) > 1 else ''} {_ints(missing)} "
            f"{'are' if len(missing) > 1 else 'is'} not offered by {fab} (its table prices "
            f"{_ints(priced)} layers)" + ("" if offered else "; nothing is left to search"),
            f"use layer counts the table prices ({_ints(priced)}) or add a row for "
            f"{_ints(missing)} to the table's base_price"))
    dmin = table.capabilities.min_drill
    small = [d for d in sp.drills if d < dmin * (1 - 1e-9)]
    if small:
        left = len(small) < len(sp.drills)
        out.append(Finding(
            "warning" if left else "error", "space.drills",
            f"drill {', '.join(_mm(d) for d in small)} is below {fab}'s minimum drill "
            f"{_mm(dmin)}" + (" and is dropped" if left else "; no drill is left to search"),
            f"use drills of {_mm(dmin)} or more"))
    if sp.constructions == "standard":
        builds = table.constructions
        if not builds:
            out.append(Finding("error", "space.constructions",
                               f"'constructions: standard' but {fab}'s table lists no "
                               "standard constructions", "use 'constructions: any' or add "
                               "'constructions:' to the cost table"))
        else:
            counts = sorted({b.layers for b in builds})
            if not set(counts) & set(sp.layers):
                out.append(Finding(
                    "error", "space.constructions",
                    f"{fab}'s standard constructions are for {_ints(counts)} layers, none "
                    f"of the scenario's {_ints(sp.layers)}",
                    f"allow {_ints(counts)} layers in space.layers or use "
                    "'constructions: any'"))
    b, panel = scenario.board, table.panel
    if int(boards_per_panel(panel, b.width, b.height)) < 1:
        out.append(Finding(
            "error", "board",
            f"the board {_mm(b.width)} x {_mm(b.height)} does not fit {fab}'s panel "
            f"(usable {_mm(panel.usable_width)} x {_mm(panel.usable_height)})",
            "check the board size and its unit, or use a fab with a larger panel"))
    tmax = table.capabilities.max_thickness
    if sp.thickness is not None and tmax is not None and sp.thickness.bounds[0] > tmax:
        out.append(Finding(
            "error", "space.thickness",
            f"the thickness window starts at {_mm(sp.thickness.bounds[0])}, above {fab}'s "
            f"maximum board thickness {_mm(tmax)}", f"allow boards up to {_mm(tmax)}"))
    return sorted(out, key=lambda f: f.level != "error")


def empty_space_message(scenario, table) -> tuple[str, str, str]:
    """(message, key, fix) for an empty design space, naming the real cause."""
    errors = [f for f in fab_findings(scenario, table) if f.level == "error"]
    if errors:
        first = errors[0]
        more = "; also: " + "; ".join(f.message for f in errors[1:]) if errors[1:] else ""
        return (f"the design space is empty: {first.message}{more}", first.key, first.fix)
    return ("the design space is empty: no stackup of the scenario's layer counts can be "
            "built from the table's materials (check the prepregs and cores it stocks, "
            "space.max_plies and the fab's minimum dielectric)", "space",
            "allow more layer counts or plies, or add materials to the cost table")
