"""The circuit section of a scenario: schema, units and one-line errors for bad input."""

import numpy as np
import pytest

from stackopt.circuit import compile_circuit, solve
from stackopt.errors import InputError
from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import parse_yaml_text
from stackopt.model.circuit import Circuit, Element

GOOD = """\
circuit:
  z0: 50 ohm
  input: in
  output: out
  elements:
    - {name: C1, type: C, value: 3.9 pF, between: [in, gnd], ground: g1, esl: 0.4 nH, esr: 0.1 ohm}
    - {name: L2, type: L, value: 12 nH, between: [in, out], q: 40, q_at: 500 MHz}
    - {name: C3, type: C, value: 3.9 pF, between: [out, gnd], ground: g2}
  grounds:
    - {name: g1, at: [0 mm, 0 mm], trace_length: 0.6 mm, trace_width: 0.4 mm}
    - {name: g2, at: [3 mm, 0 mm], vias: 2, pitch: 0.8 mm, drill: 0.3 mm}
"""


def _load(text: str) -> Circuit:
    doc = parse_yaml_text(text, "scenario.yaml")
    return validate_model(Circuit, doc, ["circuit"], data=doc.data["circuit"])


def test_documented_example_loads_in_si_units():
    c = _load(GOOD)
    assert c.elements[0].value == pytest.approx(3.9e-12)
    assert c.elements[0].esl == pytest.approx(0.4e-9)
    assert c.grounds[0].trace_length == pytest.approx(0.6e-3)
    assert c.grounds[1].pitch == pytest.approx(0.8e-3)
    cc = compile_circuit(c)
    # Q = 40 at 500 MHz as a series resistance: R = 2 pi f L / Q
    assert cc.r[1] == pytest.approx(2 * np.pi * 5e8 * 12e-9 / 40)
    assert cc.n_terminals == 2 and cc.ladder is not None


def test_filter_generator_loads():
    c = _load("circuit:\n  filter: {family: chebyshev, order: 7, cutoff: 250 MHz, "
              "ripple: 0.1 dB, ground: {trace_length: 0.6 mm, trace_width: 0.4 mm}, "
              "spacing: 3 mm}\n")
    assert compile_circuit(c).n_terminals == 4


def _bad(text: str) -> str:
    with pytest.raises(InputError) as info:
        _load(text)
    msg = str(info.value)
    assert "\n" not in msg and msg.startswith("scenario.yaml:")
    return msg


def _one(element: str, extra: str = "") -> str:
    return ("circuit:\n  elements:\n"
            "    - {name: L1, type: L, value: 10 nH, between: [in, out]}\n"
            f"    - {element}\n{extra}")


@pytest.mark.parametrize(("element", "extra", "words"), [
    ("{name: C2, type: C, between: [out, gnd]}", "", ["C2", "no value", "value:"]),
    ("{name: C2, type: C, value: -1 pF, between: [out, gnd]}", "", ["C2", "negative"]),
    ("{name: C2, type: C, value: 1 nH, between: [out, gnd]}", "", ["inductance"]),
    ("{name: C2, type: C, value: 1 pF, between: [out, n9]}", "", ["n9", "C2", "connected only"]),
    ("{name: C2, type: C, value: 1 pF, between: [out, GND]}", "", ["GND", "'gnd'"]),
    ("{name: C2, type: C, value: 1 pF, between: [out, gnd], ground: g7}", "",
     ["C2", "g7", "grounds"]),
    ("{name: C2, type: C, value: 1 pF, between: [out, gnd], colour: red}", "",
     ["colour", "allowed keys"]),
    ("{name: L1, type: C, value: 1 pF, between: [out, gnd]}", "", ["L1", "unique"]),
    ("{name: C2, type: C, value: 1 pF, between: [out, gnd]}", "  input: inn\n",
     ["inn", "did you mean 'in'"]),
    ("{name: C2, type: C, value: 1 pF, between: [out, gnd]}",
     "  couplings: [{between: [L1, C2], k: 0.1}]\n", ["C2", "inductor"]),
])
def test_bad_input_names_the_element_and_the_fix(element, extra, words):
    msg = _bad(_one(element, extra))
    for w in words:
        assert w in msg


def test_floating_island_and_zero_ohm_loop():
    island = ("circuit:\n  elements:\n"
              "    - {name: L1, type: L, value: 10 nH, between: [in, out]}\n"
              "    - {name: C2, type: C, value: 1 pF, between: [a, b]}\n"
              "    - {name: C3, type: C, value: 1 pF, between: [a, b]}\n")
    assert "floats" in _bad(island) and "C2" in _bad(island)
    loop = ("circuit:\n  elements:\n"
            "    - {name: R1, type: R, value: 0, between: [in, out]}\n"
            "    - {name: R2, type: R, value: 0 ohm, between: [in, out]}\n")
    assert "R2" in _bad(loop) and "zero-ohm" in _bad(loop)


def test_filter_checks():
    assert "odd order" in _bad("circuit:\n  filter: {family: chebyshev, order: 6, "
                               "cutoff: 1 GHz, ripple: 0.1 dB}\n")
    assert "ripple" in _bad("circuit:\n  filter: {family: chebyshev, order: 5, cutoff: 1 GHz}\n")
    assert "not both" in _bad("circuit:\n  filter: {family: butterworth, order: 5, "
                              "cutoff: 1 GHz}\n  elements: [{name: R1, type: R, value: 1, "
                              "between: [in, out]}]\n")


def test_singular_matrix_is_an_input_error_not_linalgerror():
    # bypass validation to reach the solver with a loop of zero-ohm links
    e1 = Element(name="R1", type="R", value=0.0, between=("in", "out"))
    e2 = Element(name="R2", type="R", value=0.0, between=("in", "out"))
    c = compile_circuit(Circuit.model_construct(z0=50.0, input="in", output="out",
                                                elements=(e1, e2), grounds=(), couplings=(),
                                                filter=None))
    with pytest.raises(InputError, match="singular"):
        solve(c, [1e9])
    with pytest.raises(InputError, match="greater than zero"):
        solve(c, [0.0, 1e9])


def test_non_passive_couplings_are_rejected():
    els = [Element(name=f"L{i}", type="L", value=10e-9, between=(a, b))
           for i, (a, b) in enumerate([("in", "n"), ("n", "out"), ("in", "out")])]
    cps = [{"between": p, "k": -0.9} for p in (("L0", "L1"), ("L1", "L2"), ("L0", "L2"))]
    with pytest.raises(InputError, match="positive definite"):
        compile_circuit(Circuit(elements=els, couplings=cps))
