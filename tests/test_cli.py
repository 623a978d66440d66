"""The command line end to end: help everywhere, exit codes, files written, eval agrees
with the search. (Runs on the invented demo data.)"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from stackopt.cli.main import main

ROOT = Path(__file__).resolve().parent.parent
FILES = ("summary.json", "candidates.csv", "front.csv", "report.html", "report.md",
         "pareto.png", "pareto.svg", "response.png", "stackups.png", "costs.png",
         "prepregs.png", "selected.yaml", "selected.s2p")


@pytest.mark.parametrize("argv", [
    ["--help"], ["optimize", "--help"], ["check", "--help"], ["eval", "--help"],
    ["calc", "--help"], ["calc", "via", "--help"], ["calc", "line", "--help"], ["fit", "--help"],
])
def test_help_runs_everywhere(argv, capsys):
    with pytest.raises(SystemExit) as info:
        main(argv)
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert "usage:" in out and "example" in out


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("run") / "demo"
    assert main(["optimize", "--out", str(out), "--quiet"]) == 0
    return out


@pytest.mark.slow
def test_optimize_demo_writes_every_file(demo_run):
    for name in FILES:
        p = demo_run / name
        assert p.is_file() and p.stat().st_size > 0, name
    for name in FILES:
        if name.endswith(".png"):
            assert (demo_run / name).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    summary = json.loads((demo_run / "summary.json").read_text())
    for k in ("scenario", "currency", "quantity", "method", "space_size", "evaluated",
              "front", "picks", "seed", "version", "inputs"):
        assert k in summary
    assert len(summary["inputs"]["sha256"]["scenario"]) == 64


@pytest.mark.slow
def test_rerun_refuses_without_force_then_overwrites(demo_run, capsys):
    assert main(["optimize", "--out", str(demo_run), "--quiet"]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "--force" in err
    before = (demo_run / "candidates.csv").read_bytes()
    assert main(["optimize", "--out", str(demo_run), "--quiet", "--force"]) == 0
    assert (demo_run / "candidates.csv").read_bytes() == before  # same seed, same bytes


@pytest.mark.slow
def test_eval_of_selected_agrees_with_the_search(demo_run, capsys):
    summary = json.loads((demo_run / "summary.json").read_text())
    pick = summary["picks"]["cheapest_meeting_requirements"]
    capsys.readouterr()
    rc = main(["eval", str(ROOT / "scenarios" / "harmonic_lowpass.yaml"), "--stackup",
               str(demo_run / "selected.yaml"), "--json"])
    assert rc == 0
    got = json.loads(capsys.readouterr().out)
    assert got["margin_dB"] == pytest.approx(pick["margin_dB"], abs=1e-9)
    assert got["unit_cost"] == pytest.approx(pick["unit_cost"], rel=1e-12)
    assert got["meets_requirements"] is True


def test_check_prints_what_it_understood(capsys):
    assert main(["check", str(ROOT / "scenarios" / "consumer_emi.yaml")]) == 0
    out = capsys.readouterr().out
    assert "consumer-emi-filter" in out and "300 MHz" in out and out.strip().endswith("ok")


@pytest.mark.parametrize("argv", [
    ["optimize", "no/such/file.yaml"],
    ["check", str(ROOT / "scenarios" / "consumer_emi.yaml"), "--costs", "missing.yaml"],
    ["optimize", "--method", "annealing"],
    ["optimize", "--budget", "ten"],
    ["eval", str(ROOT / "scenarios" / "consumer_emi.yaml")],
])
def test_user_errors_exit_2_with_one_line(argv, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "Traceback" not in err
    assert not any(tmp_path.iterdir())  # nothing written


@pytest.mark.parametrize("name", ["harmonic_lowpass", "consumer_emi", "two_layer_only"])
@pytest.mark.slow
def test_every_demo_scenario_runs_end_to_end(name, tmp_path):
    out = tmp_path / name
    assert main(["optimize", str(ROOT / "scenarios" / f"{name}.yaml"), "--out", str(out),
                 "--quiet"]) == 0
    assert all((out / f).is_file() for f in FILES)
    html = (out / "report.html").read_text()
    assert "http://" not in html and "https://" not in html
