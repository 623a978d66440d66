"""The impedance table of a candidate: every controlled-impedance line on every layer that
carries it (a route, named ``<line>@L<k>``: :mod:`stackopt.model.routing`), its width,
spacing and achieved impedance, checked and refined by the 2-D field solver.

The search sizes every line of every candidate by closed form
(:meth:`stackopt.search.problem.Problem.line_widths`); for the few candidates shown to the
user (the picks) this analysis solves each line's cross-section with the field solver
(:mod:`stackopt.physics.fieldlines`, solder mask included where the scenario or the cost
table gives one: :attr:`stackopt.search.problem.Problem.solder_mask`):
the impedance the closed-form width really has, and the width that meets the target by
field solve (the closed form to start, the field solve to finish). Identical
cross-sections are solved once.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from stackopt.physics.linetypes import PAIR_TYPES, LineSpec, closed_form, field, line_width

__all__ = ["LineRow", "field_check", "field_checks", "field_keys", "line_rows"]


@dataclass(frozen=True)
class LineRow:
    """One line on one layer of a candidate [SI]; ``None`` where not applicable or not
    reachable. A line that no layer of the candidate can carry has one row with ``layer``
    ``None`` and ``name`` the line's own name."""

    name: str  # the route: "rf50@L1" (the line's name alone when it has no layer)
    line: str  # the scenario line's name
    type: str  # the kind actually built (a microstrip in a coplanar pour is a cpwg)
    layer: str | None  # "L3"; None: no layer of this stackup can carry the line
    target_ohm: float  # Z0, or Zdiff for a pair
    differential: bool
    width_m: float | None  # the search's closed-form width
    spacing_m: float | None
    gap_m: float | None
    z_ohm: float | None  # closed form at width_m (Z0 or Zdiff)
    z_field_ohm: float | None  # field solve at width_m
    width_field_m: float | None  # width meeting the target by field solve
    field_error: float | None  # the field solver's grid error estimate

    def to_summary(self) -> dict:
        """JSON-ready dict (the keys above)."""
        return asdict(self)


def _num(x) -> float | None:
    x = float(x)
    return x if math.isfinite(x) else None


def _scalar(spec: LineSpec, k: int) -> LineSpec:
    def pick(v):
        return None if v is None else float(np.asarray(v, float).reshape(-1)[k])

    return LineSpec(spec.type, pick(spec.h), pick(spec.er), pick(spec.t),
                    h_above=pick(spec.h_above), er_above=pick(spec.er_above), s=spec.s,
                    gap=spec.gap, mask_t=spec.mask_t, mask_er=spec.mask_er, model=spec.model)


def _no_layer(ln) -> LineRow:
    return LineRow(name=ln.name, line=ln.name, type=ln.type, layer=None,
                   target_ohm=ln.target, differential=ln.type in PAIR_TYPES, width_m=None,
                   spacing_m=ln.spacing, gap_m=None, z_ohm=None, z_field_ohm=None,
                   width_field_m=None, field_error=None)


def _routes(problem, geometry, i: int):
    """``(route index, its one-candidate line batch)`` for every route of candidate ``i``
    whose layer exists there (a handful)."""
    for r in range(len(problem.routes)):
        lb = problem.line_batch(geometry, r).take(np.array([i]))
        if int(lb.layer[0]) >= 0:
            yield r, lb


def line_rows(problem, geometry, i: int, widths_row: np.ndarray, check: bool = True,
              cache: dict | None = None) -> list[LineRow]:
    """The routes of candidate ``i`` of ``geometry`` (a batch) with widths ``widths_row``
    (one per :attr:`~stackopt.search.problem.Problem.routes`): a row per line and layer
    that carries it there, in the scenario's order; a line with no layer gets one row.

    ``check`` adds the field solve (``z_field_ohm``, ``width_field_m``); ``cache`` (a dict
    by :func:`field_keys` key) shares solves between candidates with the same
    cross-section, and may be filled ahead (:func:`field_checks`).
    """
    cache = {} if cache is None else cache
    rows: dict[int, list[LineRow]] = {j: [] for j in range(len(problem.scenario.lines))}
    for r, lb in _routes(problem, geometry, i):
        rows[problem.routes[r].line].append(
            _route_row(problem, r, lb, widths_row[r], check, cache))
    return [x for j, ln in enumerate(problem.scenario.lines)
            for x in (rows[j] or [_no_layer(ln)])]


def _key(problem, r: int, lb, width: float) -> tuple[LineSpec, float | None, float]:
    """``(cross-section, width or None, target)`` of route ``r`` on the one candidate of
    ``lb``: the key of its field solve (:data:`Result.line_solves
    <stackopt.search.results.Result.line_solves>`)."""
    return (_scalar(problem.line_spec(r, lb), 0), _num(width),
            problem.scenario.lines[problem.routes[r].line].target)


def field_keys(problem, geometry, i: int, widths_row: np.ndarray) -> list[tuple]:
    """The field solves the checked line table of candidate ``i`` needs (as
    :func:`line_rows`): one key ``(cross-section, width, target)`` per route with a
    width, for :func:`field_checks`."""
    keys = (_key(problem, r, lb, widths_row[r]) for r, lb in _routes(problem, geometry, i))
    return [k for k in keys if k[1] is not None]


def field_check(spec: LineSpec, w: float, target: float) -> tuple[float, float, float]:
    """The field solve of one cross-section at its closed-form width ``w`` [m]: the
    impedance there [ohm] (Z0, Zdiff for a pair), the solver's error estimate, and the
    width [m] that meets ``target`` [ohm] by field solve (NaN if none in 0.25-4 w).

    The closed-form width is solved once and serves both as the check and as the start
    of the refinement (:func:`~stackopt.physics.linetypes.line_width`).
    """
    key = "z_diff" if spec.pair else "z0"
    f = field(spec, w)
    wf, ok = line_width(spec, target, w_min=0.25 * w, w_max=4.0 * w, solver="field",
                        start=(w, float(f[key])))
    return float(f[key]), float(f["error"]), float(wf) if bool(ok) else math.nan


def field_checks(keys: list[tuple]) -> dict[tuple, tuple[float, float, float]]:
    """:func:`field_check` of each distinct key of :func:`field_keys` (a handful of
    cross-sections: field solves are not a batch kernel), by key; a module-level function
    of picklable values, so another process can solve them while this one works."""
    return {k: field_check(*k) for k in dict.fromkeys(keys)}


def _route_row(problem, r: int, lb, width: float, check: bool, cache: dict) -> LineRow:
    """The row of route ``r`` on the one candidate of ``lb`` (its layer exists there)."""
    rt = problem.routes[r]
    ln = problem.scenario.lines[rt.line]
    w = _num(width)
    pair = ln.type in PAIR_TYPES
    row = dict(name=rt.name, line=ln.name, layer=f"L{rt.layer + 1}",
               target_ohm=ln.target, differential=pair, width_m=w,
               spacing_m=ln.spacing, gap_m=None, z_ohm=None, z_field_ohm=None,
               width_field_m=None, field_error=None, type=ln.type)
    ck = _key(problem, r, lb, width)
    spec = ck[0]
    row["type"], row["gap_m"] = spec.type, spec.gap
    if w is not None:
        row["z_ohm"] = _num(closed_form(spec, w)["z_diff" if pair else "z0"])
    if check and w is not None:
        if ck not in cache:
            cache[ck] = field_check(spec, w, ck[2])
        zf, err, wf = cache[ck]
        row.update(z_field_ohm=_num(zf), field_error=_num(err), width_field_m=_num(wf))
    return LineRow(**row)
