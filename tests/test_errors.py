"""The one error path: the hierarchy, one-line located messages with "did you mean",
exit codes 0 / 1 / 2, ``--debug``, physical range errors and the warnings mechanism,
and the YAML reader's defences.

The range limits are facts of the trade (common practice, no source); see
``stackopt/inputs/sanity.py``. Inputs are the invented demo files, edited inline.
"""

from __future__ import annotations

import contextlib
import io
import os
import re
import warnings
from pathlib import Path

import pytest
import yaml
from scenario_support import edited_copy

from stackopt.cli.main import main
from stackopt.errors import (
    InputError,
    ModelError,
    OutputError,
    StackoptError,
    StackoptWarning,
    UnitError,
    did_you_mean,
)
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.inputs.yamlio import parse_yaml_text

ROOT = Path(__file__).resolve().parents[1]
SCEN = ROOT / "scenarios" / "harmonic_lowpass.yaml"
FAST = ROOT / "scenarios" / "two_layer_only.yaml"
TABLE = ROOT / "cost_tables" / "quickturn.yaml"
LOCATED = re.compile(r"^stackopt: error: \S+\.yaml:\d+:\d+: \S+: ")


def run(*argv: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(list(argv))
    return code, out.getvalue(), err.getvalue()


def check(scenario: Path, table: Path = TABLE) -> tuple[int, str, str]:
    return run("check", str(scenario), "--costs", str(table))


# ---- the hierarchy -----------------------------------------------------------------------
def test_hierarchy_matches_builtins():
    assert issubclass(InputError, ValueError) and issubclass(InputError, StackoptError)
    assert issubclass(UnitError, InputError) and issubclass(ModelError, InputError)
    assert issubclass(OutputError, OSError) and issubclass(OutputError, StackoptError)
    assert issubclass(StackoptWarning, UserWarning)


def test_message_is_one_located_line():
    e = InputError("bad\nvalue   here", file="a.yaml", key=("stackup", 2, "t"), line=3,
                   column=5, fix="give\n0.1 mm")
    assert str(e) == "a.yaml:3:5: stackup[2].t: bad value here; give 0.1 mm"
    w = StackoptWarning("odd\nvalue", file="a.yaml", key="x", line=1, column=2)
    assert str(w) == "a.yaml:1:2: x: odd value"


@pytest.mark.parametrize("word, choices, hint", [
    ("familly", ["family", "order"], "family"),   # one letter too many
    ("kd", ["dk", "df", "thickness"], "dk"),       # two letters swapped
    ("Cutoff", ["cutoff", "order"], "cutoff"),     # case
    ("zzz", ["dk", "df"], None),
])
def test_did_you_mean(word, choices, hint):
    got = did_you_mean(word, choices)
    assert got == (f" (did you mean '{hint}'?)" if hint else "")


# ---- exit codes and --debug ------------------------------------------------------------
def test_success_is_zero_with_nothing_on_stderr():
    code, out, err = check(SCEN)
    assert code == 0 and out.rstrip().endswith("ok") and err == ""


def test_user_error_is_two_and_one_line(tmp_path):
    code, out, err = run("check", str(tmp_path / "missing.yaml"))
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and "missing.yaml: file not found" in err


def test_bad_option_is_a_user_error():
    code, _, err = run("optimize", "--seed", "minus one")
    assert code == 2 and err.count("\n") == 1 and "--seed" in err


def test_internal_error_is_one_and_says_how_to_report(monkeypatch):
    import stackopt.cli.check as cmd

    def boom(args):
        raise RuntimeError("simulated\nbug")

    monkeypatch.setattr(cmd, "run", boom)
    code, _, err = run("check", str(SCEN))
    assert code == 1 and err.count("\n") == 1 and "Traceback" not in err
    assert "internal error: RuntimeError: simulated bug" in err
    assert "report" in err and "--debug" in err


@pytest.mark.parametrize("argv", [["--debug", "check", "nope.yaml"],
                                  ["check", "nope.yaml", "--debug"],
                                  ["check", "--debug", "nope.yaml"]])
def test_debug_anywhere_shows_the_traceback(argv):
    with pytest.raises(InputError, match="file not found"):
        main(argv)


def test_debug_is_in_every_help():
    for argv in (["--help"], ["check", "--help"], ["optimize", "--help"]):
        out = io.StringIO()
        with contextlib.redirect_stdout(out), pytest.raises(SystemExit) as ex:
            main(argv)
        assert ex.value.code == 0 and "--debug" in out.getvalue()


# ---- dimension and physical range errors -----------------------------------------------
def _set(path, value):
    def edit(d):
        node = d
        for p in path[:-1]:
            node = node[p]
        node[path[-1]] = value
    return edit


SCENARIO_ERRORS = [
    (("space", "thickness", "nominal"), "1.6 GHz", "is a frequency, not a length"),
    (("board", "width"), "-5 mm", "must be greater than zero"),
    (("board", "quantity"), 0, "greater than 0"),
    (("requirements", 0, "frequency"), "5 THz", "not a plausible value for a requirement"),
    (("requirements", 0, "min_attenuation"), "1e9 dB", "not a plausible value"),
    (("space", "drills"), ["5 mm"], "not a plausible value for a via drill"),
    (("space", "thickness", "nominal"), "16 mm", "finished board thickness"),
    (("space", "copper"), ["1 GHz"], "is a frequency, not a length"),
    (("circuit", "z0"), "1e300 ohm", "not a plausible value for a reference impedance"),
    (("space", "layers"), [2, 100], "not a plausible value for a layer count"),
    (("search", "seed"), 2**40, "less than or equal to"),
]


@pytest.mark.parametrize("path, value, words", SCENARIO_ERRORS)
def test_scenario_range_and_dimension_errors(tmp_path, path, value, words):
    code, _, err = check(edited_copy(tmp_path, "s.yaml", SCEN, _set(path, value)))
    assert code == 2 and err.count("\n") == 1, err
    assert LOCATED.match(err), err
    key = "".join(f"[{p}]" if isinstance(p, int) else f".{p}" for p in path).lstrip(".")
    assert key in err and words in err, err


def _material(kind, field):
    return ("materials", kind, 0, field)


TABLE_ERRORS = [
    (_material("cores", "thickness"), "16 mm", "not a plausible value for a core thickness"),
    (_material("prepregs", "thickness"), "0.1 GHz", "is a frequency, not a length"),
    (_material("prepregs", "dk"), 43, "less than or equal to 20"),
    (_material("cores", "thickness"), "-0.2 mm", "must be greater than zero"),
    (("drill", 2, "min_drill"), "5 mm", "not a plausible value for a via drill"),
    (("capabilities", "max_aspect_ratio"), 1000, "not a plausible value"),
    (("panel", "width"), "610 m", "not a plausible value for a panel side"),
]


@pytest.mark.parametrize("path, value, words", TABLE_ERRORS)
def test_cost_table_range_and_dimension_errors(tmp_path, path, value, words):
    table = edited_copy(tmp_path, "t.yaml", TABLE, _set(path, value))
    code, _, err = check(SCEN, table)
    assert code == 2 and err.count("\n") == 1, err
    assert LOCATED.match(err) and "t.yaml" in err and words in err, err


def test_range_error_shows_the_value_as_written_and_the_accepted_range(tmp_path):
    table = edited_copy(tmp_path, "t.yaml", TABLE, _set(_material("cores", "thickness"), "16 mm"))
    with pytest.raises(InputError) as ex:
        load_cost_table(table)
    e = ex.value
    assert e.key == "materials.cores[0].thickness" and e.line is not None
    assert "16 mm" in e.message and "5 um to 10 mm" in e.fix


# ---- warnings: legal but unusual -------------------------------------------------------
WARNINGS = [
    ("table", _material("prepregs", "dk"), 12, "FR-4-class laminates", "dk"),
    ("table", _material("prepregs", "thickness"), "0.03 mm", "below 40 um", "thickness"),
    ("scenario", ("requirements", 0, "frequency"), "25 GHz", "above 20 GHz", "frequency"),
    ("scenario", ("space", "drills"), ["1.5 mm"], "mounting hole", "drills[0]"),
]


@pytest.mark.parametrize("target, path, value, words, key", WARNINGS)
def test_unusual_values_warn_on_stderr_and_still_succeed(tmp_path, target, path, value,
                                                         words, key):
    scen, table = FAST, TABLE
    if target == "table":
        table = edited_copy(tmp_path, "t.yaml", TABLE, _set(path, value))
    else:
        scen = edited_copy(tmp_path, "s.yaml", FAST, _set(path, value))
    code, out, err = check(scen, table)
    assert code == 0 and out.rstrip().endswith("ok"), err
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("stackopt: warning: "), err
    assert words in err and key in err and re.search(r"\.yaml:\d+:\d+: ", err), err


def test_library_issues_warnings_without_printing(tmp_path, capsys):
    table = edited_copy(tmp_path, "t.yaml", TABLE, _set(_material("prepregs", "dk"), 12))
    with pytest.warns(StackoptWarning, match=r"materials\.prepregs\[0\]\.dk"):
        load_cost_table(table)
    assert capsys.readouterr() == ("", "")


def test_demo_inputs_raise_no_warning():
    with warnings.catch_warnings():
        warnings.simplefilter("error", StackoptWarning)
        for p in sorted((ROOT / "scenarios").glob("*.yaml")):
            load_scenario(p)
        for p in sorted((ROOT / "cost_tables").glob("*.yaml")):
            load_cost_table(p)


# ---- "did you mean" for keys, choices and material names -------------------------------
def test_misspelt_required_key_is_named(tmp_path):
    def edit(d):
        d["circuit"]["filter"]["cutof"] = d["circuit"]["filter"].pop("cutoff")

    code, _, err = check(edited_copy(tmp_path, "s.yaml", SCEN, edit))
    assert code == 2 and "unknown key 'cutof' (did you mean 'cutoff'?)" in err


def test_misspelt_choice_is_named(tmp_path):
    code, _, err = check(edited_copy(tmp_path, "s.yaml", SCEN,
                               _set(("circuit", "filter", "family"), "chebychev")))
    assert code == 2 and "(did you mean 'chebyshev'?)" in err and LOCATED.match(err)


def test_misspelt_material_name_is_named(tmp_path):
    out = tmp_path / "o"
    code, _, err = run("optimize", str(FAST), "--costs", str(TABLE), "--out", str(out),
                       "--quiet")
    assert code == 0, err
    sel = yaml.safe_load((out / "selected.yaml").read_text(encoding="utf-8"))
    diel = next(layer for layer in sel["layers"] if layer["kind"] != "copper")
    right = diel["material"]
    diel["material"] = right.replace("core-", "cor-")
    bad = tmp_path / "bad_stackup.yaml"
    bad.write_text(yaml.safe_dump(sel, sort_keys=False), encoding="utf-8")
    code, _, err = run("eval", str(FAST), "--costs", str(TABLE), "--stackup", str(bad))
    assert code == 2 and err.count("\n") == 1, err
    assert f"did you mean '{right}'" in err and "bad_stackup.yaml" in err


# ---- the YAML reader's defences ----------------------------------------------------------
@pytest.mark.parametrize("text, words", [
    ("a: 1\nb: 2\na: 3\n", "duplicate key 'a'"),
    ("a: !!python/name:os.system\n", "could not determine a constructor"),
    ("a: !!python/object/apply:os.system ['true']\n", "is not allowed"),
    ("a: !!python/object:os.Foo {b: 1}\n", "is not allowed"),
    ("a: !!set {b, c}\n", "is not allowed"),
    ("a: &x [*x]\n", "refers to itself"),
    ("a: " + "[" * 3000 + "]" * 3000 + "\n", "nested too deeply"),
    ("a: \x7f\n", "is not allowed in YAML"),
    ("a: [1, 2\n", "YAML syntax error"),
])
def test_yaml_text_errors_are_one_line(text, words):
    with pytest.raises(InputError) as ex:
        parse_yaml_text(text, "f.yaml")
    assert words in str(ex.value) and "\n" not in str(ex.value)
    assert str(ex.value).startswith("f.yaml")


def test_alias_bomb_is_refused_quickly():
    # "billion laughs": nine levels of nine aliases would expand to 9**9 items
    lines = ["l0: &l0 [x, x, x, x, x, x, x, x, x]"]
    for i in range(1, 10):
        refs = ", ".join([f"*l{i - 1}"] * 9)
        lines.append(f"l{i}: &l{i} [{refs}]")
    with pytest.raises(InputError, match="expands to too much data"):
        parse_yaml_text("\n".join(lines) + "\n", "bomb.yaml")


def test_duplicate_key_is_located():
    with pytest.raises(InputError) as ex:
        parse_yaml_text("board:\n  width: 5 mm\n  width: 6 mm\n", "d.yaml")
    assert ex.value.line == 3 and ex.value.column == 3 and ex.value.key == "board.width"


@pytest.mark.parametrize("content, words", [
    (b"\xff\xfe\x00bad", "not UTF-8"),
    (b"name: x\x00\n", "NUL bytes"),
    (b"", "the file is empty"),
    (b"- just\n- a list\n", "expected a mapping"),
])
def test_bad_files_are_user_errors(tmp_path, content, words):
    p = tmp_path / "f.yaml"
    p.write_bytes(content)
    code, _, err = run("check", str(p))
    assert code == 2 and err.count("\n") == 1 and words in err and "f.yaml" in err, err


def test_folder_and_device_are_user_errors(tmp_path):
    code, _, err = run("check", str(tmp_path))
    assert code == 2 and "is a folder" in err
    if os.path.exists("/dev/zero"):  # would otherwise be read forever
        code, _, err = run("check", str(SCEN), "--costs", "/dev/zero")
        assert code == 2 and "not a regular file" in err
