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
from stackopt.search.table import candidate_columns

if TYPE_CHECKING:
    from stackopt.analyses.quantities import QuantitySweep
    from stackopt.outputs.drawer import Drawer
    from stackopt.outputs.parallel import Job
    from stackopt.search.results import Result

__all__ = ["FILES", "Ahead", "drawing_jobs", "drawn", "render_all", "warm", "write_all"]

#: The fixed file names, in writing order.
FILES = ("summary.json", "candidates.csv", "front.csv", "report.html", "report.md",
         "pareto.png", "pareto.svg", "response.png", "stackups.png", "costs.png",
         "prepregs.png", "mitigations.png", "mitigations.csv", "quantities.png",
         "robustness.png",
         "selected.yaml", "selected.s2p")


#: Job name prefix of the candidates table's blocks (joined in job order).
_CSV_BLOCK = "candidates.csv#"


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


class Ahead:
    """Work sent to a :class:`~stackopt.outputs.drawer.Drawer` between the search and its
    analyses (pass it as ``optimize(searched=...)`` and to :func:`render_all`): the
    drawer is idle then, since the drawing needs the analysed result.

    - the picks' field solves (:mod:`stackopt.analyses.lines`, the report's largest
      share of CPU), collected by :func:`render_all`; picks the analyses add
      (``cheapest_robust``) are solved here when their cross-sections are new;
    - the search's problem, candidates and evaluation, which the analyses do not change
      (:meth:`~stackopt.outputs.drawer.Drawer.keep`): the drawing task later sends only
      what the analyses added.
    """

    def __init__(self, drawer: Drawer | None) -> None:
        self._drawer, self._sent = drawer, False

    def __call__(self, result: Result) -> None:
        """Send the solves of ``result``'s picks and its search part (the ``searched``
        hook)."""
        from stackopt.analyses.lines import field_checks

        if self._drawer is None:
            return
        # written from a thread, in this order: the drawer reads them when it has warmed
        self._drawer.keep(problem=result.problem, candidates=result.candidates,
                          evaluation=result.evaluation, wait=False)
        keys = result.field_keys([i for i in result.picks.values() if i is not None])
        self._sent = bool(keys) and self._drawer.submit(field_checks, keys, wait=False)

    def collect(self, result: Result) -> None:
        """Add the solves to ``result`` (waits for them); nothing if none were sent or
        the drawer was closed meanwhile (the texts then solve them here)."""
        if self._sent and self._drawer is not None and not self._drawer.closed:
            self._sent = False
            result.line_solves.update(self._drawer.result())


def warm() -> None:
    """Import what the field solves sent :class:`Ahead` and the figures need (a
    :class:`~stackopt.outputs.drawer.Drawer` does this while the search runs)."""
    import matplotlib.backends.backend_agg  # noqa: F401
    import matplotlib.figure  # noqa: F401

    import stackopt.analyses.lines  # noqa: F401
    import stackopt.outputs.plots  # noqa: F401
    import stackopt.outputs.plots_ladder  # noqa: F401
    import stackopt.outputs.plots_robust  # noqa: F401
    import stackopt.outputs.plots_stackup  # noqa: F401
    import stackopt.outputs.sweep  # noqa: F401
    import stackopt.physics.fieldsolve  # noqa: F401  (scipy's sparse solver)


def drawing_jobs(result: Result, sweep: QuantitySweep | None = None,
                 table_blocks: bool = True) -> dict[str, Job]:
    """The figures and, with ``table_blocks``, the candidates table's blocks (a large
    table shared by the cores) as jobs (name -> bytes, or several named files),
    independent of each other and of the text outputs."""
    from stackopt.outputs.plots import figure_bytes, plot_front, plot_response
    from stackopt.outputs.plots_ladder import plot_mitigations
    from stackopt.outputs.plots_stackup import plot_costs, plot_prepregs, plot_stackups

    ladder = result.ladder

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
    if table_blocks:
        # the table's whole-batch columns (heights, Dk, flags) computed here once, before
        # the fork, instead of once in every worker
        candidate_columns(result, np.zeros(0, dtype=np.int64))
        for k in range(csv_blocks(result)):  # the large table in blocks, on every core
            jobs[f"{_CSV_BLOCK}{k}"] = functools.partial(_csv_block, result, k)
    if result.robust:
        from stackopt.outputs.plots_robust import plot_robustness

        jobs["robustness"] = lambda: figure_bytes(plot_robustness(result), "png")
    if ladder is not None and not ladder.blocked:  # a blocked ladder has nothing to plot
        jobs["mitigations"] = lambda: figure_bytes(plot_mitigations(ladder, result), "png")
    if sweep is not None:
        from stackopt.outputs.sweep import plot_quantities

        jobs["quantities"] = lambda: figure_bytes(plot_quantities(sweep), "png")
    return jobs


def drawn(result: Result, sweep: QuantitySweep | None = None,
          table_blocks: bool = True) -> dict[str, bytes]:
    """Every job of :func:`drawing_jobs` run on every free core, by output name."""
    from stackopt.outputs.parallel import render

    return render(drawing_jobs(result, sweep, table_blocks))[0]


def _tables(result: Result, whole: bool) -> dict[str, bytes]:
    """The front and the mitigation ladder as CSV, and the candidates table if
    ``whole``."""
    out = {"front.csv": front_csv(result).encode("utf-8")}
    if result.ladder is not None:
        out["mitigations.csv"] = mitigations_csv(result.ladder).encode("utf-8")
    if whole:
        out["candidates.csv"] = candidates_csv(result).encode("utf-8")
    return out


def render_all(result: Result, extra_summary: dict | None = None,
               sweep: QuantitySweep | None = None, drawer: Drawer | None = None,
               ahead: Ahead | None = None) -> dict[str, bytes]:
    """Every output file's bytes, by file name (nothing is written). The mitigation
    files and summary key come only from a design space with two-layer boards
    (``mitigation_ladder`` is ``null`` otherwise); ``quantities.png``, the report's cost
    against quantity and the summary's ``quantity_sweep`` only with a ``sweep``
    (:class:`~stackopt.analyses.quantities.QuantitySweep`).

    The figures are drawn by ``drawer`` (a :class:`~stackopt.outputs.drawer.Drawer`
    started before the search) if given, else by workers forked now
    (:func:`stackopt.outputs.parallel.render`), while this process writes the summary,
    the tables and the reports; the bytes are the same. The tables come first, while
    the drawer still solves the field checks sent ``ahead``, which are collected next; a
    candidates table of more than one block (:data:`~stackopt.outputs.exports.CSV_BLOCK`)
    is formatted in blocks by the drawing workers instead, on every core.
    """
    from stackopt.outputs.parallel import render
    from stackopt.outputs.report import IMAGE_FILES, report_html

    blocks = csv_blocks(result) > 1
    # the drawing first (written from a thread: the drawer reads it once it is done with
    # the field solves), then the tables (no pandas, no fields), then the solves
    sent = drawer is not None and drawer.submit(drawn, result, sweep, blocks, wait=False)
    out = _tables(result, whole=not blocks)
    if ahead is not None:
        ahead.collect(result)
    texts = functools.partial(_texts, result, extra_summary, sweep)  # this process's share
    if sent:
        assert drawer is not None
        out.update(texts())
        images = drawer.result()
    else:
        images, mine = render(drawing_jobs(result, sweep, blocks), meanwhile=texts)
        assert mine is not None
        out.update(mine)
    if blocks:
        parts = [k for k in images if k.startswith(_CSV_BLOCK)]  # in job order
        out["candidates.csv"] = b"".join([images.pop(k) for k in parts])
    out["pareto.svg"] = images.pop("pareto.svg")
    out["report.html"] = report_html(result, images, sweep).encode("utf-8")
    for key, name in IMAGE_FILES.items():
        if key in images:
            out[name] = images[key]
    files = {name: out[name] for name in FILES if name in out}
    files.update((k, v) for k, v in out.items() if k not in files)  # stackups/<ID>.yaml
    return files


def _texts(result: Result, extra_summary: dict | None, sweep: QuantitySweep | None
           ) -> dict[str, bytes]:
    """The summary, the report's text, the selected board's files and the stackup files
    (nothing here loads matplotlib or pandas: :func:`drawing_jobs` has those)."""
    from stackopt.analyses.ideal import ideal_ground
    from stackopt.outputs.case import four_layer_case
    from stackopt.outputs.prepregs import prepreg_summary
    from stackopt.outputs.report import IMAGE_FILES, report_markdown

    ladder = result.ladder
    extra = {**(extra_summary or {}),
             "ideal_ground": ideal_ground(result.problem).to_summary(),
             "four_layer_case": four_layer_case(result).to_summary(result),
             "passband": passband_summary(result),
             "prepregs": prepreg_summary(result),
             "mitigation_ladder": ladder.to_summary() if ladder is not None else None}
    if sweep is not None:
        from stackopt.outputs.sweep import sweep_summary

        extra["quantity_sweep"] = sweep_summary(sweep)
    out = {"summary.json": summary_json(result, extra).encode("utf-8")}
    out["report.md"] = report_markdown(result, IMAGE_FILES, sweep).encode("utf-8")
    out["selected.yaml"] = selected_yaml(result).encode("utf-8")
    i = selected_index(result)
    if i is not None:
        out["selected.s2p"] = _touchstone(result, i).encode("ascii")
    out.update((k, v.encode("utf-8")) for k, v in stackup_files(result).items())
    return out


def write_all(result: Result, out_dir: str | Path, force: bool = False,
              extra_summary: dict | None = None, sweep: QuantitySweep | None = None,
              drawer: Drawer | None = None, ahead: Ahead | None = None
              ) -> list[Path]:
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
    drawer : Drawer, optional
        A drawing process started before the search (see :func:`render_all`).
    ahead : Ahead, optional
        Field solves sent to ``drawer`` before the analyses (see :func:`render_all`).

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
    return write_result(out_dir, render_all(result, extra_summary, sweep, drawer, ahead),
                        force)
