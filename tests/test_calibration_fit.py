"""`stackopt fit`: synthesized shunt-via coupons are recovered.

Coupons are synthesized with scikit-rf (an independent network library): a cascade of a
feed line (length and effective permittivity known), a shunt branch R + jwL to ground
(``media.shunt(resistor ** inductor ** short)``) and a second feed line, at 50 ohm, with
seeded noise at a realistic VNA level (0.01 dB trace noise and a -100 dB noise floor;
common practice, no source). The shunt formula |S21| = |2Z/(2Z + Z0)| is Pozar,
*Microwave Engineering*, 4th ed., ch. 4.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

skrf = pytest.importorskip("skrf")
from skrf.media import DefinedGammaZ0  # noqa: E402

from stackopt.analyses.calibration import (  # noqa: E402
    combine_factors,
    compare_models,
    fit_shunt,
    model_predictions,
)
from stackopt.cli.main import main  # noqa: E402
from stackopt.physics.inductance import VIA_MODELS  # noqa: E402

C0 = 299_792_458.0


def synth_coupon(inductance: float, resistance: float = 0.005, feed: float = 0.025,
                 eeff: float = 3.3, seed: int = 7, f_lo: float = 10e6, f_hi: float = 3e9,
                 points: int = 301, z0: float = 50.0):
    """A shunt-via coupon built with scikit-rf, with seeded VNA-like noise."""
    fr = skrf.Frequency.from_f(np.linspace(f_lo, f_hi, points), unit="hz")
    gamma = 1j * 2 * np.pi * fr.f * np.sqrt(eeff) / C0
    m = DefinedGammaZ0(fr, z0=z0, gamma=gamma)
    branch = m.resistor(resistance) ** m.inductor(inductance) ** m.short()
    net = m.line(feed, "m") ** m.shunt(branch) ** m.line(feed, "m")
    rng = np.random.default_rng(seed)
    s = net.s.copy()
    trace = 10 ** (rng.normal(0, 0.01, s.shape) / 20)  # 0.01 dB rms multiplicative
    floor = 1e-5 * (rng.normal(size=s.shape) + 1j * rng.normal(size=s.shape)) / math.sqrt(2)
    net.s = s * trace + floor
    return net


def write(net, path) -> str:
    net.write_touchstone(str(path.with_suffix("")))
    return str(path.with_suffix(".s2p"))


@pytest.mark.parametrize("inductance", [0.45e-9, 10e-12])  # two-layer-like, four-layer-like
def test_synthesized_coupon_recovered_within_2_percent(inductance):
    net = synth_coupon(inductance)
    fit = fit_shunt(net.f, net.s[:, 1, 0], 50.0)
    assert fit.inductance == pytest.approx(inductance, rel=0.02)
    assert fit.inductance_ci[0] < fit.inductance < fit.inductance_ci[1]
    assert fit.resistance == pytest.approx(0.005, abs=0.002)
    assert fit.rms_error_db < 0.5


@pytest.mark.parametrize("phase", [None, False])
def test_fitted_value_does_not_depend_on_feed_length(phase):
    values = [fit_shunt(n.f, n.s[:, 1, 0], 50.0, phase=phase).inductance
              for n in (synth_coupon(0.45e-9, feed=x, seed=3) for x in (0.005, 0.03, 0.12))]
    assert max(values) / min(values) - 1 < 0.005
    assert np.allclose(values, 0.45e-9, rtol=0.02)


def test_22db_at_800mhz_is_about_0p40nh():
    # 22 dB of suppression at 800 MHz across 50 ohm <-> L of about 0.40 nH (common
    # practice, no source for the measured figure); exact inversion of the shunt formula:
    w = 2 * np.pi * 800e6
    mag = 10 ** (-22 / 20)
    l_exact = 50 / (2 * w) * mag / math.sqrt(1 - mag**2)
    assert l_exact == pytest.approx(0.40e-9, rel=0.01)
    net = synth_coupon(l_exact, resistance=0.0, f_lo=300e6, f_hi=1.3e9)
    k = int(np.argmin(np.abs(net.f - 800e6)))
    assert 20 * np.log10(abs(net.s[k, 1, 0])) == pytest.approx(-22.0, abs=0.1)
    fit = fit_shunt(net.f, net.s[:, 1, 0], 50.0)
    assert fit.inductance == pytest.approx(0.40e-9, rel=0.02)


def test_pad_capacitance_fit_recovers_a_small_c():
    # shunt branch R + jwL with a 0.3 pF pad capacitance in parallel (scikit-rf tee)
    fr = skrf.Frequency.from_f(np.linspace(50e6, 6e9, 401), unit="hz")
    m = DefinedGammaZ0(fr, z0=50, gamma=1j * 2 * np.pi * fr.f * np.sqrt(3.3) / C0)
    net = m.line(0.02, "m") ** m.shunt(m.resistor(0.004) ** m.inductor(0.45e-9) ** m.short()) \
        ** m.shunt_capacitor(0.3e-12) ** m.line(0.02, "m")
    fit = fit_shunt(net.f, net.s[:, 1, 0], 50.0, capacitance=True)
    assert fit.inductance == pytest.approx(0.45e-9, rel=0.02)
    assert fit.capacitance == pytest.approx(0.3e-12, rel=0.1)


def test_model_ratios_and_factors_minimize_log_error():
    from scipy.optimize import minimize_scalar

    pred = model_predictions(1.5e-3, 0.3e-3)
    assert set(pred) == set(VIA_MODELS)
    cmp = compare_models(0.45e-9, pred)
    for v in cmp.values():
        assert v["ratio"] * v["predicted_H"] == pytest.approx(0.45e-9)
    ratios = [("a", {"m": 1.3}), ("b", {"m": 0.8}), ("c", {"m": 1.1, "n": 2.0})]
    fac = combine_factors(ratios)
    # independent: scipy's scalar minimizer on the summed squared log error
    opt = minimize_scalar(lambda lk: sum((lk - math.log(r["m"])) ** 2 for _, r in ratios),
                          bounds=(-3, 3), method="bounded", options={"xatol": 1e-10})
    assert fac["m"]["factor"] == pytest.approx(math.exp(opt.x), rel=1e-6)
    assert fac["m"]["residuals"]["a"] == pytest.approx(1.3 / fac["m"]["factor"] - 1)
    assert fac["n"] == {"factor": 2.0, "rms_log_error": 0.0, "coupons": 1,
                        "residuals": {"c": 0.0}}


def test_cli_fit_writes_plot_and_two_coupons_into_one_calibration_file(tmp_path, capsys,
                                                                        monkeypatch):
    monkeypatch.chdir(tmp_path)
    a = write(synth_coupon(0.45e-9), tmp_path / "two_layer.s2p")
    b = write(synth_coupon(10e-12, seed=11), tmp_path / "four_layer.s2p")
    assert main(["fit", a, "--depth", "1.5mm", "--drill", "0.3mm", "--json",
                 "--write", "cal.yaml"]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["inductance_H"] == pytest.approx(0.45e-9, rel=0.02)
    assert set(r["models"]) == set(VIA_MODELS) and r["best_model"] in VIA_MODELS
    assert (tmp_path / "fit.png").stat().st_size > 10_000
    assert main(["fit", b, "--depth", "0.115mm", "--drill", "0.3mm", "--json",
                 "--write", "cal.yaml", "--plot", "none"]) == 0
    r2 = json.loads(capsys.readouterr().out)
    assert r2["coupons"] == ["two_layer", "four_layer"]
    from stackopt.inputs.calibration import load_calibration

    cal = load_calibration(tmp_path / "cal.yaml")
    text = (tmp_path / "cal.yaml").read_text()
    assert "stackopt_calibration: 1" in text
    for m, rec in cal.data.factors.items():
        ratios = [r["models"][m]["ratio"], r2["models"][m]["ratio"]]
        assert rec.factor == pytest.approx(math.sqrt(ratios[0] * ratios[1]), rel=1e-9)
    # refitting a coupon replaces it instead of adding a third
    assert main(["fit", a, "--depth", "1.5mm", "--drill", "0.3mm", "--json",
                 "--write", "cal.yaml", "--plot", "none"]) == 0
    assert json.loads(capsys.readouterr().out)["coupons"] == ["four_layer", "two_layer"]


TS2 = """! Touchstone 2.0, synthesized (not measured): shunt 0.40 nH at 50 ohm
[Version] 2.0
# MHz S MA R 50
[Number of Ports] 2
[Two-Port Data Order] 21_12
[Number of Frequencies] {n}
[Network Data]
{rows}
[End]
"""


def test_touchstone_2_file_is_read(tmp_path, capsys):
    f = np.linspace(100e6, 2e9, 40)
    s21 = 2j * 2 * np.pi * f * 0.4e-9 / (2j * 2 * np.pi * f * 0.4e-9 + 50)
    rows = "\n".join(f"{x / 1e6:.6f} {abs(s - 1):.9g} {np.angle(s - 1, deg=True):.9g} "
                     f"{abs(s):.9g} {np.angle(s, deg=True):.9g} {abs(s):.9g} "
                     f"{np.angle(s, deg=True):.9g} {abs(s - 1):.9g} "
                     f"{np.angle(s - 1, deg=True):.9g}" for x, s in zip(f, s21, strict=True))
    p = tmp_path / "v2.ts"
    p.write_text(TS2.format(n=len(f), rows=rows))
    assert main(["fit", str(p), "--depth", "1.5mm", "--drill", "0.3mm", "--json",
                 "--plot", "none"]) == 0
    assert json.loads(capsys.readouterr().out)["inductance_H"] == pytest.approx(0.4e-9, 1e-3)


def _bad(tmp_path, name: str, text: str) -> str:
    p = tmp_path / name
    p.write_text(text)
    return str(p)


@pytest.mark.parametrize("case, words", [
    ("one_port", "not a two-port"),
    ("no_band", "point(s) in the band"),
    ("malformed", "not a readable Touchstone"),
    ("gain", "above 0 dB"),
    ("missing", "no such file"),
])
def test_bad_input_is_one_line_exit_2(tmp_path, capsys, case, words):
    good = "".join(f"{f} 0.1 0 0.2 0 0.2 0 0.1 0\n" for f in (0.1, 0.2, 0.3, 0.4))
    args = ["--depth", "1.5mm", "--drill", "0.3mm", "--plot", "none"]
    if case == "one_port":
        path = _bad(tmp_path, "x.s1p", "# GHz S RI R 50\n0.1 0.5 0\n0.2 0.5 0\n0.3 0.5 0\n")
    elif case == "no_band":
        path = _bad(tmp_path, "x.s2p", "# GHz S RI R 50\n" + good)
        args += ["--band", "5GHz-6GHz"]
    elif case == "malformed":
        path = _bad(tmp_path, "x.s2p", "# GHz S RI R 50\n0.1 0.5 zero 1\n")
    elif case == "gain":
        path = _bad(tmp_path, "x.s2p", "# GHz S RI R 50\n"
                    + good.replace("0.2 0 0.2 0", "1.2 0 1.2 0"))
    else:
        path = str(tmp_path / "nothere.s2p")
    assert main(["fit", path, *args]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and path in err and words in err
    assert not (tmp_path / "fit.png").exists()


def test_shipped_example_coupons_are_marked_synthesized_and_recovered():
    import importlib.util
    from pathlib import Path

    from stackopt.inputs.calibration import load_calibration
    from stackopt.inputs.measurement import load_two_port

    here = Path(__file__).resolve().parent.parent / "examples" / "coupons"
    spec = importlib.util.spec_from_file_location("synth", here / "synthesize.py")
    synth = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(synth)
    cal = load_calibration(here / "cal.yaml").data
    for name, (depth, _drill, ind, _r, _seed) in synth.COUPONS.items():
        path = here / f"{name}.s2p"
        assert "SYNTHESIZED, NOT MEASURED" in path.read_text().splitlines()[0]
        meas = load_two_port(path)
        assert fit_shunt(meas.f, meas.s21, meas.z0).inductance == pytest.approx(ind, rel=0.02)
        rec = next(c for c in cal.coupons if c.name == name)
        assert rec.sha256 == meas.sha256 and rec.depth_m == depth


def test_lossy_feed_lines_divided_by_a_thru(tmp_path, capsys):
    # Feed lines with loss (0.5 dB/100 mm at 1 GHz, rising as sqrt(f); an FR-4-like
    # figure from memory) bias a magnitude-only fit; dividing by a thru of the same feed
    # lines (built by scikit-rf) removes them.
    fr = skrf.Frequency.from_f(np.linspace(10e6, 3e9, 301), unit="hz")
    alpha = (0.5 / 8.686 / 0.1) * np.sqrt(fr.f / 1e9)  # Np/m
    m = DefinedGammaZ0(fr, z0=50, gamma=alpha + 1j * 2 * np.pi * fr.f * np.sqrt(3.3) / C0)
    branch = m.resistor(0.005) ** m.inductor(10e-12) ** m.short()
    coupon = m.line(0.05, "m") ** m.shunt(branch) ** m.line(0.05, "m")
    thru = m.line(0.1, "m")
    a, t = write(coupon, tmp_path / "lossy.s2p"), write(thru, tmp_path / "thru.s2p")
    args = ["fit", a, "--depth", "0.115mm", "--drill", "0.3mm", "--json", "--plot", "none"]
    assert main(args) == 0
    biased = json.loads(capsys.readouterr().out)["inductance_H"]
    assert abs(biased / 10e-12 - 1) > 0.02  # the loss is not negligible here
    assert main([*args, "--thru", t]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["inductance_H"] == pytest.approx(10e-12, rel=0.02)
    assert r["thru"] == "thru.s2p"
