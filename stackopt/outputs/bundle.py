"""Every output of one search, rendered in memory and written as one result, all or
nothing (:mod:`stackopt.outputs.resultdir`): ``--out`` holds the complete previous result
or the complete new one at every instant. A new output is one more entry in the mapping
:func:`render_all` returns (a path relative to ``--out``; sub-folders allowed)."""

from __future__ import annotations

import functools
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from stackopt.outputs.exports import (
    candidates_csv,
    csv_blocks,
    front_csv,
    mitigations_csv,
    selected_yaml,
    stackup_files,
    summary_json,
)
from stackopt.outputs.facts import passband_summary, selected_index, sweep_freqs
from stackopt.outputs.files import prepare_out_dir
from stackopt.outputs.resultdir import write_result

if TYPE_CHECKING:
    from stackopt.analyses.quantities import QuantitySweep
    from stackopt.search.results import Result

__all__ = ["FILES", "render_all", "write_all"]

#: The fixed file names, in writing order.
FILES = ("summary.json", "candidates.csv", "front.csv", "report.html", "report.md",
         "pareto.png", "pareto.svg", "response.png", "stackups.png", "costs.png",
         "prepregs.png", "mitigations.png", "mitigations.csv", "quantities.png",
         "robustness.png",
         "selected.yaml", "selected.s2p")


def _csv_block(result: Result, k: int) -> bytes:
    return candidates_csv(result, k).encode("utf-8")


def _touchstone(result: Result, i: int) -> str:
    from stackopt.outputs.touchstone import touchstone_text
    from stackopt.search.responses import TOUCHSTONE_POINTS

    pb = result.problem
    f = sweep_freqs(result, n=TOUCHSTONE_POINTS)
    s = result.sweeps.s([i], f)  # solved once per result (shared with response.png)
    comment = (f"stackopt: scenario {pb.scenario.name}, candidate {result.ids[i]}\n"
               f"via model {pb.scenario.search.via_model}; closed-form estimate")
    return touchstone_text(f, s[0], pb.compiled.z0, comment=comment)


def render_all(result: Result, extra_summary: dict | None = None,
               sweep: QuantitySweep | None = None) -> dict[str, bytes]:
    """Every output file's bytes, by file name (nothing is written). The mitigation
    files and summary key come only from a design space with two-layer boards
    (``mitigation_ladder`` is ``null`` otherwise); ``quantities.png``, the report's cost
    against quantity and the summary's ``quantity_sweep`` only with a ``sweep``
    (:class:`~stackopt.analyses.quantities.QuantitySweep`)."""
    from stackopt.analyses.ideal import ideal_ground
    from stackopt.outputs.case import four_layer_case
    from stackopt.outputs.parallel import Job, render
    from stackopt.outputs.plots import figure_bytes, plot_front, plot_response
    from stackopt.outputs.plots_ladder import plot_mitigations
    from stackopt.outputs.plots_stackup import plot_costs, plot_prepregs, plot_stackups
    from stackopt.outputs.prepregs import prepreg_summary
    from stackopt.outputs.report import IMAGE_FILES, report_html, report_markdown

    ladder = result.ladder
    extra = {**(extra_summary or {}),
             "ideal_ground": ideal_ground(result.problem).to_summary(),
             "four_layer_case": four_layer_case(result).to_summary(result),
             "passband": passband_summary(result),
             "prepregs": prepreg_summary(result),
             "mitigation_ladder": ladder.to_summary() if ladder is not None else None}
    if sweep is not None:
        from stackopt.outputs.sweep import plot_quantities, sweep_summary

        extra["quantity_sweep"] = sweep_summary(sweep)
    # figures and the large CSV are independent: drawn on every free core (parallel.py)
    def front() -> dict[str, bytes]:  # one figure, PNG first then SVG as in one process
        fig = plot_front(result)
        return {"pareto": figure_bytes(fig, "png"), "pareto.svg": figure_bytes(fig, "svg")}

    jobs: dict[str, Job] = {
        "pareto": front,
        "response": lambda: figure_bytes(plot_response(result), "png"),
        "stackups": lambda: figure_bytes(plot_stackups(result), "png"),
        "costs": lambda: figure_bytes(plot_costs(result), "png"),
        "prepregs": lambda: figure_bytes(plot_prepregs(result), "png"),
    }
    # the table's whole-batch columns (heights, Dk, flags) computed here once, before
    # the fork, instead of once in every worker
    result.frame(np.zeros(0, dtype=np.int64))
    blocks = csv_blocks(result)  # the large table in blocks, shared between the cores
    for k in range(blocks):
        jobs[f"candidates.csv#{k}"] = functools.partial(_csv_block, result, k)
    if result.robust:
        from stackopt.outputs.plots_robust import plot_robustness

        jobs["robustness"] = lambda: figure_bytes(plot_robustness(result), "png")
    if ladder is not None and not ladder.blocked:  # a blocked ladder has nothing to plot
        jobs["mitigations"] = lambda: figure_bytes(plot_mitigations(ladder, result), "png")
    if sweep is not None:
        jobs["quantities"] = lambda: figure_bytes(plot_quantities(sweep), "png")
    def texts() -> dict[str, bytes]:  # this process's share while the workers draw
        out = {"summary.json": summary_json(result, extra).encode("utf-8"),
               "front.csv": front_csv(result).encode("utf-8")}
        if ladder is not None:
            out["mitigations.csv"] = mitigations_csv(ladder).encode("utf-8")
        out["report.md"] = report_markdown(result, IMAGE_FILES, sweep).encode("utf-8")
        out["selected.yaml"] = selected_yaml(result).encode("utf-8")
        i = selected_index(result)
        if i is not None:
            out["selected.s2p"] = _touchstone(result, i).encode("ascii")
        out.update((k, v.encode("utf-8")) for k, v in stackup_files(result).items())
        return out

    images, out = render(jobs, meanwhile=texts)  # name -> bytes (a job may give several)
    assert out is not None
    out["candidates.csv"] = b"".join([images.pop(f"candidates.csv#{k}")
                                      for k in range(blocks)])
    out["pareto.svg"] = images.pop("pareto.svg")
    out["report.html"] = report_html(result, images, sweep).encode("utf-8")
    for key, name in IMAGE_FILES.items():
        if key in images:
            out[name] = images[key]
    files = {name: out[name] for name in FILES if name in out}
    files.update((k, v) for k, v in out.items() if k not in files)  # stackups/<ID>.yaml
    return files


def write_all(result: Result, out_dir: str | Path, force: bool = False,
              extra_summary: dict | None = None, sweep: QuantitySweep | None = None) -> list[Path]:
    """Render every output file and write them as one result into ``out_dir``, all or
    nothing (:func:`stackopt.outputs.resultdir.write_result`).

    Parameters
    ----------
    result : stackopt.search.results.Result
        The search to write out.
    out_dir : path
        Created if missing; an existing non-empty folder needs ``force``.
    force : bool
        Replace the earlier stackopt result in the folder as a whole (files stackopt did
        not write are kept).
    extra_summary : dict, optional
        Keys added to ``summary.json`` (e.g. input file hashes).
    sweep : QuantitySweep, optional
        Cost against quantity (see :func:`render_all`).

    Returns
    -------
    list of Path
        The files written, in :data:`FILES` order.

    Raises
    ------
    OutputError
        The folder is not empty without ``force``, or cannot be written; the folder is
        then as it was.
    """
    prepare_out_dir(out_dir, force)  # before rendering: a refusal costs nothing
    return write_result(out_dir, render_all(result, extra_summary, sweep), force)
