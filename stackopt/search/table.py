"""The table of candidates as columns: one owner of what ``candidates.csv``, ``front.csv``
and :meth:`Result.frame <stackopt.search.results.Result.frame>` hold, and of the
candidate ids.

:func:`candidate_columns` gives the columns of chosen rows as arrays; the frame is a
DataFrame of them and the CSV writer (:mod:`stackopt.outputs.exports`) formats them
straight from the arrays. Strings are built only for the rows asked for, and the id
column is a :class:`Template` (a format and the row numbers): the ids of a large
result's 445,000 rows are built a block at a time, where they are written.
"""

from __future__ import annotations

import operator
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, overload

import numpy as np

from stackopt.rows import distinct_rows

if TYPE_CHECKING:
    import pandas as pd

    from stackopt.search.results import Result

__all__ = ["ID_FORMAT", "CandidateIds", "Template", "candidate_columns", "candidate_frame"]

#: %-format of a candidate id from its 1-based row number (``C00001``: sorts as text in
#: evaluation order up to 99,999 rows, and stays unique beyond).
ID_FORMAT = "C%05d"


class CandidateIds(Sequence[str]):
    """The ids of ``n`` candidates by row (:data:`ID_FORMAT`), each built when asked:
    a report names a handful of a large result's candidates, never all of them."""

    def __init__(self, n: int) -> None:
        self._rows = range(int(n))

    def __len__(self) -> int:
        return len(self._rows)

    @overload
    def __getitem__(self, i: int) -> str: ...

    @overload
    def __getitem__(self, i: slice) -> list[str]: ...

    def __getitem__(self, i: int | slice) -> str | list[str]:
        if isinstance(i, slice):
            return [ID_FORMAT % (k + 1) for k in self._rows[i]]
        return ID_FORMAT % (self._rows[operator.index(i)] + 1)  # bounds as a list's

    def __repr__(self) -> str:
        return f"CandidateIds({len(self)})"


@dataclass(frozen=True)
class Template:
    """A text column given as one %-format and its values (N,), its strings built only
    where they are written. The format's text needs no CSV quoting or neutralisation
    (no comma, quote, line break or leading ``= + - @``)."""

    fmt: str
    values: np.ndarray

    def cells(self) -> list[str]:
        """The cells as text."""
        return [self.fmt % x for x in self.values.tolist()]

    def text(self) -> np.ndarray:
        """The cells as an object array of str."""
        return np.array(self.cells(), dtype=object)


def _violation_text(result: Result, rows: np.ndarray) -> np.ndarray:
    """The constraints each of ``rows`` violates, as text; strings are built only for
    the rows that violate something."""
    text = np.full(len(rows), "", dtype=object)
    for k, v in result.evaluation.violations.items():
        hit = np.flatnonzero(v[rows] > 0)
        if not len(hit):
            continue
        new = [f"{k} (+{x:.3g})" for x in v[rows[hit]].tolist()]
        text[hit] = [f"{a}; {b}" if a else b for a, b in zip(text[hit].tolist(), new, strict=True)]
    return text


def candidate_columns(result: Result, rows: np.ndarray | None = None
                      ) -> dict[str, np.ndarray | Template]:
    """The columns of the table of candidates for rows ``rows`` (default: all), in
    order: arrays of the rows' values (text columns as object arrays of str) and the
    ``id`` column as a :class:`Template`."""
    rows = np.arange(result.n) if rows is None else np.asarray(rows, dtype=np.int64)
    ev, g, sc, sp = result.evaluation, result.evaluation.geometry, result.problem.scenario, \
        result.problem.space
    c = result.candidates.take(rows)
    arr_names = np.array([a.name for a in sp.arrangements], dtype=object)
    # materials text built once per distinct build (arrangement + slot options)
    first, inv = distinct_rows(np.column_stack([c.arr, c.slot]))
    names = sp.slot_names(c.take(first))
    mats = np.array([" / ".join(x for x in r if x) for r in names], dtype=object)[inv]
    cols: dict[str, np.ndarray | Template] = {
        "id": Template(ID_FORMAT, rows + 1),
        "layers": g.layers[rows],
        "arrangement": arr_names[c.arr],
        "materials": mats,
        "thickness_m": g.thickness[rows],
        "ground_plane_depth_m": g.via_height[rows],
        "er_top": g.trace_er[rows],
        "copper_m": g.copper[rows],
        "drill_m": g.drill[rows],
        "vias_per_ground": g.vias[rows],
    }
    for m in sp.mitigations:
        cols[m] = g.flags[m][rows]
    cols.update({
        "unit_cost": ev.unit_cost[rows], "lot_cost": ev.lot_cost[rows],
        "lead_time_days": ev.lead_time_days[rows], "margin_dB": ev.margin[rows],
        "ground_inductance_H": ev.inductance[rows],
    })
    for k, r in enumerate(sc.requirements):
        cols[f"attenuation_dB_{r.key}Hz"] = ev.attenuation[rows, k]
    for col, rt in enumerate(result.problem.routes):
        cols[f"width_{rt.name}_m"] = ev.widths[rows, col]
    cols["feasible"] = result.feasible[rows]
    cols["meets_requirements"] = result.meets[rows]
    cols["violations"] = _violation_text(result, rows)
    cols["on_front"] = result.on_front[rows]
    return cols


def candidate_frame(result: Result, rows: np.ndarray | None = None) -> pd.DataFrame:
    """The rows ``rows`` (default: all) of the table of candidates (:meth:`Result.frame`):
    :func:`candidate_columns` as a DataFrame."""
    import pandas as pd

    return pd.DataFrame({k: v.text() if isinstance(v, Template) else v
                         for k, v in candidate_columns(result, rows).items()})
