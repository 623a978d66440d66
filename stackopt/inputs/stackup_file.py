"""Read back a stackup file written by :func:`stackopt.outputs.exports.selected_yaml`.

The file lists ``layers`` top to bottom, alternating copper and dielectric::

    layers:
      - {name: L1, kind: copper, role: signal, thickness: 35 um}
      - {kind: prepreg, material: 2116 x1, plies: 1, thickness: 0.115 mm, dk: 4.2, df: 0.02}
      - {name: L2, kind: copper, role: ground, thickness: 35 um}
    drill: 0.3 mm            # optional: the via drill, vias per ground and mitigations
    vias_per_ground: 2
    mitigations: [via_in_pad]

Other keys the export writes (note, cost, margin, widths ...) are informational.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from stackopt.errors import InputError, did_you_mean
from stackopt.inputs.sanity import STACKUP_RULES, check_data
from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import Document, load_yaml, parse_yaml_text
from stackopt.model.mitigations import MITIGATIONS, mitigation_error
from stackopt.model.stackup import Copper, Dielectric, Stackup
from stackopt.units import parse_quantity

__all__ = ["SelectedStackup", "load_selected_yaml", "load_selected", "parse_selected",
           "parse_selected_text"]

_TOP = ("format", "note", "scenario", "candidate", "meets_requirements", "fab_table",
        "finished_thickness", "thickness_tolerance", "drill", "vias_per_ground",
        "mitigations", "unit_cost", "currency", "margin_dB", "layers",
        "controlled_impedance", "solder_mask")
_COPPER = ("name", "kind", "role", "thickness", "copper_weight")
_DIELECTRIC = ("kind", "material", "plies", "thickness", "dk", "df")


@dataclass(frozen=True)
class SelectedStackup:
    """A stackup file: the stackup and the optional via choices (SI)."""

    stackup: Stackup
    drill: float | None
    vias_per_ground: int | None
    mitigations: tuple[str, ...]


def _check_keys(doc: Document, data: dict, allowed: tuple[str, ...], path: list) -> None:
    for key in data:
        if key not in allowed:
            raise doc.error(f"unknown key '{key}'{did_you_mean(str(key), allowed)}",
                            [*path, str(key)], fix=f"allowed keys here: {', '.join(allowed)}")


def _layer(doc: Document, k: int, item: object) -> Copper | Dielectric:
    path: list[str | int] = ["layers", k]
    if not isinstance(item, dict):
        raise doc.error("each layer is a mapping such as {kind: copper, thickness: 35 um}",
                        path, fix="see the file written by 'stackopt optimize'")
    kind = item.get("kind")
    if kind == "copper":
        _check_keys(doc, item, _COPPER, path)
        data = {k2: item[k2] for k2 in ("name", "role", "thickness") if k2 in item}
        return validate_model(Copper, doc, path, data)
    if kind in ("prepreg", "core"):
        _check_keys(doc, item, _DIELECTRIC, path)
        data = {("er" if k2 == "dk" else k2): v for k2, v in item.items()}
        try:
            return validate_model(Dielectric, doc, path, data)
        except InputError as exc:  # name the file's key, not the model's
            key = exc.key.replace(".er", ".dk") if exc.key.endswith(".er") else exc.key
            raise InputError(exc.message, file=exc.file, key=key, line=exc.line,
                             column=exc.column, fix=exc.fix) from None
    raise doc.error(f"unknown layer kind {kind!r}", [*path, "kind"],
                    fix="use copper, prepreg or core")


def parse_selected(doc: Document) -> SelectedStackup:
    """Validate a parsed stackup file (see the module docstring)."""
    data = doc.data
    if not isinstance(data, dict):
        raise doc.error("expected a mapping with a 'layers' list", [],
                        fix="see the file written by 'stackopt optimize'")
    _check_keys(doc, data, _TOP, [])
    layers = data.get("layers")
    if not isinstance(layers, list) or not layers:
        raise doc.error("'layers' must list the layers top to bottom", ["layers"],
                        fix="give copper, dielectric, copper, ... from the top")
    parts = [_layer(doc, k, it) for k, it in enumerate(layers)]
    for k, p in enumerate(parts):
        want = Copper if k % 2 == 0 else Dielectric
        if not isinstance(p, want):
            raise doc.error(f"layer {k + 1} should be "
                            f"{'copper' if want is Copper else 'a dielectric'}",
                            ["layers", k], fix="alternate copper and dielectric, copper "
                            "first and last")
    if len(parts) % 2 == 0:
        raise doc.error("the last layer must be copper", ["layers", len(parts) - 1],
                        fix="end the list with the bottom copper")
    stackup = validate_model(Stackup, doc, ["layers"],
                             {"copper": parts[0::2], "dielectrics": parts[1::2]})
    drill = data.get("drill")
    line, col = doc.where(["drill"])
    drill_m = None if drill is None else parse_quantity(drill, "length", key="drill",
                                                        file=doc.file)
    if drill_m is not None and drill_m <= 0:
        raise InputError("drill must be positive", file=doc.file, key="drill", line=line,
                         column=col, fix="give e.g. '0.3 mm'")
    vias = data.get("vias_per_ground")
    if vias is not None and (not isinstance(vias, int) or isinstance(vias, bool)
                             or not 1 <= vias <= 16):
        raise doc.error(f"vias_per_ground {vias!r} is not a whole number 1..16",
                        ["vias_per_ground"], fix="give e.g. 2")
    mits = data.get("mitigations") or []
    if not isinstance(mits, list) or not all(isinstance(m, str) for m in mits):
        raise doc.error("mitigations must be a list of names", ["mitigations"],
                        fix="e.g. [via_in_pad]")
    for k, m in enumerate(mits):
        msg = mitigation_error(m)
        if msg:
            raise doc.error(msg.split(";")[0], ["mitigations", k],
                            fix=f"use {', '.join(MITIGATIONS)}")
    si = {"layers": [{"kind": "copper", "thickness": p.thickness} if isinstance(p, Copper)
                     else {"kind": p.kind, "thickness": p.thickness, "dk": p.er, "df": p.df}
                     for p in parts], "drill": drill_m}
    check_data(si, STACKUP_RULES, doc)  # a 1 m dielectric or a 5 m drill is a unit slip
    return SelectedStackup(stackup, drill_m, vias, tuple(mits))


def load_selected(path: str | Path) -> SelectedStackup:
    """Read a stackup file; errors are one line naming the file, line and key."""
    return parse_selected(load_yaml(path))


def load_selected_yaml(path: str | Path) -> Stackup:
    """Read a stackup file and return its :class:`~stackopt.model.stackup.Stackup`."""
    return load_selected(path).stackup


def parse_selected_text(text: str, file: str = "<text>") -> SelectedStackup:
    """Like :func:`load_selected` for text already in memory."""
    return parse_selected(parse_yaml_text(text, file))
