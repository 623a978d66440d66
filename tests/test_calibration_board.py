"""`stackopt fit MEASURED.s2p --scenario S --stackup F`: a board of the user's own circuit.

The "measurement" is synthesized: the scenario's circuit on a two-layer stackup with the
via inductances scaled by a known factor (1.5), written as Touchstone by scikit-rf with
seeded VNA-like noise (0.02 dB trace noise, -100 dB floor; common practice, no source).
The check is that the comparison finds the model off and the one-factor fit recovers the
factor that made the data.
"""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

skrf = pytest.importorskip("skrf")

from stackopt.circuit import solve  # noqa: E402
from stackopt.cli.common import load_inputs  # noqa: E402
from stackopt.cli.main import main  # noqa: E402
from stackopt.inputs.calibration import load_calibration  # noqa: E402
from stackopt.inputs.stackup_file import load_selected  # noqa: E402
from stackopt.search.problem import Problem  # noqa: E402
from stackopt.search.single import stackup_geometry  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
SCENARIO = str(ROOT / "scenarios" / "harmonic_lowpass.yaml")
TWO_LAYER = """\
format: stackopt-stackup/1
drill: 0.3 mm
vias_per_ground: 1
layers:
- {name: L1, kind: copper, role: signal, thickness: 34.3 um}
- {kind: core, material: core-1.5, thickness: 1.5 mm, dk: 4.5}
- {name: L2, kind: copper, role: ground, thickness: 34.3 um}
"""


@pytest.fixture
def board(tmp_path):
    st = tmp_path / "two.yaml"
    st.write_text(TWO_LAYER)
    inp = load_inputs(SCENARIO, None)
    p = Problem(inp.scenario, inp.table)
    g = stackup_geometry(p, load_selected(st), None)
    f = np.linspace(100e6, 3e9, 300)
    gb = replace(p.ground_batch(g), via_scale=np.full(1, 1.5))
    s = solve(p.compiled, f, gb, inp.scenario.search.via_model)[0]
    rng = np.random.default_rng(5)
    s = s * 10 ** (rng.normal(0, 0.02, s.shape) / 20) + 1e-5 * rng.normal(size=s.shape)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s, z0=p.compiled.z0)
    net.write_touchstone(str(tmp_path / "board"))
    return tmp_path


def test_board_comparison_and_one_factor(board, capsys, monkeypatch):
    monkeypatch.chdir(board)
    assert main(["fit", "board.s2p", "--scenario", SCENARIO, "--stackup", "two.yaml",
                 "--json", "--plot", "none"]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["kind"] == "board" and r["factor"] is None
    assert 1.0 < r["uncalibrated_rms_error_dB"] < r["ideal_rms_error_dB"]
    assert main(["fit", "board.s2p", "--scenario", SCENARIO, "--stackup", "two.yaml",
                 "--scale", "--json", "--write", "cal.yaml"]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["factor"] == pytest.approx(1.5, rel=0.02)
    assert r["scaled_rms_error_dB"] < 0.1
    assert (board / "fit.png").stat().st_size > 10_000
    cal = load_calibration(board / "cal.yaml")
    assert cal.factor("goldfarb-pucel") == pytest.approx(1.5, rel=0.02)
    (rec,) = cal.data.coupons
    assert rec.kind == "board" and rec.stackup == "two.yaml" and len(rec.stackup_sha256) == 64


def test_board_mode_needs_both_files(board, capsys):
    assert main(["fit", str(board / "board.s2p"), "--scenario", SCENARIO]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "--stackup" in err
