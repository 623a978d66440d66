"""Report sections after the first screen: risks, the stackup for the fab drawing, the
model spread, assumptions and cautions (plain-text blocks, see
:mod:`stackopt.outputs.report_render`)."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from stackopt.model.mitigations import MITIGATIONS
from stackopt.outputs.case import four_layer_case
from stackopt.outputs.facts import (
    db,
    mm,
    passband_losses,
    passband_text,
    plural,
    selected_index,
    unique_picks,
)
from stackopt.outputs.report_calibration import calibration_note
from stackopt.outputs.report_lines import WIDE_TRACE, impedance_table, layer_lines, line_risks
from stackopt.search.picks import PICKS
from stackopt.units import COPPER_M_PER_OZ

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["risks", "stackup_table", "spread_table", "assumptions", "cautions",
           "method_line", "OZ", "WIDE_TRACE", "THIN_DIELECTRIC", "SAFETY_CAUTION"]

#: One ounce of copper foil per square foot, as finished thickness, m (the one constant:
#: :data:`stackopt.units.COPPER_M_PER_OZ`).
OZ = COPPER_M_PER_OZ
#: Dielectrics thinner than this get the safety-insulation caution spelled out (0.4 mm is
#: a distance-through-insulation figure often met in safety standards; from memory).
THIN_DIELECTRIC = 0.4e-3
SAFETY_CAUTION = (
    "If any net on this board carries mains or another hazardous voltage, the insulation "
    "through the dielectric between layers is a safety matter that this tool does not "
    "check: follow the safety standard that applies to the product, the fab's qualified "
    "materials and the advice of a licensed or otherwise qualified professional.")


def method_line(result: Result) -> str:
    """The tool, the method and the counts in one sentence."""
    from stackopt import __version__

    name = {"exact": "exact search (pruned enumeration; the front is exact)",
            "nsga2": "NSGA-II evolutionary search (an approximation of the front)"}
    return (f"stackopt {__version__}, {name.get(result.method, result.method)}: "
            f"{result.space_size:,} stackups in the design space, {result.evaluated:,} "
            f"evaluated, {result.n:,} kept, {int(result.feasible.sum()):,} feasible, "
            f"{int(result.meets.sum()):,} meeting every requirement; seed {result.seed}.")


def _copper_weight(t: float) -> str:
    oz = t / OZ
    return f"{oz:.2g} oz ({t * 1e6:.0f} um)"


#: Worst passband insertion loss above which the report names it a risk, dB: half the
#: power lost (common practice, no source).
PASSBAND_LOSS_RISK = 3.0


def risks(result: Result) -> list[str]:
    """Risks of the choice, in words (line widths, safety insulation, model spread,
    margin, lead time, layout rules the two-layer figure depends on)."""
    ev, sc = result.evaluation, result.problem.scenario
    g = ev.geometry
    out: list[str] = []
    sel = selected_index(result)
    c = four_layer_case(result)
    two = c.best_two
    cases = [(two, "best two-layer"), (sel, "recommended")]
    if two is not None and two == sel:
        cases = [(sel, "recommended (also the best two-layer)")]
    for i, what in cases:
        if i is None:
            continue
        out += line_risks(result, i, what)
        if i == two:
            mit = [MITIGATIONS[m].words for m in result.problem.space.mitigations
                   if g.flags[m][i]]
            if mit:
                out.append(f"The best two-layer board's figures rely on {' and '.join(mit)}: "
                           "layout rules the designer and the fab must actually follow.")
    if sel is not None:
        st = result.stackup(sel)
        thin = min((d.thickness for d in st.dielectrics), default=math.inf)
        if thin < THIN_DIELECTRIC:
            out.append(f"The recommended stackup has dielectrics down to {mm(thin)} between "
                       f"copper layers. {SAFETY_CAUTION}")
        if result.spread:
            worst = min(((float(v[sel]), m) for m, v in result.spread.items()
                         if math.isfinite(float(v[sel]))), default=None)
            if worst is not None and worst[0] < 0 <= ev.margin[sel]:
                out.append(f"Under the {worst[1]} via model the recommended stackup misses "
                           f"the requirements by {-worst[0]:.1f} dB: the models disagree; "
                           "leave margin or confirm by measurement.")
        if sc.requirements and 0 <= ev.margin[sel] < 3.0:
            out.append(f"The recommended stackup has only {db(ev.margin[sel])} of margin; "
                       "part tolerances and the fab's thickness tolerance can eat it.")
        pband = passband_losses(result, [sel])
        if pband is not None and pband[0][0] > PASSBAND_LOSS_RISK:
            out.append(f"The recommended stackup loses {db(pband[0][0])} in the passband "
                       f"({sc.passband_words}): the mounted parts' "
                       "parasitics have moved the filter's edge into the band the signal "
                       "uses; retune the filter (a higher cutoff) or check the passband.")
        if c.two is not None and ev.lead_time_days[sel] > ev.lead_time_days[c.two]:
            out.append(f"Lead time grows from {ev.lead_time_days[c.two]:g} (cheapest "
                       f"two-layer board) to {ev.lead_time_days[sel]:g} working days.")
    if not out:
        out.append("No specific risk found beyond the cautions below.")
    return out


def stackup_table(result: Result) -> list[tuple]:
    """The recommended stackup as a table for the fab drawing."""
    sel = selected_index(result)
    if sel is None:
        return [("h2", "Recommended stackup"), ("p", "No candidate to recommend.")]
    ev, tab = result.evaluation, result.problem.table
    st = result.stackup(sel)
    lines = layer_lines(result.lines(sel))
    rows = []
    cu = 0
    for rec in st.to_records():
        t = rec["thickness_m"]
        if rec["kind"] == "copper":
            cu += 1
            rows.append([rec["name"], "copper", rec["role"], f"{t * 1e6:.0f} um", "", "",
                         _copper_weight(t), "; ".join(lines.get(f"L{cu}", []))])
        else:
            rows.append(["", rec["material"], f"{rec['kind']} ({rec['plies']} ply)"
                         if rec["kind"] == "prepreg" else rec["kind"], mm(t),
                         f"{rec['er']:.2f}", f"{rec['df']:.3f}", "", ""])
    meets = "meets every requirement" if result.meets[sel] else "closest to the requirements"
    mit = [MITIGATIONS[m].label for m in result.problem.space.mitigations
           if ev.geometry.flags[m][sel]]
    return [
        ("h2", f"Recommended stackup: {result.ids[sel]} ({meets})"),
        ("table", ["Layer", "Material", "Kind / role", "Thickness", "Dk", "Df", "Copper",
                   "Controlled impedance"], rows),
        ("p", f"Finished thickness {mm(st.thickness)} ± "
              f"{tab.capabilities.thickness_tolerance * 100:.0f} % (over copper, before "
              f"mask and plating); drill {mm(ev.geometry.drill[sel])}; "
              f"{plural(int(ev.geometry.vias[sel]), 'via')} per ground connection; "
              f"mitigations: {', '.join(mit) or 'none'}. Widths by field solve (table "
              "below): ask the fab to adjust them to its materials."),
        *impedance_table(result, sel),
    ]


def spread_table(result: Result) -> list[tuple]:
    """Margin of each pick under every via model."""
    if not result.spread:
        return []
    models = list(result.spread)
    rows = []
    for i, names in unique_picks(result):
        vals = [float(result.spread[m][i]) for m in models]
        fin = [v for v in vals if math.isfinite(v)]
        rows.append([" / ".join(PICKS[n].report for n in names), result.ids[i],
                     *[db(v, sign=True) for v in vals],
                     f"{max(fin) - min(fin):.1f} dB" if fin else "n/a"])
    return [("h2", "Model spread"),
            ("p", "Margin of each pick under every ground-via model (the search ranked with "
                  f"{result.problem.scenario.search.via_model}). A large spread means the "
                  "answer depends on the model: leave margin or measure."),
            ("table", ["Pick", "Candidate", *models, "Spread"], rows)]


def assumptions(result: Result) -> list[str]:
    """Models, quantities and data sources used."""
    sc, tab = result.problem.scenario, result.problem.table
    b = sc.board
    fs = ", ".join(f"{r.label} ≥ {r.min_attenuation:g} dB" for r in sc.requirements)
    return [
        f"Board {mm(b.width)} x {mm(b.height)}, lot of {b.quantity:,}; prices from the cost "
        f"table '{tab.fab}' in {tab.currency}"
        + (" (invented demo data)." if tab.invented else "."),
        f"Requirements: {fs or 'none'}; margin is the worst of (attenuation - required).",
        *([] if sc.passband_hz is None else [
            f"Passband: {passband_text(result)}; the picks' insertion and return loss are "
            "the worst over it."]),
        f"Circuit: the scenario's circuit at {sc.circuit.z0:g} ohm, solved by nodal "
        "analysis with each ground connection's partial inductance (pad trace plus vias, "
        "mutual inductance between vias) in series with its element.",
        f"Ground-via model for ranking: {sc.search.via_model}{calibration_note(result)}; the "
        "model spread re-scores the front and the picks under every via model.",
        "Controlled-impedance widths: every line on every layer that carries it, sized by "
        "the closed form of its type on that layer's dielectrics with the catalogue Dk "
        "(the search), then checked and refined by the built-in 2-D field solver for the "
        "picks (the impedance table).",
        "Stackups: foil lamination, outer dielectrics prepreg, inner ones alternating core / "
        "prepreg; only materials in the cost table; "
        + ("symmetric constructions." if sc.space.symmetric else "asymmetric allowed."),
    ]


def cautions(result: Result) -> list[str]:
    """What the numbers are not."""
    out = [
        "Every figure is a closed-form estimate, not a field-solver result or a measurement. "
        "Confirm the stackup, the pressed thicknesses and the impedances with the fab before "
        "release; the fab will adjust widths to its own materials.",
        "Costs come from the cost table, not from a quote; confirm them with the fab.",
        SAFETY_CAUTION,
    ]
    if result.method == "nsga2":
        out.append("The search was evolutionary: the front is approximate and a better "
                   "stackup may exist that was not evaluated.")
    return out
