"""``stackopt optimize SCENARIO --costs A.yaml --costs B.yaml``: one scenario against
several fabs in one run; each fab's full result in its own folder plus the comparison."""

from __future__ import annotations

import argparse
import hashlib
from pathlib import Path

from stackopt.cli.common import load_inputs, safe_dirname, table
from stackopt.cli.text import say as _say
from stackopt.errors import InputError
from stackopt.outputs.facts import money


def _check_tables(paths: list[str]) -> None:
    """Refuse a table given twice (the same file, or two files with the same bytes)."""
    seen: dict[str, str] = {}
    for p in paths:
        path = Path(p)
        try:
            key = hashlib.sha256(path.read_bytes()).hexdigest()
        except OSError:
            continue  # the loader reports a missing or unreadable file with its own fix
        if key in seen:
            same = "is given twice" if Path(seen[key]).resolve() == path.resolve() else \
                f"has the same contents as {seen[key]}"
            raise InputError(f"{p} {same}", key="--costs",
                             fix="give each fab's cost table once")
        seen[key] = p


def _rates(args: argparse.Namespace) -> list:
    from stackopt.analyses.fabs import load_rates, parse_rate

    out = []
    for text in args.rate:
        try:
            out.append(parse_rate(text))
        except ValueError as exc:
            msg, _, fix = str(exc).partition("; ")
            raise InputError(msg, key="--rate", fix=fix or None) from None
    if args.rates:
        out += load_rates(args.rates)
    return out


def run_fabs(args: argparse.Namespace) -> int:
    """Search the scenario against every ``--costs`` table and write the comparison."""
    from stackopt.analyses.fabs import compare_fabs
    from stackopt.errors import Interrupted
    from stackopt.outputs.comparison import render_comparison
    from stackopt.outputs.files import prepare_out_dir
    from stackopt.outputs.resultdir import pause_point, write_result

    out = Path(args.out) if args.out is not None else None
    if out is not None:  # a bad --out is refused before the inputs are even read
        out = prepare_out_dir(out, args.force)
    _check_tables(args.costs)
    inputs = [load_inputs(args.scenario, p) for p in args.costs]
    rates = _rates(args)
    sc = inputs[0].scenario
    if out is None:
        out = prepare_out_dir(Path("stackopt-out") / (safe_dirname(sc.name) + "-fabs"),
                              args.force)
    say = (lambda *a: None) if args.quiet else _say
    say(f"stackopt: {sc.name} against {len(inputs)} fabs: "
        + "; ".join(i.table.fab for i in inputs))
    quantities = args.quantities or sc.board.quantities
    try:
        pause_point("search")
        comp = compare_fabs(sc, [(i.table, i.table_path.name) for i in inputs], rates=rates,
                            seed=args.seed, method=args.method, budget=args.budget,
                            quantities=quantities)
        extras = {run.folder: {"inputs": {"scenario": inp.scenario_path.name,
                                          "cost_table": inp.table_path.name,
                                          "sha256": inp.hashes()}}
                  for run, inp in zip(comp.runs, inputs, strict=True)}
        write_result(out, render_comparison(comp, extras), args.force)
    except Interrupted as exc:
        if exc.out is None:
            exc.out = out
        raise
    if args.quiet:
        return 0
    say(fabs_table(comp))
    if quantities:
        from stackopt.cli.optimize import sweep_table

        for run in comp.runs:
            say(f"  {run.name}:")
            say(sweep_table(run.sweep))
    say(f"  comparison: {out / 'comparison.html'}")
    return 0


def fabs_table(comp) -> str:
    """The comparison as a short console table, then the ranking in words."""
    from stackopt.outputs.comparison import comparison_summary, ranking_sentences
    from stackopt.outputs.sweep import named_picks

    rank = {f["folder"]: f["rank"] for f in comparison_summary(comp)["fabs"]}
    rows = []
    for run in comp.runs:
        r, cur = run.result, run.currency
        p = named_picks(r)
        ev = r.evaluation

        def cell(i, ev=ev, r=r, cur=cur):
            return "-" if i is None else f"{money(ev.unit_cost[i], cur)} ({r.ids[i]})"

        i = p["cheapest_meeting_requirements"]
        detail = (["-"] * 4 if i is None else
                  [str(int(ev.geometry.layers[i])), money(ev.lot_cost[i], cur, 0),
                   f"{ev.lead_time_days[i]:g} d", f"{ev.margin[i]:+.1f} dB"])
        name = run.name if len(run.name) <= 28 else run.name[:27] + "…"
        rows.append([name, cell(i), *detail, cell(p["cheapest_two_layer"]),
                     cell(p["recommended"]),
                     "-" if rank[run.folder] is None else str(rank[run.folder])])
    head = ["fab", "cheapest meeting reqs", "layers", "lot", "lead", "margin",
            "cheapest two-layer", "recommended", "rank"]
    return ("  fab against fab (per board, each fab's own currency):\n" + table(rows, head)
            + "".join(f"\n  {s}" for s in ranking_sentences(comp)))
