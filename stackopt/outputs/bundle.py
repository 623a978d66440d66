"""Write every output of one search into a folder, all or nothing.

Everything is rendered in memory first; the files are then written (and fsynced) into a
hidden staging folder inside the output folder and renamed onto their final names. A
failure at any step removes the staging folder, so no half-written file is left behind.
"""

from __future__ import annotations

import contextlib
import os
import shutil
import tempfile
from pathlib import Path

from stackopt.errors import OutputError
from stackopt.outputs.exports import (
    candidates_csv,
    front_csv,
    mitigations_csv,
    selected_yaml,
    summary_json,
)
from stackopt.outputs.facts import selected_index, sweep_freqs
from stackopt.outputs.files import fsync_dir, inside, prepare_out_dir

__all__ = ["FILES", "render_all", "write_all"]

#: The fixed file names, in writing order.
FILES = ("summary.json", "candidates.csv", "front.csv", "report.html", "report.md",
         "pareto.png", "pareto.svg", "response.png", "stackups.png", "costs.png",
         "prepregs.png", "mitigations.png", "mitigations.csv", "selected.yaml",
         "selected.s2p")


def _touchstone(result, i: int) -> str:
    from stackopt.circuit import solve
    from stackopt.outputs.touchstone import touchstone_text

    pb = result.problem
    f = sweep_freqs(result, n=401)
    g = pb.space.geometry(result.candidates.take([i]))
    s = solve(pb.compiled, f, pb.ground_batch(g), pb.scenario.search.via_model)
    comment = (f"stackopt: scenario {pb.scenario.name}, candidate {result.ids[i]}\n"
               f"via model {pb.scenario.search.via_model}; closed-form estimate")
    return touchstone_text(f, s[0], pb.compiled.z0, comment=comment)


def render_all(result, extra_summary: dict | None = None) -> dict[str, bytes]:
    """Every output file's bytes, by file name (nothing is written). The mitigation
    files and summary key come only from a design space with two-layer boards
    (``mitigation_ladder`` is ``null`` otherwise)."""
    from stackopt.outputs.plots import figure_bytes, plot_front, plot_response
    from stackopt.outputs.plots_ladder import plot_mitigations
    from stackopt.outputs.plots_stackup import plot_costs, plot_prepregs, plot_stackups
    from stackopt.outputs.report import IMAGE_FILES, report_html, report_markdown
    from stackopt.search.ladder import mitigation_ladder

    from stackopt.outputs.parallel import render

    ladder = mitigation_ladder(result)
    extra = {**(extra_summary or {}),
             "mitigation_ladder": ladder.to_summary() if ladder is not None else None}
    # figures and the large CSV are independent: drawn on every free core (parallel.py)
    def front() -> dict[str, bytes]:  # one figure, PNG first then SVG as in one process
        fig = plot_front(result)
        return {"pareto": figure_bytes(fig, "png"), "pareto.svg": figure_bytes(fig, "svg")}

    jobs = {
        "pareto": front,
        "response": lambda: figure_bytes(plot_response(result), "png"),
        "stackups": lambda: figure_bytes(plot_stackups(result), "png"),
        "costs": lambda: figure_bytes(plot_costs(result), "png"),
        "prepregs": lambda: figure_bytes(plot_prepregs(result), "png"),
        "candidates.csv": lambda: candidates_csv(result).encode("utf-8"),
    }
    if ladder is not None:
        jobs["mitigations"] = lambda: figure_bytes(plot_mitigations(ladder, result), "png")
    done = render(jobs)  # name -> bytes (a job may give several files)
    out: dict[str, bytes] = {
        "summary.json": summary_json(result, extra).encode("utf-8"),
        "candidates.csv": done.pop("candidates.csv"),
        "front.csv": front_csv(result).encode("utf-8"),
        "pareto.svg": done.pop("pareto.svg"),
    }
    images = done
    if ladder is not None:
        out["mitigations.csv"] = mitigations_csv(ladder).encode("utf-8")
    out["report.html"] = report_html(result, images).encode("utf-8")
    out["report.md"] = report_markdown(result, IMAGE_FILES).encode("utf-8")
    for key, name in IMAGE_FILES.items():
        if key in images:
            out[name] = images[key]
    out["selected.yaml"] = selected_yaml(result).encode("utf-8")
    i = selected_index(result)
    if i is not None:
        out["selected.s2p"] = _touchstone(result, i).encode("ascii")
    return {name: out[name] for name in FILES if name in out}


def write_all(result, out_dir: str | Path, force: bool = False,
              extra_summary: dict | None = None) -> list[Path]:
    """Render and write every output file (:data:`FILES`) into ``out_dir``.

    Parameters
    ----------
    result : stackopt.search.results.Result
        The search to write out.
    out_dir : path
        Created if missing; an existing non-empty folder needs ``force``.
    force : bool
        Overwrite the fixed names in a non-empty folder (other files are left alone).
    extra_summary : dict, optional
        Keys added to ``summary.json`` (e.g. input file hashes).

    Returns
    -------
    list of Path
        The files written, in :data:`FILES` order.

    Raises
    ------
    OutputError
        The folder is not empty without ``force``, or cannot be written. No partial file
        remains.
    """
    out = prepare_out_dir(out_dir, force)
    files = render_all(result, extra_summary)  # a rendering error writes nothing
    targets = {name: inside(out, name) for name in files}
    try:
        stage = Path(tempfile.mkdtemp(prefix=".stackopt-staging-", dir=out))
    except OSError as exc:
        raise OutputError(f"{out}: cannot write ({exc.strerror or exc}); "
                          "choose another --out") from None
    moved: list[Path] = []
    try:
        for name, data in files.items():
            with open(stage / name, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
        for name in files:
            os.replace(stage / name, targets[name])
            moved.append(targets[name])
        fsync_dir(out)
    except OSError as exc:
        for p in moved:
            with contextlib.suppress(OSError):
                p.unlink()
        raise OutputError(f"{out}: writing the outputs failed ({exc.strerror or exc}); "
                          "nothing was left half-written; check the free space") from None
    finally:
        shutil.rmtree(stage, ignore_errors=True)
    return moved
