"""Fuzz the inputs: mutate the demo scenarios and cost tables the way hand-edited files go
wrong, and check that the tool always answers with one line and the right exit code.

Mutations: deleted keys, wrong types, wrong units, out-of-range values, misspelt and
unknown keys, duplicated lines, truncated files, random bytes and spliced garbage. For
every case: exit code 2 (or 0 where the mutation happens to be legal, e.g. deleting an
optional key), exactly one ``stackopt: error:`` line on stderr for an error (any other
stderr line is a ``stackopt: warning:``), never exit code 1 (an internal error) or a
traceback, and — through ``stackopt optimize --out`` — no file left in the output folder
after an error.

Deterministic: hypothesis runs derandomized (the same cases every run), no deadline.
Most cases go through ``stackopt check`` (validation only, ~10 ms each); a smaller set
runs ``stackopt optimize`` on the smallest demo. The demo files are invented data.
"""

from __future__ import annotations

import contextlib
import copy
import io
import json
import shutil
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stackopt.cli.main import main

ROOT = Path(__file__).resolve().parents[1]
SCENARIOS = {p.name: p.read_text(encoding="utf-8")
             for p in sorted((ROOT / "scenarios").glob("*.yaml"))}
TABLES = {p.name: p.read_text(encoding="utf-8")
          for p in sorted((ROOT / "cost_tables").glob("*.yaml"))}
CSV_NAME = "volume_base.csv"
CSV_TEXT = (ROOT / "cost_tables" / CSV_NAME).read_text(encoding="utf-8")
#: The fastest demo to search end to end (two layers only; invented data).
FAST = "two_layer_only.yaml"

FUZZ = settings(derandomize=True, deadline=None, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

WRONG_TYPES = [None, True, False, [], {}, [1, 2], {"a": 1}, "", "banana", -1, 0, 2**70,
               1e308, -1e308, "nan", "inf", "-inf", "1e999 mm", "0x1F", "12,5 mm",
               "1.6 mm 2", "mm", "  ", "∞", "1/2 oz", [[1]], {"nominal": "x"}]
UNITS = ["GHz", "MHz", "mm", "um", "mil", "ohm", "kohm", "pF", "nH", "dB", "%", "oz",
         "furlong", "kg", "THz", "m", "s", "V", ""]
FACTORS = [0, -1, -1e-3, 1e-6, 1e-3, 10, 1e3, 1e6, 1e12]


# ---- helpers ---------------------------------------------------------------------------
def _paths(data, at=()):
    """Every key path in plain YAML data (mappings and lists), leaves included."""
    out = []
    if isinstance(data, dict):
        for k, v in data.items():
            out.append(at + (k,))
            out.extend(_paths(v, at + (k,)))
    elif isinstance(data, list):
        for i, v in enumerate(data):
            out.append(at + (i,))
            out.extend(_paths(v, at + (i,)))
    return out


def _parent(data, path):
    for p in path[:-1]:
        data = data[p]
    return data


def _split(value):
    """(number, unit) of a leaf such as '1.6 mm' or 50, or None."""
    if isinstance(value, bool):
        return None
    if isinstance(value, int | float):
        return float(value), ""
    if isinstance(value, str):
        head, _, unit = value.strip().partition(" ")
        try:
            return float(head), unit
        except ValueError:
            return None
    return None


@st.composite
def data_mutation(draw, text: str):
    """A structural mutation of one YAML document; returns (new text, kind)."""
    data = yaml.safe_load(text)
    paths = _paths(data)
    kind = draw(st.sampled_from(["delete", "wrong_type", "wrong_unit", "out_of_range",
                                 "misspell", "unknown_key"]))
    path = draw(st.sampled_from(paths))
    parent, last = _parent(data, path), path[-1]
    if kind == "delete":
        del parent[last]
    elif kind == "wrong_type":
        parent[last] = copy.deepcopy(draw(st.sampled_from(WRONG_TYPES)))
    elif kind in ("wrong_unit", "out_of_range"):
        leaves = [p for p in paths if _split(_parent(data, p)[p[-1]]) is not None]
        path = draw(st.sampled_from(leaves))
        parent, last = _parent(data, path), path[-1]
        num, unit = _split(parent[last])
        if kind == "wrong_unit":
            unit = draw(st.sampled_from(UNITS))
        else:
            num *= draw(st.sampled_from(FACTORS))
        parent[last] = f"{num:g} {unit}".strip()
    else:
        maps = [p for p in [(), *paths] if isinstance(_node(data, p), dict)]
        at = draw(st.sampled_from(maps))
        node = _node(data, at)
        if kind == "misspell":
            keys = [k for k in node if isinstance(k, str) and len(k) >= 2]
            if not keys:
                return yaml.safe_dump(data, sort_keys=False), "noop"
            key = draw(st.sampled_from(keys))
            i = draw(st.integers(0, len(key) - 1))
            edit = draw(st.sampled_from(["drop", "double", "swap", "case"]))
            new = {"drop": key[:i] + key[i + 1:], "double": key[:i] + key[i] + key[i:],
                   "swap": key[:i] + key[i + 1:i + 2] + key[i:i + 1] + key[i + 2:],
                   "case": key[:i] + key[i].swapcase() + key[i + 1:]}[edit]
            if new == key or new in node:
                return yaml.safe_dump(data, sort_keys=False), "noop"
            node[new] = node.pop(key)
        else:
            node[draw(st.sampled_from(["colour", "thicknes", "Width", "notes2"]))] = "x"
    return yaml.safe_dump(data, sort_keys=False, allow_unicode=True), kind


def _node(data, path):
    for p in path:
        data = data[p]
    return data


@st.composite
def text_mutation(draw, text: str):
    """A byte-level mutation of a file; returns (new bytes, kind)."""
    raw = text.encode("utf-8")
    kind = draw(st.sampled_from(["truncate", "random_bytes", "splice", "duplicate_line"]))
    if kind == "truncate":
        return raw[:draw(st.integers(0, len(raw) - 1))], kind
    if kind == "random_bytes":
        return draw(st.binary(max_size=400)), kind
    if kind == "splice":
        i = draw(st.integers(0, len(raw)))
        j = draw(st.integers(i, min(len(raw), i + 40)))
        return raw[:i] + draw(st.binary(min_size=1, max_size=40)) + raw[j:], kind
    lines = raw.splitlines(keepends=True)
    k = draw(st.integers(0, len(lines) - 1))
    return b"".join(lines[:k + 1] + [lines[k]] + lines[k + 1:]), kind


def _run(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def _assert_clean(code: int, err: str, kind: str, must_fail: bool) -> None:
    assert code in (0, 2), f"{kind}: exit {code}: {err}"
    assert "Traceback" not in err and "internal error" not in err, err
    lines = err.splitlines()
    errors = [s for s in lines if s.startswith("stackopt: error: ")]
    assert all(s.startswith(("stackopt: error: ", "stackopt: warning: ")) for s in lines), err
    assert len(errors) == (1 if code == 2 else 0), err
    if must_fail:
        assert code == 2, f"{kind} was accepted"


@pytest.fixture(scope="module")
def work(tmp_path_factory) -> Path:
    """A folder holding the case's scenario, cost table and the CSV the volume table names."""
    d = tmp_path_factory.mktemp("fuzz")
    (d / CSV_NAME).write_text(CSV_TEXT, encoding="utf-8")
    return d


def _case(work: Path, scenario: str, table: str, target: str, content: bytes | str):
    s_text, t_text = SCENARIOS[scenario], TABLES[table]
    s, t = work / "scenario.yaml", work / "table.yaml"
    s.write_text(s_text, encoding="utf-8")
    t.write_text(t_text, encoding="utf-8")
    dest = s if target == "scenario" else t
    if isinstance(content, bytes):
        dest.write_bytes(content)
    else:
        dest.write_text(content, encoding="utf-8")
    return s, t


# Misspelt and unknown keys are always errors; a deletion or other change may be legal.
_MUST_FAIL = {"misspell", "unknown_key", "random_bytes"}


def _check(work, counter, scenario, table, target, content, kind):
    s, t = _case(work, scenario, table, target, content)
    code, _, err = _run(["check", str(s), "--costs", str(t)])
    counter["check"] = counter.get("check", 0) + 1
    _assert_clean(code, err, kind, must_fail=kind in _MUST_FAIL)
    if code == 2 and kind == "misspell" and "unknown key" in err:
        assert "did you mean" in err, err
    return code, err


# ---- the cases -------------------------------------------------------------------------
@settings(FUZZ, max_examples=240)
@given(data=st.data(), scenario=st.sampled_from(sorted(SCENARIOS)),
       table=st.sampled_from(sorted(TABLES)))
def test_scenario_mutations_check(work, fuzz_counter, data, scenario, table):
    text, kind = data.draw(data_mutation(SCENARIOS[scenario]))
    _check(work, fuzz_counter, scenario, table, "scenario", text, kind)


@settings(FUZZ, max_examples=200)
@given(data=st.data(), scenario=st.sampled_from(sorted(SCENARIOS)),
       table=st.sampled_from(sorted(TABLES)))
def test_cost_table_mutations_check(work, fuzz_counter, data, scenario, table):
    text, kind = data.draw(data_mutation(TABLES[table]))
    _check(work, fuzz_counter, scenario, table, "table", text, kind)


@settings(FUZZ, max_examples=120)
@given(data=st.data(), target=st.sampled_from(["scenario", "table"]),
       scenario=st.sampled_from(sorted(SCENARIOS)), table=st.sampled_from(sorted(TABLES)))
def test_byte_mutations_check(work, fuzz_counter, data, target, scenario, table):
    source = SCENARIOS[scenario] if target == "scenario" else TABLES[table]
    raw, kind = data.draw(text_mutation(source))
    _check(work, fuzz_counter, scenario, table, target, raw, kind)


@settings(FUZZ, max_examples=40)
@given(data=st.data(), target=st.sampled_from(["scenario", "table"]),
       table=st.sampled_from(sorted(TABLES)))
def test_mutations_optimize_leave_no_file(work, fuzz_counter, data, target, table):
    source = SCENARIOS[FAST] if target == "scenario" else TABLES[table]
    if data.draw(st.booleans()):
        content, kind = data.draw(data_mutation(source))
    else:
        content, kind = data.draw(text_mutation(source))
    s, t = _case(work, FAST, table, target, content)
    out = work / "out"
    shutil.rmtree(out, ignore_errors=True)
    code, _, err = _run(["optimize", str(s), "--costs", str(t), "--out", str(out),
                         "--quiet", "--method", "exact"])
    fuzz_counter["optimize"] = fuzz_counter.get("optimize", 0) + 1
    _assert_clean(code, err, kind, must_fail=kind in _MUST_FAIL)
    if code == 2:
        left = sorted(p.name for p in out.rglob("*")) if out.exists() else []
        assert left == [], f"{kind}: files left after an error: {left}"
    else:  # a legal mutation: a complete, finite answer
        summary = (out / "summary.json").read_text(encoding="utf-8")
        json.loads(summary)  # strict JSON: NaN / Infinity would be written as bare words
        assert "NaN" not in summary and "Infinity" not in summary
