"""One table of plausible ranges per quantity kind, used at every edge.

Scenarios, cost tables, stackup files and every command-line option check their values
against :data:`RANGES` (through :mod:`stackopt.inputs.sanity` and
:func:`stackopt.cli.options.quantity`). Outside the hard range a value is an error; a
*bare* number there (no unit written, so read as SI) is an error that suggests the unit
the user probably meant: ``value 6.8 is 6.8 F, not a plausible capacitance; did you mean
6.8 pF? write the unit``. Outside the softer range it is a warning; inside it is accepted.

The limits are deliberately wide; they catch a unit slip, not second-guess a design.
Where they come from: common practice, no source -- rigid boards are about 0.2 to 3.2 mm
thick with dielectric layers of roughly 40 um to a few mm; FR-4-class laminates have Dk
about 3.5 to 5 (PTFE about 2.1, ceramic-filled laminates up to about 10); foils are 1/8
to a few oz; mechanically drilled vias are about 0.1 to 1 mm; chip capacitors span about
0.1 pF to some mF and chip inductors about 0.1 nH to some mH; and the closed-form via and
line models used here are meant for frequencies up to some tens of GHz.

This module imports nothing heavy (the command line uses it before any command runs).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from stackopt.units import Dimension, format_quantity, parse_quantity

__all__ = ["Plausible", "RANGES", "SEED_MAX", "suggest_units", "judge"]

#: Largest random seed, the same on the command line and in a scenario (numpy's limit).
SEED_MAX = 2**32 - 1


@dataclass(frozen=True)
class Plausible:
    """Error outside ``[lo, hi]``; warning outside ``[warn_lo, warn_hi]`` (SI units)."""

    dim: Dimension
    what: str
    lo: float
    hi: float
    warn_lo: float | None = None
    warn_hi: float | None = None
    low_note: str = ""
    high_note: str = ""


_F_NOTE = "the closed-form via and line models are meant for up to some tens of GHz"
_FREQ = Plausible("frequency", "a frequency", 1e3, 1e12, 1e6, 20e9,
                  "ground-via inductance hardly matters below 1 MHz", _F_NOTE)

#: The plausible range of every kind of quantity stackopt reads (SI units).
RANGES: dict[str, Plausible] = {
    # lengths, by role
    "drill": Plausible("length", "a via drill", 10e-6, 2e-3, 50e-6, 1e-3,
                       "smaller than laser-drilled microvias",
                       "larger than usual for a via; is it a mounting hole?"),
    "copper": Plausible("length", "a copper foil thickness", 1e-6, 0.5e-3, None, 140e-6,
                        high_note="heavier than 4 oz copper"),
    "dielectric": Plausible("length", "a dielectric thickness", 5e-6, 10e-3, 40e-6, 3.2e-3,
                            "thinner than usual prepreg plies; check the unit",
                            "thicker than usual laminate cores"),
    "solder_mask": Plausible("length", "a solder mask thickness", 1e-6, 0.5e-3, 5e-6,
                             75e-6, "thinner than usual solder mask over a trace",
                             "thicker than usual solder mask (about 10 to 40 um)"),
    "board_thickness": Plausible("length", "a finished board thickness", 50e-6, 12e-3,
                                 0.2e-3, 3.2e-3, "thinner than usual rigid boards",
                                 "thicker than usual rigid boards"),
    "via_depth": Plausible("length", "a via length (depth to the plane)", 5e-6, 12e-3,
                           None, 3.2e-3, high_note="longer than usual board thicknesses"),
    "board_side": Plausible("length", "a board side", 1e-3, 2.0),
    "panel_side": Plausible("length", "a panel side", 1e-3, 3.0),
    "trace_width": Plausible("length", "a trace width", 1e-6, 0.1, 25e-6, 10e-3,
                             "finer than any etched trace", "wider than usual traces"),
    "gap": Plausible("length", "a gap or spacing", 1e-6, 50e-3),
    "min_feature": Plausible("length", "a minimum trace or space", 1e-6, 5e-3),
    "trace_length": Plausible("length", "a pad-to-via trace length", 0.0, 0.5, None,
                              20e-3, high_note="long for a ground connection"),
    "via_pitch": Plausible("length", "a via pitch", 10e-6, 0.1),
    "spacing": Plausible("length", "a ground connection spacing", 1e-6, 1.0),
    "position": Plausible("length", "a board position", -2.0, 2.0),
    "via_offset": Plausible("length", "a via offset", -0.1, 0.1),
    # frequencies
    "frequency": _FREQ,
    # circuit values
    "capacitance": Plausible("capacitance", "a capacitance", 1e-16, 0.1),
    "inductance": Plausible("inductance", "an inductance", 0.0, 1e-2),
    "esl": Plausible("inductance", "a part's series inductance (ESL)", 0.0, 1e-6, None,
                     20e-9, high_note="larger than usual for a chip part"),
    "resistance": Plausible("impedance", "a resistance", 0.0, 100e6),
    "esr": Plausible("impedance", "a part's series resistance (ESR)", 0.0, 1e3),
    "z0": Plausible("impedance", "a reference impedance", 0.1, 10e3, 10.0, 200.0,
                    "unusually low", "unusually high"),
    "line_impedance": Plausible("impedance", "a line impedance", 1.0, 10e3, 10.0, 200.0,
                                "unusually low", "unusually high"),
    "q": Plausible("dimensionless", "a quality factor", 0.01, 1e6),
    # materials and fab
    "dk": Plausible("dimensionless", "a relative permittivity (Dk)", 1.0, 20.0, 2.0, 10.0,
                    "below PTFE laminates (about 2.1)",
                    "FR-4-class laminates are about 3.5 to 5; ceramic-filled?"),
    "df": Plausible("dimensionless", "a loss tangent (Df)", 0.0, 0.5, None, 0.05,
                    high_note="lossier than FR-4 (about 0.02)"),
    "aspect_ratio": Plausible("dimensionless", "a drill aspect ratio", 0.5, 100.0, None,
                              20.0, high_note="above what mechanical drilling usually plates"),
    "attenuation": Plausible("decibel", "a required attenuation", 0.0, 250.0, None, 120.0,
                             high_note="boards rarely reach this; coupling not modelled "
                             "will limit it"),
    # counts
    "quantity": Plausible("dimensionless", "a board quantity", 1, 10_000_000),
    "layers": Plausible("dimensionless", "a layer count", 2, 64),
    "seed": Plausible("dimensionless", "a random seed", 0, SEED_MAX),
}

#: Units offered for a bare number, most likely first.
_SUGGEST: dict[str, tuple[str, ...]] = {
    "length": ("mm", "um", "mil"),
    "frequency": ("MHz", "GHz", "kHz"),
    "capacitance": ("pF", "nF", "uF"),
    "inductance": ("nH", "uH", "pH"),
    "impedance": ("ohm", "kohm", "mohm"),
}


def _fmt(x: float, dim: Dimension) -> str:
    if dim == "decibel":
        return f"{x:g} dB"
    if dim == "dimensionless":
        return f"{x:g}"
    if dim == "length" and abs(x) >= 0.1:
        return f"{x:.3g} m"
    if dim == "frequency" and abs(x) >= 1e12:
        return f"{x:.3g} Hz"
    if dim in ("capacitance", "inductance") and abs(x) >= 1e-3:
        return f"{x:.3g} {'F' if dim == 'capacitance' else 'H'}"
    return format_quantity(x, dim)


def suggest_units(x: float, kind: str) -> list[str]:
    """Units that would make the bare number ``x`` plausible for ``kind`` (typical range
    first, then the hard range)."""
    r = RANGES[kind]
    typical_lo = r.warn_lo if r.warn_lo is not None else r.lo
    typical_hi = r.warn_hi if r.warn_hi is not None else r.hi
    out = []
    for lo, hi in ((typical_lo, typical_hi), (r.lo, r.hi)):
        for u in _SUGGEST.get(r.dim, ()):
            y = x * parse_quantity(f"1 {u}", r.dim)
            if lo <= y <= hi and u not in out:
                out.append(u)
        if out:
            break
    return out


def judge(kind: str, x: float, *, bare: bool, written: object = None,
          what: str | None = None) -> tuple[str, str, str] | None:
    """``None`` if ``x`` (SI) is plausible for ``kind``, else ``(level, message, fix)``
    with level ``"error"`` or ``"warning"``.

    ``bare`` says no unit was written (so the value was read as SI); ``written`` is the
    value as the user wrote it (quoted in the message); ``what`` overrides the kind's name
    in the message ("a requirement frequency").
    """
    r = RANGES[kind]
    what = what or r.what
    shown = _fmt(float(x), r.dim)
    raw = str(written) if written is not None else None
    if not (math.isfinite(x) and r.lo <= x <= r.hi):
        if bare and raw is not None and r.dim in _SUGGEST:
            units = suggest_units(float(x), kind)
            head = f"{raw} is {shown}, not plausible for {what}"
            if units:
                alt = f" (or {', '.join(units[1:])})" if len(units) > 1 else ""
                return ("error", f"{head}; did you mean {raw} {units[0]}{alt}?",
                        "write the unit")
            return ("error", head, f"write the unit; give {_fmt(r.lo, r.dim)} to "
                    f"{_fmt(r.hi, r.dim)}")
        if raw is not None and raw != shown:
            shown += f" (from {raw!r})"
        return ("error", f"{shown} is not a plausible value for {what}",
                f"give {_fmt(r.lo, r.dim)} to {_fmt(r.hi, r.dim)} (check the unit)")
    if raw is not None and raw != shown:
        shown += f" (from {raw!r})"
    if r.warn_lo is not None and x < r.warn_lo:
        note, limit = r.low_note, f"below {_fmt(r.warn_lo, r.dim)}"
    elif r.warn_hi is not None and x > r.warn_hi:
        note, limit = r.high_note, f"above {_fmt(r.warn_hi, r.dim)}"
    else:
        return None
    return ("warning", f"{shown} for {what} is unusual ({limit}"
            + (f": {note}" if note else "") + ")", "check it; it is used as given")
