"""A calibration file in use: the via model's self and mutual inductances scaled by its
factor, in the one ground-inductance path the search, eval and outputs share."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np
import pytest

from stackopt.analyses.calibration_file import calibration_text, with_coupon
from stackopt.circuit import GroundBatch, compile_circuit, ground_inductance_matrix
from stackopt.cli.main import main
from stackopt.inputs.scenario import load_scenario
from stackopt.model.calibration import CouponRecord
from stackopt.model.circuit import Circuit
from stackopt.search.phenotype import batch_key

ROOT = Path(__file__).resolve().parent.parent


def _two_grounds(sep: float, **g):
    els = [{"name": "C1", "type": "C", "value": 10e-12, "between": ["in", "gnd"], "ground": "g1"},
           {"name": "L2", "type": "L", "value": 50e-9, "between": ["in", "out"]},
           {"name": "C3", "type": "C", "value": 10e-12, "between": ["out", "gnd"],
            "ground": "g2"}]
    grounds = [{"name": "g1", "at": [0, 0], **g}, {"name": "g2", "at": [sep, 0], **g}]
    return compile_circuit(Circuit(elements=els, grounds=grounds))


def test_factor_scales_via_self_and_mutual_terms():
    # Two single vias 1.5 mm deep, 3 mm apart, no pad traces: the mutual is the image-theory
    # value 1/2 M_fil(2h, s) = 140.1 pH (Neumann quadrature, Grover 1946; PHYSICS.md).
    c = _two_grounds(3e-3)
    one = GroundBatch.broadcast(height=1.5e-3, drill=0.3e-3, via_in_pad=True)
    two = GroundBatch.broadcast(height=1.5e-3, drill=0.3e-3, via_in_pad=True, via_scale=2.0)
    l1, l2 = ground_inductance_matrix(c, one)[0], ground_inductance_matrix(c, two)[0]
    assert l1[0, 1] == pytest.approx(140.1e-12, rel=2e-3)
    assert l2[0, 1] == pytest.approx(2 * 140.1e-12, rel=2e-3)
    assert np.allclose(l2, 2 * l1, rtol=1e-12)
    # pad traces are not vias: the factor leaves them alone
    tr = GroundBatch.broadcast(height=1.5e-3, drill=0.3e-3)
    tr2 = GroundBatch.broadcast(height=1.5e-3, drill=0.3e-3, via_scale=2.0)
    ct = _two_grounds(3e-3, trace_length=1e-3, trace_width=3e-4)
    lt, lt2 = ground_inductance_matrix(ct, tr)[0], ground_inductance_matrix(ct, tr2)[0]
    assert np.allclose(lt2 - lt, l1, rtol=1e-12)
    # the factor is a field of the batch, so the phenotype key tells the two apart
    assert not np.array_equal(batch_key(one), batch_key(two))


def _cal_file(path: Path, factor: float, model: str = "goldfarb-pucel") -> Path:
    rec = CouponRecord(name="c1", kind="via", file="c1.s2p", sha256="ab" * 32, z0_ohm=50.0,
                       band_Hz=(1e7, 3e9), points=300, rms_error_dB=0.01,
                       models={model: {"predicted_H": 1e-10, "ratio": factor}},
                       depth_m=1.5e-3, drill_m=3e-4, count=1, inductance_H=factor * 1e-10)
    path.write_text(calibration_text(with_coupon(None, rec)))
    return path


@pytest.fixture
def scenario_dir(tmp_path):
    src = (ROOT / "scenarios" / "harmonic_lowpass.yaml").read_text()
    costs = ROOT / "cost_tables" / "quickturn.yaml"
    (tmp_path / "sub").mkdir()
    _cal_file(tmp_path / "sub" / "cal.yaml", 2.0)
    plain = src.replace("../cost_tables/quickturn.yaml", str(costs))
    assert "calibration" not in plain
    (tmp_path / "plain.yaml").write_text(plain)
    cal = plain.replace("search: {", "search: {calibration: sub/cal.yaml, ", 1)
    assert cal != plain
    (tmp_path / "cal.yaml").write_text(cal)
    return tmp_path


def test_scenario_loads_calibration_relative_to_itself(scenario_dir):
    sc = load_scenario(scenario_dir / "cal.yaml")
    assert sc.search.via_scale("goldfarb-pucel") == 2.0
    assert sc.search.via_scale("johnson") == 1.0  # no coupon calibrates it
    assert load_scenario(scenario_dir / "plain.yaml").search.via_scale("goldfarb-pucel") == 1.0


@pytest.mark.slow
def test_factor_2_doubles_ground_inductance_and_lowers_two_layer_margin(scenario_dir):
    import stackopt
    from stackopt.search.problem import Problem

    plain = stackopt.optimize(scenario_dir / "plain.yaml")
    cal = stackopt.optimize(scenario_dir / "cal.yaml")
    # the same candidates scored both ways: every via term doubled
    g = plain.problem.space.geometry(plain.candidates)
    p_cal = Problem(cal.problem.scenario, cal.problem.table)
    e0, e2 = plain.evaluation, p_cal.evaluate_geometry(g)
    inpad = np.asarray(g.flags.get("via_in_pad", np.zeros(len(g), bool)))
    assert inpad.any()
    # via-in-pad: no pad trace, so the sum of self terms is exactly twice
    assert np.allclose(e2.inductance[inpad], 2 * e0.inductance[inpad], rtol=1e-12)
    assert np.all(e2.inductance[~inpad] > e0.inductance[~inpad])
    two = g.layers == 2
    assert e2.margin[two].max() < e0.margin[two].max()
    assert np.median(e0.margin[two] - e2.margin[two]) > 1.0
    assert np.all(e2.margin[two] <= e0.margin[two] + 1e-9)
    s = cal.to_summary()
    assert s["calibration"]["factors"] == {"goldfarb-pucel": 2.0}
    assert s["calibration"]["coupons"][0]["name"] == "c1"
    assert len(s["calibration"]["sha256"]) == 64
    assert plain.to_summary()["calibration"] is None
    b0, b2 = plain.picks["best_two_layer"], cal.picks["best_two_layer"]
    assert cal.evaluation.margin[b2] < plain.evaluation.margin[b0]


@pytest.mark.slow
def test_cli_optimize_and_eval_with_calibration(scenario_dir, capsys, monkeypatch):
    out = scenario_dir / "out"
    assert main(["optimize", str(scenario_dir / "cal.yaml"), "--out", str(out),
                 "--quiet"]) == 0
    summary = json.loads((out / "summary.json").read_text())
    assert summary["calibration"]["factors"]["goldfarb-pucel"] == 2.0
    report = (out / "report.md").read_text()
    assert "Calibration to measured coupons" in report and "x2" in report
    # --calibration on eval replaces the scenario's (relative to the working directory)
    monkeypatch.chdir(scenario_dir)
    _cal_file(scenario_dir / "four.yaml", 4.0)
    sel = str(out / "selected.yaml")
    assert main(["eval", "cal.yaml", "--stackup", sel, "--json"]) == 0
    l2 = json.loads(capsys.readouterr().out)
    assert main(["eval", "cal.yaml", "--stackup", sel, "--json",
                 "--calibration", "four.yaml"]) == 0
    l4 = json.loads(capsys.readouterr().out)
    assert l4["calibration"]["factors"] == {"goldfarb-pucel": 4.0}
    assert l4["ground_inductance_H"] > l2["ground_inductance_H"]


def test_missing_calibration_file_is_one_line_exit_2(scenario_dir, capsys):
    shutil.move(scenario_dir / "sub" / "cal.yaml", scenario_dir / "sub" / "gone.yaml")
    assert main(["check", str(scenario_dir / "cal.yaml")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "search.calibration" in err and "sub/cal.yaml" in err
    (scenario_dir / "sub" / "cal.yaml").write_text("stackopt_calibration: 7\n")
    assert main(["check", str(scenario_dir / "cal.yaml")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "stackopt_calibration" in err


def test_check_shows_the_calibration(scenario_dir, capsys):
    assert main(["check", str(scenario_dir / "cal.yaml")]) == 0
    out = capsys.readouterr().out
    assert "calibration" in out and "goldfarb-pucel x2" in out
