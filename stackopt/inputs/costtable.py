"""Read a fab cost table: YAML, optionally with its base-price matrix in a CSV beside it.

Every mistake becomes a one-line :class:`~stackopt.errors.InputError` naming the file,
line, key path (or CSV row and column) and the fix. The format is in docs/cost_tables.md.
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass, field
from importlib.resources import as_file, files
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from stackopt.errors import InputError
from stackopt.inputs.sanity import check_cost_table
from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import Document, load_yaml
from stackopt.model.costtable import CostTable, TableRuleError

__all__ = ["load_cost_table", "load_demo_cost_table", "read_price_csv", "DEMO_COST_TABLE"]

#: File name of the built-in demo table inside the ``stackopt.data`` package.
DEMO_COST_TABLE = "demo_costs.yaml"


@dataclass(frozen=True)
class PriceCsv:
    """A base-price matrix read from CSV, with the line of every row for error messages."""

    file: str
    quantities: list[int]
    layers: dict[int, list[float]]
    header_line: int
    row_lines: dict[int, int] = field(default_factory=dict)

    def error(self, message: str, loc: list[Any], fix: str | None) -> InputError:
        """Locate an error at ``base_price.layers[n][j]`` / ``quantities[j]`` in the CSV."""
        rest = loc[2:]
        if loc[1] == "quantities":
            j = rest[0] if rest and isinstance(rest[0], int) else None
            col = f", column '{self.quantities[j]}'" if j is not None else ""
            return InputError(message, file=self.file, line=self.header_line,
                              key=f"header{col}", fix=fix)
        n = rest[0] if rest else None
        line = self.row_lines.get(n, self.header_line) if isinstance(n, int) else None
        key = f"row '{n}'" if n is not None else "rows"
        if len(rest) > 1 and isinstance(rest[1], int) and rest[1] < len(self.quantities):
            key += f", column '{self.quantities[rest[1]]}'"
        return InputError(message, file=self.file, line=line, key=key, fix=fix)


def _cell_int(text: str, what: str, file: str, line: int, key: str) -> int:
    try:
        return int(text)
    except ValueError:
        shown = repr(text) if len(text) <= 40 else repr(text[:37] + "...")
        raise InputError(f"{what} {shown} is not a whole number", file=file, line=line,
                         key=key, fix="write a plain integer such as 4 or 100") from None


def read_price_csv(path: str | Path) -> PriceCsv:
    """Read a base-price CSV: header ``layers,<break>,<break>...``, one row per layer count.

    Blank lines and lines starting with ``#`` are skipped. Cells are plain numbers in the
    table's currency; an empty cell is an error (every layer count needs every price).
    """
    p = Path(path)
    if p.exists() and not p.is_file():
        raise InputError("the price CSV is not a regular file", file=p,
                         fix="name a .csv file beside the YAML")
    if p.is_file() and p.stat().st_size > 20_000_000:
        raise InputError("the price CSV is larger than 20 MB", file=p,
                         fix="a price matrix has a row per layer count; check the path")
    try:
        text = p.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise InputError("price CSV not found", file=p,
                         fix="put the CSV beside the YAML or correct base_price.csv") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the price CSV ({exc})", file=p,
                         fix="save it as UTF-8 comma-separated text") from None
    kept = [(i + 1, s) for i, s in enumerate(text.splitlines())
            if s.strip() and not s.lstrip().startswith("#")]
    if len(kept) < 2:
        raise InputError("the price CSV needs a header row and at least one layer row",
                         file=p, fix="write 'layers,1,10,100' then e.g. '2,40,30,20'")
    import pandas as pd  # only for a price CSV: keeps `check` of a YAML table light

    try:
        df = pd.read_csv(io.StringIO("\n".join(s for _, s in kept)), header=None, dtype=str,
                         keep_default_na=False, skipinitialspace=True)
    except pd.errors.ParserError as exc:
        m = re.search(r"Expected (\d+) fields in line (\d+), saw (\d+)", str(exc))
        if m is None:
            raise InputError(f"not a regular CSV table ({exc})", file=p,
                             fix="give every row the same number of cells") from None
        line = kept[min(int(m.group(2)), len(kept)) - 1][0]
        raise InputError(f"{m.group(3)} cells where the header has {m.group(1)}", file=p,
                         line=line, fix="give every row the same number of cells") from None
    cells = [[str(c) for c in row] for row in df.to_numpy(dtype=str).tolist()]
    file, head_line = str(p), kept[0][0]
    if cells[0][0].strip().lower() != "layers":
        raise InputError(f"first header cell is {cells[0][0]!r}", file=file, line=head_line,
                         key="header, column 1", fix="name the first column 'layers'")
    quantities = [_cell_int(c.strip(), "quantity break", file, head_line,
                            f"header, column {j + 2}") for j, c in enumerate(cells[0][1:])]
    layers: dict[int, list[float]] = {}
    lines: dict[int, int] = {}
    for r in range(1, len(cells)):
        line = kept[r][0]
        n = _cell_int(cells[r][0].strip(), "layer count", file, line, f"row {r}, column 1")
        if n in layers:
            raise InputError(f"layer count {n} listed twice (also line {lines[n]})", file=file,
                             line=line, key=f"row '{n}'", fix="keep one row per layer count")
        row = []
        for j, c in enumerate(cells[r][1:]):
            key = f"row '{n}', column '{quantities[j]}'"
            if not c.strip():
                raise InputError(f"no price for {n} layers at {quantities[j]} boards",
                                 file=file, line=line, key=key, fix="fill in every cell")
            try:
                row.append(float(c))
            except ValueError:
                shown = repr(c) if len(c) <= 40 else repr(c[:37] + "...")
                raise InputError(f"price {shown} is not a number", file=file, line=line,
                                 key=key, fix="write a plain number in the table currency, "
                                 "without a currency sign") from None
        layers[n], lines[n] = row, line
    return PriceCsv(file, quantities, layers, head_line, lines)


def _with_csv(doc: Document) -> tuple[Any, PriceCsv | None]:
    data = doc.data
    bp = data.get("base_price") if isinstance(data, dict) else None
    if not isinstance(bp, dict) or "csv" not in bp:
        return data, None
    extra = sorted(set(bp) & {"quantities", "layers"})
    if extra:
        raise doc.error(f"'{extra[0]}' given both inline and in the CSV",
                        ["base_price", extra[0]], fix="keep the matrix in one place")
    name = bp["csv"]
    if not isinstance(name, str) or not name.strip():
        raise doc.error("csv must be a file name", ["base_price", "csv"],
                        fix="e.g. 'csv: prices.csv' (relative to this YAML file)")
    csv = read_price_csv(Path(doc.file).parent / name)
    new_bp = {k: v for k, v in bp.items() if k != "csv"}
    new_bp.update(quantities=csv.quantities, layers=csv.layers)
    return {**data, "base_price": new_bp}, csv


def _clean(loc: tuple[Any, ...]) -> list[Any]:
    return [p for p in loc if isinstance(p, int)
            or (isinstance(p, str) and "[" not in p and not p.startswith("function-"))]


def load_cost_table(path: str | Path) -> CostTable:
    """Load and validate a cost table (YAML, plus ``base_price.csv`` if it names one).

    Raises
    ------
    InputError
        One line naming the file, line, key path (or CSV row/column) and the fix.

    """
    doc = load_yaml(path)
    data, csv = _with_csv(doc)
    if not isinstance(data, dict):
        return validate_model(CostTable, doc, data=data)  # raises: empty / not a mapping
    try:
        table = CostTable.model_validate(data)
    except ValidationError as exc:
        err = exc.errors(include_url=False)[0]
        ctx = (err.get("ctx") or {}).get("error")
        loc = _clean(err["loc"])
        if isinstance(ctx, InputError):
            loc = loc + list(getattr(ctx, "path", ()))
            msg, fix = ctx.message, ctx.fix
        else:
            msg, fix = err["msg"].removeprefix("Value error, "), None
        if csv is not None and loc[:1] == ["base_price"] and loc[1:2] in (["layers"],
                                                                            ["quantities"]):
            raise csv.error(msg, loc, fix) from None
        if isinstance(ctx, TableRuleError):
            raise doc.error(msg, loc, fix) from None
        return validate_model(CostTable, doc, data=data)  # raises the located pydantic error
    check_cost_table(table, doc)  # physical ranges: errors, and warnings for odd values
    return table


def load_demo_cost_table() -> CostTable:
    """Load the built-in demo table (invented data; same bytes as cost_tables/quickturn.yaml)."""
    with as_file(files("stackopt.data") / DEMO_COST_TABLE) as p:
        return load_cost_table(p)
