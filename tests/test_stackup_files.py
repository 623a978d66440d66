"""``stackups/<ID>.yaml``: every front candidate and pick as a stackup file that
``stackopt eval`` reads back to the same figures as its row of ``front.csv``.

The check is a round trip through files and the CLI (YAML with units, the catalogue
lookup by material name, the single-stackup evaluator) against the search's own table;
the scenario is the invented demo reduced to 2 and 4 layers (fixture only)."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest
import yaml

from stackopt.cli.main import main

ROOT = Path(__file__).resolve().parents[1]
TABLE = ROOT / "cost_tables" / "quickturn.yaml"


@pytest.mark.slow
def test_every_front_candidate_and_pick_reads_back_to_its_row(tmp_path, capsys):
    sc = yaml.safe_load((ROOT / "scenarios" / "harmonic_lowpass.yaml").read_text())
    sc["space"]["layers"] = [2, 4]
    sc.pop("cost_table", None)
    scenario = tmp_path / "s.yaml"
    scenario.write_text(yaml.safe_dump(sc))
    out = tmp_path / "o"
    assert main(["optimize", str(scenario), "--costs", str(TABLE), "--out", str(out),
                 "--quiet"]) == 0
    capsys.readouterr()
    front = pd.read_csv(out / "front.csv")
    summary = json.loads((out / "summary.json").read_text())
    picks = {p["id"] for p in summary["picks"].values() if p}
    assert picks
    files = sorted((out / "stackups").glob("*.yaml"))
    names = {f.stem for f in files}
    assert set(front["id"]) <= names and picks <= names
    assert len(front) >= 2
    cand = pd.read_csv(out / "candidates.csv").set_index("id")
    for f in files:
        doc = yaml.safe_load(f.read_text())
        assert doc["candidate"] == f.stem
        assert main(["eval", str(scenario), "--costs", str(TABLE), "--stackup", str(f),
                     "--json"]) == 0
        got = json.loads(capsys.readouterr().out)
        row = cand.loc[f.stem]
        assert got["margin_dB"] == pytest.approx(row["margin_dB"], abs=1e-6), f.stem
        assert abs(got["unit_cost"] - row["unit_cost"]) < 0.005, f.stem
        assert got["thickness_m"] == pytest.approx(row["thickness_m"], rel=1e-9), f.stem
        assert "rf50@L1" in got["line_widths_m"], f.stem  # every layer of the line, named
        for name, w in got["line_widths_m"].items():
            assert w == pytest.approx(row[f"width_{name}_m"], rel=1e-6), (f.stem, name)
        assert got["meets_requirements"] == bool(row["meets_requirements"]), f.stem
