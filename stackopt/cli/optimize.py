"""``stackopt optimize``: search, then write the report, plots and exports."""

from __future__ import annotations

import argparse
from pathlib import Path

from stackopt.cli.common import load_inputs, safe_dirname, table
from stackopt.cli.options import count, lot_sizes
from stackopt.cli.progress import Progress
from stackopt.cli.registry import help_of
from stackopt.cli.text import say as _say
from stackopt.errors import InputError
from stackopt.outputs.facts import money
from stackopt.outputs.robust_text import limit_line, recommendation_line, robust_cells
from stackopt.plausible import SEED_MAX
from stackopt.search.picks import PICKS


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``optimize`` command."""
    p = sub.add_parser(
        "optimize", help=help_of("optimize"),
        description="Search the scenario's design space priced by the fab's cost table, "
        "show the cost / performance Pareto front and write the decision report.",
        epilog="examples:\n  stackopt optimize                       (built-in demo)\n"
        "  stackopt optimize scenarios/harmonic_lowpass.yaml --costs "
        "cost_tables/volume.yaml --out out/ --force",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("scenario", nargs="?", help="scenario YAML (default: the built-in demo)")
    p.add_argument("--costs", metavar="TABLE", action="append",
                   help="fab cost table YAML (default: the one the scenario names); give it "
                   "again for each further fab to compare the fabs in one run")
    p.add_argument("--calibration", metavar="CAL.yaml",
                   help="calibration file from 'stackopt fit' (default: the scenario's "
                   "search.calibration): scales the via model's inductances by its factor")
    p.add_argument("--quantities", metavar="N,N,...", type=lot_sizes,
                   help="also choose the picks at these lot sizes, e.g. 100,1000,10000 "
                   "(default: the scenario's board.quantities)")
    p.add_argument("--rate", metavar="A/B=X", action="append", default=[],
                   help="exchange rate for ranking fabs of different currencies: 1 A costs "
                   "X B, e.g. USD/EUR=0.92 (repeatable)")
    p.add_argument("--rates", metavar="FILE", help="exchange rates as YAML "
                   "('rates: {USD/EUR: 0.92}')")
    p.add_argument("--out", metavar="DIR", help="output folder (default: "
                   "./stackopt-out/<scenario name>/, with -<fab> for a --costs table)")
    p.add_argument("--seed", type=count("--seed", 0, SEED_MAX), help="random seed "
                   "(default: the scenario's)")
    p.add_argument("--method", choices=("auto", "exact", "nsga2"), help="search method "
                   "(default: the scenario's, normally auto = exact where it finishes)")
    p.add_argument("--budget", type=count("--budget", 100, 10_000_000),
                   help="NSGA-II evaluations")
    p.add_argument("--quiet", action="store_true", help="print only errors")
    p.add_argument("--force", action="store_true", help="overwrite a non-empty output folder")
    p.set_defaults(func=run)


def _case_line(result) -> str:
    """The four-layer case in one or two console lines."""
    from stackopt.outputs.case import fewer_layers_words, four_layer_case

    c = four_layer_case(result)
    cur = result.problem.table.currency
    ids = result.ids
    if c.status == "compared":
        assert c.two is not None and c.multi is not None and c.d_unit is not None
        gains = ", ".join(f"{d:+.1f} dB at {lab}" for _k, lab, d in c.d_att)
        per = (f"; {money(c.cost_per_db, cur, 3)} per board per dB"
               if c.cost_per_db is not None else "")
        return (f"  recommended {ids[c.multi]} costs {money(c.d_unit, cur)} per board "
                f"({money(c.d_lot, cur, 0)} per lot) more than the cheapest two-layer board "
                f"that can be built ({ids[c.two]}) and buys {gains}{per}")
    if c.status == "no_two_layer_in_space":
        fewer = (fewer_layers_words(result, int(result.evaluation.geometry.layers[c.multi]))
                 if c.multi is not None else "")
        return ("  the design space has no two-layer boards: no claim about them"
                + (f"\n  {fewer}" if fewer else ""))
    if c.status == "no_feasible_two_layer":
        return "  " + c.blocked_words()
    if c.status == "two_layer_meets":
        return "  a two-layer board meets every requirement"
    return "  nothing meets every requirement (the closest boards are listed below)"


def run(args: argparse.Namespace) -> int:
    """Run the search and write every output file."""
    costs = args.costs or []
    if len(costs) > 1:
        from stackopt.cli.optimize_fabs import run_fabs

        return run_fabs(args)
    if args.rate or args.rates:
        raise InputError("--rate and --rates convert between fabs' currencies", key="--rate",
                         fix="give two or more --costs tables, or leave the rates out")
    import stackopt
    from stackopt.analyses.quantities import quantity_sweep
    from stackopt.errors import Interrupted
    from stackopt.outputs.bundle import Ahead, warm, write_all
    from stackopt.outputs.drawer import Drawer
    from stackopt.outputs.files import prepare_out_dir
    from stackopt.outputs.resultdir import pause_point
    from stackopt.search.memo import ResponseMemo

    out = None
    if args.out is not None:  # a bad --out is refused before the inputs are even read
        out = prepare_out_dir(args.out, args.force)
    inp = load_inputs(args.scenario, costs[0] if costs else None, args.calibration)
    if out is None:
        out = prepare_out_dir(default_out(inp.scenario.name,
                                          inp.table.fab if costs else None), args.force)
    say = (lambda *a: None) if args.quiet else _say
    say(f"stackopt: {inp.scenario.name} priced by {inp.table.fab}"
        + (" (built-in demo)" if inp.demo else ""))
    quantities = args.quantities or inp.scenario.board.quantities
    memo = ResponseMemo() if quantities else None
    bar = Progress("searching", not args.quiet)
    builds = Progress("Monte Carlo of the builds", not args.quiet, unit="build")

    def monte_carlo(done: int, total: int) -> None:  # the search is over: one bar at a time
        bar.close()
        builds(done, total)

    # the figures' libraries load on the other core while the search runs; the search's
    # own modules are loaded first, once, and shared with it
    import stackopt.analyses.robust  # noqa: F401
    import stackopt.search.api  # noqa: F401

    drawer = Drawer.start(warm)
    ahead = Ahead(drawer)  # sent there while the analyses run here (field solves, search)
    try:
        pause_point("search")
        result = stackopt.optimize(inp.scenario, inp.table, seed=args.seed,
                                   method=args.method, budget=args.budget, progress=bar,
                                   monte_carlo_progress=monte_carlo, memo=memo,
                                   searched=ahead)
        bar.close()
        builds.close()
        sweep = None
        if quantities:
            sweep = quantity_sweep(inp.scenario, inp.table, quantities, seed=args.seed,
                                   method=args.method, budget=args.budget, memo=memo,
                                   main=result)
        extra = {"inputs": {"scenario": str(inp.scenario_path.name),
                            "cost_table": str(inp.table_path.name), "sha256": inp.hashes()}}
        write_all(result, out, force=args.force, extra_summary=extra, sweep=sweep,
                  drawer=drawer, ahead=ahead)
    except InputError as exc:  # a rule of the search: it concerns the scenario's keys
        if exc.file is not None:
            raise
        raise exc.located(file=inp.scenario_path) from None
    except Interrupted as exc:
        bar.close()
        builds.close()
        if exc.out is None:
            exc.out = out
        raise
    finally:
        if drawer is not None:
            drawer.close()
    if args.quiet:
        return 0
    say_result(result, say)
    if sweep is not None:
        say(sweep_table(sweep))
    say(f"  report: {out / 'report.html'}")
    return 0


def default_out(scenario_name: str, fab: str | None) -> Path:
    """``stackopt-out/<scenario>/``, or ``stackopt-out/<scenario>-<fab>/`` for a table
    given with ``--costs`` (runs against two fabs do not collide)."""
    name = safe_dirname(scenario_name)
    if fab is not None:
        name += "-" + safe_dirname(fab)
    return Path("stackopt-out") / name


def say_result(result, say) -> None:
    """The search in a few lines: method and counts, the picks, the four-layer case, the
    prepreg answer, what is missing."""
    from stackopt.analyses.prepregs import prepreg_rows
    from stackopt.outputs.prepregs import prepreg_sentence, prepreg_table
    from stackopt.outputs.reasons import because, sentence

    cur = result.problem.table.currency
    scenario = result.problem.scenario
    say(f"  method {result.method}: {result.space_size:,} stackups in the space, "
        f"{result.evaluated:,} evaluated, {int(result.on_front.sum())} on the front")
    from stackopt.outputs.report_calibration import calibration_note

    if note := calibration_note(result):
        say(f"  via model {scenario.search.via_model}{note}")
    rows = []
    for key, pick in PICKS.items():
        label = pick.console
        i = result.picks[key]
        if i is None:
            rows.append([label, "-", "-", "-", "-", "none", "-", "-"])
            continue
        rec = result.record(i)
        rows.append([label, rec["id"], str(rec["layers"]), money(rec["unit_cost"], cur),
                     money(rec["lot_cost"], cur), f"{rec['margin_dB']:+.1f} dB",
                     *robust_cells(result, i)])
    say(table(rows, ["pick", "id", "layers", "per board", "per lot", "margin",
                     "worst over models", "yield"]))
    line = recommendation_line(result, cur)
    if line:
        say(f"  recommended: {line}")
    from stackopt.outputs.facts import selected_index

    sel = selected_index(result)
    for name, i in result.picks.items():  # the recommendation's limit, in plain words
        if i is not None and i == sel and limit_line(result, name):
            say(f"  what limits it: {limit_line(result, name)}")
            break
    say(_case_line(result))
    if result.feasible.any():
        rows_p = prepreg_rows(result)
        head, prows = prepreg_table(result, rows_p, compact=True)
        say(table(prows, head))
        left = sum(r.cheapest is None for r in rows_p)
        if left:
            say(f"  {left} more stocked top "
                + ("dielectric gives" if left == 1 else "dielectrics give")
                + " no board that can be built (the report says why)")
        say("  " + prepreg_sentence(result, rows_p))
    if not result.feasible.any():
        say("  No candidate satisfies the fab's and the scenario's constraints. Nearest:")
        for i in result.closest(3):
            rec = result.record(i)
            say(f"    {rec['id']} ({rec['layers']} layers): "
                + sentence(because(result.problem, result.evaluation, i)))
    elif result.picks["cheapest_meeting_requirements"] is None:
        say("  No candidate meets every requirement. Closest:")
        for i in result.closest(3):
            rec = result.record(i)
            fails = [f"{r.label} short by {r.min_attenuation - rec['attenuation_dB'][r.key]:.1f} dB"
                     for r in scenario.requirements
                     if rec["attenuation_dB"][r.key] is not None
                     and rec["attenuation_dB"][r.key] < r.min_attenuation]
            say(f"    {rec['id']} ({rec['layers']} layers, {money(rec['unit_cost'], cur)}): "
                + "; ".join(fails))


def sweep_table(sweep) -> str:
    """The cost against quantity as a short console table (per board; the board id)."""
    from stackopt.outputs.sweep import SWEEP_PICKS, label, named_picks, sweep_sentence

    cur = sweep.currency
    rows = []
    for q, r in zip(sweep.quantities, sweep.results, strict=True):
        p = named_picks(r)
        cells = [f"{q:,}"]
        for n in SWEEP_PICKS:
            i = p[n]
            cells.append("-" if i is None else
                         f"{money(r.evaluation.unit_cost[i], cur)} ({r.ids[i]})")
        rows.append(cells)
    head = ["boards", *(label(n).lower() for n in SWEEP_PICKS)]
    return ("  cost per board against quantity:\n" + table(rows, head) + "\n  "
            + sweep_sentence(sweep))
