"""Names in any script reach every output; the terminal never sees escape sequences or
direction overrides from user text.

Touchstone is ASCII (IBIS Open Forum, Touchstone File Format Specification 1.1: "!"
comment lines are ASCII text), so names there are transliterated or escaped.
"""

from __future__ import annotations

import html
import json
from pathlib import Path

import pytest
import yaml

from stackopt.cli.main import main
from stackopt.cli.text import clean
from stackopt.outputs.touchstone import ascii_comment

ROOT = Path(__file__).resolve().parent.parent
NAMES = {
    "german": "Tiefpass für 2,4 GHz – Straße",
    "greek": "Φίλτρο διέλευσης χαμηλών",
    "japanese": "ローパスフィルタ 2.4GHz",
    "rtl": "filter \u202egnp.exe\u202c end",
}


def _scenario(tmp_path: Path, name: str, line: str = "rf50") -> Path:
    text = (ROOT / "scenarios" / "two_layer_only.yaml").read_text(encoding="utf-8")
    text = text.replace("name: two-layer-2g4-lowpass", f"name: {json.dumps(name)}")
    text = text.replace("{name: rf50,", f"{{name: {json.dumps(line)},")
    text = text.replace("../cost_tables/quickturn.yaml",
                        str(ROOT / "cost_tables" / "quickturn.yaml"))
    p = tmp_path / "s.yaml"
    p.write_text(text, encoding="utf-8")
    return p


@pytest.mark.slow
@pytest.mark.parametrize("script", list(NAMES))
def test_non_ascii_scenario_name_reaches_every_output(tmp_path, capsys, script):
    name = NAMES[script]
    out = tmp_path / "out"
    assert main(["optimize", str(_scenario(tmp_path, name, line=name[:12])),
                 "--out", str(out)]) == 0
    term = capsys.readouterr()
    assert "\u202e" not in term.out + term.err and "\x1b" not in term.out + term.err
    assert clean(name) in term.out
    texts = {p.name: p.read_bytes() for p in out.iterdir() if p.suffix in
             (".json", ".csv", ".md", ".html", ".yaml", ".s2p")}
    for data in texts.values():
        data.decode("utf-8")  # every text file is UTF-8
    assert json.loads(texts["summary.json"])["scenario"] == name
    assert name in texts["report.md"].decode("utf-8")
    assert name in html.unescape(texts["report.html"].decode("utf-8"))
    sel = yaml.safe_load(texts["selected.yaml"].decode("utf-8"))
    assert sel["scenario"] == name
    assert name[:12] in [ln["line"] for ln in sel["controlled_impedance"]]
    assert f"{name[:12]}@L1" in [ln["name"] for ln in sel["controlled_impedance"]]
    s2p = texts["selected.s2p"]
    assert s2p.isascii() and ascii_comment(name).encode() in s2p


def test_touchstone_comment_is_ascii_and_keeps_the_name():
    assert ascii_comment("Tiefpass für 2,4 GHz, Straße") == "Tiefpass fur 2,4 GHz, Strasse"
    assert ascii_comment("Φ") == "\\u03a6"  # escaped, not lost
    assert ascii_comment("a\u202eb\x1b[2J") == "a\\u202eb\\u001b[2J"


def test_check_prints_no_escape_sequences(tmp_path, capsys):
    bad = "demo \x1b[2J\x1b]0;title\x07 \u202eevil\u202c \x9b31m"
    p = _scenario(tmp_path, bad)
    assert main(["check", str(p)]) == 0
    out = capsys.readouterr().out
    assert not any(c in out for c in "\x1b\x07\u202e\u202c\x9b")
    assert "demo" in out and "evil" in out


def test_clean_strips_controls_keeps_scripts():
    assert clean("a\x1b[31mred\x1b[0m b") == "ared b"
    assert clean("für Φ ロー") == "für Φ ロー"
    assert clean("x\ny") == "x?y" and clean("x\ny", keep_newlines=True) == "x\ny"
    assert clean("r\u202el") == "r?l"


def test_error_about_user_text_is_one_clean_line(tmp_path, capsys):
    p = tmp_path / "s.yaml"
    p.write_text('name: "x\\e[31m"\nboard: 3\n', encoding="utf-8")
    assert main(["check", str(p)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "\x1b" not in err
