"""Atomic writes, the output folder's rules, CSV and Markdown escaping (no search needed)."""

from __future__ import annotations

import os

import pandas as pd
import pytest

from stackopt.errors import OutputError, StackoptError
from stackopt.outputs.exports import _csv_text, csv_safe
from stackopt.outputs.files import atomic_write_bytes, atomic_write_text, inside, prepare_out_dir
from stackopt.outputs.report_render import md_escape, render_html, render_markdown


def test_atomic_write_replaces_and_leaves_no_temp(tmp_path):
    p = tmp_path / "a.txt"
    atomic_write_text(p, "one\n")
    atomic_write_text(p, "two\n")
    assert p.read_text() == "two\n"
    assert sorted(os.listdir(tmp_path)) == ["a.txt"]


def test_atomic_write_failure_keeps_old_file(tmp_path, monkeypatch):
    p = tmp_path / "a.bin"
    atomic_write_bytes(p, b"old")

    def boom(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", boom)
    with pytest.raises(OutputError, match="cannot write"):
        atomic_write_bytes(p, b"new")
    assert p.read_bytes() == b"old"
    assert sorted(os.listdir(tmp_path)) == ["a.bin"]  # the temp file is gone


def test_atomic_write_into_missing_folder_is_output_error(tmp_path):
    with pytest.raises(OutputError):
        atomic_write_text(tmp_path / "nope" / "a.txt", "x")


def test_prepare_out_dir_rules(tmp_path):
    new = tmp_path / "a" / "b"
    assert prepare_out_dir(new) == new.resolve()
    assert not new.exists()  # checked, not created: an interrupted run leaves nothing
    new.mkdir(parents=True)
    prepare_out_dir(new)  # empty: fine without force
    (new / "old.txt").write_text("x")
    with pytest.raises(OutputError) as exc:
        prepare_out_dir(new)
    msg = str(exc.value)
    assert "--force" in msg and "--out" in msg and "\n" not in msg
    assert isinstance(exc.value, StackoptError) and exc.value.exit_code == 2
    prepare_out_dir(new, force=True)


def test_prepare_out_dir_unwritable(tmp_path):
    f = tmp_path / "file"
    f.write_text("x")
    with pytest.raises(OutputError, match="not a folder"):
        prepare_out_dir(f)
    with pytest.raises(OutputError, match="cannot create|not a folder"):
        prepare_out_dir(f / "sub")  # a folder under a file cannot exist


@pytest.mark.parametrize("name", ["../x.txt", "/etc/passwd", "a/../../x", "."])
def test_inside_refuses_escapes(tmp_path, name):
    with pytest.raises(OutputError, match="outside the output folder"):
        inside(tmp_path, name)


def test_inside_refuses_symlink_out(tmp_path):
    (tmp_path / "out").mkdir()
    (tmp_path / "out" / "link").symlink_to(tmp_path)
    with pytest.raises(OutputError):
        inside(tmp_path / "out", "link/x.txt")
    assert inside(tmp_path / "out", "report.html").name == "report.html"


@pytest.mark.parametrize("cell", ["=HYPERLINK(\"http://x\",\"y\")", "+1", "-2+3", "@SUM(A1)",
                                  "\tx", "\rx"])
def test_csv_safe_neutralises_formula_cells(cell):
    # OWASP "CSV Injection": prefix cells starting with = + - @ tab CR with a quote
    assert csv_safe(cell) == "'" + cell


def test_csv_keeps_numbers_numeric():
    df = pd.DataFrame({"name": ["=cmd|' /C calc'!A0", "ok"], "margin_dB": [-3.5, 2.0],
                       "n": [-1, 2], "flag": [True, False]})
    text = _csv_text({c: df[c].to_numpy() for c in df.columns})
    lines = text.splitlines()
    assert lines[1].startswith("\"'=cmd") or lines[1].startswith("'=cmd")
    assert ",-3.5,-1,True" in lines[1]
    back = pd.read_csv(__import__("io").StringIO(text))
    assert back["margin_dB"].dtype.kind == "f" and back["n"].dtype.kind == "i"


def test_markdown_escape_blocks_html_and_markup():
    t = md_escape("<script>alert(1)</script> *x* [a](b) a|b")
    assert "<script" not in t and "&lt;script&gt;" in t
    assert "\\*x\\*" in t and "\\[a\\]" in t and "a\\|b" in t
    assert md_escape("- 3 dB").startswith("\\-")
    assert md_escape("1. x") == "1\\. x"


def test_render_escapes_every_block():
    evil = "<img src=x onerror=alert(1)>"
    blocks = [("h1", evil), ("p", evil), ("answer", evil), ("note", evil), ("ul", [evil]),
              ("table", [evil], [[evil]]), ("img", "k", evil)]
    page = render_html(blocks, {"k": b"\x89PNG"})
    assert "<img src=x" not in page
    assert page.count("&lt;img src=x") == 9  # 7 blocks; a table has a head and a cell,
    # an image an alt text and a caption
    md = render_markdown(blocks, {"k": "k.png"})
    assert "<img" not in md
    with pytest.raises(ValueError):
        render_markdown([("bogus", "x")])
