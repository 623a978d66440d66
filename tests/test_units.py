"""Units at the edges. Conversion factors: 1 in = 25.4 mm exactly (international inch,
1959); 1 mil = 0.001 in; copper 1 oz/ft^2 ~ 34.3 um nominal (IPC-4562, as quoted in
common practice)."""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from stackopt.errors import UnitError
from stackopt.units import format_quantity, parse_positive, parse_quantity


@pytest.mark.parametrize(
    "text, dim, expected",
    [
        ("0.19mm", "length", 0.19e-3),
        ("0.19 mm", "length", 0.19e-3),
        ("7.5mil", "length", 7.5 * 25.4e-6),
        ("5 thou", "length", 5 * 25.4e-6),
        ("0.063in", "length", 0.063 * 0.0254),
        ("35um", "length", 35e-6),
        ("1 oz", "length", 34.3e-6),
        ("0.5oz", "length", 17.15e-6),
        ("2 oz", "length", 68.6e-6),
        ("800MHz", "frequency", 800e6),
        ("2.4 GHz", "frequency", 2.4e9),
        ("50 ohm", "impedance", 50.0),
        ("1.2nH", "inductance", 1.2e-9),
        ("10 pF", "capacitance", 10e-12),
        ("3e-4", "length", 3e-4),
        (3e-4, "length", 3e-4),
        (50, "impedance", 50.0),
    ],
)
def test_parse(text, dim, expected):
    assert parse_quantity(text, dim) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("bad", ["abc", "5 GHz", "nan", "inf", "1 furlong", "", None, True, [1]])
def test_parse_rejects_with_one_line(bad):
    with pytest.raises(UnitError) as info:
        parse_quantity(bad, "length", key="--drill")
    msg = str(info.value)
    assert "\n" not in msg and "--drill" in msg


def test_mil_is_a_length_not_an_angle():
    assert parse_quantity("1 mil", "length") == pytest.approx(25.4e-6)


def test_positive():
    with pytest.raises(UnitError):
        parse_positive("-1 mm", "length")
    with pytest.raises(UnitError):
        parse_positive("0", "length")


@given(st.floats(min_value=1e-9, max_value=1e3, allow_nan=False))
def test_round_trip_mm(x):
    assert parse_quantity(f"{x!r} mm", "length") == pytest.approx(x * 1e-3, rel=1e-12)


def test_format():
    assert format_quantity(0.19e-3, "length") == "0.19 mm"
    assert format_quantity(35e-6, "length") == "35 um"
    assert format_quantity(2.4e9, "frequency") == "2.4 GHz"
    assert format_quantity(12e-12, "inductance") == "12 pH"
    assert format_quantity(math.inf, "length") == "inf"
