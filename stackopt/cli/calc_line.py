"""``stackopt calc line``: impedance of a trace or a differential pair, or the width for a
target impedance; by closed form (default) or by the built-in 2-D field solver.

Prints one JSON object with ``--json`` (keys ``z0_ohm``, ``z_odd_ohm``, ``z_even_ohm``,
``z_diff_ohm``, ``eps_eff``, ``solver``, ``width_m`` …; the pair keys are null for a single
trace), otherwise a short table. The physics (and scipy) is imported inside
:func:`compute` only, so that the calculator starts fast.
"""

from __future__ import annotations

import argparse
import math
from typing import Any

from stackopt.cli.calc import calculator
from stackopt.cli.options import choice, quantity
from stackopt.cli.registry import CALCULATORS, help_of
from stackopt.errors import InputError
from stackopt.physics.constants import C0
from stackopt.physics.lines import MICROSTRIP_MODELS
from stackopt.physics.linetypes import LINE_TYPES, PAIR_TYPES, SOLVERS, STRIPLINE_TYPES
from stackopt.units import format_quantity

#: Width search range for --target / --target-diff [m].
WIDTH_RANGE = (10e-6, 50e-3)
#: Accepted relative permittivity.
ER_RANGE = (1.0, 20.0)

EPILOG = """\
examples:
  stackopt calc line --type microstrip --height 1.6mm --er 4.5 --target 50ohm
  stackopt calc line --type microstrip --height 7.5mil --er 4.2 --width 0.35mm --json
  stackopt calc line --type stripline --height 0.4mm --er 4.2 --copper 17um --target 50
  stackopt calc line --type stripline --height 0.5mm --offset 0.1mm --er 4.2 --target 50
  stackopt calc line --type stripline --height 0.5mm --offset -0.05mm --er 4.6 \
      --er-above 3.9 --width 0.12mm --solver field
  stackopt calc line --type cpwg --height 0.063in --er 4.5 --gap 0.2mm --target 50
  stackopt calc line --type diff-microstrip --height 0.1mm --er 4.2 --spacing 0.15mm \\
      --target-diff 100
  stackopt calc line --type diff-stripline --height 0.4mm --er 4.2 --width 0.1mm \\
      --spacing 0.2mm --solver field --json
  stackopt calc line --type microstrip --height 0.1mm --er 4.2 --width 0.18mm \\
      --solver field --mask 20um --mask-er 3.5

--height is the dielectric from the trace to its plane; for stripline types it is the
plane-to-plane spacing, with the trace midway unless --offset moves its centre up (+) or
down (-); --er-above gives the dielectric from the trace's bottom face to the upper plane
its own Dk (a trace etched on a core under a prepreg of another Dk; the closed forms take
the thickness-weighted mean Dk, the field solver both as they are). Pairs: --width each
trace, --spacing edge to edge; Zdiff = 2 Zodd, Zcommon = Zeven / 2; z0 is one trace of the
pair alone. Closed forms: microstrip hammerstad-jensen
(default; Hammerstad & Jensen 1980), ipc-2141 (quick, several per cent off on thin
dielectrics), wheeler (Wheeler 1977); stripline Cohn 1954 with Wheeler's 1978 thickness
ratio; cpwg Ghione & Naldi 1984; diff-microstrip Kirschning & Jansen 1984; diff-stripline
Cohn 1955. --solver field solves the cross-section (finite volumes, about 0.5 % or better;
docs/models.md) and sizes the width with it; it alone takes a solder mask (--mask). All
quasi-static: no dispersion, no loss.
"""


def _er(text: str) -> float:
    """Parse a relative permittivity: a finite number in :data:`ER_RANGE`."""
    try:
        x = float(text)
    except ValueError:
        x = math.nan
    lo, hi = ER_RANGE
    if not lo <= x <= hi:  # also rejects NaN
        raise argparse.ArgumentTypeError(
            f"relative permittivity {text!r} is not a number from {lo:g} to {hi:g}; "
            "give e.g. 4.5 for FR-4")
    return x


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``line`` calculator to ``stackopt calc``."""
    p = sub.add_parser(
        "line", help=help_of("line", CALCULATORS),
        description="Characteristic impedance of a microstrip, stripline or grounded "
        "coplanar trace, or the even/odd/differential impedances of an edge-coupled "
        "pair, from its width; or the width that gives a target impedance. Lengths take "
        "mm, um, mil, in or bare metres.",
        epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--type", required=True, dest="line_type", metavar="TYPE",
                   type=choice(LINE_TYPES, "line type"),
                   help=f"one of {', '.join(LINE_TYPES)}")
    p.add_argument("--height", required=True, metavar="LENGTH",
                   type=quantity("length", "--height", kind="dielectric"),
                   help="trace-to-plane dielectric; stripline types: plane-to-plane spacing")
    p.add_argument("--er", required=True, metavar="ER", type=_er,
                   help="relative permittivity of the dielectric (1 to 20)")
    p.add_argument("--er-above", default=None, dest="er_above", metavar="ER", type=_er,
                   help="stripline types: Dk from the trace's bottom face to the upper "
                   "plane (default: --er)")
    p.add_argument("--copper", default=35e-6, metavar="LENGTH",
                   type=quantity("length", "--copper", positive=False, kind="copper"),
                   help="copper thickness, e.g. 35um or 1oz (default: 35 um)")
    size = p.add_mutually_exclusive_group(required=True)
    size.add_argument("--width", metavar="LENGTH",
                      type=quantity("length", "--width", kind="trace_width"),
                      help="trace width (each trace of a pair): give the impedance")
    size.add_argument("--target", metavar="OHM",
                      type=quantity("impedance", "--target", kind="line_impedance"),
                      help="single-ended target impedance: give the width")
    size.add_argument("--target-diff", metavar="OHM", dest="target_diff",
                      type=quantity("impedance", "--target-diff", kind="line_impedance"),
                      help="differential target (diff- types): give the width for --spacing")
    p.add_argument("--spacing", metavar="LENGTH",
                   type=quantity("length", "--spacing", kind="gap"),
                   help="diff- types only (required there): edge-to-edge spacing of the pair")
    p.add_argument("--gap", metavar="LENGTH", type=quantity("length", "--gap", kind="gap"),
                   help="cpwg only (required there): trace edge to coplanar ground copper")
    p.add_argument("--offset", metavar="LENGTH", type=quantity("length", "--offset",
                                                               positive=False),
                   help="stripline types: trace centre above (+) or below (-) the midplane; "
                   "write a negative one as --offset=-0.1mm")
    p.add_argument("--model", default=None, metavar="MODEL",
                   type=choice(MICROSTRIP_MODELS, "model"),
                   help=f"microstrip only: {', '.join(MICROSTRIP_MODELS)} "
                   f"(default: {MICROSTRIP_MODELS[0]})")
    p.add_argument("--solver", default="closed-form", metavar="SOLVER",
                   type=choice(SOLVERS, "solver"),
                   help="closed-form (default) or field (the built-in 2-D field solver)")
    p.add_argument("--mask", default=0.0, metavar="LENGTH",
                   type=quantity("length", "--mask", positive=False),
                   help="solder mask thickness over an outer-layer line (--solver field)")
    p.add_argument("--mask-er", default=3.5, dest="mask_er", metavar="ER", type=_er,
                   help="solder mask relative permittivity (default 3.5, common practice)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def _fail(message: str, key: str, fix: str) -> None:
    raise InputError(message, key=key, fix=fix)


def _check(args: argparse.Namespace) -> None:
    """Cross-option checks argparse cannot do; one-line InputError on failure."""
    kind = args.line_type
    strip, pair = kind in STRIPLINE_TYPES, kind in PAIR_TYPES
    if args.copper < 0:
        _fail(f"copper thickness {args.copper:g} m is negative", "--copper",
              "give 0 or a positive thickness, e.g. 35um")
    coplanar = LINE_TYPES[kind].coplanar
    if coplanar and args.gap is None:
        _fail("a cpwg needs the gap to its coplanar ground", "--gap", "add e.g. --gap 0.2mm")
    if not coplanar and args.gap is not None:
        _fail(f"--gap applies to --type cpwg, not {kind}", "--gap",
              "drop --gap or use --type cpwg")
    if pair and args.spacing is None:
        _fail(f"a {kind} pair needs the spacing between its traces", "--spacing",
              "add e.g. --spacing 0.2mm (edge to edge)")
    if not pair and args.spacing is not None:
        _fail(f"--spacing applies to the diff- types, not {kind}", "--spacing",
              f"drop --spacing or use --type diff-{'stripline' if strip else 'microstrip'}")
    if pair and args.target is not None:
        _fail(f"a {kind} pair is sized for its differential impedance", "--target",
              f"use --target-diff {2 * args.target:g} (Zdiff = 2 Zodd)")
    if not pair and args.target_diff is not None:
        _fail(f"--target-diff applies to the diff- types, not {kind}", "--target-diff",
              "use --target for a single trace")
    if (strip or coplanar) and args.model is not None:
        _fail(f"--model applies to --type microstrip, not {kind}", "--model", "drop --model")
    if pair and not strip and args.model not in (None, MICROSTRIP_MODELS[0]):
        _fail("the pair model builds on hammerstad-jensen only", "--model", "drop --model")
    if not strip and args.offset is not None:
        _fail(f"--offset applies to the stripline types, not {kind}", "--offset",
              "drop --offset")
    if not strip and args.er_above is not None:
        _fail(f"--er-above applies to the stripline types, not {kind}", "--er-above",
              "drop --er-above (a solder mask over an outer line is --mask / --mask-er)")
    if args.mask > 0 and (strip or args.solver != "field"):
        _fail("a solder mask is modelled by the field solver on outer-layer lines only",
              "--mask", "add --solver field (microstrip, cpwg, diff-microstrip), or drop "
              "--mask")
    if strip:
        gap = args.height / 2 - abs(args.offset or 0.0) - args.copper / 2
        if gap <= 0:
            _fail(f"copper {format_quantity(args.copper, 'length')} at offset "
                  f"{format_quantity(args.offset or 0.0, 'length')} does not fit between "
                  f"planes {format_quantity(args.height, 'length')} apart", "--copper",
                  "for stripline --height is the plane-to-plane spacing; give a thinner "
                  "copper, a smaller --offset or a larger --height")
        if pair and args.offset and args.solver != "field":
            _fail("an off-centre pair has no closed form here", "--offset",
                  "add --solver field, or drop --offset")


def _spec(args: argparse.Namespace):
    from stackopt.physics.linetypes import LineSpec

    kind, t = args.line_type, args.copper
    if kind in STRIPLINE_TYPES:
        h = args.height / 2 + (args.offset or 0.0) - t / 2
        return LineSpec(kind, h, args.er, t, h_above=args.height - h, er_above=args.er_above,
                        s=args.spacing)
    return LineSpec(kind, args.height, args.er, t, s=args.spacing, gap=args.gap,
                    mask_t=args.mask, mask_er=args.mask_er,
                    model=args.model or MICROSTRIP_MODELS[0])


def _width(args: argparse.Namespace, spec) -> float:
    """Return the given width, or synthesize one for the target (InputError if none)."""
    import numpy as np

    from stackopt.physics.linetypes import closed_form, line_width

    if args.width is not None:
        return args.width
    target = args.target if args.target is not None else args.target_diff
    w, ok = line_width(spec, target, *WIDTH_RANGE, solver=args.solver)
    if bool(ok):
        return float(w)
    key = "z_diff" if spec.pair else "z0"
    z_ends = closed_form(spec, np.array(WIDTH_RANGE))[key]
    lo_w, hi_w = (format_quantity(x, "length") for x in WIDTH_RANGE)
    reach = ", ".join(format_quantity(z, "impedance") for z in z_ends[::-1]
                      if math.isfinite(z)) or "none"
    option = "--target" if args.target is not None else "--target-diff"
    raise InputError(
        f"no width from {lo_w} to {hi_w} gives {format_quantity(target, 'impedance')} "
        f"(ends of the range: {reach})", key=option,
        fix="change --height, --er or --spacing, or pick a target inside that range")


def compute(args: argparse.Namespace) -> dict[str, Any]:
    """Return the calculator's result as a JSON-ready dict (SI units in the key names)."""
    from stackopt.physics.linetypes import closed_form, field

    _check(args)
    spec = _spec(args)
    w = _width(args, spec)
    if args.solver == "field":
        modes: dict[str, Any] = field(spec, w)
    else:
        modes = {k: float(v) for k, v in closed_form(spec, w).items()}
    z0, eps = modes["z0"], modes["eps_eff"]
    if not math.isfinite(z0) or z0 <= 0:
        raise InputError(f"the {spec.type} model gives no impedance for this geometry",
                         key="--width" if args.width is not None else "--target",
                         fix="check that copper is much thinner than the gap and height")

    def get(key: str) -> float | None:
        return modes.get(key) if spec.pair else None

    eps_line = float(modes["eps_odd"] if spec.pair else eps)  # a pair's signal: odd mode
    delay = math.sqrt(eps_line) / C0
    z_line = modes["z_odd"] if spec.pair else z0
    return {
        "type": spec.type, "solver": args.solver,
        "model": spec.model if "microstrip" in spec.type and args.solver != "field"
        else None,
        "z0_ohm": z0, "z_odd_ohm": get("z_odd"), "z_even_ohm": get("z_even"),
        "z_diff_ohm": get("z_diff"), "z_common_ohm": get("z_common"),
        "eps_eff": eps_line, "eps_odd": get("eps_odd"), "eps_even": get("eps_even"),
        "width_m": w, "spacing_m": args.spacing, "height_m": args.height,
        "offset_m": args.offset, "er": args.er, "er_above": args.er_above,
        "copper_m": args.copper, "gap_m": args.gap,
        "mask_m": args.mask or None, "mask_er": args.mask_er if args.mask else None,
        "target_ohm": args.target, "target_diff_ohm": args.target_diff,
        "field_error": modes.get("error"),
        "delay_s_per_m": delay, "inductance_H_per_m": z_line * delay,
        "capacitance_F_per_m": delay / z_line,
    }


def render(result: dict[str, Any]) -> str:
    """Return the human-readable table for a :func:`compute` result."""
    imp = (lambda key: format_quantity(result[key], "impedance"))  # noqa: E731
    name = result["type"] + (f" ({result['model']})" if result["model"] else "")
    strip = result["type"] in STRIPLINE_TYPES
    target = result["target_ohm"] is not None or result["target_diff_ohm"] is not None
    rows = [("line", name), ("solver", result["solver"]),
            ("width", format_quantity(result["width_m"], "length")
             + ("  (for the target)" if target else ""))]
    if result["z_diff_ohm"] is not None:
        rows += [("spacing", format_quantity(result["spacing_m"], "length")),
                 ("Zdiff", imp("z_diff_ohm")), ("Zodd", imp("z_odd_ohm")),
                 ("Zeven", imp("z_even_ohm")), ("Zcommon", imp("z_common_ohm")),
                 ("eps_eff odd", f"{result['eps_odd']:.3f}"),
                 ("eps_eff even", f"{result['eps_even']:.3f}"),
                 ("Z0 one trace", imp("z0_ohm"))]
    else:
        rows += [("impedance", imp("z0_ohm")), ("eps_eff", f"{result['eps_eff']:.3f}")]
    rows += [("plane spacing" if strip else "height",
              format_quantity(result["height_m"], "length"))]
    if result["offset_m"]:
        rows.append(("offset", format_quantity(result["offset_m"], "length")))
    rows += [("er", f"{result['er']:g}")]
    if result["er_above"] is not None:
        rows.append(("er above", f"{result['er_above']:g} (trace face to upper plane)"))
    rows += [("copper", format_quantity(result["copper_m"], "length"))]
    if result["gap_m"] is not None:
        rows.append(("gap", format_quantity(result["gap_m"], "length")))
    if result["mask_m"]:
        rows.append(("solder mask", f"{format_quantity(result['mask_m'], 'length')}, "
                     f"er {result['mask_er']:g}"))
    rows += [
        ("delay", f"{result['delay_s_per_m'] * 1e9:.3g} ps/mm"),
        ("L per length", f"{result['inductance_H_per_m'] * 1e6:.3g} nH/mm"),
        ("C per length", f"{result['capacitance_F_per_m'] * 1e9:.3g} pF/mm"),
    ]
    lines = [f"  {label:<14}{value}" for label, value in rows]
    if result["solver"] == "field":
        lines.append(f"2-D quasi-static field solve (grid error below "
                     f"{100 * result['field_error']:.2g} %): no dispersion or loss")
    else:
        lines.append("quasi-static closed form: no dispersion or loss; check with "
                     "--solver field and confirm with the fab before ordering")
    return "\n".join(lines)


#: Compute and print; the ``func`` of ``stackopt calc line``.
run = calculator(compute, render)
