"""Ladder filters from prototype values against their analytic responses."""

import math

import numpy as np
import pytest

from stackopt.circuit import attenuation_db, butterworth_g, chebyshev_g, compile_circuit, solve
from stackopt.model.circuit import Circuit


def _filter(**kw):
    return compile_circuit(Circuit(filter=kw))


def test_butterworth_prototype_values():
    # Matthaei, Young & Jones 1964, table 4.05-1 (n = 5): 0.618, 1.618, 2.000, 1.618, 0.618
    assert butterworth_g(5) == pytest.approx([0.6180, 1.6180, 2.0, 1.6180, 0.6180], abs=1e-4)


def test_chebyshev_prototype_values():
    # Matthaei, Young & Jones 1964, table 4.05-2(a), 0.1 dB ripple, n = 5 and n = 7
    assert chebyshev_g(5, 0.1) == pytest.approx([1.1468, 1.3712, 1.9750, 1.3712, 1.1468],
                                                abs=2e-4)
    assert chebyshev_g(7, 0.1) == pytest.approx(
        [1.1812, 1.4228, 2.0967, 1.5734, 2.0967, 1.4228, 1.1812], abs=2e-4)


@pytest.mark.parametrize("first", ["shunt", "series"])
def test_butterworth_5_matches_analytic_magnitude(first):
    # |S21|^2 = 1 / (1 + (f/fc)^(2n)), to 1e-6 dB (Matthaei, Young & Jones 1964, eq. 4.03-3)
    fc, n = 100e6, 5
    f = np.geomspace(1e6, 2e9, 301)
    att = attenuation_db(solve(_filter(family="butterworth", order=n, cutoff=fc,
                                       first=first), f))[0]
    ref = 10 * np.log10(1 + (f / fc) ** (2 * n))
    assert np.max(np.abs(att - ref)) < 1e-6


def test_butterworth_highpass_matches_analytic_magnitude():
    # low-pass to high-pass mapping f/fc -> fc/f (Matthaei, Young & Jones 1964, sec. 4.12)
    fc, n = 100e6, 5
    f = np.geomspace(5e6, 2e9, 101)
    att = attenuation_db(solve(_filter(family="butterworth", response="highpass", order=n,
                                       cutoff=fc), f))[0]
    assert np.max(np.abs(att - 10 * np.log10(1 + (fc / f) ** (2 * n)))) < 1e-6


@pytest.mark.parametrize(("order", "ripple"), [(3, 0.5), (7, 0.1)])
def test_chebyshev_reproduces_design_ripple(order, ripple):
    # |S21|^2 = 1 / (1 + eps^2 T_n^2(f/fc)), eps^2 = 10^(ripple/10) - 1
    # (Matthaei, Young & Jones 1964, eq. 4.03-4); the passband maximum loss is the ripple
    fc = 250e6
    f = np.linspace(1e6, 2 * fc, 4001)
    att = attenuation_db(solve(_filter(family="chebyshev", order=order, cutoff=fc,
                                       ripple=ripple), f))[0]
    x = f / fc
    tn = np.where(x <= 1, np.cos(order * np.arccos(np.minimum(x, 1))),
                  np.cosh(order * np.arccosh(np.maximum(x, 1))))
    ref = 10 * np.log10(1 + (10 ** (ripple / 10) - 1) * tn**2)
    assert np.max(np.abs(att - ref)) < 1e-6
    assert att[f <= fc].max() == pytest.approx(ripple, abs=1e-6)
    assert att[f <= fc].min() == pytest.approx(0.0, abs=1e-5)  # zeros fall between points


def test_cutoff_attenuation_is_3db_for_butterworth():
    # 10 log10(2) = 3.0103 dB at the cutoff (definition of the Butterworth cutoff)
    att = attenuation_db(solve(_filter(family="butterworth", order=3, cutoff=1e8), [1e8]))
    assert att[0, 0] == pytest.approx(10 * math.log10(2), abs=1e-9)


def test_generated_names_and_grounds():
    c = _filter(family="chebyshev", order=7, cutoff=250e6, ripple=0.1, spacing=2e-3,
                ground={"trace_length": 6e-4, "trace_width": 4e-4})
    assert c.names == ("C1", "L2", "C3", "L4", "C5", "L6", "C7")
    assert c.conn_names == ("g1", "g3", "g5", "g7")
    assert c.conn_xy[:, 0] == pytest.approx([0, 2e-3, 4e-3, 6e-3])
    assert c.ladder is not None


def test_single_shunt_filter_uses_one_node():
    c = _filter(family="butterworth", order=1, cutoff=1e8)
    assert c.ports[0] == c.ports[1]
    # first-order: |S21|^2 = 1 / (1 + (f/fc)^2)
    att = attenuation_db(solve(c, [1e8]))
    assert att[0, 0] == pytest.approx(10 * math.log10(2), abs=1e-9)
