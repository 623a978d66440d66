"""``stackopt calc via``: the JSON contract, units at the edge, one-line errors."""

from __future__ import annotations

import json

import pytest

from stackopt.cli.main import main
from stackopt.physics.inductance import VIA_MODELS, ground_via_inductance
from stackopt.physics.parallel import parallel_via_inductance, row_positions
from stackopt.physics.shunt import shunt_inductor_s21_db

BASE = ["calc", "via", "--depth", "0.19mm", "--drill", "0.3mm"]


def run_json(capsys, argv):
    assert main(argv + ["--json"]) == 0
    captured = capsys.readouterr()
    assert captured.err == ""
    return json.loads(captured.out)


def test_json_contract(capsys):
    out = run_json(capsys, BASE + ["--freq", "800MHz"])
    assert isinstance(out["inductance_H"], float)
    assert isinstance(out["model"], str) and out["model"] == "goldfarb-pucel"
    assert isinstance(out["s21_dB"], float) and out["s21_dB"] < 0
    assert out["inductance_H"] == pytest.approx(float(ground_via_inductance(0.19e-3, 0.3e-3)))
    assert out["s21_dB"] == pytest.approx(
        float(shunt_inductor_s21_db(out["inductance_H"], 800e6, 50.0)))
    assert set(out["models_H"]) == set(VIA_MODELS)
    assert out["goldfarb_pucel_in_range"] is True


def test_without_freq_no_s21(capsys):
    out = run_json(capsys, BASE)
    assert "s21_dB" not in out and out["inductance_H"] > 0


@pytest.mark.parametrize("depth", ["0.19mm", "0.19 mm", "7.48031mil", "0.00748031in",
                                   "0.00019", "190um"])
def test_length_spellings(capsys, depth):
    out = run_json(capsys, ["calc", "via", "--depth", depth, "--drill", "0.3mm"])
    assert out["depth_m"] == pytest.approx(0.19e-3, rel=1e-6)


def test_johnson_example_through_cli(capsys):
    # Johnson & Graham, High-Speed Digital Design (1993): 0.063 in, 0.016 in -> ~1.2 nH.
    out = run_json(capsys, ["calc", "via", "--depth", "0.063in", "--drill", "0.016in",
                            "--model", "johnson"])
    assert out["model"] == "johnson"
    assert out["inductance_H"] == pytest.approx(1.2e-9, rel=0.01)


def test_z0_and_frequency_in_si(capsys):
    out = run_json(capsys, BASE + ["--freq", "2.4e9", "--z0", "75ohm"])
    assert out["freq_Hz"] == 2.4e9 and out["z0_ohm"] == 75.0
    assert out["s21_dB"] == pytest.approx(
        float(shunt_inductor_s21_db(out["inductance_H"], 2.4e9, 75.0)))


@pytest.mark.parametrize("model", VIA_MODELS)
def test_count_and_pitch(capsys, model):
    out = run_json(capsys, BASE + ["--count", "4", "--pitch", "1mm", "--model", model])
    expected = parallel_via_inductance(0.19e-3, 0.3e-3, row_positions(4, 1e-3), model)
    assert out["inductance_H"] == pytest.approx(float(expected))
    assert out["count"] == 4 and out["pitch_m"] == pytest.approx(1e-3)
    assert out["inductance_H"] < out["single_via_H"]


@pytest.mark.parametrize("argv", [
    ["--depth", "0mm", "--drill", "0.3mm"],
    ["--depth=-0.1mm", "--drill", "0.3mm"],
    ["--depth", "0.19mm", "--drill", "nan"],
    ["--depth", "inf", "--drill", "0.3mm"],
    ["--depth", "0.19 parsecs", "--drill", "0.3mm"],
    ["--depth", "800MHz", "--drill", "0.3mm"],
    ["--depth", "0.19mm", "--drill", "0.3mm", "--model", "jonson"],
    ["--depth", "0.19mm", "--drill", "0.3mm", "--count", "2"],
    ["--depth", "0.19mm", "--drill", "0.3mm", "--count", "0", "--pitch", "1mm"],
    ["--depth", "0.19mm", "--drill", "0.3mm", "--count", "two", "--pitch", "1mm"],
    ["--depth", "0.19mm", "--drill", "0.3mm", "--count", "3", "--pitch", "0.1mm"],
    ["--depth", "0.19mm", "--drill", "0.3mm", "--freq", "0Hz"],
    ["--depth", "0.19mm", "--drill", "0.3mm", "--freq", "1GHz", "--z0", "-50"],
    ["--depth", "0.01mm", "--drill", "0.3mm", "--model", "johnson"],
    ["--drill", "0.3mm"],
])
def test_bad_input_one_line_exit_2(capsys, argv):
    assert main(["calc", "via", *argv]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("stackopt: error:")
    assert "Traceback" not in captured.err


@pytest.mark.parametrize(("argv", "names"), [
    (["--model", "jonson"], ["--model", "johnson", "goldfarb-pucel"]),
    (["--count", "2"], ["--pitch"]),
    (["--drill", "nan"], ["--drill"]),
])
def test_error_names_option_and_fix(capsys, argv, names):
    full = ["calc", "via", "--depth", "0.19mm", "--drill", "0.3mm", *argv]
    assert main(full) == 2
    err = capsys.readouterr().err
    assert all(name in err for name in names)


def test_human_table(capsys):
    assert main(BASE + ["--freq", "800MHz"]) == 0
    out = capsys.readouterr().out
    assert all(name in out for name in VIA_MODELS)
    assert "spread" in out and "pH" in out and "dB" in out
    assert "outside" not in out  # 0.19 mm is inside Goldfarb-Pucel's fitted range


def test_human_table_notes_fit_range(capsys):
    assert main(["calc", "via", "--depth", "1.6mm", "--drill", "0.3mm"]) == 0
    out = capsys.readouterr().out
    assert "outside" in out and "Goldfarb-Pucel" in out


def test_help_runs(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["calc", "via", "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    assert "--depth" in out and "example" in out
