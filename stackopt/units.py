"""Quantities with units at the edges; SI floats everywhere inside.

A small, closed table of the units PCB work uses, parsed by one regular expression.
A bare number is SI. ``mil`` and ``thou`` are a thousandth of an inch (not an angle), and
``oz`` is copper weight in oz/ft² turned into a nominal foil thickness (IPC-4562:
0.5 / 1 / 2 oz ≈ 17.1 / 34.3 / 68.6 um).

Examples
--------
>>> parse_quantity("0.19 mm", "length")
0.00019
>>> parse_quantity("800MHz", "frequency")
800000000.0
>>> round(parse_quantity("1 oz", "length") * 1e6, 1)
34.3
"""

from __future__ import annotations

import math
import re
from typing import Literal

from stackopt.errors import UnitError

Dimension = Literal[
    "length",
    "frequency",
    "impedance",
    "inductance",
    "capacitance",
    "time",
    "voltage",
    "dimensionless",
    "decibel",
]

#: Nominal foil thickness per oz/ft² of copper (IPC-4562 nominal, 1 oz ≈ 34.3 um).
COPPER_M_PER_OZ = 34.3e-6
#: One inch in metres (exact).
INCH = 0.0254

_SI_PREFIX = {"T": 1e12, "G": 1e9, "M": 1e6, "k": 1e3, "": 1.0, "m": 1e-3, "u": 1e-6,
              "µ": 1e-6, "μ": 1e-6, "n": 1e-9, "p": 1e-12, "f": 1e-15}


def _prefixed(base: str, scale: float = 1.0, prefixes: str = "TGMk mµμunpf") -> dict[str, float]:
    out = {}
    for p in prefixes.replace(" ", ""):
        out[p + base] = _SI_PREFIX[p] * scale
    out[base] = scale
    return out


_UNITS: dict[str, dict[str, float]] = {
    "length": {
        "mm": 1e-3, "um": 1e-6, "mil": INCH * 1e-3, "in": INCH, "m": 1.0, "thou": INCH * 1e-3,
        "oz": COPPER_M_PER_OZ, "cm": 1e-2, "µm": 1e-6, "μm": 1e-6, "nm": 1e-9, "inch": INCH,
        "mils": INCH * 1e-3,
    },
    "frequency": {"MHz": 1e6, "GHz": 1e9, "kHz": 1e3, "Hz": 1.0, "THz": 1e12},
    "impedance": {**_prefixed("ohm", prefixes="kMm"), **_prefixed("Ω", prefixes="kMm"),
                  "ohms": 1.0},
    "inductance": _prefixed("H", prefixes="munpµμ"),
    "capacitance": _prefixed("F", prefixes="munpfµμ"),
    "time": {"s": 1.0, "ms": 1e-3, "us": 1e-6, "ns": 1e-9, "ps": 1e-12,
             "day": 86400.0, "days": 86400.0, "d": 86400.0},
    "voltage": _prefixed("V", prefixes="kmu"),
    "dimensionless": {"": 1.0, "%": 0.01},
    "decibel": {"dB": 1.0, "db": 1.0},
}
# Case-insensitive fallbacks that are unambiguous (MHz vs mHz is not: keep case there).
_ALIASES = {"ohm": "ohm", "OHM": "ohm", "Ohm": "ohm", "MIL": "mil", "Mil": "mil", "IN": "in",
            "UM": "um", "ghz": "GHz", "mhz": "MHz", "khz": "kHz",
            "hz": "Hz", "Ghz": "GHz", "Mhz": "MHz", "Khz": "kHz", "KHz": "kHz", "OZ": "oz",
            "Oz": "oz", "nh": "nH", "ph": "pH", "uh": "uH", "pf": "pF", "nf": "nF", "uf": "uF"}

_NUM_RE = re.compile(
    r"^\s*(?P<num>[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?P<unit>[^\s\d.+\-][^\s]*)?\s*$"
)


def units_for(dim: Dimension) -> list[str]:
    """Return the unit spellings accepted for a dimension (for error messages)."""
    return [u for u in _UNITS[dim] if u]


def _lookup(unit: str) -> tuple[str, float] | None:
    unit = _ALIASES.get(unit, unit)
    for dim, table in _UNITS.items():
        if unit in table:
            return dim, table[unit]
    return None


def parse_quantity(
    value: object,
    dim: Dimension,
    *,
    key: str | None = None,
    file: str | None = None,
) -> float:
    """Parse a number with an optional unit into an SI float.

    Parameters
    ----------
    value : str, int or float
        ``"0.19 mm"``, ``"7.5mil"``, ``"2.4 GHz"``, ``"1 oz"``, ``50`` (bare number: SI).
    dim : str
        The expected dimension; a unit of another dimension is an error.
    key, file : str, optional
        Where the value came from, for the error message.

    Returns
    -------
    float
        The value in SI units (m, Hz, ohm, H, F, s, V).

    Raises
    ------
    UnitError
        Unparseable text, NaN/inf, an unknown unit or one of the wrong dimension.
    """
    accepted = ", ".join(units_for(dim)[:6]) or "a plain number"
    if isinstance(value, bool) or value is None:
        raise UnitError(f"expected a {dim}, got {value!r}", key=key, file=file,
                        fix=f"give a number with a unit such as {accepted}")
    if isinstance(value, int | float):
        x = float(value)
    elif isinstance(value, str):
        m = _NUM_RE.match(value.replace("\u2009", " "))
        if not m:
            raise UnitError(f"cannot read {value!r} as a {dim}", key=key, file=file,
                            fix=f"write a number and a unit, e.g. '0.19 mm' (units: {accepted})")
        x = float(m.group("num"))
        unit = m.group("unit") or ""
        if unit:
            found = _lookup(unit)
            if found is None:
                same = [u for u in units_for(dim) if u.lower() == unit.lower()]
                if same:  # 'Mm' is megametres, 'MM' nothing: letter case carries meaning
                    raise UnitError(f"unit {unit!r} in {value!r} is not {same[0]!r}: the "
                                    "letter case of a unit matters (M is mega, m is milli)",
                                    key=key, file=file, fix=f"write {same[0]!r}")
                raise UnitError(f"unknown unit {unit!r} in {value!r}", key=key, file=file,
                                fix=f"a {dim} takes one of: {accepted}")
            udim, scale = found
            if udim != dim:
                raise UnitError(f"{value!r} is a {udim}, not a {dim}", key=key, file=file,
                                fix=f"a {dim} takes one of: {accepted}")
            x *= scale
    else:
        raise UnitError(f"expected a {dim}, got {type(value).__name__} {value!r}",
                        key=key, file=file, fix=f"give a number with a unit such as {accepted}")
    if not math.isfinite(x):
        raise UnitError(f"{value!r} is not a finite number", key=key, file=file,
                        fix="give a finite value")
    return x


def parse_positive(value: object, dim: Dimension, *, key: str | None = None,
                   file: str | None = None) -> float:
    """Like :func:`parse_quantity` but the result must be > 0."""
    x = parse_quantity(value, dim, key=key, file=file)
    if x <= 0:
        raise UnitError(f"must be positive, got {value!r}", key=key, file=file,
                        fix=f"give a {dim} greater than zero")
    return x


_FORMAT = {
    "length": [(1e-3, "mm"), (1e-6, "um")],
    "frequency": [(1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz"), (1.0, "Hz")],
    "inductance": [(1e-6, "uH"), (1e-9, "nH"), (1e-12, "pH")],
    "capacitance": [(1e-6, "uF"), (1e-9, "nF"), (1e-12, "pF"), (1e-15, "fF")],
    "impedance": [(1e3, "kohm"), (1.0, "ohm"), (1e-3, "mohm")],
}


def format_quantity(x: float, dim: Dimension, digits: int = 3) -> str:
    """Format an SI value for people: ``format_quantity(1.9e-4, "length") == "0.19 mm"``."""
    if not math.isfinite(x):
        return str(x)
    steps = _FORMAT.get(dim)
    if not steps:
        return f"{x:.{digits}g}"
    ax = abs(x)
    if dim == "length":
        scale, name = (1e-3, "mm") if ax >= 0.0995e-3 else (1e-6, "um")
        return f"{x / scale:.{digits}g} {name}"
    for scale, name in steps:
        if ax >= scale * 0.9995:
            return f"{x / scale:.{digits}g} {name}"
    scale, name = steps[-1]
    return f"{x / scale:.{digits}g} {name}"
