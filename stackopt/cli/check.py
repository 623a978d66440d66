"""``stackopt check``: validate a scenario and cost table and show what was understood."""

from __future__ import annotations

import argparse

from stackopt.cli.common import load_inputs, table
from stackopt.cli.registry import help_of
from stackopt.cli.text import say
from stackopt.units import format_quantity as fq


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``check`` command."""
    p = sub.add_parser("check", help=help_of("check"),
                       description="Validate a scenario and its cost table and print what "
                       "stackopt understood, with units. Exit 0 if valid, 2 if not.",
                       epilog="example: stackopt check scenarios/harmonic_lowpass.yaml "
                       "--costs cost_tables/volume.yaml")
    p.add_argument("scenario", help="scenario YAML")
    p.add_argument("--costs", metavar="TABLE", help="fab cost table YAML")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Load, validate and describe."""
    from stackopt.circuit import compile_circuit
    from stackopt.model.routing import layer_words
    from stackopt.outputs.circuit_echo import (
        ELEMENT_HEAD,
        GROUND_HEAD,
        element_rows,
        ground_rows,
    )
    from stackopt.outputs.reasons import rules
    from stackopt.search.genome import decode_genome, genome_bounds
    from stackopt.search.problem import Problem

    inp = load_inputs(args.scenario, args.costs)
    sc, tb = inp.scenario, inp.table
    _feasibility(inp)
    compiled = compile_circuit(sc.circuit)
    problem = Problem(sc, tb)
    sp = problem.space
    say(f"scenario  {sc.name}  ({inp.scenario_path})" + ("  [invented]" if sc.invented else ""))
    say(f"cost table  {tb.fab}, {tb.currency}  ({inp.table_path})"
          + ("  [invented]" if tb.invented else ""))
    b = sc.board
    say(f"board  {fq(b.width, 'length')} x {fq(b.height, 'length')}, quantity {b.quantity:,}")
    c = sc.circuit
    say(f"circuit  z0 {fq(c.z0, 'impedance')}, ports {c.input} -> {c.output}, "
          f"{compiled.n_elements} elements ({', '.join(compiled.names)}), "
          f"{len(compiled.conn_names)} ground connections")
    say(table(element_rows(c), ELEMENT_HEAD))  # generated filters expanded, with units
    grows = ground_rows(c)
    if grows:
        say(table(grows, GROUND_HEAD))
    for note in problem.placed[1]:
        say("note: " + note)
    rows = []
    for r in sc.requirements:
        where = (fq(r.frequency, "frequency", 6) if r.frequency is not None else  # as given
                 f"{fq(r.band[0], 'frequency', 6)} .. {fq(r.band[1], 'frequency', 6)}")  # type: ignore[index]
        rows.append([r.label, where, f">= {r.min_attenuation:g} dB"])
    if rows:
        say(table(rows, ["requirement", "at", "attenuation"]))
    if sc.passband_words is not None:  # where the report measures the passband losses
        from stackopt.model.scenario import DESIGN_BAND_NOTE

        say(f"passband  {sc.passband_words}"
            + ("" if sc.passband is not None else f" ({DESIGN_BAND_NOTE})"))
    for ln in sc.lines:
        mw = f", at most {fq(ln.max_width, 'length')} wide" if ln.max_width else ""
        what = (f"{fq(ln.target, 'impedance')} differential, spacing "
                f"{fq(ln.spacing, 'length')}" if ln.spacing is not None
                else fq(ln.target, "impedance"))
        j = sc.lines.index(ln)
        on = [f"L{rt.layer + 1}" for rt in problem.routes if rt.line == j]
        where = layer_words(ln.type, ln.layer_rule, "every")
        say(f"line  {ln.name}: {ln.type} on {where} ({', '.join(on) or 'none offered'}), "
            f"{what}{mw}")
    w = sc.space.thickness
    say("space  layers " + ", ".join(str(a.n_layers) + " " + a.name for a in sp.arrangements))
    if sp.constructions:
        say(f"       only the fab's standard constructions: "
              f"{', '.join(b[0] for b in sp.constructions)}")
    say(f"       {len(sp.options['prepreg'])} prepreg openings, {len(sp.options['core'])} "
          f"cores; copper {', '.join(fq(x, 'length') for x in sp.copper)}; drills "
          f"{', '.join(fq(x, 'length') for x in sp.drills)}; vias per ground "
          f"{', '.join(map(str, sp.vias))}")
    if w is not None:
        lo, hi = w.bounds
        say(f"       finished thickness {fq(lo, 'length')} .. {fq(hi, 'length')}"
              + ("; symmetric only" if sc.space.symmetric else ""))
    if sp.mitigations:
        say(f"       mitigations: {', '.join(sp.mitigations)}")
    say(f"       {sp.size:,} stackups in the space")
    cal = sc.search.calibration
    if cal is not None and not isinstance(cal, str):
        fac = ", ".join(f"{m} x{k:.3g}" for m, k in cal.factors().items())
        say(f"calibration  {cal.file}: {len(cal.data.coupons)} coupon(s); factors {fac}; "
            f"ranking model {sc.search.via_model} x{sc.search.via_scale(sc.search.via_model):.3g}")
    codes = problem.evaluate(decode_genome(sp, genome_bounds(sp)[0][None, :])).violations
    say("constraints every candidate must meet:")
    for text in rules(problem, codes):
        say(f"  - {text}")
    say("ok")
    return 0


def _feasibility(inp) -> None:
    """What ``optimize`` would drop or refuse: warnings, or the first error (exit 2)."""
    import warnings

    from stackopt.errors import InputError, StackoptWarning
    from stackopt.search.feasibility import fab_findings

    for f in fab_findings(inp.scenario, inp.table):
        if f.level == "error":
            raise InputError(f.message, file=inp.scenario_path, key=f.key, fix=f.fix)
        warnings.warn(StackoptWarning(f.message, file=inp.scenario_path, key=f.key,
                                      fix=f.fix), stacklevel=2)
