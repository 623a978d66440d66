"""Score one given stackup (``stackopt eval``) with the same batched evaluator."""

from __future__ import annotations

import numpy as np

from stackopt.errors import InputError, did_you_mean
from stackopt.inputs.stackup_file import SelectedStackup
from stackopt.model.stackup import Stackup
from stackopt.search.problem import Evaluation, Problem
from stackopt.search.space import Geometry

__all__ = ["stackup_geometry", "evaluate_stackup"]


def _counts(problem: Problem, st: Stackup, file: str | None) -> np.ndarray:
    sp = problem.space
    counts = np.zeros(sp.n_materials, dtype=np.int64)
    for k, d in enumerate(st.dielectrics):
        opts = sp.options[d.kind]
        names = list(opts.names)
        ids = list(sp.material_names)
        if d.material in names:
            j = names.index(d.material)
            counts[opts.material[j]] += opts.count[j]
        elif d.material in ids:
            counts[ids.index(d.material)] += d.plies
        else:
            raise InputError(
                f"{d.kind} {d.material!r} is not in the fab's catalogue"
                f"{did_you_mean(d.material, names + ids)}", file=file,
                key=["stackup", 2 * k + 1, "material"],
                fix=f"use one of: {', '.join(names[:12])}{' ...' if len(names) > 12 else ''}")
    return counts


def stackup_geometry(problem: Problem, sf: SelectedStackup, file: str | None = None
                     ) -> Geometry:
    """Geometry arrays (a batch of one) for a stackup file; a drill or via count the file
    leaves out is the scenario's first."""
    st = sf.stackup
    drill = sf.drill if sf.drill is not None else problem.scenario.space.drills[0]
    vias = sf.vias_per_ground or problem.scenario.space.vias_per_ground[0]
    if st.ground_plane(0) is None:
        raise InputError("the stackup has no ground or plane layer for the vias to reach",
                         file=file, key="stackup",
                         fix="give one copper layer role: ground")
    flags = {m: np.array([m in sf.mitigations]) for m in problem.space.mitigations}
    for m in sf.mitigations:
        flags.setdefault(m, np.array([True]))
    return Geometry(stack=st.layer_stack, drill=np.array([drill]), vias=np.array([vias]),
                    material_counts=_counts(problem, st, file)[None, :], flags=flags)


def evaluate_stackup(problem: Problem, sf: SelectedStackup, file: str | None = None
                     ) -> Evaluation:
    """Every metric of one stackup, priced by the problem's fab."""
    return problem.evaluate_geometry(stackup_geometry(problem, sf, file))
