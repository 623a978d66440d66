"""Elliptic (Cauer) ladders from the generator against scipy's analog elliptic design.

Sources: scipy.signal.ellip / ellipap (analog prototype; independent of our synthesis,
which only borrows ellipap's poles and zeros as the approximation problem's answer);
Saal & Ulbrich 1958 / Darlington 1939 for the synthesis procedure; scikit-rf for the
network cascade (an independent solver).
"""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from scipy import signal

from stackopt.circuit import GroundBatch, attenuation_db, compile_circuit, solve
from stackopt.circuit.filters import filter_circuit
from stackopt.model.circuit import Circuit, FilterSpec

FC = 1.0e9


def _spec(n, first="shunt", **kw):
    return FilterSpec(family="elliptic", order=n, cutoff=FC, ripple=0.1,
                      stopband_attenuation=50.0, first=first, **kw)


def _scipy_db(n, f, btype="low"):
    b, a = signal.ellip(n, 0.1, 50.0, 2 * np.pi * FC, btype=btype, analog=True)
    _, h = signal.freqs(b, a, 2 * np.pi * f)
    return -20 * np.log10(np.abs(h))


@pytest.mark.parametrize("first", ["shunt", "series"])
@pytest.mark.parametrize("n", [3, 5, 7, 9])
def test_ideal_ladder_matches_scipy(n, first):
    c = compile_circuit(Circuit(filter=_spec(n, first)))
    z, _, _ = signal.ellipap(n, 0.1, 50.0)
    notches = np.sort(np.unique(np.round(np.abs(z.imag), 12))) * FC
    f = np.unique(np.concatenate([np.linspace(0.02, 0.999, 300) * FC,
                                  np.linspace(1.001, 6.0, 600) * FC]))
    f = f[np.min(np.abs(f[:, None] - notches[None, :]), axis=1) > 1e-3 * FC]  # off the poles
    got = attenuation_db(solve(c, f))[0]
    assert np.max(np.abs(got - _scipy_db(n, f))) < 0.01  # issue contract: 0.01 dB
    # notch frequencies: every resonant arm resonates at one of scipy's zeros (0.1 %)
    gen = filter_circuit(_spec(n, first), 50.0)
    el = {e.name: e for e in gen.elements}
    arms = sorted(1 / (2 * np.pi * np.sqrt(el[k].value * el[k.replace("L", "C") + suf].value))
                  for k in el for suf in ("p", "s")
                  if k.startswith("L") and k.replace("L", "C") + suf in el)
    np.testing.assert_allclose(arms, notches, rtol=1e-3)


def test_highpass_by_transformation():
    c = compile_circuit(Circuit(filter=_spec(5).model_copy(update={"response": "highpass"})))
    f = np.linspace(0.2, 3.0, 200) * FC
    z, _, _ = signal.ellipap(5, 0.1, 50.0)
    notches = FC / np.unique(np.round(np.abs(z.imag), 12))
    f = f[np.min(np.abs(f[:, None] - notches[None, :]), axis=1) > 1e-3 * FC]
    got = attenuation_db(solve(c, f))[0]
    assert np.max(np.abs(got - _scipy_db(5, f, "high"))) < 0.01


def test_solver_equals_scikit_rf_cascade_for_the_elliptic_ladder():
    spec = _spec(5)
    gen = filter_circuit(spec, 50.0)
    f = np.linspace(0.3, 4.0, 37) * FC
    ours = solve(compile_circuit(gen), f)[0]
    freq = skrf.Frequency.from_f(f, unit="Hz")
    m = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=50.0)
    el = {e.name: e.value for e in gen.elements}
    net = None
    for k in range(1, 6):
        if k % 2:  # shunt C
            stage = m.shunt_capacitor(el[f"C{k}"])
        else:  # parallel L-C series arm
            # a series element of the tank's impedance (skrf lumped series impedance)
            y = 1 / (2j * np.pi * f * el[f"L{k}"]) + 2j * np.pi * f * el[f"C{k}p"]
            stage = m.resistor(1 / y)
        net = stage if net is None else net ** stage
    assert np.max(np.abs(ours - net.s)) < 1e-9


def test_nine_pole_ground_inductance_fills_or_moves_notches():
    # Direction check: a realistic ground (one via, 1.5 mm board, 0.5 mm pad trace) in the
    # shunt-first 9-pole's shunt capacitors: the series-arm notches cannot be detuned by
    # it, but the shunt branches' resonance with the ground inductance and the common
    # return (image mutual) fill the stopband between and around the notches.
    spec = _spec(9, ground={"trace_length": 0.5e-3, "trace_width": 0.4e-3})
    c = compile_circuit(Circuit(filter=spec))
    f = np.linspace(1.3, 6.0, 400) * FC
    ideal = attenuation_db(solve(c, f))[0]
    board = attenuation_db(solve(c, f, GroundBatch.broadcast(height=1.5e-3)))[0]
    assert ideal.min() > 49.9  # the ideal ladder keeps its stopband (>= 50 dB)
    assert board.min() < 40  # the board fills part of it by more than 10 dB
    assert np.median(board - ideal) < -5
    # the dual (series-first) form: ground inductance in series with each trap detunes
    # its notch downwards (1/sqrt((L + Lg) C)); on 1.5 mm the common return fills them.
    dual = compile_circuit(Circuit(filter=spec.model_copy(update={"first": "series"})))
    fd = np.linspace(1.5, 3.0, 3001) * FC
    i0 = attenuation_db(solve(dual, fd))[0]
    thin = attenuation_db(solve(dual, fd, GroundBatch.broadcast(height=0.345e-3)))[0]
    thick = attenuation_db(solve(dual, fd, GroundBatch.broadcast(height=1.5e-3)))[0]
    top_ideal, top_thin = fd[np.argmax(i0)], fd[np.argmax(thin)]
    assert top_ideal == pytest.approx(2.067e9, rel=2e-3)  # scipy's highest zero
    assert top_thin < 0.95 * top_ideal  # moved down (measured here: 1.887 GHz)
    assert i0.max() > 100 and thick.max() < 60  # filled on the thick board


@pytest.mark.parametrize(("kw", "msg"), [
    ({"order": 8}, "odd order"), ({"order": 13}, "odd order"),
    ({"stopband_attenuation": 0.05}, "above its ripple"),
    ({"stopband_attenuation": None}, "stopband_attenuation")])
def test_bad_elliptic_input(kw, msg):
    base = {"family": "elliptic", "order": 5, "cutoff": FC, "ripple": 0.1,
            "stopband_attenuation": 50.0}
    with pytest.raises(ValueError, match=msg):
        FilterSpec(**{**base, **kw})


def test_coupling_between_neighbouring_inductors():
    gen = filter_circuit(_spec(7, coupling=0.05), 50.0)
    assert [cp.between for cp in gen.couplings] == [("L2", "L4"), ("L4", "L6")]
    c = compile_circuit(gen)
    f = np.array([1.5e9])
    assert attenuation_db(solve(c, f))[0, 0] != pytest.approx(
        attenuation_db(solve(compile_circuit(filter_circuit(_spec(7), 50.0)), f))[0, 0])


@pytest.mark.parametrize(("sub", "key"), [
    (("order: 7", "order: 8"), "circuit.filter"),
    (("stopband_attenuation: 50 dB", "stopband_attenuation: 0.05 dB"), "circuit.filter"),
    (('mount: "0402"', 'mount: "0404"'), "circuit.filter.capacitor.mount")])
def test_bad_input_one_located_line_exit_2(tmp_path, capsys, sub, key):
    from pathlib import Path

    from stackopt.cli.main import main

    root = Path(__file__).resolve().parent
    text = (root / "reference" / "elliptic_scenario.yaml").read_text()
    p = tmp_path / "bad.yaml"
    p.write_text(text.replace(*sub))
    assert main(["check", str(p), "--costs", str(root.parent / "cost_tables" /
                                                 "volume.yaml")]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and str(p) in err and key in err


def test_check_lists_generated_values(capsys):
    from pathlib import Path

    from stackopt.cli.main import main

    root = Path(__file__).resolve().parent
    assert main(["check", str(root / "reference" / "elliptic_scenario.yaml"), "--costs",
                 str(root.parent / "cost_tables" / "volume.yaml")]) == 0
    out = capsys.readouterr().out
    assert "C2p" in out and " pF" in out and " nH" in out
