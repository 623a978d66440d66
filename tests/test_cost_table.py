"""Cost tables: demo tables load and are usable; bad input gives one located line."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from stackopt.cost import PriceBatch, price
from stackopt.errors import InputError
from stackopt.inputs.costtable import load_cost_table, load_demo_cost_table, read_price_csv
from stackopt.model.costtable import BoardOrder

REPO = Path(__file__).resolve().parents[1]
TABLES = sorted((REPO / "cost_tables").glob("*.yaml"))
QUICK_TEXT = (REPO / "cost_tables" / "quickturn.yaml").read_text()
VOLUME_TEXT = (REPO / "cost_tables" / "volume.yaml").read_text()
CSV_TEXT = (REPO / "cost_tables" / "volume_base.csv").read_text()
MM = 1e-3

# FR-4 prepreg pressed ply thickness (mm) and Dk near 1 GHz by glass style: the ranges in
# /work/shared/PHYSICS.md, quoted from memory (common practice, no source).
PREPREG_RANGES = {"106": ((0.045, 0.06), (3.5, 3.9)), "1080": ((0.06, 0.08), (3.7, 4.1)),
                  "2116": ((0.10, 0.13), (4.0, 4.4)), "7628": ((0.16, 0.21), (4.2, 4.7))}


def test_there_are_at_least_two_demo_tables():
    assert {p.name for p in TABLES} >= {"quickturn.yaml", "volume.yaml"}


@pytest.mark.parametrize("path", TABLES, ids=lambda p: p.name)
def test_demo_table_loads_and_is_labelled_invented(path):
    t = load_cost_table(path)
    assert t.invented is True
    assert "INVENTED EXAMPLE DATA" in path.read_text().splitlines()[0]
    assert "(invented)" in t.fab


@pytest.mark.parametrize("path", TABLES, ids=lambda p: p.name)
def test_every_material_is_usable_by_the_search(path):
    t = load_cost_table(path)
    cat = t.materials_list()
    assert len({m.id for m in cat}) == len(cat)
    assert [m.kind for m in cat] == sorted((m.kind for m in cat), key="prepreg core".split().index)
    for m in cat:
        assert m.thickness >= t.capabilities.min_dielectric, m.id   # buildable on its own
        assert 3.0 <= m.dk <= 5.0, m.id                  # FR-4 class (PHYSICS.md, memory)
        assert 0.0 <= m.df < 0.05, m.id
        if m.kind == "prepreg":
            (tlo, thi), (dlo, dhi) = PREPREG_RANGES[m.glass]
            assert tlo * MM <= m.thickness <= thi * MM and dlo <= m.dk <= dhi, m.id
    # each catalogue item alone, priced on a legal board, is finite and violates nothing
    n = len(cat)
    batch = PriceBatch.broadcast(layers=2, material_counts=np.eye(n, dtype=int),
                                 copper=34.3e-6, min_drill=0.3 * MM, thickness=1.6 * MM,
                                 min_dielectric=0.1 * MM)
    r = price(t, BoardOrder(width="80 mm", height="60 mm", quantity=20), batch)
    assert np.all(np.isfinite(r.unit_cost)) and np.all(r.unit_cost > 0)
    assert r.feasible.all()


@pytest.mark.parametrize("path", TABLES, ids=lambda p: p.name)
def test_two_layer_boards_of_standard_thickness_exist(path):
    # core + two 1 oz foils (2 x 34.3 um) within the fab's tolerance of 0.8/1.0/1.2/1.6 mm
    t = load_cost_table(path)
    cores = np.array([m.thickness for m in t.materials_list() if m.kind == "core"])
    finished = cores + 2 * 34.3e-6
    tol = t.capabilities.thickness_tolerance
    for std in (0.8, 1.0, 1.2, 1.6):
        assert np.any(np.abs(finished - std * MM) <= tol * std * MM), std


def test_volume_is_the_volume_shape_and_quickturn_the_prototype_shape():
    q, v = load_cost_table(TABLES[0]), load_cost_table(TABLES[1])
    assert q.base_price.basis == "per_m2" and v.base_price.basis == "per_panel"
    # volume: 4-layer within 25 % of 2-layer at every break; quick-turn: at least double
    for j in range(len(v.base_price.quantities)):
        assert v.base_price.layers[4][j] <= 1.25 * v.base_price.layers[2][j]
    for j in range(len(q.base_price.quantities)):
        assert q.base_price.layers[4][j] >= 2 * q.base_price.layers[2][j]
    assert v.setup[2] > q.setup[2] and v.lead_time[2] > q.lead_time[2]
    assert v.max_layers == 10 and q.max_layers == 8


def test_packaged_demo_is_the_quickturn_table_byte_for_byte():
    packaged = REPO / "stackopt" / "data" / "demo_costs.yaml"
    assert packaged.read_bytes() == (REPO / "cost_tables" / "quickturn.yaml").read_bytes()
    assert load_demo_cost_table() == load_cost_table(TABLES[0])


def test_csv_matrix_equals_the_inline_form(tmp_path):
    csv = read_price_csv(REPO / "cost_tables" / "volume_base.csv")
    assert csv.quantities == [1, 100, 500, 1000, 5000, 10000]
    assert csv.layers[4] == [115, 96, 75, 66, 58, 53]
    assert csv.row_lines[2] == 4                        # two comment lines, then the header


# ---- bad input: one line, file, line, key path, fix ----------------------------------------
def _load_bad(tmp_path, text, name="bad.yaml", csv=None):
    p = tmp_path / name
    p.write_text(text)
    if csv is not None:
        (tmp_path / "volume_base.csv").write_text(csv)
    with pytest.raises(InputError) as info:
        load_cost_table(p)
    msg = str(info.value)
    assert "\n" not in msg
    assert "Traceback" not in msg
    return info.value, msg


def _line_of(text, needle):
    return next(i + 1 for i, s in enumerate(text.splitlines()) if needle in s)


def _sub(old, new, text=QUICK_TEXT):
    assert old in text, old
    return text.replace(old, new, 1)


# (change to the quick-turn text, key path, words in the message, the line it points at)
YAML_CASES = {
    "missing currency": (("currency: EUR\n", ""), "currency", "required key is missing",
                         None),
    "lowercase currency": (("currency: EUR", "currency: eur"), "currency", "three-letter",
                           "currency:"),
    "negative price": (("2: [900, 700", "2: [900, -700"), "base_price.layers[2][1]",
                       "must not be negative", "2: [900, -700"),
    "negative adder": (("via_in_pad: {per_panel: 25", "via_in_pad: {per_panel: -25"),
                       "features.via_in_pad.per_panel", "must not be negative", "via_in_pad:"),
    "breaks not increasing": (("quantities: [1, 5, 10, 25", "quantities: [1, 5, 5, 25"),
                              "base_price.quantities[2]", "does not increase", "quantities:"),
    "price rising with quantity": (("4: [2400, 1900, 1500", "4: [2400, 1900, 1950"),
                                   "base_price.layers[4][2]", "rises", "4: [2400"),
    "layer count with no price": (("setup: {2: 30,", "setup: {3: 45, 2: 30,"), "setup[3]",
                                  "layer count 3 has no base price", "setup:"),
    "priced layer count without lead time": (
        ("lead_time: {2: 3, 4: 5, 6: 7, 8: 8}", "lead_time: {2: 3, 4: 5, 8: 8}"),
        "base_price.layers[6]", "no lead_time for 6 layers", "6: [4200"),
    "material without a thickness": (("- {thickness: 0.36 mm, dk: 4.5", "- {dk: 4.5"),
                                     "materials.cores[4].thickness", "required key is missing",
                                     "- {dk: 4.5"),
    "unknown key": (("edge_margin: 10 mm", "edge_margn: 10 mm"), "panel.edge_margn",
                    "unknown key 'edge_margn' (did you mean 'edge_margin'?)", "edge_margn"),
    "unknown top-level key": (("notes:", "discount: 10\nnotes:"), "discount", "unknown key",
                              "discount:"),
    "heavier copper cheaper": (("{weight: 1 oz, per_layer: 0}", "{weight: 1 oz, per_layer: 5}"),
                               "copper[2].per_layer", "must not cost less", "2 oz"),
    "drill rows short of min drill": (("min_drill: 0.2 mm\n  max_aspect",
                                       "min_drill: 0.15 mm\n  max_aspect"),
                                      "capabilities.min_drill", "0.15 mm", "min_drill: 0.15"),
}


@pytest.mark.parametrize("case", YAML_CASES, ids=str)
def test_bad_yaml_gives_one_located_line(tmp_path, case):
    (old, new), key, words, line_of = YAML_CASES[case]
    text = _sub(old, new)
    err, msg = _load_bad(tmp_path, text)
    assert err.key == key and words in msg and "bad.yaml" in msg, msg
    assert err.fix, msg
    if line_of is not None:
        assert err.line == _line_of(text, line_of), msg
    assert f"bad.yaml:{err.line}:" in msg


def test_csv_bad_cell_names_file_row_and_column(tmp_path):
    csv = CSV_TEXT.replace("4,115,96,75,", "4,115,96,seventy,")
    err, msg = _load_bad(tmp_path, VOLUME_TEXT, "volume.yaml", csv)
    assert err.file.endswith("volume_base.csv") and err.line == _line_of(csv, "4,115")
    assert err.key == "row '4', column '500'" and "not a number" in msg


def test_csv_price_rising_is_located_in_the_csv(tmp_path):
    csv = CSV_TEXT.replace("6,165,138,108,", "6,165,138,140,")
    err, msg = _load_bad(tmp_path, VOLUME_TEXT, "volume.yaml", csv)
    assert err.file.endswith("volume_base.csv") and err.line == _line_of(csv, "6,165")
    assert err.key == "row '6', column '500'" and "rises" in msg


def test_csv_negative_and_empty_cells(tmp_path):
    csv = CSV_TEXT.replace("8,220,", "8,-220,")
    err, msg = _load_bad(tmp_path, VOLUME_TEXT, "volume.yaml", csv)
    assert err.key == "row '8', column '1'" and "negative" in msg
    csv = CSV_TEXT.replace("10,285,240,", "10,285,,")
    err, msg = _load_bad(tmp_path, VOLUME_TEXT, "volume.yaml", csv)
    assert err.key == "row '10', column '100'" and "no price for 10 layers" in msg


def test_csv_breaks_not_increasing_and_missing_file(tmp_path):
    csv = CSV_TEXT.replace("layers,1,100,500", "layers,1,500,500")
    err, msg = _load_bad(tmp_path, VOLUME_TEXT, "volume.yaml", csv)
    assert err.file.endswith("volume_base.csv") and "does not increase" in msg
    assert err.line == _line_of(csv, "layers,")
    p = tmp_path / "nocsv"
    p.mkdir()
    err, msg = _load_bad(p, VOLUME_TEXT, "volume.yaml")
    assert "price CSV not found" in msg and "volume_base.csv" in msg


def _doc_blocks(lang):
    text = (REPO / "docs" / "cost_tables.md").read_text()
    return [b.split("\n", 1)[1] for b in text.split("```")[1::2] if b.startswith(lang)]


def test_the_documented_example_loads_and_prices_as_documented(tmp_path):
    p = tmp_path / "mine.yaml"
    p.write_text(_doc_blocks("yaml")[0])
    t = load_cost_table(p)
    m = np.zeros(len(t.materials_list()), int)
    m[t.material_index("pp-2116")] = 4
    m[t.material_index("core-1.5")] = 1           # the doc example lists no 1.1 mm core
    batch = PriceBatch.broadcast(layers=4, material_counts=m, copper=34.3e-6,
                                 min_drill=0.25 * MM, thickness=1.6 * MM,
                                 min_dielectric=0.115 * MM, impedance_control=True)
    r = price(t, BoardOrder(width="50 mm", height="40 mm", quantity=10), batch)
    # as the worked example, with the 1.5 mm core (12.80) for the 1.1 mm one (10.60):
    # 3.00 + (4 * 1.10 + 12.80) / 50 + 0.10 + 4.00 + 6.00 = 13.444
    assert r.unit_cost[0] == pytest.approx(3.0 + 17.2 / 50 + 0.1 + 4.0 + 6.0)


def test_the_documented_python_snippet_runs():
    code = _doc_blocks("python")[0]
    exec(compile(code.replace('"cost_tables/', f'"{REPO}/cost_tables/'), "doc", "exec"), {})
