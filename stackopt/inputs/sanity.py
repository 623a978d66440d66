"""Physical range checks on loaded inputs: errors for impossible values, warnings for
legal but unusual ones.

The schema (pydantic) checks types, units and signs; this module checks that a value is
one a PCB can have. Each rule names a key path (``*`` matches any list index or map
key), a hard range outside which the value is an error (:class:`InputError`, located in
the file), and an optional softer range outside which it is only unusual
(:class:`~stackopt.errors.StackoptWarning`, issued through :mod:`warnings`; the library
never prints, the CLI shows each as one ``stackopt: warning:`` line).

The limits are deliberately wide: they catch a unit slip (a 16 mm dielectric meant as
0.16 mm, a 5 mm "via", 5 THz) rather than second-guess a design. Where they come from:
common practice, no source — rigid boards are about 0.2 to 3.2 mm thick with dielectric
layers of roughly 40 um to a few mm, FR-4-class laminates have Dk about 3.5 to 5 (PTFE
about 2.1, ceramic-filled laminates up to about 10 and above), foils are 1/8 to a few
oz, mechanically drilled vias are about 0.1 to 1 mm, and the closed-form via and line
models used here are meant for frequencies up to some tens of GHz.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from typing import Any, TypedDict

from pydantic import BaseModel

from stackopt.errors import InputError, StackoptWarning
from stackopt.inputs.yamlio import Document
from stackopt.units import Dimension, format_quantity

__all__ = ["Rule", "SCENARIO_RULES", "COST_TABLE_RULES", "check_ranges", "check_scenario",
           "check_cost_table"]

KeyPattern = tuple[str, ...]


@dataclass(frozen=True)
class Rule:
    """Error outside ``[lo, hi]``; warning outside ``[warn_lo, warn_hi]`` (SI units)."""

    path: KeyPattern
    dim: Dimension
    what: str
    lo: float
    hi: float
    warn_lo: float | None = None
    warn_hi: float | None = None
    low_note: str = ""
    high_note: str = ""


def _fmt(x: float, dim: Dimension) -> str:
    if dim == "decibel":
        return f"{x:g} dB"
    if dim == "dimensionless":
        return f"{x:g}"
    return format_quantity(x, dim)


_GHZ = 1e9
_F_NOTE = "the closed-form via and line models are meant for up to some tens of GHz"


def _freq(path: KeyPattern, what: str, warn: bool = True) -> Rule:
    return Rule(path, "frequency", what, 1.0, 1e12, warn_lo=1e6 if warn else None,
                warn_hi=20 * _GHZ if warn else None,
                low_note="ground-via inductance hardly matters below 1 MHz",
                high_note=_F_NOTE)


def _drill(path: KeyPattern, what: str = "a via drill") -> Rule:
    return Rule(path, "length", what, 10e-6, 2e-3, warn_lo=50e-6, warn_hi=1e-3,
                low_note="smaller than laser-drilled microvias",
                high_note="larger than usual for a via; is it a mounting hole?")


def _copper(path: KeyPattern) -> Rule:
    return Rule(path, "length", "a copper foil thickness", 1e-6, 0.5e-3, warn_hi=140e-6,
                high_note="heavier than 4 oz copper")


def _board_t(path: KeyPattern, what: str = "a finished board thickness") -> Rule:
    return Rule(path, "length", what, 50e-6, 12e-3, warn_lo=0.2e-3, warn_hi=3.2e-3,
                low_note="thinner than usual rigid boards",
                high_note="thicker than usual rigid boards")


def _side(path: KeyPattern, what: str, hi: float) -> Rule:
    return Rule(path, "length", what, 1e-3, hi)


def _dielectric(path: KeyPattern, what: str = "a dielectric thickness") -> Rule:
    return Rule(path, "length", what, 5e-6, 10e-3, warn_lo=40e-6, warn_hi=3.2e-3,
                low_note="thinner than usual prepreg plies; check the unit",
                high_note="thicker than usual laminate cores")


def _ground(base: KeyPattern) -> list[Rule]:
    return [
        Rule(base + ("trace_length",), "length", "a pad-to-via trace length", 0.0, 0.5,
             warn_hi=20e-3, high_note="long for a ground connection"),
        Rule(base + ("trace_width",), "length", "a pad-to-via trace width", 1e-6, 50e-3),
        Rule(base + ("pitch",), "length", "a via pitch", 10e-6, 0.1),
        _drill(base + ("drill",)),
    ]


def _parts(base: KeyPattern) -> list[Rule]:
    return [
        Rule(base + ("esl",), "inductance", "a part's series inductance (ESL)", 0.0, 1e-6,
             warn_hi=20e-9, high_note="larger than usual for a chip part"),
        Rule(base + ("q",), "dimensionless", "a quality factor", 0.01, 1e6),
        _freq(base + ("q_at",), "the frequency of a quality factor", warn=False),
    ]


#: Range rules of a scenario (paths into :class:`~stackopt.model.scenario.Scenario`).
SCENARIO_RULES: tuple[Rule, ...] = (
    _side(("board", "width"), "a board side", 2.0),
    _side(("board", "height"), "a board side", 2.0),
    _freq(("requirements", "*", "frequency"), "a requirement frequency"),
    _freq(("requirements", "*", "band", "*"), "a requirement band edge"),
    Rule(("requirements", "*", "min_attenuation"), "decibel", "a required attenuation",
         0.0, 250.0, warn_hi=120.0,
         high_note="boards rarely reach this; coupling not modelled will limit it"),
    Rule(("circuit", "z0"), "impedance", "a reference impedance", 0.1, 10e3,
         warn_lo=10.0, warn_hi=200.0, low_note="unusually low", high_note="unusually high"),
    _freq(("circuit", "filter", "cutoff"), "a filter cutoff"),
    Rule(("circuit", "filter", "spacing"), "length", "a ground connection spacing",
         1e-6, 1.0),
    *_ground(("circuit", "filter", "ground")),
    *_ground(("circuit", "grounds", "*")),
    Rule(("circuit", "grounds", "*", "at", "*"), "length", "a board position", -2.0, 2.0),
    Rule(("circuit", "grounds", "*", "vias_at", "*", "*"), "length", "a via offset",
         -0.1, 0.1),
    *_parts(("circuit", "filter", "capacitor")),
    *_parts(("circuit", "filter", "inductor")),
    *_parts(("circuit", "elements", "*")),
    Rule(("lines", "*", "max_width"), "length", "a line width", 1e-6, 0.1),
    Rule(("lines", "*", "gap"), "length", "a coplanar gap", 1e-6, 50e-3),
    Rule(("space", "layers", "*"), "dimensionless", "a layer count", 2, 64),
    _copper(("space", "copper", "*")),
    _drill(("space", "drills", "*")),
    _board_t(("space", "thickness", "nominal")),
    _board_t(("space", "thickness", "min")),
    _board_t(("space", "thickness", "max")),
    _freq(("search", "at"), "the objective frequency"),
)

#: Range rules of a fab cost table (paths into :class:`~stackopt.model.costtable.CostTable`).
COST_TABLE_RULES: tuple[Rule, ...] = (
    _side(("panel", "width"), "a panel side", 3.0),
    _side(("panel", "height"), "a panel side", 3.0),
    _dielectric(("materials", "prepregs", "*", "thickness"), "a prepreg ply thickness"),
    _dielectric(("materials", "cores", "*", "thickness"), "a core thickness"),
    Rule(("materials", "*", "*", "dk"), "dimensionless", "a relative permittivity (Dk)",
         1.0, 20.0, warn_lo=2.0, warn_hi=10.0, low_note="below PTFE laminates (about 2.1)",
         high_note="FR-4-class laminates are about 3.5 to 5; ceramic-filled?"),
    Rule(("materials", "*", "*", "df"), "dimensionless", "a loss tangent (Df)", 0.0, 0.5,
         warn_hi=0.05, high_note="lossier than FR-4 (about 0.02)"),
    _copper(("copper", "*", "weight")),
    _drill(("drill", "*", "min_drill")),
    Rule(("capabilities", "min_trace"), "length", "a minimum trace width", 1e-6, 5e-3),
    Rule(("capabilities", "min_space"), "length", "a minimum spacing", 1e-6, 5e-3),
    _dielectric(("capabilities", "min_dielectric"), "a minimum dielectric thickness"),
    _drill(("capabilities", "min_drill"), "a minimum drill"),
    Rule(("capabilities", "max_aspect_ratio"), "dimensionless", "a drill aspect ratio",
         0.5, 100.0, warn_hi=20.0, high_note="above what mechanical drilling usually plates"),
    _board_t(("capabilities", "standard_thicknesses", "*"), "a standard board thickness"),
    _board_t(("capabilities", "max_thickness"), "a maximum board thickness"),
)


def _values(data: Any, pattern: Sequence[str], at: tuple = ()) -> Iterator[tuple[tuple, Any]]:
    """Every (concrete path, value) that ``pattern`` matches in plain ``data``."""
    if not pattern:
        yield at, data
        return
    head, rest = pattern[0], pattern[1:]
    if isinstance(data, dict):
        keys = list(data) if head == "*" else [head] if head in data else []
        for k in keys:
            yield from _values(data[k], rest, at + (k,))
    elif isinstance(data, list | tuple) and head == "*":
        for i, v in enumerate(data):
            yield from _values(v, rest, at + (i,))


def _raw(doc: Document | None, path: tuple) -> Any:
    """The value as written in the file (``'16 mm'``), if it can be found."""
    cur = None if doc is None else doc.data
    for p in path:
        if isinstance(cur, dict) and p in cur:
            cur = cur[p]
        elif isinstance(cur, list) and isinstance(p, int) and 0 <= p < len(cur):
            cur = cur[p]
        else:
            return None
    return cur if isinstance(cur, str | int | float) and not isinstance(cur, bool) else None


class _Where(TypedDict):
    """Where a value sits, in the keywords :class:`InputError` and the warning take."""

    file: str | None
    key: list[str | int]
    line: int | None
    column: int | None


def check_ranges(model: BaseModel, rules: Sequence[Rule], doc: Document | None = None,
                 file: str | None = None) -> None:
    """Apply ``rules`` to a validated model.

    Raises
    ------
    InputError
        A value outside a rule's hard range (located in ``doc`` where given).

    Warns
    -----
    StackoptWarning
        A value outside a rule's softer range.
    """
    data = model.model_dump(mode="python")
    fname = doc.file if doc is not None else file
    for rule in rules:
        for path, x in _values(data, rule.path):
            if x is None or isinstance(x, bool) or not isinstance(x, int | float):
                continue
            raw = _raw(doc, path)
            shown = _fmt(float(x), rule.dim)
            if raw is not None and str(raw) != shown:
                shown += f" (from {raw!r})"
            line, col = doc.where(path) if doc is not None else (None, None)
            where: _Where = {"file": fname, "key": list(path), "line": line, "column": col}
            if not (math.isfinite(x) and rule.lo <= x <= rule.hi):
                raise InputError(f"{shown} is not a plausible value for {rule.what}",
                                 fix=f"give {_fmt(rule.lo, rule.dim)} to "
                                 f"{_fmt(rule.hi, rule.dim)} (check the unit)", **where)
            if rule.warn_lo is not None and x < rule.warn_lo:
                note, limit = rule.low_note, f"below {_fmt(rule.warn_lo, rule.dim)}"
            elif rule.warn_hi is not None and x > rule.warn_hi:
                note, limit = rule.high_note, f"above {_fmt(rule.warn_hi, rule.dim)}"
            else:
                continue
            warnings.warn(StackoptWarning(f"{shown} for {rule.what} is unusual ({limit}"
                                          + (f": {note}" if note else "") + ")",
                                          fix="check it; it is used as given", **where),
                          stacklevel=2)


def check_scenario(scenario: BaseModel, doc: Document | None = None) -> None:
    """Range checks of a scenario (see :data:`SCENARIO_RULES`)."""
    check_ranges(scenario, SCENARIO_RULES, doc)


def check_cost_table(table: BaseModel, doc: Document | None = None) -> None:
    """Range checks of a cost table (see :data:`COST_TABLE_RULES`)."""
    check_ranges(table, COST_TABLE_RULES, doc)
