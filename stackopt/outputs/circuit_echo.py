"""The scenario's circuit echoed back: every element with its value and unit (a generated
filter expanded first), its parasitics and its ground connection, and every ground
connection's geometry. ``stackopt check`` prints these rows; the report's assumptions
show them as a table. Generic over the models' fields: a field declared with a unit type
(:func:`stackopt.model.fields.dimension_of`) is printed with its unit.
"""

from __future__ import annotations

from pydantic import BaseModel

from stackopt.model.fields import dimension_of
from stackopt.units import format_quantity as fq

__all__ = ["explicit_circuit", "element_rows", "ground_rows", "ELEMENT_HEAD", "GROUND_HEAD"]

#: Unit dimension of an element's ``value`` by its type.
VALUE_DIM = {"R": "impedance", "L": "inductance", "C": "capacitance"}
ELEMENT_HEAD = ["element", "type", "value", "between", "ground connection", "parasitics"]
GROUND_HEAD = ["ground connection", "at", "geometry"]
_SHOWN = {"name", "type", "value", "between", "ground"}


def explicit_circuit(circuit):
    """The circuit with a ``filter:`` generator expanded into its elements."""
    if circuit.filter is None:
        return circuit
    from stackopt.circuit.filters import filter_circuit

    return filter_circuit(circuit.filter, circuit.z0, circuit.input, circuit.output)


def _fmt(value, dim) -> str:
    if isinstance(value, BaseModel):  # a nested part (e.g. the mount): its set fields
        return _fields(value, set()) or "default"
    if isinstance(value, tuple):
        return "(" + ", ".join(_fmt(v, dim) for v in value) + ")"
    if isinstance(value, bool) or not isinstance(value, int | float):
        return str(value)
    if dim is None or dim == "dimensionless":
        return f"{value:g}"
    if value == 0 and dim == "length":
        return "0 mm"
    return fq(float(value), dim)


def _fields(model, skip: set[str]) -> str:
    """``name value`` of every set, non-default field of ``model`` outside ``skip``."""
    out = []
    for name, info in type(model).model_fields.items():
        v = getattr(model, name)
        if name in skip or v is None or v == info.default:
            continue
        text = _fmt(v, dimension_of(info))
        out.append(text if name == "size" else f"{name.replace('_', ' ')} {text}")
    return ", ".join(out)


def element_rows(circuit) -> list[list[str]]:
    """One row per element of the (expanded) circuit: name, type, value with unit,
    nodes, ground connection, parasitics (``none`` when ideal)."""
    c = explicit_circuit(circuit)
    rows = []
    for e in c.elements:
        value = "" if e.value is None else _fmt(e.value, VALUE_DIM.get(e.type))
        rows.append([e.name, e.type, value, " - ".join(e.between),
                     e.ground or ("ideal" if "gnd" in e.between else ""),
                     _fields(e, _SHOWN) or "none"])
    return rows


def ground_rows(circuit) -> list[list[str]]:
    """One row per ground connection: name, position, the rest of its geometry (unset
    parts come from the candidate stackup)."""
    c = explicit_circuit(circuit)
    return [[g.name, _fmt(g.at, "length"),
             _fields(g, {"name", "at"}) or "vias and drill from the candidate"]
            for g in c.grounds]
