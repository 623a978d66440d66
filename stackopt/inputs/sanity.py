"""Physical range checks on loaded inputs: errors for implausible values, warnings for
legal but unusual ones.

The schema (pydantic) checks types, units and signs; this module checks that a value is
one a PCB can have, against the one table of plausible ranges
(:data:`stackopt.plausible.RANGES`). Each rule names a key path (``*`` matches any list
index or map key), the kind of quantity there and, optionally, a sibling key that must
hold a value for the rule to apply (``type: C`` for an element's value). A value outside
its kind's hard range is an error (:class:`InputError`, located in the file); a bare
number there (no unit written, read as SI) is an error that suggests the unit meant;
outside the softer range it is only unusual (:class:`~stackopt.errors.StackoptWarning`,
issued through :mod:`warnings`; the CLI shows each as one ``stackopt: warning:`` line).
"""

from __future__ import annotations

import re
import warnings
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from typing import Any

from pydantic import BaseModel

from stackopt.errors import InputError, StackoptWarning
from stackopt.inputs.yamlio import Document
from stackopt.plausible import judge

__all__ = ["Rule", "SCENARIO_RULES", "COST_TABLE_RULES", "STACKUP_RULES", "check_ranges",
           "check_scenario", "check_cost_table", "check_data"]

KeyPattern = tuple[str, ...]


@dataclass(frozen=True)
class Rule:
    """Values at ``path`` are of ``kind`` (a key of :data:`~stackopt.plausible.RANGES`);
    ``what`` names them in messages (default: the kind's own name); with ``when =
    (key, value)`` the rule applies only where the sibling ``key`` holds ``value``."""

    path: KeyPattern
    kind: str
    what: str | None = None
    when: tuple[str, str] | None = None


def _ground(base: KeyPattern) -> list[Rule]:
    return [Rule(base + ("trace_length",), "trace_length"),
            Rule(base + ("trace_width",), "trace_width", "a pad-to-via trace width"),
            Rule(base + ("pitch",), "via_pitch"),
            Rule(base + ("drill",), "drill")]


def _parts(base: KeyPattern) -> list[Rule]:
    return [Rule(base + ("esl",), "esl"), Rule(base + ("esr",), "esr"),
            Rule(base + ("q",), "q"),
            Rule(base + ("q_at",), "frequency", "the frequency of a quality factor")]


_EL = ("circuit", "elements", "*", "value")

#: Range rules of a scenario (paths into :class:`~stackopt.model.scenario.Scenario`).
SCENARIO_RULES: tuple[Rule, ...] = (
    Rule(("board", "width"), "board_side"),
    Rule(("board", "height"), "board_side"),
    Rule(("board", "quantity"), "quantity"),
    Rule(("requirements", "*", "frequency"), "frequency", "a requirement frequency"),
    Rule(("requirements", "*", "band", "*"), "frequency", "a requirement band edge"),
    Rule(("requirements", "*", "min_attenuation"), "attenuation"),
    Rule(("circuit", "z0"), "z0"),
    Rule(("circuit", "filter", "cutoff"), "frequency", "a filter cutoff"),
    Rule(("circuit", "filter", "spacing"), "spacing"),
    *_ground(("circuit", "filter", "ground")),
    *_ground(("circuit", "grounds", "*")),
    Rule(("circuit", "grounds", "*", "at", "*"), "position"),
    Rule(("circuit", "grounds", "*", "vias_at", "*", "*"), "via_offset"),
    *_parts(("circuit", "filter", "capacitor")),
    *_parts(("circuit", "filter", "inductor")),
    *_parts(("circuit", "elements", "*")),
    Rule(_EL, "capacitance", "a capacitor", when=("type", "C")),
    Rule(_EL, "inductance", "an inductor", when=("type", "L")),
    Rule(_EL, "resistance", "a resistor", when=("type", "R")),
    Rule(("lines", "*", "impedance"), "line_impedance"),
    Rule(("lines", "*", "differential"), "line_impedance", "a differential impedance"),
    Rule(("lines", "*", "spacing"), "gap", "a pair spacing"),
    Rule(("lines", "*", "max_width"), "trace_width", "a line width"),
    Rule(("lines", "*", "min_width"), "trace_width", "a line width"),
    Rule(("lines", "*", "gap"), "gap", "a coplanar gap"),
    Rule(("solder_mask", "thickness"), "solder_mask"),
    Rule(("solder_mask", "er"), "dk", "a solder mask Dk"),
    Rule(("space", "layers", "*"), "layers"),
    Rule(("space", "copper", "*"), "copper"),
    Rule(("space", "drills", "*"), "drill"),
    Rule(("space", "thickness", "nominal"), "board_thickness"),
    Rule(("space", "thickness", "min"), "board_thickness"),
    Rule(("space", "thickness", "max"), "board_thickness"),
    Rule(("search", "at"), "frequency", "the objective frequency"),
    Rule(("search", "seed"), "seed"),
)

#: Range rules of a fab cost table (paths into :class:`~stackopt.model.costtable.CostTable`).
COST_TABLE_RULES: tuple[Rule, ...] = (
    Rule(("panel", "width"), "panel_side"),
    Rule(("panel", "height"), "panel_side"),
    Rule(("materials", "prepregs", "*", "thickness"), "dielectric", "a prepreg ply thickness"),
    Rule(("materials", "cores", "*", "thickness"), "dielectric", "a core thickness"),
    Rule(("materials", "*", "*", "dk"), "dk"),
    Rule(("materials", "*", "*", "df"), "df"),
    Rule(("copper", "*", "weight"), "copper"),
    Rule(("drill", "*", "min_drill"), "drill"),
    Rule(("capabilities", "min_trace"), "min_feature", "a minimum trace width"),
    Rule(("capabilities", "min_space"), "min_feature", "a minimum spacing"),
    Rule(("capabilities", "min_dielectric"), "dielectric", "a minimum dielectric thickness"),
    Rule(("capabilities", "min_drill"), "drill", "a minimum drill"),
    Rule(("capabilities", "max_aspect_ratio"), "aspect_ratio"),
    Rule(("capabilities", "standard_thicknesses", "*"), "board_thickness",
         "a standard board thickness"),
    Rule(("capabilities", "max_thickness"), "board_thickness", "a maximum board thickness"),
    Rule(("solder_mask", "thickness"), "solder_mask"),
    Rule(("solder_mask", "er"), "dk", "a solder mask Dk"),
)

#: Range rules of a stackup file (``eval --stackup``), on the file's own keys.
STACKUP_RULES: tuple[Rule, ...] = (
    Rule(("layers", "*", "thickness"), "copper", when=("kind", "copper")),
    Rule(("layers", "*", "thickness"), "dielectric", when=("kind", "prepreg")),
    Rule(("layers", "*", "thickness"), "dielectric", when=("kind", "core")),
    Rule(("layers", "*", "dk"), "dk"),
    Rule(("layers", "*", "df"), "df"),
    Rule(("drill",), "drill"),
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


def _at(data: Any, path: Sequence) -> Any:
    cur = data
    for p in path:
        if isinstance(cur, dict) and p in cur:
            cur = cur[p]
        elif isinstance(cur, list | tuple) and isinstance(p, int) and 0 <= p < len(cur):
            cur = cur[p]
        else:
            return None
    return cur


_BARE = re.compile(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$")


def _raw(doc: Document | None, path: tuple) -> Any:
    """The value as written in the file (``'16 mm'``, ``6.8``), if it can be found."""
    cur = None if doc is None else _at(doc.data, path)
    return cur if isinstance(cur, str | int | float) and not isinstance(cur, bool) else None


def check_data(data: Any, rules: Sequence[Rule], doc: Document | None = None,
               file: str | None = None, raw_data: Any = None) -> None:
    """Apply ``rules`` to plain ``data`` holding SI numbers (``raw_data``, default the
    document's, holds the values as written: a bare number there gets a unit suggested).

    Raises
    ------
    InputError
        A value outside its kind's hard range (located in ``doc`` where given).

    Warns
    -----
    StackoptWarning
        A value outside its kind's softer range.
    """
    fname = doc.file if doc is not None else file
    for rule in rules:
        for path, x in _values(data, rule.path):
            if x is None or isinstance(x, bool) or not isinstance(x, int | float):
                continue
            if rule.when is not None:
                parent = _at(data, path[:-1])
                if not isinstance(parent, dict) or parent.get(rule.when[0]) != rule.when[1]:
                    continue
            raw = _raw(doc, path) if raw_data is None else _at(raw_data, path)
            bare = raw is not None and (isinstance(raw, int | float)
                                        or bool(_BARE.match(str(raw))))
            verdict = judge(rule.kind, float(x), bare=bare, written=raw, what=rule.what)
            if verdict is None:
                continue
            level, message, fix = verdict
            parent = _at(data, path[:-1])
            name = parent.get("name") if isinstance(parent, dict) else None
            if isinstance(name, str) and name:
                message = f"{name}: {path[-1]} {message}"
            line, col = doc.where(path) if doc is not None else (None, None)
            where = {"file": fname, "key": list(path), "line": line, "column": col}
            if level == "error":
                raise InputError(message, fix=fix, **where)  # type: ignore[arg-type]
            warnings.warn(StackoptWarning(message, fix=fix, **where),  # type: ignore[arg-type]
                          stacklevel=2)


def check_ranges(model: BaseModel, rules: Sequence[Rule], doc: Document | None = None,
                 file: str | None = None) -> None:
    """Apply ``rules`` to a validated model (see :func:`check_data`)."""
    check_data(model.model_dump(mode="python"), rules, doc, file)


def check_scenario(scenario: BaseModel, doc: Document | None = None) -> None:
    """Range checks of a scenario (see :data:`SCENARIO_RULES`)."""
    check_ranges(scenario, SCENARIO_RULES, doc)


def check_cost_table(table: BaseModel, doc: Document | None = None) -> None:
    """Range checks of a cost table (see :data:`COST_TABLE_RULES`)."""
    check_ranges(table, COST_TABLE_RULES, doc)
