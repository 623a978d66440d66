"""``stackopt calc via``: inductance of a ground via (or a row of them) down to a plane.

Prints one JSON object with ``--json`` (keys: ``model``, ``inductance_H``, and with
``--freq`` also ``s21_dB``, plus the inputs in SI and every model's value), otherwise a
short table that shows the spread between the models.
"""

from __future__ import annotations

import argparse
import math
from typing import Any

import numpy as np

from stackopt.cli.calc import calculator
from stackopt.cli.options import choice, count, quantity
from stackopt.cli.registry import CALCULATORS, help_of
from stackopt.errors import InputError, ModelError
from stackopt.physics.inductance import (
    DEFAULT_VIA_MODEL,
    GOLDFARB_PUCEL_FIT_RANGE,
    VIA_MODELS,
    goldfarb_pucel_in_range,
    ground_via_inductance,
)
from stackopt.physics.parallel import parallel_via_inductance, row_positions
from stackopt.physics.shunt import shunt_inductor_s21_db
from stackopt.units import format_quantity

EPILOG = """\
examples:
  stackopt calc via --depth 0.19mm --drill 0.3mm --freq 800MHz
  stackopt calc via --depth 7.5mil --drill 0.3mm --count 2 --pitch 1mm --json
  stackopt calc via --depth 0.063in --drill 0.016in --model johnson

models: goldfarb-pucel (default; Goldfarb & Pucel 1991, fitted for depths of about
0.1-0.63 mm), johnson (Johnson & Graham 1993, a rough, high estimate), rosa (partial
self-inductance of the barrel, Rosa 1908 / Grover 1946), image (image theory in the
plane). They differ by a factor of 2-8 for the same via; the table shows all of them.
"""


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``via`` calculator to ``stackopt calc``."""
    p = sub.add_parser(
        "via", help=help_of("via", CALCULATORS),
        description="Inductance of a via from a surface pad down to a ground plane, for "
        "one via or several in a row, with every model's value beside the chosen one. "
        "Lengths take mm, um, mil, in or bare metres; frequencies Hz, kHz, MHz, GHz.",
        epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--depth", required=True, metavar="LENGTH",
                   type=quantity("length", "--depth", kind="via_depth"),
                   help="pad-to-plane distance (dielectric thickness), e.g. 0.19mm or 7.5mil")
    p.add_argument("--drill", required=True, metavar="LENGTH",
                   type=quantity("length", "--drill", kind="drill"),
                   help="plated barrel diameter, e.g. 0.3mm")
    p.add_argument("--model", default=DEFAULT_VIA_MODEL, metavar="MODEL",
                   type=choice(VIA_MODELS, "model"),
                   help=f"one of {', '.join(VIA_MODELS)} (default: %(default)s)")
    p.add_argument("--count", default=1, metavar="N", type=count("--count", 1, 100),
                   help="vias in parallel, placed in a row (default: 1)")
    p.add_argument("--pitch", metavar="LENGTH",
                   type=quantity("length", "--pitch", kind="via_pitch"),
                   help="centre-to-centre spacing of the vias; needed when --count > 1")
    p.add_argument("--freq", metavar="FREQ", type=quantity("frequency", "--freq", kind="frequency"),
                   help="also give the transmission past the via as a shunt, e.g. 800MHz")
    p.add_argument("--z0", default=50.0, metavar="OHM",
                   type=quantity("impedance", "--z0", kind="z0"),
                   help="reference impedance of the line for --freq (default: 50 ohm)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def _check(args: argparse.Namespace) -> None:
    """Cross-option checks argparse cannot do; one-line InputError on failure."""
    if args.count > 1 and args.pitch is None:
        raise InputError(f"--count {args.count} needs the spacing of the vias", key="--pitch",
                         fix="add the centre-to-centre spacing, e.g. --pitch 1mm")
    if args.count > 1 and args.pitch < args.drill:
        raise InputError(
            f"{format_quantity(args.pitch, 'length')} is less than the drill "
            f"{format_quantity(args.drill, 'length')}, so the vias would overlap",
            key="--pitch", fix="give a pitch of at least the drill diameter")


def _inductances(args: argparse.Namespace) -> dict[str, float]:
    """Inductance [H] of the via group by every model (nan where a model gives <= 0)."""
    xy = row_positions(args.count, args.pitch if args.count > 1 else 0.0)
    out: dict[str, float] = {}
    for name in VIA_MODELS:  # a handful of models, not a batch
        single = float(ground_via_inductance(args.depth, args.drill, name))
        value = float(parallel_via_inductance(args.depth, args.drill, xy, name))
        out[name] = value if single > 0 and value > 0 else math.nan
    return out


def _finite(x: float) -> float | None:
    """JSON has no NaN: ``None`` for a value a model cannot give."""
    return x if math.isfinite(x) else None


def compute(args: argparse.Namespace) -> dict[str, Any]:
    """Return the calculator's result as a JSON-ready dict (SI units in the key names)."""
    _check(args)
    by_model = _inductances(args)
    value = by_model[args.model]
    if not math.isfinite(value):
        raise ModelError(
            f"the {args.model} model gives no positive inductance for depth/drill = "
            f"{args.depth / args.drill:.3g}", key="--model",
            fix="use --model goldfarb-pucel or rosa for vias this short and wide")
    result: dict[str, Any] = {
        "model": args.model,
        "inductance_H": value,
        "single_via_H": float(ground_via_inductance(args.depth, args.drill, args.model)),
        "depth_m": args.depth,
        "drill_m": args.drill,
        "count": args.count,
        "pitch_m": args.pitch if args.count > 1 else None,
        "goldfarb_pucel_in_range": bool(goldfarb_pucel_in_range(args.depth, args.drill)),
        "models_H": {name: _finite(x) for name, x in by_model.items()},
    }
    if args.freq is not None:
        result["freq_Hz"] = args.freq
        result["z0_ohm"] = args.z0
        result["s21_dB"] = float(shunt_inductor_s21_db(value, args.freq, args.z0))
        result["models_s21_dB"] = {
            name: (float(shunt_inductor_s21_db(x, args.freq, args.z0))
                   if math.isfinite(x) else None) for name, x in by_model.items()}
    return result


def render(result: dict[str, Any]) -> str:
    """Return the human-readable table for a :func:`compute` result."""
    n = result["count"]
    group = "1 via" if n == 1 else (
        f"{n} vias in a row at {format_quantity(result['pitch_m'], 'length')} pitch")
    lines = [f"ground via: depth {format_quantity(result['depth_m'], 'length')}, drill "
             f"{format_quantity(result['drill_m'], 'length')}, {group}"]
    freq = result.get("freq_Hz")
    head = f"  {'model':<16}{'inductance':>12}"
    if freq is not None:
        head += f"{'S21 at ' + format_quantity(freq, 'frequency'):>20}"
    lines.append(head)
    for name, x in result["models_H"].items():
        mark = "*" if name == result["model"] else " "
        row = f"{mark} {name:<16}{format_quantity(x, 'inductance') if x else 'n/a':>12}"
        if freq is not None:
            s21 = result["models_s21_dB"][name]
            row += f"{f'{s21:.1f} dB' if s21 is not None else 'n/a':>20}"
        lines.append(row)
    values = np.array([x for x in result["models_H"].values() if x])
    lines.append(f"spread: {format_quantity(values.min(), 'inductance')} to "
                 f"{format_quantity(values.max(), 'inductance')} "
                 f"({values.max() / values.min():.1f}x); * = --model {result['model']}")
    if freq is not None:
        lines.append(f"S21: transmission past the ground connection as a shunt across a "
                     f"line matched at {format_quantity(result['z0_ohm'], 'impedance')}")
    if not result["goldfarb_pucel_in_range"]:
        lo, hi = (format_quantity(v, "length") for v in GOLDFARB_PUCEL_FIT_RANGE)
        lines.append(f"note: depth {format_quantity(result['depth_m'], 'length')} is outside "
                     f"the range Goldfarb-Pucel was fitted for ({lo} to {hi}); weigh the "
                     "spread, not one model")
    return "\n".join(lines)


#: Compute and print; the ``func`` of ``stackopt calc via``.
run = calculator(compute, render)
