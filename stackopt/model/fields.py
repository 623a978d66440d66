"""Pydantic field types that take quantities with units and hold SI floats.

Use them in frozen models (``model_config = FROZEN``):

>>> from pydantic import BaseModel
>>> class Via(BaseModel):
...     model_config = FROZEN
...     drill: PositiveLength
>>> Via(drill="0.3 mm").drill
0.0003
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Annotated, get_args, get_origin

from pydantic import AfterValidator, BeforeValidator, ConfigDict
from pydantic.fields import FieldInfo

from stackopt.errors import InputError
from stackopt.units import Dimension, parse_quantity

#: Config for every input model: immutable, unknown keys are errors, no silent coercion
#: of strings to numbers beyond what the unit parser does.
FROZEN = ConfigDict(frozen=True, extra="forbid", str_strip_whitespace=True)


def _parser(dim: Dimension):
    def parse(v: object) -> float:
        return parse_quantity(v, dim)

    parse.dimension = dim  # type: ignore[attr-defined]  # read by dimension_of
    return BeforeValidator(parse)


def dimension_of(field: FieldInfo) -> Dimension | None:
    """The unit dimension of a model field declared with one of the types below
    (``None`` for a plain field), so that outputs can print any field with its unit."""
    def find(metadata, annotation) -> Dimension | None:
        for m in metadata:
            dim = getattr(getattr(m, "func", None), "dimension", None)
            if dim is not None:
                return dim
        for arg in get_args(annotation):  # Optional[...] and Annotated[...] inside
            extra = arg.__metadata__ if get_origin(arg) is Annotated else ()
            dim = find(extra, arg)
            if dim is not None:
                return dim
        return None

    return find(field.metadata, field.annotation)


def _positive(x: float) -> float:
    if x <= 0:
        raise ValueError(f"must be greater than zero, got {x:g} (SI)")
    return x


def _non_negative(x: float) -> float:
    if x < 0:
        raise ValueError(f"must not be negative, got {x:g} (SI)")
    return x


def _whole(v: object) -> object:
    if isinstance(v, bool):
        raise ValueError(f"expected a whole number, got {str(v).lower()} (YAML reads "
                         "true/false/yes/no/on/off as a yes-or-no value)")
    if isinstance(v, float) and not v.is_integer():
        raise ValueError(f"expected a whole number, got {v:g}")
    return v


#: A whole number (a count, a quantity, a seed): never a yes/no value, never a fraction.
Count = Annotated[int, BeforeValidator(_whole)]

def unique_names(names: Sequence[str | None], what: str, key: str) -> None:
    """Refuse two entries of one list with the same name (outputs are keyed by name: a
    second one would silently take the first one's results).

    Raises
    ------
    InputError
        Naming the second entry's key path (``lines[1].name``), the name and the first.
    """
    first: dict[str, int] = {}
    for i, n in enumerate(names):
        if n is None:
            continue
        if n in first:
            raise InputError(f"{what} {first[n] + 1} and {i + 1} are both named {n!r}",
                             key=[key, i, "name"], fix="give each a unique name")
        first[n] = i


Length = Annotated[float, _parser("length")]
PositiveLength = Annotated[float, _parser("length"), AfterValidator(_positive)]
NonNegativeLength = Annotated[float, _parser("length"), AfterValidator(_non_negative)]
Frequency = Annotated[float, _parser("frequency"), AfterValidator(_positive)]
Impedance = Annotated[float, _parser("impedance"), AfterValidator(_positive)]
Resistance = Annotated[float, _parser("impedance"), AfterValidator(_non_negative)]
Inductance = Annotated[float, _parser("inductance"), AfterValidator(_non_negative)]
Capacitance = Annotated[float, _parser("capacitance"), AfterValidator(_non_negative)]
Voltage = Annotated[float, _parser("voltage"), AfterValidator(_non_negative)]
PositiveFloat = Annotated[float, _parser("dimensionless"), AfterValidator(_positive)]
NonNegativeFloat = Annotated[float, _parser("dimensionless"), AfterValidator(_non_negative)]
Decibel = Annotated[float, _parser("decibel")]


def _tolerance(v: object) -> float:
    x = parse_quantity(v, "dimensionless")
    if not 0.0 <= x < 0.5:
        bare = isinstance(v, int | float) and 0.5 <= x < 50
        hint = f" (did you mean {x:g} %?)" if bare else ""
        raise ValueError(f"a tolerance is a fraction from 0 to under 50 %, got {x:g}{hint}; "
                         "write it as e.g. '10 %' or 0.1")
    return x


_tolerance.dimension = "dimensionless"  # type: ignore[attr-defined]  # read by dimension_of

#: A ± tolerance as a fraction of the nominal value (``"10 %"`` or ``0.1``), below 50 %.
Tolerance = Annotated[float, BeforeValidator(_tolerance)]
