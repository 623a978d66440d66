"""The search's answer as records: a candidate's JSON-ready record, the table of candidates
and the summary (``summary.json``) — the contract the report, exports and users' scripts
rely on. :class:`~stackopt.search.results.Result` exposes them as ``record``, ``frame``
and ``to_summary``.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np

from stackopt import __version__
from stackopt.search.problem import Evaluation, Problem
from stackopt.search.table import candidate_frame

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["MODEL_DEPENDENT_DB", "metrics_record", "candidate_record", "candidate_frame",
           "summary", "json_number"]

#: A pick whose margin spread over the via models exceeds this is "model-dependent", dB
#: (the size of disagreement that can reverse a ranking; common practice, no source).
MODEL_DEPENDENT_DB = 3.0


def json_number(x: float | np.floating) -> float | None:
    """``x`` as a float, ``None`` where it is not finite (JSON has no NaN)."""
    x = float(x)
    return x if math.isfinite(x) else None


def metrics_record(problem: Problem, ev: Evaluation, i: int) -> dict[str, Any]:
    """Row ``i`` of an evaluation as JSON-ready metrics: the part of a candidate's record
    (:meth:`Result.record`) that ``stackopt eval`` prints for one stackup as well."""
    g, sc = ev.geometry, problem.scenario
    return {
        "layers": int(g.layers[i]),
        "thickness_m": json_number(g.thickness[i]),
        "ground_plane_depth_m": json_number(g.via_height[i]),
        "er_top": json_number(g.trace_er[i]),
        "unit_cost": json_number(ev.unit_cost[i]),
        "lot_cost": json_number(ev.lot_cost[i]),
        "lead_time_days": json_number(ev.lead_time_days[i]),
        "margin_dB": json_number(ev.margin[i]),
        "meets_requirements": bool(ev.feasible[i] and ev.margin[i] >= 0),
        "feasible": bool(ev.feasible[i]),
        "violations": ev.violated(i),
        "attenuation_dB": {r.key: json_number(ev.attenuation[i, k])
                           for k, r in enumerate(sc.requirements)},
        "ground_inductance_H": json_number(ev.inductance[i]),
        "line_widths_m": {rt.name: json_number(ev.widths[i, r])
                          for r, rt in enumerate(problem.routes) if ev.line_layers[i, r] >= 0},
    }


def candidate_record(result: Result, i: int, check_lines: bool = False) -> dict:
    """Candidate ``i`` of ``result`` as a JSON-ready dict (the summary's candidate record,
    :meth:`Result.record`)."""
    ev = result.evaluation
    desc = result.problem.space.describe(result.candidates, i)
    st = result.stackup(i)
    layers = []
    for rec in st.to_records():
        layer = {"kind": rec["kind"], "material": rec["material"],
                 "thickness_m": json_number(rec["thickness_m"])}
        if rec["kind"] == "copper":
            layer["role"] = rec["role"]
        else:
            layer["er"] = json_number(rec["er"])
            layer["df"] = json_number(rec["df"])
        layers.append(layer)
    sc = result.problem.scenario
    met = metrics_record(result.problem, ev, i)
    out = {
        "id": result.ids[i], "layers": met.pop("layers"),
        "arrangement": desc["arrangement"],
        "thickness_m": met.pop("thickness_m"),
        "ground_plane_depth_m": met.pop("ground_plane_depth_m"),
        "top_dielectric": desc["materials"][0],
        "er_top": met.pop("er_top"),
        "copper_m": json_number(desc["copper_m"]),
        "drill_m": json_number(desc["drill_m"]),
        "vias_per_ground": int(desc["vias"]),
        "mitigations": [m for m in result.problem.space.mitigations if desc[m]],
        **met,
        "line_spacings_m": {rt.name: sc.lines[rt.line].spacing
                            for r, rt in enumerate(result.problem.routes)
                            if sc.lines[rt.line].spacing is not None
                            and ev.line_layers[i, r] >= 0},
        "lines": [r.to_summary() for r in result.lines(i, check_lines)],
        "stackup": layers,
    }
    if result.spread:
        out["margin_by_model_dB"] = {m: json_number(v[i]) for m, v in result.spread.items()}
        out["model_spread_dB"] = json_number(result.model_spread[i])
        out["model_dependent"] = bool(result.model_dependent[i])
    if result.robust:
        out["robust_margin_dB"] = json_number(result.robust_margin[i])
        out["meets_under_every_model"] = bool(result.robust_meets[i])
    if result.yields is not None and np.isfinite(result.yields[i]):
        n_builds = result.problem.scenario.search.robustness.samples
        p = float(result.yields[i])
        out["yield"] = p
        out["yield_standard_error"] = math.sqrt(p * (1 - p) / n_builds)
        if result.impedance_range is not None:
            out["impedance_range_ohm"] = {
                rt.name: [json_number(result.impedance_range[i, r, 0]),
                          json_number(result.impedance_range[i, r, 1])]
                for r, rt in enumerate(result.problem.routes) if ev.line_layers[i, r] >= 0}
    return out


def summary(result: Result, extra: dict | None = None) -> dict:
    """The JSON-ready summary of ``result`` (:meth:`Result.to_summary`; see the README for
    the contract)."""
    sc, table = result.problem.scenario, result.problem.table
    out = {
        "scenario": sc.name,
        "fab": table.fab,
        "currency": table.currency,
        "quantity": sc.board.quantity,
        "method": result.method,
        "seed": result.seed,
        "version": __version__,
        "objective": sc.search.objective,
        "via_model": sc.search.via_model,
        "calibration": (sc.search.calibration.echo()
                        if sc.search.calibration is not None
                        and not isinstance(sc.search.calibration, str) else None),
        "space_size": int(result.space_size),
        "evaluated": int(result.evaluated),
        "requirements": [{"key": r.key, "label": r.label,
                          "min_attenuation_dB": r.min_attenuation}
                         for r in sc.requirements],
        "front": [result.record(int(i)) for i in result.front_order],
        "picks": {k: (None if v is None else result.record(v, check_lines=True))
                  for k, v in result.picks.items()},
        "stats": {k: (int(v) if isinstance(v, int | np.integer) else v)
                  for k, v in result.stats.items()},
    }
    if result.robust:
        rb = sc.search.robustness
        out["robustness"] = {"models": list(rb.models), "samples": rb.samples,
                             "yield_target": rb.yield_target,
                             "distribution": rb.distribution,
                             "model_dependent_above_dB": MODEL_DEPENDENT_DB}
    if result.limits:
        out["limits"] = result.limits
    if extra:
        out.update(extra)
    return out
