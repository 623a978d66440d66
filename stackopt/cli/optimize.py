"""``stackopt optimize``: search, then write the report, plots and exports."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from stackopt.cli.common import load_inputs, safe_dirname, table
from stackopt.cli.options import count
from stackopt.cli.registry import help_of
from stackopt.cli.text import say as _say
from stackopt.outputs.facts import money

PICK_LABELS = {
    "cheapest_meeting_requirements": "cheapest meeting requirements",
    "cheapest_two_layer": "cheapest two-layer",
    "best_two_layer": "best two-layer",
    "best_overall": "best overall",
}


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
    p.add_argument("--costs", metavar="TABLE", help="fab cost table YAML (default: the one "
                   "the scenario names)")
    p.add_argument("--out", metavar="DIR", help="output folder (default: "
                   "./stackopt-out/<scenario name>/)")
    p.add_argument("--seed", type=count("--seed", 0, 2**31 - 1), help="random seed "
                   "(default: the scenario's)")
    p.add_argument("--method", choices=("auto", "exact", "nsga2"), help="search method "
                   "(default: the scenario's, normally auto = exact where it finishes)")
    p.add_argument("--budget", type=count("--budget", 100, 10_000_000),
                   help="NSGA-II evaluations")
    p.add_argument("--quiet", action="store_true", help="print only errors")
    p.add_argument("--force", action="store_true", help="overwrite a non-empty output folder")
    p.set_defaults(func=run)


class _Bar:
    """A progress bar on stderr for searches that take more than a moment."""

    def __init__(self, enabled: bool) -> None:
        self.enabled = enabled and sys.stderr.isatty()
        self.last = -1

    def __call__(self, done: int, total: int) -> None:
        if not self.enabled:
            return
        pct = min(100, int(100 * done / max(total, 1)))
        if pct != self.last:
            self.last = pct
            bar = "#" * (pct // 4) + "-" * (25 - pct // 4)
            print(f"\r  searching [{bar}] {pct:3d}% ({done}/{total})", end="",
                  file=sys.stderr, flush=True)

    def close(self) -> None:
        if self.enabled and self.last >= 0:
            print(file=sys.stderr)


def run(args: argparse.Namespace) -> int:
    """Run the search and write every output file."""
    import stackopt
    from stackopt.errors import Interrupted
    from stackopt.outputs.bundle import write_all
    from stackopt.outputs.files import prepare_out_dir
    from stackopt.outputs.resultdir import pause_point

    out = Path(args.out) if args.out is not None else None
    if out is not None:  # a bad --out is refused before the inputs are even read
        out = prepare_out_dir(out, args.force)
    inp = load_inputs(args.scenario, args.costs)
    if out is None:
        out = prepare_out_dir(Path("stackopt-out") / safe_dirname(inp.scenario.name),
                              args.force)
    say = (lambda *a: None) if args.quiet else _say
    say(f"stackopt: {inp.scenario.name} priced by {inp.table.fab}"
        + (" (built-in demo)" if inp.demo else ""))
    bar = _Bar(not args.quiet)
    try:
        pause_point("search")
        result = stackopt.optimize(inp.scenario, inp.table, seed=args.seed,
                                   method=args.method, budget=args.budget, progress=bar)
        bar.close()
        extra = {"inputs": {"scenario": str(inp.scenario_path.name),
                            "cost_table": str(inp.table_path.name), "sha256": inp.hashes()}}
        write_all(result, out, force=args.force, extra_summary=extra)
    except Interrupted as exc:
        bar.close()
        if exc.out is None:
            exc.out = out
        raise
    if args.quiet:
        return 0
    cur = inp.table.currency
    say(f"  method {result.method}: {result.space_size:,} stackups in the space, "
        f"{result.evaluated:,} evaluated, {int(result.on_front.sum())} on the front")
    rows = []
    for key, label in PICK_LABELS.items():
        i = result.picks[key]
        if i is None:
            rows.append([label, "-", "-", "-", "-", "none"])
            continue
        rec = result.record(i)
        rows.append([label, rec["id"], str(rec["layers"]), money(rec["unit_cost"], cur),
                     money(rec["lot_cost"], cur), f"{rec['margin_dB']:+.1f} dB"])
    say(table(rows, ["pick", "id", "layers", "per board", "per lot", "margin"]))
    if not result.feasible.any():
        say("  No candidate satisfies the fab's and the scenario's constraints. Nearest:")
        for i in result.closest(3):
            rec = result.record(i)
            say(f"    {rec['id']} ({rec['layers']} layers): violates "
                + "; ".join(rec["violations"]))
    elif result.picks["cheapest_meeting_requirements"] is None:
        say("  No candidate meets every requirement. Closest:")
        for i in result.closest(3):
            rec = result.record(i)
            fails = [f"{r.label} short by {r.min_attenuation - rec['attenuation_dB'][r.key]:.1f} dB"
                     for r in inp.scenario.requirements
                     if rec["attenuation_dB"][r.key] is not None
                     and rec["attenuation_dB"][r.key] < r.min_attenuation]
            say(f"    {rec['id']} ({rec['layers']} layers, {money(rec['unit_cost'], cur)}): "
                + "; ".join(fails))
    say(f"  report: {out / 'report.html'}")
    return 0
