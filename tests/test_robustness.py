"""End-to-end robustness through ``stackopt.cli.main.main``: reproducible files, recorded
provenance, safe user strings in the report and CSV, no NaN/inf in a report, impossible
targets as named constraint violations, no file left behind after an error.

Scenario and cost-table inputs are the invented demo files (small edits inline).
"""

from __future__ import annotations

import contextlib
import hashlib
import io
import json
import re
from pathlib import Path

import pandas as pd
import pytest
from scenario_support import edited_copy

import stackopt
from stackopt.cli.main import main

ROOT = Path(__file__).resolve().parents[1]
FAST = ROOT / "scenarios" / "two_layer_only.yaml"  # 640 stackups: about a second
TABLE = ROOT / "cost_tables" / "quickturn.yaml"


def run(*argv: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(list(argv))
    return code, out.getvalue(), err.getvalue()


def optimize(out: Path, scenario: Path = FAST, table: Path = TABLE, *extra: str):
    code, stdout, err = run("optimize", str(scenario), "--costs", str(table), "--out",
                            str(out), "--quiet", *extra)
    assert code == 0, err
    return out


# ---- reproducibility -------------------------------------------------------------------
@pytest.mark.parametrize("method", [["--method", "exact"],
                                    ["--method", "nsga2", "--budget", "600"]])
def test_same_seed_byte_identical_files(tmp_path, method):
    a = optimize(tmp_path / "a", FAST, TABLE, "--seed", "7", *method)
    b = optimize(tmp_path / "b", FAST, TABLE, "--seed", "7", *method)
    for name in ("summary.json", "candidates.csv", "front.csv", "selected.yaml"):
        assert (a / name).read_bytes() == (b / name).read_bytes(), name


def test_summary_records_seed_version_and_input_hashes(tmp_path):
    out = optimize(tmp_path / "o", FAST, TABLE, "--seed", "11")
    s = json.loads((out / "summary.json").read_text(encoding="utf-8"))
    assert s["seed"] == 11
    assert s["version"] == stackopt.__version__
    sha = s["inputs"]["sha256"]
    assert sha["scenario"] == hashlib.sha256(FAST.read_bytes()).hexdigest()
    assert sha["cost_table"] == hashlib.sha256(TABLE.read_bytes()).hexdigest()
    assert s["inputs"]["scenario"] == FAST.name


# ---- numerical safety ------------------------------------------------------------------
def _finite_json(text: str) -> None:
    json.loads(text, parse_constant=lambda c: pytest.fail(f"{c} in summary.json"))


def test_impossible_impedance_is_a_named_violation_not_a_crash(tmp_path):
    # 5 kohm microstrip: no width in the searched range reaches it on any board
    sc = edited_copy(tmp_path, "z.yaml", FAST,
                lambda d: d["lines"][0].update(impedance="5000 ohm"))
    code, stdout, err = run("optimize", str(sc), "--costs", str(TABLE), "--out",
                            str(tmp_path / "o"))
    assert code == 0, err  # an infeasible search is an answer
    out = tmp_path / "o"
    text = (out / "summary.json").read_text(encoding="utf-8")
    _finite_json(text)
    assert json.loads(text)["picks"]["cheapest_meeting_requirements"] is None
    df = pd.read_csv(out / "candidates.csv")
    assert not df["feasible"].any()
    assert df["violations"].str.contains("line_rf50@L1_unreachable").all()
    assert "No candidate satisfies" in stdout  # the console says why in words, no codes
    assert "gives the 5000 ohm line 'rf50@L1' its impedance" in stdout
    assert "line_rf50@L1_unreachable" not in stdout


def test_nonfinite_response_is_a_named_violation(monkeypatch):
    """A candidate whose circuit solve is not finite (as a singular nodal matrix gives)
    gets the named violation ``circuit_nonfinite``, is infeasible, and its margin is a
    finite sentinel, so no NaN reaches a table or report."""
    import numpy as np

    import stackopt.search.problem as problem_mod
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario
    from stackopt.search.exact import exact_candidates

    real = problem_mod.solve

    def singular_for_the_second(*args, **kwargs):
        s = np.array(real(*args, **kwargs))
        s[1] = np.nan
        return s

    problem = problem_mod.Problem(load_scenario(FAST), load_cost_table(TABLE))
    cands = exact_candidates(problem).representatives
    g = problem.space.geometry(cands)
    keep = np.unique(problem.phenotype(g), axis=0, return_index=True)[1][:4]
    monkeypatch.setattr(problem_mod, "solve", singular_for_the_second)
    ev = problem.evaluate(cands.take(np.sort(keep)))  # four distinct phenotypes
    bad = ev.violations["circuit_nonfinite"]
    assert np.isfinite(ev.margin).all()
    assert bad.sum() == 1 and not ev.feasible[bad > 0].any()
    i = int(np.flatnonzero(bad)[0])
    assert any(v.startswith("circuit_nonfinite") for v in ev.violated(i))


def test_report_files_hold_no_nan_or_inf(tmp_path):
    out = optimize(tmp_path / "o")
    _finite_json((out / "summary.json").read_text(encoding="utf-8"))
    for name in ("report.md", "report.html"):
        text = (out / name).read_text(encoding="utf-8")
        assert not re.search(r"\b(nan|inf|NaN|Infinity)\b", text), name


# ---- user strings in files -------------------------------------------------------------
EVIL_NAME = "<script>alert(1)</script>"


def _evil_inputs(tmp_path: Path) -> tuple[Path, Path]:
    def scen(d):
        d["name"] = EVIL_NAME
        d["space"]["layers"] = [2, 4]  # four layers put a prepreg on top

    def table(d):
        for i, p in enumerate(d["materials"]["prepregs"]):
            p["glass"] = f'=HYPERLINK("http://example.invalid/{i}","pp{i}")'

    return edited_copy(tmp_path, "evil.yaml", FAST, scen), edited_copy(tmp_path, "evil_t.yaml",
                                                             TABLE, table)


@pytest.fixture(scope="module")
def evil_out(tmp_path_factory) -> Path:
    d = tmp_path_factory.mktemp("evil")
    sc, tb = _evil_inputs(d)
    return optimize(d / "out", sc, tb)


def test_html_report_has_no_live_script(evil_out):
    html = (evil_out / "report.html").read_text(encoding="utf-8")
    assert "<script" not in html.lower()
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    md = (evil_out / "report.md").read_text(encoding="utf-8")
    assert "<script" not in md.lower()


def test_csv_formula_cells_are_neutralised(evil_out):
    # OWASP "CSV injection": a text cell starting with = + - @ is prefixed with '
    for name in ("candidates.csv", "front.csv"):
        df = pd.read_csv(evil_out / name, dtype=str, keep_default_na=False)
        cells = [c for col in df.columns for c in df[col]]
        assert any("HYPERLINK" in c for c in cells), name  # the string did reach the file
        assert not [c for c in cells if c.startswith(("=", "+", "@"))], name
        assert any(c.startswith("'=HYPERLINK") for c in cells), name


# ---- no file left behind ---------------------------------------------------------------
def test_input_error_leaves_no_output_folder(tmp_path):
    bad = edited_copy(tmp_path, "bad.yaml", FAST, lambda d: d["board"].update(width="1 GHz"))
    out = tmp_path / "o"
    code, _, err = run("optimize", str(bad), "--costs", str(TABLE), "--out", str(out))
    assert code == 2 and err.count("\n") == 1
    assert not out.exists() or not any(out.rglob("*"))


def test_search_error_leaves_no_file(tmp_path):
    # the fab prices no 10-layer board: the design space is empty (a user error)
    bad = edited_copy(tmp_path, "ten.yaml", FAST, lambda d: d["space"].update(layers=[10]))
    out = tmp_path / "o"
    code, _, err = run("optimize", str(bad), "--costs", str(TABLE), "--out", str(out))
    assert code == 2, err
    assert "design space is empty" in err and err.count("\n") == 1
    assert not out.exists() or not any(out.rglob("*"))


def test_existing_output_needs_force(tmp_path):
    out = optimize(tmp_path / "o")
    before = (out / "summary.json").read_bytes()
    code, _, err = run("optimize", str(FAST), "--costs", str(TABLE), "--out", str(out))
    assert code == 2 and "--force" in err and err.count("\n") == 1
    assert (out / "summary.json").read_bytes() == before
    optimize(out, FAST, TABLE, "--force")
