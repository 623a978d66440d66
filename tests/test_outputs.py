"""write_all on the demo search: every file, valid images, no network references, escaping,
CSV injection, determinism, all-or-nothing writes, the stackup file read back."""

from __future__ import annotations

import io
import json
import os
import re

import numpy as np
import pandas as pd
import pytest
from outputs_support import DEMO, ROOT, renamed, run, second_run

from stackopt.errors import OutputError
from stackopt.outputs.bundle import FILES, render_all, write_all
from stackopt.outputs.exports import candidates_csv, selected_yaml, summary_json
from stackopt.outputs.facts import selected_index
from stackopt.outputs.report import report_html, report_markdown
from stackopt.outputs.resultdir import MANIFEST


@pytest.fixture(scope="module")
def demo_result():
    return run()


@pytest.fixture(scope="module")
def demo_out(demo_result, tmp_path_factory):
    out = tmp_path_factory.mktemp("outputs") / "demo"
    return out, write_all(demo_result, out)


PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), section 5.2


def test_every_file_written(demo_out):
    out, paths = demo_out
    expected = [f for f in FILES if f != "quantities.png"]  # only with a quantity sweep
    assert [p.name for p in paths if p.parent == out] == expected
    stackups = [p for p in paths if p.parent == out / "stackups"]
    assert stackups and all(p.suffix == ".yaml" for p in stackups)
    assert len(stackups) + len(expected) == len(paths)
    # no staging folder or temp file left; the manifest says what stackopt wrote
    assert sorted(os.listdir(out)) == sorted([*expected, MANIFEST, "stackups"])
    assert not [p for p in os.listdir(out.parent) if ".stackopt-" in p]
    for p in paths:
        assert p.stat().st_size > 0


def test_pngs_are_valid(demo_out):
    out, paths = demo_out
    for name in (p.name for p in paths):
        if name.endswith(".png"):
            data = (out / name).read_bytes()
            assert data.startswith(PNG_SIGNATURE), name
            assert data[12:16] == b"IHDR" and data[-8:-4] == b"IEND", name
    from matplotlib.image import imread

    img = imread(out / "pareto.png")
    assert img.shape[0] > 300 and img.shape[1] > 500


def test_summary_contract(demo_out, demo_result):
    out, _ = demo_out
    data = json.loads((out / "summary.json").read_text())
    for key in ("scenario", "currency", "quantity", "method", "space_size", "evaluated",
                "front", "picks"):
        assert key in data
    assert set(data["picks"]) == {"cheapest_robust", "cheapest_meeting_requirements",
                                  "cheapest_two_layer",
                                  "best_two_layer", "best_overall"}
    assert len(data["front"]) == int(demo_result.on_front.sum())


_URL_ATTR = re.compile(r"""(?:src|href|action|srcset)\s*=\s*["']?\s*([^"'\s>]+)""", re.I)


def test_html_is_standalone(demo_out):
    html = (demo_out[0] / "report.html").read_text()
    refs = _URL_ATTR.findall(html)
    assert refs and all(r.startswith("data:image/png;base64,") for r in refs)
    assert "http://" not in html and "https://" not in html
    assert "url(" not in html and "@import" not in html and "<script" not in html.lower()
    assert html.count("<img ") == 7  # with the mitigation ladder's and robustness charts


def test_markdown_links_local_images(demo_out):
    md = (demo_out[0] / "report.md").read_text()
    imgs = re.findall(r"!\[[^\]]*\]\(([^)]+)\)", md)
    assert sorted(imgs) == sorted(["pareto.png", "response.png", "stackups.png", "costs.png",
                                   "prepregs.png", "mitigations.png", "robustness.png"])
    assert "http" not in md


def test_first_screen_answers_the_question(demo_result):
    md = report_markdown(demo_result)
    head = md[:md.index("pareto.png")]
    ev = demo_result.evaluation
    p = demo_result.picks
    d = ev.unit_cost[p["cheapest_meeting_requirements"]] - ev.unit_cost[p["cheapest_two_layer"]]
    assert "worth it?" in head
    assert f"{d:,.2f} EUR more per board" in head
    for r in demo_result.problem.scenario.requirements:
        assert r.label in head
    assert "per dB" in head or "each dB" in head
    for word in ("Risks", "Recommended stackup", "Model spread", "Assumptions", "Cautions",
                 "exact search", "stackups in the design space", "evaluated"):
        assert word in md


def test_script_scenario_name_is_escaped(demo_result):
    r = renamed(demo_result, "<script>alert(1)</script>")
    html = report_html(r, {})
    assert "<script" not in html.lower()
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    md = report_markdown(r)
    assert "<script" not in md.lower()


def test_formula_material_is_neutralised_in_csv(tmp_path):
    # a cost table whose glass style is a spreadsheet formula (invented demo table, edited)
    text = (ROOT / "cost_tables" / "quickturn.yaml").read_text()
    evil = '=HYPERLINK(""http://x"",""y"")'
    assert 'glass: "2116"' in text
    (tmp_path / "t.yaml").write_text(text.replace('glass: "2116"', "glass: '" + evil.replace(
        '""', '"') + "'"))
    import stackopt
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario

    res = stackopt.optimize(load_scenario(DEMO), load_cost_table(tmp_path / "t.yaml"))
    csv = candidates_csv(res)
    rows = list(pd.read_csv(io.StringIO(csv), dtype=str)["materials"])
    bad = [m for m in rows if m.startswith("=HYPERLINK")]
    good = [m for m in rows if m.startswith("'=HYPERLINK")]
    assert not bad and good
    assert not re.search(r"(^|,)=HYPERLINK", csv, re.M)


def test_numeric_columns_stay_numeric(demo_result):
    back = pd.read_csv(io.StringIO(candidates_csv(demo_result)))
    assert back["margin_dB"].dtype.kind == "f" and (back["margin_dB"] < 0).any()
    assert back["layers"].dtype.kind == "i"


def test_two_runs_byte_identical(demo_result):
    other = second_run()  # a second, independent search
    assert candidates_csv(other) == candidates_csv(demo_result)
    a, b = render_all(demo_result), render_all(other)
    for name in a:
        if name != "summary.json":
            assert a[name] == b[name], name
    sa, sb = (json.loads(x) for x in (a["summary.json"], b["summary.json"]))
    for s in (sa, sb):
        s["stats"].pop("seconds_search", None)
    assert sa == sb


def test_summary_json_byte_identical(demo_result):
    assert summary_json(second_run()) == summary_json(demo_result)


def test_refuses_overwrite_without_force(demo_result, tmp_path):
    out = tmp_path / "o"
    write_all(demo_result, out)
    before = (out / "summary.json").read_bytes()
    with pytest.raises(OutputError, match="--force"):
        write_all(demo_result, out)
    assert (out / "summary.json").read_bytes() == before
    extra = {"inputs": {"scenario_sha256": "0" * 64}}
    write_all(demo_result, out, force=True, extra_summary=extra)
    assert json.loads((out / "summary.json").read_text())["inputs"] == extra["inputs"]


def test_failure_leaves_no_file(demo_result, tmp_path, monkeypatch):
    from stackopt.outputs import resultdir

    def full(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(resultdir, "_carry_foreign", full)
    monkeypatch.setattr(resultdir, "_swap", full)
    with pytest.raises(OutputError, match="the folder is as it was"):
        write_all(demo_result, tmp_path / "o")
    assert os.listdir(tmp_path) == []


def test_selected_yaml_reads_back(demo_result, tmp_path):
    from stackopt.inputs.stackup_file import load_selected, load_selected_yaml

    i = selected_index(demo_result)
    p = tmp_path / "selected.yaml"
    p.write_text(selected_yaml(demo_result))
    text = p.read_text()
    assert text.startswith("# Board stackup chosen by stackopt. ESTIMATE")
    st, ref = load_selected_yaml(p), demo_result.stackup(i)
    assert st.n_layers == ref.n_layers
    assert [c.role for c in st.copper] == [c.role for c in ref.copper]
    assert [d.material for d in st.dielectrics] == [d.material for d in ref.dielectrics]
    assert np.isclose(st.thickness, ref.thickness, rtol=1e-5)
    assert np.isclose(st.via_height(), ref.via_height(), rtol=1e-5)
    sel = load_selected(p)
    assert np.isclose(sel.drill, demo_result.evaluation.geometry.drill[i])
    assert sel.vias_per_ground == int(demo_result.evaluation.geometry.vias[i])


def test_selected_yaml_errors_are_one_line(tmp_path):
    from stackopt.errors import InputError
    from stackopt.inputs.stackup_file import load_selected

    p = tmp_path / "s.yaml"
    p.write_text("layers:\n  - {kind: copper, role: signal, thickness: 35 um}\n"
                 "  - {kind: prepreg, material: x, thickness: 0.1 mm, dk: 43}\n"
                 "  - {kind: copper, role: ground, thickness: 35 um}\n")
    with pytest.raises(InputError) as exc:
        load_selected(p)
    msg = str(exc.value)
    assert "\n" not in msg and "s.yaml:3" in msg and "Dk 43" in msg
    p.write_text("layers:\n  - {kind: copper, role: signal, thikness: 35 um}\n")
    with pytest.raises(InputError, match="did you mean 'thickness'"):
        load_selected(p)
