"""``stackopt eval``: score one stackup with the full breakdown."""

from __future__ import annotations

import argparse
import json
import math
from typing import Any

from stackopt.cli.common import load_inputs, table
from stackopt.cli.registry import help_of
from stackopt.cli.text import say
from stackopt.outputs.facts import money
from stackopt.units import format_quantity as fq


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``eval`` command."""
    p = sub.add_parser("eval", help=help_of("eval"),
                       description="Score one stackup file (the format selected.yaml is "
                       "written in) against a scenario, with the itemised cost.",
                       epilog="example: stackopt eval scenarios/harmonic_lowpass.yaml "
                       "--stackup stackopt-out/harmonic-lowpass-868/selected.yaml")
    p.add_argument("scenario", help="scenario YAML")
    p.add_argument("--stackup", metavar="FILE", required=True, help="stackup YAML")
    p.add_argument("--costs", metavar="TABLE", help="fab cost table YAML")
    p.add_argument("--calibration", metavar="CAL.yaml",
                   help="calibration file from 'stackopt fit' (default: the scenario's "
                   "search.calibration): scales the via model's inductances by its factor")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Evaluate and print."""
    from stackopt.analyses.lines import line_rows
    from stackopt.inputs.stackup_file import load_selected
    from stackopt.outputs.reasons import because, sentence, would_work_if
    from stackopt.search.problem import Problem
    from stackopt.search.results import metrics_record
    from stackopt.search.single import evaluate_stackup

    inp = load_inputs(args.scenario, args.costs, args.calibration)
    sf = load_selected(args.stackup)
    problem = Problem(inp.scenario, inp.table, stacks=(sf.stackup.layer_stack,))
    ev = evaluate_stackup(problem, sf, args.stackup)
    from stackopt.circuit.grounds import (
        ground_breakdown,
        ground_parts,
        worst_path_and_coupling,
    )

    g = ev.geometry
    sc = inp.scenario
    gb = problem.ground_batch(g)
    grounds: list[dict[str, Any]] = [
        {k: (v if k == "name" else float(v[0])) for k, v in row.items()}
        for row in ground_breakdown(problem.compiled, gb, sc.search.via_model)]
    guard = float(ground_parts(problem.compiled, gb, sc.search.via_model).guard[0])
    path, coupling = worst_path_and_coupling(problem.compiled, gb, sc.search.via_model)
    m = metrics_record(problem, ev, 0)
    out: dict[str, Any] = {
        **{k: m.pop(k) for k in ("layers", "thickness_m", "ground_plane_depth_m",
                                 "ground_inductance_H")},
        "worst_ground_path_H": float(path[0]),
        "largest_ground_coupling_H": (float(coupling[0]) if math.isfinite(coupling[0])
                                      else None),
        "grounds": grounds,
        "mutual_guard_active": guard < 1.0,
        "placement_notes": list(problem.placed[1]),
        **m,
        "lines": [r.to_summary() for r in line_rows(problem, g, 0, ev.widths[0])],
        "currency": inp.table.currency,
        "cost_items": {k: float(v[0]) for k, v in ev.cost_items.items()},
        "via_model": sc.search.via_model,
        "calibration": (None if sc.search.calibration is None
                        else sc.search.calibration.echo()),  # type: ignore[union-attr]
        "violations_in_words": because(problem, ev, 0),
    }
    if args.json:
        say(json.dumps(out, indent=2))
        return 0
    cur = inp.table.currency
    say(f"{out['layers']} layers, {fq(out['thickness_m'], 'length')} finished; ground plane "
          f"{fq(out['ground_plane_depth_m'], 'length')} under the top")
    say(f"ground connections ({sc.search.via_model}"
          + (f", calibrated x{sc.search.via_scale(sc.search.via_model):.3g} by "
             f"{out['calibration']['file']}" if out["calibration"] else "") + "): worst "
        f"path {fq(out['worst_ground_path_H'], 'inductance')} (one element's via, pad "
        "trace and mounted loop), "
        + ("one shared connection (no pair to couple)"
           if out["largest_ground_coupling_H"] is None else
           "largest coupling between two connections "
           f"{fq(out['largest_ground_coupling_H'], 'inductance')}"))
    if grounds:
        say(table([[r["name"]] + [fq(r[k], "inductance") for k in
                                  ("via_H", "trace_H", "mount_H", "total_H")]
                   for r in grounds], ["ground", "vias", "pad trace", "mounted parts",
                                       "total"]))
    if out["mutual_guard_active"]:
        say("note: the via model's self terms are small next to the image-theory mutuals "
            "here; the mutual terms were scaled down to keep the inductance matrix passive")
    for note in out["placement_notes"]:
        say("note: " + note)
    rows = [[r.label, f"{ev.attenuation[0, k]:.1f} dB", f">= {r.min_attenuation:g} dB"]
            for k, r in enumerate(sc.requirements)]
    if rows:
        say(table(rows, ["requirement", "reached", "needed"]))
    say(f"margin {out['margin_dB']:+.1f} dB; "
          + ("meets every requirement" if out["meets_requirements"] else "does NOT meet"))
    for r in out["lines"]:
        head = (f"line {r['name']} ({r['type']} on {r['layer'] or 'no layer'}, "
                f"{r['target_ohm']:g} ohm{' Zdiff' if r['differential'] else ''}"
                + (f", spacing {fq(r['spacing_m'], 'length')}" if r["spacing_m"] else "")
                + "): ")
        w, wf = r["width_m"], r["width_field_m"]
        say(head + ("no width reaches the target" if w is None else
                    fq(w, "length") + " wide by closed form"
                    + (f", {fq(wf, 'length')} by field solve" if wf else "")))
    rows = [[k, money(v, cur)] for k, v in out["cost_items"].items() if v]
    rows.append(["unit cost", money(out["unit_cost"], cur)])
    say(table(rows, ["cost item", "per board"]))
    say(f"lot of {sc.board.quantity:,}: {money(out['lot_cost'], cur)}; lead time "
          f"{out['lead_time_days']:g} working days")
    if out["violations"]:
        say("cannot be built as is: " + sentence(because(problem, ev, 0)))
        say("it would be feasible if " + " and ".join(would_work_if(problem, ev, 0)) + ".")
    return 0
