"""The report's controlled-impedance lines: the per-layer impedance table of the recommended
stackup with the field-solver check, and the line risks in words."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from stackopt.model.routing import layer_words
from stackopt.outputs.facts import mm

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["impedance_table", "layer_lines", "line_risks", "WIDE_TRACE"]

#: A trace wider than this will not fan into the pads of a fine-pitch part (0.5-0.8 mm
#: pitch parts have pads of about 0.25-0.45 mm) without a taper; common practice, no source.
WIDE_TRACE = 0.6e-3


def _ohm(z: float | None) -> str:
    return "—" if z is None else f"{z:.1f} ohm"


def _target(row) -> str:
    return f"{row.target_ohm:g} ohm" + (" Zdiff" if row.differential else "")


def _width(row) -> str:
    w = row.width_field_m if row.width_field_m is not None else row.width_m
    return "not reachable" if w is None else mm(w)


def layer_lines(rows) -> dict[str, list[str]]:
    """Short text of every line by layer name (for the stackup table)."""
    out: dict[str, list[str]] = {}
    for r in rows:
        if r.layer is None:
            continue
        text = f"{r.line}: {_target(r)} {r.type}, {_width(r)}"
        if r.spacing_m is not None:
            text += f" / {mm(r.spacing_m)} space"
        out.setdefault(r.layer, []).append(text)
    return out


def impedance_table(result: Result, i: int | None) -> list[tuple]:
    """Report blocks: every line of candidate ``i`` with layer, type, target, width,
    spacing, achieved impedance by closed form and by field solve."""
    if i is None or not result.problem.scenario.lines:
        return []
    rows = []
    for r in result.lines(i):
        diff = (f"{100 * (r.z_ohm / r.z_field_ohm - 1):+.1f} %"
                if r.z_ohm is not None and r.z_field_ohm else "—")
        rows.append([r.name, r.layer or "none", r.type, _target(r), _width(r),
                     "—" if r.spacing_m is None else mm(r.spacing_m),
                     "—" if r.width_m is None else mm(r.width_m), _ohm(r.z_ohm),
                     _ohm(r.z_field_ohm), diff])
    mask = result.problem.solder_mask
    note = ("Width: by the built-in 2-D field solver (quasi-static, about 0.5 % or better; "
            "docs/models.md), started from the closed-form width the search used; the last "
            "three columns are the impedance at that closed-form width, by closed form and "
            "by field solve (Zdiff for pairs). "
            + (f"Outer layers under {mm(mask.thickness)} of solder mask (Dk {mask.er:g}, "
               + ("the scenario's" if result.problem.scenario.solder_mask else
                  "the fab's, from its cost table")
               + "), in the field solve only. " if mask else "No solder mask modelled. ")
            + "Ask the fab to confirm the widths with its own materials and process.")
    return [("h2", f"Controlled-impedance lines ({result.ids[i]})"),
            ("table", ["Line", "Layer", "Type", "Target", "Width", "Spacing",
                       "Closed-form width", "Closed form", "Field solve", "Closed vs field"],
             rows), ("p", note)]


def line_risks(result: Result, i: int, what: str) -> list[str]:
    """Sentences about the lines of candidate ``i`` (``what`` names the candidate)."""
    out = []
    for r in result.lines(i, check=False):
        name = f"the {_target(r)} line '{r.name}'"
        if r.layer is None:
            ln = next(x for x in result.problem.scenario.lines if x.name == r.line)
            need = layer_words(ln.type, ln.layer_rule)
            out.append(f"On the {what} board ({result.ids[i]}) no layer can carry {name} "
                       f"(it needs {need}).")
        elif r.width_m is None or not math.isfinite(r.width_m):
            out.append(f"On the {what} board ({result.ids[i]}) {name} on {r.layer} cannot "
                       "reach its impedance within the width range searched.")
        elif r.width_m > WIDE_TRACE:
            out.append(f"On the {what} board ({result.ids[i]}) {name} on {r.layer} is "
                       f"{mm(r.width_m)} wide: it will not fan into a fine-pitch part (pads "
                       "of about 0.25-0.45 mm) without a taper, which is an impedance step "
                       "right at the part.")
    return out
