"""Exports: candidate tables as CSV, the recommended stackup as YAML, the summary as JSON.

CSV cells are safe to open in a spreadsheet: a *text* cell that begins with ``=``, ``+``,
``-``, ``@``, a tab or a carriage return gets a leading apostrophe, so it is shown, not run
as a formula (the OWASP "CSV injection" advice). Numeric columns stay numbers (a negative
margin is not text).
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping
from typing import TYPE_CHECKING

import numpy as np
import yaml

from stackopt.outputs.facts import selected_index
from stackopt.outputs.report_sections import OZ
from stackopt.rows import factorize
from stackopt.search.table import Template, candidate_columns

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["candidates_csv", "csv_blocks", "front_csv", "mitigations_csv", "selected_yaml",
           "stackup_files", "selected_document",
           "summary_json", "csv_safe", "FORMAT", "json_clean"]

#: Format tag of :func:`selected_yaml` files (read back by
#: :func:`stackopt.inputs.stackup_file.load_selected_yaml`).
FORMAT = "stackopt-stackup/1"
_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
_BOOL_TEXT = np.array(["False", "True"], dtype=object)


def csv_safe(value: object) -> object:
    """Neutralise one text cell (numbers, booleans and missing values pass unchanged)."""
    if isinstance(value, str) and value.startswith(_TRIGGERS):
        return "'" + value
    return value


#: Rows of the candidates table built and formatted at a time (bounds the memory of a
#: large result's CSV to one block's strings besides the text itself).
CSV_BLOCK = 50_000


def _cell(value: object) -> str:
    """One text cell as CSV writes it: empty for a missing value, neutralised
    (:func:`csv_safe`) and quoted where it holds a comma, quote or line break."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    text = str(csv_safe(value) if isinstance(value, str) else value)
    if any(ch in text for ch in ',"\n\r'):
        return '"' + text.replace('"', '""') + '"'
    return text


def _column(values: np.ndarray) -> list[str]:
    """One column's cells as CSV text, in the layout of pandas' ``to_csv`` with
    ``float_format="%.10g"``: floats as ``%.10g`` (missing: empty), integers in decimal,
    booleans as True/False, anything else as text cells (:func:`_cell`). A column of few
    distinct values (copper, drill, thicknesses, costs, layer counts) is formatted once
    per value (:func:`~stackopt.search.table.factorize`)."""
    kind = values.dtype.kind
    if kind == "b":
        return _BOOL_TEXT[values.astype(np.intp)].tolist()
    if kind in "fiu" and values.dtype.itemsize == 8:
        # grouped by bit pattern, so -0.0 and 0.0 and every NaN keep their own text
        codes, bits = factorize(values.view(np.int64))
        if 4 * len(bits) < len(values):
            uniq = np.asarray(bits, dtype=np.int64).view(values.dtype)
            return np.array(_texts(uniq), dtype=object)[codes].tolist()
    if kind in "fiu":
        return _texts(values)
    codes, uniques = factorize(values.astype(object, copy=False))
    cells = np.array([_cell(v) for v in uniques.tolist()], dtype=object)
    return cells[codes].tolist()  # each distinct text handled once


def _texts(values: np.ndarray) -> list[str]:
    """Numbers as CSV text: floats ``%.10g`` (NaN: empty), integers in decimal."""
    if values.dtype.kind == "f":
        return ["" if x != x else f"{x:.10g}" for x in values.tolist()]  # x != x: NaN
    return [str(x) for x in values.tolist()]


def _csv_text(columns: Mapping[str, np.ndarray | Template], header: bool = True) -> str:
    """Columns (arrays of N, or a :class:`~stackopt.search.table.Template`, whose cells
    need no quoting) as CSV text: the layout pandas' ``to_csv`` gives with
    ``float_format="%.10g"``, each column's cells made as text and each row joined once
    (about six times faster than pandas for the large tables of candidates)."""
    cells = [v.cells() if isinstance(v, Template) else _column(v) for v in columns.values()]
    head = ",".join(_cell(c) for c in columns) + "\n" if header else ""
    if not cells or not len(cells[0]):
        return head
    return head + "\n".join(map(",".join, zip(*cells, strict=True))) + "\n"


def csv_blocks(result: Result) -> int:
    """Blocks of :data:`CSV_BLOCK` rows in the candidates table (at least one)."""
    return max(1, -(-result.n // CSV_BLOCK))


def candidates_csv(result: Result, block: int | None = None) -> str:
    """Every evaluated candidate, one row each (``on_front`` flags the front), built and
    formatted :data:`CSV_BLOCK` rows at a time; ``block`` gives that block's text alone
    (the first with the header), so blocks can be formatted on several cores and joined."""
    blocks = range(csv_blocks(result)) if block is None else [block]
    return "".join(_csv_text(candidate_columns(
        result, np.arange(k * CSV_BLOCK, min((k + 1) * CSV_BLOCK, result.n))),
        header=(k == 0)) for k in blocks)


def front_csv(result: Result) -> str:
    """The front, by increasing unit cost."""
    return _csv_text(candidate_columns(result, np.asarray(result.front_order, dtype=np.int64)))


def mitigations_csv(ladder) -> str:
    """The mitigation ladder, the two-layer Pareto set and the four-layer board
    (:meth:`stackopt.search.ladder.Ladder.frame`, ``set`` column tells which), formatted
    a part at a time from its columns (a column a part lacks is empty there), without a
    data frame: the texts are written where pandas is not loaded."""
    parts = ladder.parts()
    names = ["set", *dict.fromkeys(c for _, cols in parts for c in cols)]
    text = ",".join(_cell(c) for c in names) + "\n"
    for name, cols in parts:
        n = len(next(iter(cols.values()))) if cols else 0
        missing = np.full(n, None, dtype=object)  # written as empty cells
        text += _csv_text({c: np.full(n, name, dtype=object) if c == "set" else
                           np.asarray(cols[c]) if c in cols else missing for c in names},
                          header=False)
    return text


def _q(x: float, unit: str, scale: float, digits: int = 6) -> str:
    return f"{x / scale:.{digits}g} {unit}"


def _round(x: float | None, sig: int) -> float | None:
    return None if x is None else float(f"{x:.{sig}g}")


def selected_document(result: Result, i: int | None = None) -> dict:
    """The recommended stackup (default: :func:`selected_index`) as a plain dict, layers
    top to bottom, quantities as strings with units."""
    i = selected_index(result) if i is None else int(i)
    if i is None:
        return {"format": FORMAT, "note": "no candidate was evaluated", "layers": []}
    rec = result.record(i)
    st = result.stackup(i)
    tab = result.problem.table
    tol = tab.capabilities.thickness_tolerance
    layers = []
    for r in st.to_records():
        t = r["thickness_m"]
        if r["kind"] == "copper":
            layers.append({"name": r["name"], "kind": "copper", "role": r["role"],
                           "thickness": _q(t, "um", 1e-6, 4),
                           "copper_weight": f"{t / OZ:.3g} oz"})
        else:
            layers.append({"kind": r["kind"], "material": r["material"],
                           "plies": int(r["plies"]), "thickness": _q(t, "mm", 1e-3),
                           "dk": round(float(r["er"]), 4), "df": round(float(r["df"]), 5)})
    lines = []
    mask = result.problem.solder_mask
    for r in result.lines(i):
        w = r.width_field_m if r.width_field_m is not None else r.width_m
        entry = {"name": r.name, "line": r.line, "type": r.type, "layer": r.layer,
                 ("differential" if r.differential else "impedance"):
                 f"{r.target_ohm:g} ohm",
                 "width": None if w is None else _q(w, "mm", 1e-3, 4)}
        if r.spacing_m is not None:
            entry["spacing"] = _q(r.spacing_m, "mm", 1e-3, 4)
        if r.gap_m is not None:
            entry["gap"] = _q(r.gap_m, "mm", 1e-3, 4)
        entry["width_closed_form"] = None if r.width_m is None else _q(r.width_m, "mm",
                                                                       1e-3, 4)
        entry["solver"] = "field" if r.width_field_m is not None else "closed-form"
        lines.append(entry)
    return {
        "format": FORMAT,
        "note": "ESTIMATE from stackopt's closed-form models: confirm the stackup, pressed "
                "thicknesses and controlled-impedance widths with the fab before release.",
        "scenario": result.problem.scenario.name,
        "candidate": rec["id"],
        "meets_requirements": rec["meets_requirements"],
        "fab_table": tab.fab,
        "finished_thickness": _q(st.thickness, "mm", 1e-3, 4),
        "thickness_tolerance": f"{tol * 100:g} %",
        "drill": _q(rec["drill_m"], "mm", 1e-3, 4),
        "vias_per_ground": rec["vias_per_ground"],
        "mitigations": rec["mitigations"],
        "unit_cost": _round(rec["unit_cost"], 6),
        "currency": tab.currency,
        "margin_dB": _round(rec["margin_dB"], 4),
        "layers": layers,
        "controlled_impedance": lines,
        **({"solder_mask": {"thickness": _q(mask.thickness, "um", 1e-6, 3), "dk": mask.er}}
           if mask is not None else {}),
    }


_HEADER = ("# Board stackup chosen by stackopt. ESTIMATE: confirm with the fab before release.\n"
           "# Layers top (component side) to bottom. Read back with\n"
           "#   stackopt eval SCENARIO --stackup selected.yaml\n")


def selected_yaml(result: Result, i: int | None = None) -> str:
    """The recommended stackup as YAML, complete enough for a fab drawing (see
    :func:`selected_document`)."""
    return _HEADER + yaml.safe_dump(selected_document(result, i), sort_keys=False,
                                    allow_unicode=True, width=100)


def stackup_files(result: Result) -> dict[str, str]:
    """``stackups/<ID>.yaml`` for every candidate on the front and every pick, in the
    stackup file format that ``stackopt eval --stackup`` reads, each naming its
    ``candidate: <ID>`` (by id, front first by increasing cost, then the picks)."""
    idx = [int(i) for i in result.front_order]
    idx += [int(i) for i in result.picks.values() if i is not None and int(i) not in idx]
    out = {}
    for i in idx:  # the front and the picks: tens of files at most
        cid = result.ids[i]
        head = (f"# Stackup of candidate {cid} from stackopt. ESTIMATE: confirm with the fab "
                "before release.\n# Layers top (component side) to bottom. Read back with\n"
                f"#   stackopt eval SCENARIO --stackup stackups/{cid}.yaml\n")
        out[f"stackups/{cid}.yaml"] = head + yaml.safe_dump(
            selected_document(result, i), sort_keys=False, allow_unicode=True, width=100)
    return out


def json_clean(x: object) -> object:
    """JSON-ready copy: numpy scalars and arrays to Python, non-finite floats to None."""
    if isinstance(x, dict):
        return {str(k): json_clean(v) for k, v in x.items()}
    if isinstance(x, list | tuple):
        return [json_clean(v) for v in x]
    if isinstance(x, np.ndarray):
        return json_clean(x.tolist())
    if isinstance(x, np.bool_):
        return bool(x)
    if isinstance(x, np.integer):
        return int(x)
    if isinstance(x, float | np.floating):
        v = float(x)
        return v if math.isfinite(v) else None
    return x


def summary_json(result: Result, extra: dict | None = None) -> str:
    """``result.to_summary(extra)`` as JSON (keys in contract order, no NaN/inf: they
    become ``null``), deterministic."""
    data = json_clean(result.to_summary(extra))
    return json.dumps(data, sort_keys=False, indent=2, allow_nan=False,
                      ensure_ascii=False) + "\n"
