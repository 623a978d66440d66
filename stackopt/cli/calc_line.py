"""``stackopt calc line``: impedance of a trace, or the width for a target impedance.

Prints one JSON object with ``--json`` (keys at least ``z0_ohm``, ``width_m``,
``eps_eff``; for stripline ``eps_eff`` equals ``er``), otherwise a short table.
"""

from __future__ import annotations

import argparse
import math
from typing import Any

import numpy as np

from stackopt.cli.calc import calculator
from stackopt.cli.options import choice, quantity
from stackopt.cli.registry import CALCULATORS, help_of
from stackopt.errors import InputError
from stackopt.physics.constants import C0
from stackopt.physics.coplanar import cpwg
from stackopt.physics.lines import MICROSTRIP_MODELS, microstrip, stripline
from stackopt.physics.synthesis import line_impedance, synthesize_width
from stackopt.units import format_quantity

#: Line types this calculator offers.
LINE_TYPES = ("microstrip", "stripline", "cpwg")
#: Width search range for --target [m].
WIDTH_RANGE = (10e-6, 50e-3)
#: Accepted relative permittivity.
ER_RANGE = (1.0, 20.0)

EPILOG = """\
examples:
  stackopt calc line --type microstrip --height 1.6mm --er 4.5 --target 50ohm
  stackopt calc line --type microstrip --height 7.5mil --er 4.2 --width 0.35mm --json
  stackopt calc line --type stripline --height 0.4mm --er 4.2 --copper 17um --target 50
  stackopt calc line --type cpwg --height 0.063in --er 4.5 --gap 0.2mm --target 50

--height is the dielectric from the trace to its plane; for stripline it is the
plane-to-plane spacing, with the trace midway. Microstrip models: hammerstad-jensen
(default; Hammerstad & Jensen 1980), ipc-2141 (IPC-2141A closed form, quick, several per
cent off on thin dielectrics), wheeler (Wheeler 1977). Stripline: Cohn 1954 with
Wheeler's 1978 thickness correction. CPWG: Ghione & Naldi 1984 (coplanar grounds
stitched to the plane below). All quasi-static: no dispersion, no loss.
"""


def _er(text: str) -> float:
    """Parse ``--er``: a finite number in :data:`ER_RANGE` (argparse ``type=``)."""
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
        "coplanar trace from its width, or the width that gives a target impedance. "
        "Lengths take mm, um, mil, in or bare metres.",
        epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--type", required=True, dest="line_type", metavar="TYPE",
                   type=choice(LINE_TYPES, "line type"),
                   help=f"one of {', '.join(LINE_TYPES)}")
    p.add_argument("--height", required=True, metavar="LENGTH",
                   type=quantity("length", "--height"),
                   help="trace-to-plane dielectric; stripline: plane-to-plane spacing")
    p.add_argument("--er", required=True, metavar="ER", type=_er,
                   help="relative permittivity of the dielectric (1 to 20)")
    p.add_argument("--copper", default=35e-6, metavar="LENGTH",
                   type=quantity("length", "--copper", positive=False),
                   help="copper thickness, e.g. 35um or 1oz (default: 35 um)")
    size = p.add_mutually_exclusive_group(required=True)
    size.add_argument("--width", metavar="LENGTH", type=quantity("length", "--width"),
                      help="trace width: give the impedance")
    size.add_argument("--target", metavar="OHM", type=quantity("impedance", "--target"),
                      help="target impedance: give the width")
    p.add_argument("--gap", metavar="LENGTH", type=quantity("length", "--gap"),
                   help="cpwg only (required there): trace edge to coplanar ground copper")
    p.add_argument("--model", default=None, metavar="MODEL",
                   type=choice(MICROSTRIP_MODELS, "model"),
                   help=f"microstrip only: {', '.join(MICROSTRIP_MODELS)} "
                   f"(default: {MICROSTRIP_MODELS[0]})")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def _check(args: argparse.Namespace) -> None:
    """Cross-option checks argparse cannot do; one-line InputError on failure."""
    kind = args.line_type
    if args.copper < 0:
        raise InputError(f"copper thickness {args.copper:g} m is negative", key="--copper",
                         fix="give 0 or a positive thickness, e.g. 35um")
    if kind == "cpwg" and args.gap is None:
        raise InputError("a cpwg needs the gap to its coplanar ground", key="--gap",
                         fix="add e.g. --gap 0.2mm")
    if kind != "cpwg" and args.gap is not None:
        raise InputError(f"--gap applies to --type cpwg, not {kind}", key="--gap",
                         fix="drop --gap or use --type cpwg")
    if kind != "microstrip" and args.model is not None:
        raise InputError(f"--model applies to --type microstrip, not {kind}", key="--model",
                         fix="drop --model")
    if kind == "stripline" and args.copper >= args.height:
        raise InputError(
            f"copper {format_quantity(args.copper, 'length')} does not fit between planes "
            f"{format_quantity(args.height, 'length')} apart", key="--copper",
            fix="for stripline --height is the plane-to-plane spacing; give a thinner "
            "copper or a larger --height")


def _options(args: argparse.Namespace) -> dict[str, Any]:
    """Kind-specific keywords for :func:`~stackopt.physics.synthesis.line_impedance`."""
    if args.line_type == "cpwg":
        return {"gap": args.gap}
    if args.line_type == "microstrip":
        return {"model": args.model or MICROSTRIP_MODELS[0]}
    return {}


def _width(args: argparse.Namespace) -> float:
    """Return the given width, or synthesize one for ``--target`` (InputError if none)."""
    if args.width is not None:
        return args.width
    kw = _options(args)
    w, ok = synthesize_width(args.target, args.height, args.er, args.copper,
                             args.line_type, *WIDTH_RANGE, **kw)
    if bool(ok):
        return float(w)
    z_ends = line_impedance(np.array(WIDTH_RANGE), args.height, args.er, args.copper,
                            args.line_type, **kw)
    lo_w, hi_w = (format_quantity(x, "length") for x in WIDTH_RANGE)
    reach = ", ".join(format_quantity(z, "impedance") for z in z_ends[::-1]
                      if math.isfinite(z)) or "none"
    raise InputError(
        f"no width from {lo_w} to {hi_w} gives {format_quantity(args.target, 'impedance')} "
        f"(ends of the range: {reach})", key="--target",
        fix="change --height or --er, or pick a target inside that range")


def compute(args: argparse.Namespace) -> dict[str, Any]:
    """Return the calculator's result as a JSON-ready dict (SI units in the key names)."""
    _check(args)
    w = _width(args)
    kind, h, er, t = args.line_type, args.height, args.er, args.copper
    if kind == "microstrip":
        z, e = microstrip(w, h, er, t, _options(args)["model"])
    elif kind == "stripline":
        z, e = stripline(w, h, er, t), er
    else:
        z, e = cpwg(w, args.gap, h, er, t)
    z0, eps = float(z), float(e)
    if not math.isfinite(z0) or z0 <= 0:
        raise InputError(f"the {kind} model gives no impedance for this geometry",
                         key="--width" if args.width is not None else "--target",
                         fix="check that copper is much thinner than the gap and height")
    delay = math.sqrt(eps) / C0
    result: dict[str, Any] = {
        "type": kind,
        "model": _options(args).get("model"),
        "z0_ohm": z0,
        "width_m": w,
        "eps_eff": eps,
        "height_m": h,
        "er": er,
        "copper_m": t,
        "gap_m": args.gap,
        "target_ohm": args.target,
        "delay_s_per_m": delay,
        "inductance_H_per_m": z0 * delay,
        "capacitance_F_per_m": delay / z0,
    }
    return result


def render(result: dict[str, Any]) -> str:
    """Return the human-readable table for a :func:`compute` result."""
    name = result["type"] + (f" ({result['model']})" if result["model"] else "")
    height = "plane spacing" if result["type"] == "stripline" else "height"
    rows = [
        ("line", name),
        ("width", format_quantity(result["width_m"], "length")
         + ("  (for the target)" if result["target_ohm"] is not None else "")),
        ("impedance", format_quantity(result["z0_ohm"], "impedance")),
        ("eps_eff", f"{result['eps_eff']:.3f}"),
        (height, format_quantity(result["height_m"], "length")),
        ("er", f"{result['er']:g}"),
        ("copper", format_quantity(result["copper_m"], "length")),
    ]
    if result["gap_m"] is not None:
        rows.append(("gap", format_quantity(result["gap_m"], "length")))
    rows += [
        ("delay", f"{result['delay_s_per_m'] * 1e9:.3g} ps/mm"),
        ("L per length", f"{result['inductance_H_per_m'] * 1e6:.3g} nH/mm"),
        ("C per length", f"{result['capacitance_F_per_m'] * 1e9:.3g} pF/mm"),
    ]
    lines = [f"  {label:<14}{value}" for label, value in rows]
    lines.append("quasi-static closed form: no dispersion or loss; confirm with the fab's "
                 "field solver before ordering")
    return "\n".join(lines)


#: Compute and print; the ``func`` of ``stackopt calc line``.
run = calculator(compute, render)
