"""``stackopt fit``: fit the ground connection of a measured coupon; calibrate the models.

Two modes:

- ``stackopt fit COUPON.s2p --depth D --drill D [--count N --pitch P]``: a shunt-via
  coupon; fits R + jωL (+ C) and compares every via model at that geometry.
- ``stackopt fit MEASURED.s2p --scenario S --stackup F``: a board of the user's own
  circuit; compares the model's S21 with the measurement (see
  :mod:`stackopt.cli.fit_board`).

``--write cal.yaml`` adds the coupon to a calibration file (created, or extended with
every model's factor refitted over all its coupons). scipy and scikit-rf are imported
only when the command runs.
"""

from __future__ import annotations

import argparse
import json
import re
from pathlib import Path
from typing import Any

from stackopt.cli.options import count, quantity
from stackopt.cli.registry import help_of
from stackopt.errors import InputError
from stackopt.units import format_quantity as fq

EPILOG = """\
examples:
  stackopt fit coupon_2l.s2p --depth 1.5mm --drill 0.3mm --write cal.yaml
  stackopt fit coupon_4l.s2p --depth 0.2mm --drill 0.3mm --band 100MHz-3GHz --write cal.yaml
  stackopt fit board.s2p --scenario my.yaml --stackup selected.yaml --write cal.yaml

The coupon is a matched line with one ground connection (--count vias in a row at --pitch)
across it at the middle; see docs/calibration.md for how to build and measure one.
"""


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``fit`` command."""
    p = sub.add_parser(
        "fit", help=help_of("fit"),
        description="Fit the ground connection of a measured shunt-via coupon (Touchstone "
        "1.x or 2.0 two-port), compare every via model with it, and optionally write a "
        "calibration file the search can use.", epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE.s2p", help="measured two-port (Touchstone)")
    p.add_argument("--depth", metavar="LENGTH", type=quantity("length", "--depth"),
                   help="the coupon's via depth, pad to plane, e.g. 1.5mm")
    p.add_argument("--drill", metavar="LENGTH", type=quantity("length", "--drill"),
                   help="the coupon's plated via diameter, e.g. 0.3mm")
    p.add_argument("--count", default=1, metavar="N", type=count("--count", 1, 100),
                   help="vias in the ground connection, in a row (default: 1)")
    p.add_argument("--pitch", metavar="LENGTH", type=quantity("length", "--pitch"),
                   help="centre-to-centre spacing of the vias; needed when --count > 1")
    p.add_argument("--z0", metavar="OHM", type=quantity("impedance", "--z0"),
                   help="line impedance; the data are renormalized to it (default: the "
                   "file's reference impedance)")
    p.add_argument("--band", metavar="F1-F2", type=_band,
                   help="fit only this band, e.g. 100MHz-3GHz (default: the whole file)")
    p.add_argument("--capacitance", action="store_true",
                   help="also fit a small pad capacitance in parallel with the connection")
    p.add_argument("--phase", choices=("auto", "on", "off"), default="auto",
                   help="use the phase too (with the feed lines' delay); auto: when the "
                   "model explains it (default: %(default)s)")
    p.add_argument("--thru", metavar="THRU.s2p",
                   help="a thru coupon (the same feed lines without the via): the coupon's "
                   "S21 is divided by it, removing the feed lines' loss and delay")
    p.add_argument("--scenario", metavar="FILE",
                   help="board mode: the scenario whose circuit was measured")
    p.add_argument("--stackup", metavar="FILE", help="board mode: the board's stackup YAML")
    p.add_argument("--costs", metavar="TABLE", help="board mode: fab cost table YAML")
    p.add_argument("--scale", action="store_true",
                   help="board mode: fit one factor on the via inductances")
    p.add_argument("--name", help="the coupon's name in the calibration file "
                   "(default: the file name without extension)")
    p.add_argument("--write", metavar="CAL.yaml",
                   help="add the coupon to this calibration file (created if missing)")
    p.add_argument("--plot", metavar="PNG", default="fit.png",
                   help="where to draw the plot (default: %(default)s; 'none' to skip)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def _band(text: str) -> tuple[float, float]:
    """``"100MHz-3GHz"`` -> (1e8, 3e9)."""
    parts = [x for x in re.split(r"(?<![eE])-|,|\.\.", text.replace(" ", "")) if x]
    if len(parts) != 2:
        raise argparse.ArgumentTypeError(f"expected two frequencies, got {text!r}; "
                                         "write it like 100MHz-3GHz")
    lo, hi = (quantity("frequency", "--band")(x) for x in parts)
    if not lo < hi:
        raise argparse.ArgumentTypeError(f"{text!r}: the first frequency must be the lower")
    return lo, hi


def _check(args: argparse.Namespace) -> None:
    if args.scenario is not None or args.stackup is not None:
        if args.scenario is None or args.stackup is None:
            raise InputError("board mode needs both the scenario and the stackup",
                             key="--scenario/--stackup", fix="give --scenario S --stackup F")
        return
    for opt in ("depth", "drill"):
        if getattr(args, opt) is None:
            raise InputError(f"a via coupon needs --{opt}", key=f"--{opt}",
                             fix="give the coupon's geometry, e.g. --depth 1.5mm --drill 0.3mm"
                             " (or --scenario/--stackup for a board of your circuit)")
    if args.count > 1 and (args.pitch is None or args.pitch < args.drill):
        raise InputError(f"--count {args.count} needs a pitch of at least the drill",
                         key="--pitch", fix="add the centre-to-centre spacing, e.g. --pitch 1mm")


def load_band(args: argparse.Namespace):
    """The measurement in the band, checked to be a shunt (attenuating) two-port."""
    import numpy as np

    from stackopt.inputs.measurement import load_two_port

    meas = load_two_port(args.file, args.z0)
    lo, hi = args.band if args.band else (None, None)
    meas = meas.band(lo, hi)
    if getattr(args, "thru", None):
        args.thru_data = load_two_port(args.thru, args.z0)
        meas = meas.divided_by(args.thru_data)
    if np.all(np.abs(meas.s21) >= 1.0):
        raise InputError("|S21| is at or above 0 dB at every point in the band, so this is "
                         "not a shunt coupon (a ground connection across a line can only "
                         "attenuate)", file=args.file,
                         fix="check the file is S21 of the coupon, not a gain or a thru")
    return meas


def write_outputs(args: argparse.Namespace, result: dict[str, Any], record, fig) -> None:
    """Write the plot and the calibration file (each atomically), noting them in result."""
    from stackopt.analyses.calibration_file import calibration_text, with_coupon
    from stackopt.outputs.files import atomic_write_text
    from stackopt.outputs.plots import save_png

    data = None
    if args.write:
        from stackopt.inputs.calibration import load_calibration

        old = load_calibration(args.write).data if Path(args.write).exists() else None
        data = with_coupon(old, record)
    if fig is not None:
        save_png(fig, args.plot)
        result["plot"] = args.plot
    if data is not None:
        atomic_write_text(args.write, calibration_text(data))
        result["calibration_file"] = args.write
        result["factors"] = {m: r.factor for m, r in data.factors.items()}
        result["coupons"] = [c.name for c in data.coupons]


def run(args: argparse.Namespace) -> int:
    """Fit, draw, write and print."""
    _check(args)
    if args.scenario is not None:
        from stackopt.cli.fit_board import run_board

        return run_board(args)
    from stackopt.analyses.calibration import (
        CONFIDENCE,
        compare_models,
        fit_shunt,
        model_predictions,
    )
    from stackopt.analyses.calibration_file import via_record

    meas = load_band(args)
    fit = fit_shunt(meas.f, meas.s21, meas.z0, capacitance=args.capacitance,
                    phase={"auto": None, "on": True, "off": False}[args.phase])
    pred = model_predictions(args.depth, args.drill, args.count, args.pitch or 0.0)
    models = compare_models(fit.inductance, pred)
    record = via_record(args.name or Path(args.file).stem, meas, fit, models,
                        depth=args.depth, drill=args.drill, count=args.count,
                        pitch=args.pitch, thru=getattr(args, "thru_data", None))
    result = record.model_dump(mode="json", exclude_none=True)
    result.update(confidence=CONFIDENCE, feed_delay_s=fit.delay)
    fig = None
    if args.plot.lower() != "none":
        from stackopt.outputs.plots_fit import plot_fit

        curves = [(f"{n}: {fq(p, 'inductance')}", fit.s21(meas.f, meas.z0, p))
                  for n, p in pred.items() if p == p]
        fig = plot_fit(meas.f, meas.s21,
                       (f"fit: L {fq(fit.inductance, 'inductance')}, R {fit.resistance:.3g} "
                        "ohm", fit.s21(meas.f, meas.z0) * _delay(meas.f, fit.delay)),
                       curves, f"{Path(args.file).name}: depth {fq(args.depth, 'length')}, "
                       f"drill {fq(args.drill, 'length')}, {args.count} via(s)")
    write_outputs(args, result, record, fig)
    print(json.dumps(result, indent=2) if args.json else render(result))
    return 0


def _delay(f, delay: float | None):
    """The feed lines' phase factor (1 when the fit did not use the phase)."""
    import numpy as np

    return np.exp(-2j * np.pi * f * (delay or 0.0))


def render(r: dict[str, Any]) -> str:
    """The human-readable summary of a via-coupon fit."""
    lo, hi = r["inductance_ci_H"]
    out = [f"{r['file']}: {r['points']} points, {fq(r['band_Hz'][0], 'frequency')} to "
           f"{fq(r['band_Hz'][1], 'frequency')}, Z0 {r['z0_ohm']:g} ohm",
           f"fitted: L = {fq(r['inductance_H'], 'inductance')} "
           f"± {(hi - lo) / 2 / r['inductance_H']:.2%} ({r['confidence']:.0%} interval "
           f"{lo * 1e12:.4g} to {hi * 1e12:.4g} pH), R = {r['resistance_ohm']:.3g} ohm"
           + (f", C = {r['capacitance_F'] * 1e12:.3g} pF" if "capacitance_F" in r else ""),
           f"rms error of the fit {r['rms_error_dB']:.3f} dB"
           + (" (magnitude and phase)" if r.get("used_phase") else " (magnitude)"),
           f"  {'model':<16}{'predicted':>12}{'measured/predicted':>20}"]
    for name, m in r["models"].items():
        mark = "*" if name == r.get("best_model") else " "
        pred = fq(m["predicted_H"], "inductance") if m.get("predicted_H") else "n/a"
        ratio = f"{m['ratio']:.3f}" if m.get("ratio") else "n/a"
        out.append(f"{mark} {name:<16}{pred:>12}{ratio:>20}")
    out.append("* = closest model")
    return "\n".join(out + written_lines(r, ""))


def written_lines(r: dict[str, Any], no_factor: str) -> list[str]:
    """The closing lines of a fit: the calibration file written (``no_factor`` stands in
    for an empty list of factors) and the plot."""
    out = []
    if "calibration_file" in r:
        fac = ", ".join(f"{m} {k:.3f}" for m, k in r["factors"].items())
        out.append(f"calibration file {r['calibration_file']}: {len(r['coupons'])} coupon(s);"
                   f" factors {fac or no_factor}")
    if "plot" in r:
        out.append(f"plot: {r['plot']}")
    return out
