"""``stackopt fit MEASURED.s2p --scenario S --stackup F``: a measured board of the user's
own circuit against the model of that circuit on that stackup (board mode of
:mod:`stackopt.cli.fit`)."""

from __future__ import annotations

import argparse
import json
from pathlib import Path
from typing import Any

from stackopt.units import format_quantity as fq


def run_board(args: argparse.Namespace) -> int:
    """Compare, optionally fit one factor, draw, write and print."""
    from stackopt.analyses.calibration_board import compare_board
    from stackopt.analyses.calibration_file import board_record
    from stackopt.cli.common import load_inputs
    from stackopt.cli.fit import load_band, write_outputs
    from stackopt.inputs.measurement import file_sha256
    from stackopt.inputs.stackup_file import load_selected
    from stackopt.search.problem import Problem
    from stackopt.search.single import stackup_geometry

    inp = load_inputs(args.scenario, args.costs)
    sf = load_selected(args.stackup)
    problem = Problem(inp.scenario, inp.table)
    g = stackup_geometry(problem, sf, args.stackup)
    model = inp.scenario.search.via_model
    if args.z0 is None:  # the data at the circuit's own reference impedance
        args.z0 = problem.compiled.z0
    meas = load_band(args)
    cmp = compare_board(problem.compiled, problem.ground_batch(g, model), meas.f, meas.s21,
                        model, scale=args.scale)
    record = board_record(args.name or Path(args.file).stem, meas, cmp, model,
                          scenario=inp.scenario_path.name,
                          scenario_sha256=file_sha256(inp.scenario_path),
                          stackup=Path(args.stackup).name,
                          stackup_sha256=file_sha256(args.stackup))
    result: dict[str, Any] = record.model_dump(mode="json", exclude_none=True)
    result.update(factor=cmp.factor, scaled_rms_error_dB=cmp.scaled_rms_error_db)
    fig = None
    if args.plot.lower() != "none":
        from stackopt.outputs.plots_fit import plot_fit

        others = [("ideal grounds", cmp.ideal)]
        main = (f"model ({model}): {cmp.rms_error_db:.2f} dB rms", cmp.model)
        if cmp.scaled is not None:
            others.insert(0, main)
            main = (f"model, vias x{cmp.factor:.3g}: {cmp.scaled_rms_error_db:.2f} dB rms",
                    cmp.scaled)
        fig = plot_fit(meas.f, meas.s21, main, others,
                       f"{Path(args.file).name}: {inp.scenario.name} on "
                       f"{Path(args.stackup).name}")
    write_outputs(args, result, record, fig)
    print(json.dumps(result, indent=2) if args.json else render(result))
    return 0


def render(r: dict[str, Any]) -> str:
    """The human-readable comparison."""
    out = [f"{r['file']}: {r['points']} points, {fq(r['band_Hz'][0], 'frequency')} to "
           f"{fq(r['band_Hz'][1], 'frequency')}; circuit of {r['scenario']} on {r['stackup']}",
           f"model ({r['model']}) vs measured: {r['uncalibrated_rms_error_dB']:.2f} dB rms "
           f"(ideal grounds: {r['ideal_rms_error_dB']:.2f} dB rms)"]
    if r.get("factor") is not None:
        out.append(f"one factor on the via inductances: x{r['factor']:.3g} -> "
                   f"{r['scaled_rms_error_dB']:.2f} dB rms")
    from stackopt.cli.fit import written_lines

    return "\n".join(out + written_lines(r, "none (fit with --scale to add one)"))
