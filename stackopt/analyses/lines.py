"""The impedance table of a candidate: every controlled-impedance line, its layer, width,
spacing and achieved impedance, checked and refined by the 2-D field solver.

The search sizes every line of every candidate by closed form
(:meth:`stackopt.search.problem.Problem.line_widths`); for the few candidates shown to the
user (the picks) this analysis solves each line's cross-section with the field solver
(:mod:`stackopt.physics.fieldlines`, solder mask included where the scenario gives one):
the impedance the closed-form width really has, and the width that meets the target by
field solve (the closed form to start, the field solve to finish). Identical
cross-sections are solved once.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from stackopt.physics.linetypes import PAIR_TYPES, LineSpec, closed_form, field, line_width

__all__ = ["LineRow", "line_rows"]


@dataclass(frozen=True)
class LineRow:
    """One line on one candidate [SI]; ``None`` where not applicable or not reachable."""

    name: str
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


def line_rows(problem, geometry, i: int, widths_row: np.ndarray, check: bool = True,
              cache: dict | None = None) -> list[LineRow]:
    """The lines of candidate ``i`` of ``geometry`` (a batch) with widths ``widths_row``.

    ``check`` adds the field solve (``z_field_ohm``, ``width_field_m``); ``cache`` (a dict)
    shares solves between candidates with the same cross-section.
    """
    cache = {} if cache is None else cache
    out = []
    for j, ln in enumerate(problem.scenario.lines):
        lb = problem.line_batch(geometry, j).take(np.array([i]))
        layer = int(lb.layer[0])
        w = _num(widths_row[j])
        pair = ln.type in PAIR_TYPES
        row = dict(name=ln.name, layer=None if layer < 0 else f"L{layer + 1}",
                   target_ohm=ln.target, differential=pair, width_m=w,
                   spacing_m=ln.spacing, gap_m=None, z_ohm=None, z_field_ohm=None,
                   width_field_m=None, field_error=None, type=ln.type)
        if layer >= 0:
            spec = _scalar(problem.line_spec(j, lb), 0)
            row["type"], row["gap_m"] = spec.type, spec.gap
            key = "z_diff" if pair else "z0"
            if w is not None:
                row["z_ohm"] = _num(closed_form(spec, w)[key])
            if check and w is not None:
                ck = (spec, w, ln.target)
                if ck not in cache:
                    f = field(spec, w)
                    wf, ok = line_width(spec, ln.target, w_min=0.25 * w, w_max=4.0 * w,
                                        solver="field")
                    cache[ck] = (f[key], f["error"], float(wf) if bool(ok) else math.nan)
                zf, err, wf = cache[ck]
                row.update(z_field_ohm=_num(zf), field_error=_num(err), width_field_m=_num(wf))
        out.append(LineRow(**row))
    return out
