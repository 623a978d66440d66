"""Passband losses of the picks against an independent computation.

Reference: the analog Chebyshev type I transfer function of scipy.signal.cheby1 (order 7,
0.1 dB ripple, edge 1 GHz): for the generated ladder with ideal parts and ideal grounds
the worst insertion loss over a band must be scipy's, and the worst return loss that of a
lossless two-port, |S11|^2 = 1 - |S21|^2.
"""

from __future__ import annotations

import numpy as np
import pytest
from outputs_support import DEMO, ROOT, run
from scipy import signal

import stackopt
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.model.circuit import Parasitics
from stackopt.outputs.facts import passband_losses, passband_summary, passband_text


def _ideal(passband):
    sc = load_scenario(DEMO)
    f = sc.circuit.filter.model_copy(update={"ground": None, "capacitor": Parasitics(),
                                             "inductor": Parasitics()})
    sc = sc.model_copy(update={"circuit": sc.circuit.model_copy(update={"filter": f}),
                               "passband": passband})
    return stackopt.optimize(sc, load_cost_table(ROOT / "cost_tables" / "quickturn.yaml"))


def _scipy(lo, hi):
    b, a = signal.cheby1(7, 0.1, 2 * np.pi * 1e9, analog=True)
    f = np.geomspace(lo, hi, 4001)
    h2 = np.abs(signal.freqs(b, a, 2 * np.pi * f)[1]) ** 2
    return (-10 * np.log10(h2)).max(), (-10 * np.log10(1 - h2)).min()


@pytest.mark.parametrize("band", [None, (600e6, 1e9), (863e6, 870e6)])
def test_ideal_chebyshev_passband_losses_match_scipy(band):
    res = _ideal(band)
    lo, hi = res.problem.scenario.passband_hz
    il, rl = passband_losses(res, [res.picks["cheapest_two_layer"]])
    ref_il, ref_rl = _scipy(lo, hi)
    assert il[0] == pytest.approx(ref_il, abs=2e-3)
    assert rl[0] == pytest.approx(ref_rl, abs=0.05)
    if band is None:  # the design band ends at the ripple edge: loss = the ripple
        assert il[0] == pytest.approx(0.1, abs=2e-3)
        assert "design band" in passband_text(res)


def test_demo_reports_the_band_the_signal_uses():
    # the mounted filter's edge has moved below the 1 GHz design cutoff (parasitics), so
    # the demo states its band: 863-870 MHz (the European 868 MHz short-range band,
    # from memory); the recommended board loses under 1 dB there
    res = run()
    s = passband_summary(res)
    assert (s["low_Hz"], s["high_Hz"]) == (863e6, 870e6)
    rec = s["picks"]["cheapest_meeting_requirements"]
    assert 0.0 < rec["insertion_loss_dB"] < 1.0 and rec["return_loss_dB"] > 15.0
    assert passband_text(res) == "863 MHz to 870 MHz"


def test_check_echoes_the_passband(capsys):
    from stackopt.cli.main import main

    assert main(["check", str(ROOT / "scenarios" / "harmonic_lowpass.yaml")]) == 0
    out = capsys.readouterr().out
    assert "passband  863 MHz to 870 MHz\n" in out
    assert "1.736 GHz" in out and "2.604 GHz" in out  # the requirements as given
