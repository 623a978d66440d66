"""One test per defect found by a corpus of bad and hostile inputs: nothing absurd
accepted, errors that name the real cause, no internal error.

The plausible ranges are facts of the trade (common practice, no source; see
``stackopt/plausible.py``). YAML 1.1 reads ``0100`` as octal 64 and ``1:30`` as 90 (YAML
1.1 spec, int and float types); merge keys follow the YAML 1.1 merge-key type
(yaml.org/type/merge.html), where a key written in the mapping overrides a merged one.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from scenario_support import edited_copy
from test_robustness import run

from stackopt.errors import InputError
from stackopt.inputs.yamlio import parse_yaml_text
from stackopt.units import parse_quantity

ROOT = Path(__file__).resolve().parents[1]
EMI = ROOT / "scenarios" / "consumer_emi.yaml"
FAST = ROOT / "scenarios" / "two_layer_only.yaml"
QUICK = ROOT / "cost_tables" / "quickturn.yaml"
VOLUME = ROOT / "cost_tables" / "volume.yaml"


def scenario(tmp_path: Path, edit, source: Path = EMI, name: str = "s.yaml") -> Path:
    return edited_copy(tmp_path, name, source, edit)


def check(path: Path, table: Path = VOLUME) -> tuple[int, str, str]:
    return run("check", str(path), "--costs", str(table))


def one_error(code: int, err: str, *words: str) -> str:
    assert code == 2, err
    lines = err.strip().splitlines()
    assert lines and lines[-1].startswith("stackopt: error: "), err
    assert "\n" not in err.strip().split("stackopt: error: ")[-1]
    for w in words:
        assert w in lines[-1], (w, lines[-1])
    return lines[-1]


def _el(d, k):
    return d["circuit"]["elements"][k]


# ---- duplicates and shorts ----------------------------------------------------------

def test_duplicate_line_names_are_an_error(tmp_path):
    p = scenario(tmp_path, lambda d: d.update(lines=[
        {"name": "rf", "impedance": "50 ohm"}, {"name": "rf", "impedance": "75 ohm"}]))
    one_error(*check(p)[::2], "lines[1].name", "'rf'", str(p))


def test_duplicate_element_ground_requirement_names_are_errors(tmp_path):
    p = scenario(tmp_path, lambda d: d["circuit"]["elements"].append(dict(_el(d, 0))))
    one_error(*check(p)[::2], "circuit.elements[3].name", "'C1'")
    p = scenario(tmp_path, lambda d: d["circuit"]["grounds"].append(
        {**d["circuit"]["grounds"][0], "at": ["5 mm", "0 mm"]}))
    one_error(*check(p)[::2], "circuit.grounds[1].name", "'gA'")
    p = scenario(tmp_path, lambda d: d["requirements"].append(
        {"name": "EMI band", "frequency": "2 GHz", "min_attenuation": "10 dB"}))
    one_error(*check(p)[::2], "requirements[1].name", "'EMI band'")


def test_port_shorted_to_ground_is_an_error(tmp_path):
    p = scenario(tmp_path, lambda d: d["circuit"]["elements"].append(
        {"name": "R9", "type": "R", "value": "0 ohm", "between": ["in", "gnd"]}))
    one_error(*check(p)[::2], "circuit.input", "shorted to ground", "R9")


# ---- implausible values, bare numbers -----------------------------------------------

def test_bare_capacitor_value_is_refused_with_the_unit_meant(tmp_path):
    p = scenario(tmp_path, lambda d: _el(d, 0).update(value=6.8))
    one_error(*check(p)[::2], "circuit.elements[0].value",
              "C1: value 6.8 is 6.8 F", "did you mean 6.8 pF", "write the unit")


def test_bare_value_inside_the_range_is_accepted_and_shown_with_its_unit(tmp_path):
    p = scenario(tmp_path, lambda d: _el(d, 0).update(value=1e-10))  # 100 pF in SI
    code, out, err = check(p)
    assert code == 0, err


def test_bare_q_frequency_is_refused_with_mhz_suggested(tmp_path):
    p = scenario(tmp_path, lambda d: d["circuit"]["elements"][1].update(q_at=433.92))
    one_error(*check(p)[::2], "q_at", "433.92 MHz")


@pytest.mark.parametrize(("argv", "words"), [
    (["calc", "via", "--depth", "1e9mm", "--drill", "0.3mm"], ["--depth", "plausible"]),
    (["calc", "via", "--depth", "0.2mm", "--drill", "5m"], ["--drill", "plausible"]),
    (["calc", "via", "--depth", "0.2mm", "--drill", "0.3mm", "--freq", "1e15Hz"],
     ["--freq", "plausible"]),
    (["calc", "line", "--type", "microstrip", "--height", "0.2mm", "--er", "4.5",
      "--width", "1e-20mm"], ["--width", "plausible"]),
    (["calc", "via", "--depth", "0.2", "--drill", "0.3mm"],
     ["0.2 is 0.2 m", "did you mean 0.2 mm"]),
    (["calc", "via", "--depth", "0.2mm", "--drill", "0.3", "--freq", "800MHz"],
     ["--drill", "0.3 mm"]),
    (["calc", "via", "--depth", "0.2mm", "--drill", "0.3mm", "--freq", "800"],
     ["800 is 800 Hz", "800 MHz"]),
    (["calc", "line", "--type", "microstrip", "--height", "1.6", "--er", "4.5",
      "--target", "50"], ["--height", "1.6 mm"]),
])
def test_absurd_or_bare_cli_values_are_refused(argv, words):
    one_error(*run(*argv)[::2], *words)


def test_plausible_cli_values_still_work():
    code, out, err = run("calc", "via", "--depth", "0.2mm", "--drill", "0.3mm",
                         "--freq", "800MHz")
    assert code == 0, err


_STACKUP = ("layers:\n  - {kind: copper, role: signal, thickness: 35 um}\n"
            "  - {kind: core, material: core-0.51, thickness: 0.51 mm, dk: 4.5}\n"
            "  - {kind: copper, role: ground, thickness: 35 um}\ndrill: 0.3 mm\n")


@pytest.mark.parametrize(("old", "new", "key"), [
    (None, None, None),
    ("thickness: 0.51 mm", "thickness: 1 m", "layers[1].thickness"),
    ("signal, thickness: 35 um", "signal, thickness: 5 mm", "layers[0].thickness"),
    ("drill: 0.3 mm", "drill: 5 m", "drill"),
])
def test_absurd_stackup_file_is_refused(tmp_path, old, new, key):
    st = tmp_path / "st.yaml"
    st.write_text(_STACKUP if old is None else _STACKUP.replace(old, new))
    code, out, err = run("eval", str(FAST), "--costs", str(QUICK), "--stackup", str(st))
    if key is None:
        assert code == 0, err
    else:
        one_error(code, err, str(st), key, "plausible")


# ---- YAML 1.1 surprises ----------------------------------------------------------------

def test_octal_looking_quantity_is_refused():
    with pytest.raises(InputError, match=r"0100 is read by YAML 1.1 as 64 \(octal\).*100"):
        parse_yaml_text("board: {quantity: 0100}\n", "s.yaml")
    with pytest.raises(InputError, match=r"90 \(base 60\)"):
        parse_yaml_text("q: 1:30\n", "s.yaml")
    assert parse_yaml_text("q: '0100'\nr: 0\ns: 0.5\n").data == {"q": "0100", "r": 0,
                                                                "s": 0.5}


def test_boolean_quantity_is_refused(tmp_path):
    p = scenario(tmp_path, lambda d: d["board"].update(quantity=True))
    one_error(*check(p)[::2], "board.quantity", "true")


@pytest.mark.parametrize("unit", ["Mm", "MM"])
def test_case_mangled_unit_is_refused(unit):
    with pytest.raises(InputError, match="letter case.*'mm'"):
        parse_quantity(f"30 {unit}", "length")


def test_yaml_merge_key_override_works():
    text = "base: &b {a: 1, b: 2}\nx:\n  <<: *b\n  b: 3\n"
    assert parse_yaml_text(text).data["x"] == {"a": 1, "b": 3}
    with pytest.raises(InputError, match="duplicate key 'b'"):
        parse_yaml_text("x:\n  <<: {a: 1}\n  b: 2\n  b: 3\n")


# ---- internal errors that were --------------------------------------------------------

def test_5000_digit_number_exits_2(tmp_path):
    p = tmp_path / "s.yaml"
    p.write_text(EMI.read_text().replace("quantity: 20000", "quantity: " + "9" * 5000))
    one_error(*check(p)[::2], "5000 digits")
    one_error(*run("optimize", "--seed", "9" * 5000)[::2], "--seed")
    one_error(*run("calc", "via", "--depth", "9" * 5000, "--drill", "0.3mm")[::2], "--depth")


def test_300_char_out_exits_2(tmp_path):
    one_error(*run("optimize", "--out", str(tmp_path / ("x" * 300)))[::2], "too long")


def test_empty_out_is_an_error():
    one_error(*run("optimize", "--out", "")[::2], "--out is empty")


def test_out_with_newline_is_one_line(tmp_path):
    one_error(*run("optimize", "--out", str(tmp_path / "a\nb"))[::2], "control character")


def test_seed_range_is_the_same_everywhere(tmp_path):
    from stackopt.plausible import SEED_MAX

    assert SEED_MAX == 2**32 - 1  # numpy's SeedSequence-free legacy limit
    one_error(*run("optimize", "--seed", str(SEED_MAX + 1), "--out", str(tmp_path / "o"))
              [::2], "--seed", str(SEED_MAX))
    p = scenario(tmp_path, lambda d: d["search"].update(seed=SEED_MAX))
    assert check(p)[0] == 0
    p = scenario(tmp_path, lambda d: d["search"].update(seed=SEED_MAX + 1))
    one_error(*check(p)[::2], "search.seed")


# ---- messages that name the real cause ---------------------------------------------------

def test_thickness_window_with_nominal_and_min_max_is_refused(tmp_path):
    p = scenario(tmp_path, lambda d: d["space"]["thickness"].update(min="1 mm", max="2 mm"))
    one_error(*check(p)[::2], "space.thickness.nominal", "1.6 mm")


@pytest.mark.parametrize(("tol", "words"), [("150 %", ["tolerance 150 %"]),
                                            (10, ["tolerance 10 is read as 1000 %",
                                                  "'10 %'"])])
def test_tolerance_message_quotes_the_users_value(tmp_path, tol, words):
    p = scenario(tmp_path, lambda d: d["space"]["thickness"].update(tolerance=tol))
    line = one_error(*check(p)[::2], "space.thickness.tolerance", *words)
    assert "min must be below max" not in line


def test_empty_window_quotes_min_and_max(tmp_path):
    p = scenario(tmp_path, lambda d: d["space"].update(
        thickness={"min": "1.7 mm", "max": "0.8 mm"}))
    one_error(*check(p)[::2], "1.7 mm", "0.8 mm")


def test_negative_capacitor_fix_quotes_its_own_value(tmp_path):
    p = scenario(tmp_path, lambda d: _el(d, 0).update(value="-6.8 pF"))
    one_error(*check(p)[::2], "circuit.elements[0].value", "'value: 6.8 pF'")


def test_empty_space_names_no_standard_constructions(tmp_path):
    p = scenario(tmp_path, lambda d: d["space"].update(constructions="standard"))
    one_error(*run("optimize", str(p), "--costs", str(QUICK), "--out",
                   str(tmp_path / "o"))[::2], "lists no standard constructions", str(p))
    one_error(*check(p, QUICK)[::2], "lists no standard constructions")


def test_empty_space_names_constructions_of_other_layer_counts(tmp_path):
    p = scenario(tmp_path, lambda d: d["space"].update(constructions="standard",
                                                        layers=[8]))
    one_error(*check(p)[::2], "space.constructions", "none of the scenario's 8")


def test_empty_space_names_the_drill_below_the_fab_minimum(tmp_path):
    p = scenario(tmp_path, lambda d: d["space"].update(drills=["0.1 mm"]))
    one_error(*run("optimize", str(p), "--costs", str(VOLUME), "--out",
                   str(tmp_path / "o"))[::2], "drill 0.1 mm", "minimum drill")


def test_check_reports_what_optimize_drops(tmp_path):
    p = scenario(tmp_path, lambda d: d["space"].update(drills=["0.1 mm", "0.3 mm"],
                                                        layers=[2, 4, 12]))
    code, out, err = check(p)
    assert code == 0
    assert "warning" in err and "drill 0.1 mm" in err and "layer count 12" in err
    p = scenario(tmp_path, lambda d: d["board"].update(width="1.5 m"))
    one_error(*check(p)[::2], "does not fit", "panel")


def test_zero_plies_are_blamed_on_the_cost_table(tmp_path):
    t = tmp_path / "t.yaml"
    (tmp_path / "volume_base.csv").write_bytes((ROOT / "cost_tables" /
                                                "volume_base.csv").read_bytes())
    t.write_text(VOLUME.read_text().replace("[pp-7628 x1, core-1.2, pp-7628 x1]",
                                            "[pp-7628 x0, core-1.2, pp-7628 x1]"))
    line = one_error(*check(EMI, t)[::2], str(t), "constructions[2].dielectrics[0]",
                     "no plies")
    assert "max_plies" not in line
