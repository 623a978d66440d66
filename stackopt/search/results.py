"""The search's answer: one table of evaluated candidates, the front, the named picks and
the JSON-ready summary (the contract the report, exports and users' scripts rely on)."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np
import pandas as pd

from stackopt import __version__
from stackopt.search.front import nondominated
from stackopt.search.ladder import Ladder, mitigation_ladder
from stackopt.search.picks import PICKS
from stackopt.search.problem import Evaluation, Problem
from stackopt.search.responses import Sweeps
from stackopt.search.space import Candidates, candidate_stackup

__all__ = ["Result", "PICKS", "MODEL_DEPENDENT_DB", "metrics_record"]

#: A pick whose margin spread over the via models exceeds this is "model-dependent", dB
#: (the size of disagreement that can reverse a ranking; common practice, no source).
MODEL_DEPENDENT_DB = 3.0



def _num(x: float | np.floating) -> float | None:
    x = float(x)
    return x if math.isfinite(x) else None


def metrics_record(problem: Problem, ev: Evaluation, i: int) -> dict[str, Any]:
    """Row ``i`` of an evaluation as JSON-ready metrics: the part of a candidate's record
    (:meth:`Result.record`) that ``stackopt eval`` prints for one stackup as well."""
    g, sc = ev.geometry, problem.scenario
    return {
        "layers": int(g.layers[i]),
        "thickness_m": _num(g.thickness[i]),
        "ground_plane_depth_m": _num(g.via_height[i]),
        "er_top": _num(g.trace_er[i]),
        "unit_cost": _num(ev.unit_cost[i]),
        "lot_cost": _num(ev.lot_cost[i]),
        "lead_time_days": _num(ev.lead_time_days[i]),
        "margin_dB": _num(ev.margin[i]),
        "meets_requirements": bool(ev.feasible[i] and ev.margin[i] >= 0),
        "feasible": bool(ev.feasible[i]),
        "violations": ev.violated(i),
        "attenuation_dB": {r.key: _num(ev.attenuation[i, k])
                           for k, r in enumerate(sc.requirements)},
        "ground_inductance_H": _num(ev.inductance[i]),
        "line_widths_m": {ln.name: _num(ev.widths[i, j]) for j, ln in enumerate(sc.lines)},
    }


@dataclass(frozen=True, eq=False)
class Result:
    """Evaluated candidates of one search (row ``i`` of every array is candidate ``i``)."""

    problem: Problem
    candidates: Candidates
    evaluation: Evaluation
    method: str
    evaluated: int
    seed: int
    spread: dict[str, np.ndarray] = field(default_factory=dict)  # via model -> margin
    stats: dict = field(default_factory=dict)
    #: Margin (N,) of every candidate under each of ``search.robustness.models``.
    robust: dict[str, np.ndarray] = field(default_factory=dict)
    #: Monte Carlo yield (N,), NaN where not sampled (the front, the picks).
    yields: np.ndarray | None = None
    #: Controlled-impedance range over the builds (N, lines, 2) ohm, NaN where not sampled.
    impedance_range: np.ndarray | None = None
    #: Margin in every simulated build (S,) of the sampled picks, by candidate index.
    build_margins: dict[int, np.ndarray] = field(default_factory=dict)
    #: The cheapest candidate meeting every requirement under every listed model and
    #: reaching the yield target (found by :mod:`stackopt.analyses.robust`).
    robust_pick: int | None = None
    #: What limits each pick's circuit (:mod:`stackopt.analyses.limits`), by pick name.
    limits: dict[str, dict] = field(default_factory=dict)

    # ---- basic views -------------------------------------------------------------------
    @property
    def n(self) -> int:
        """Candidates evaluated and kept."""
        return len(self.candidates)

    @property
    def space_size(self) -> int:
        """Stackups in the design space."""
        return self.problem.space.size

    @cached_property
    def ids(self) -> list[str]:
        """Stable candidate ids (evaluation order)."""
        return [f"C{i + 1:05d}" for i in range(self.n)]

    @cached_property
    def feasible(self) -> np.ndarray:
        """Meets every fab and scenario constraint (not necessarily the requirements)."""
        return self.evaluation.feasible

    @cached_property
    def meets(self) -> np.ndarray:
        """Feasible and every attenuation requirement met."""
        return self.feasible & (self.evaluation.margin >= 0)

    @cached_property
    def robust_margin(self) -> np.ndarray:
        """Worst margin over ``search.robustness.models`` (N,) (the nominal margin until
        the robust margins are computed)."""
        if not self.robust:
            return self.evaluation.margin
        return np.min(np.stack(list(self.robust.values())), axis=0)

    @cached_property
    def robust_meets(self) -> np.ndarray:
        """Feasible and every requirement met under every listed via model (N,)."""
        return self.meets & (self.robust_margin >= 0)

    @cached_property
    def yield_or_low(self) -> np.ndarray:
        """Yields with -1 where not sampled (for ranking)."""
        return np.full(self.n, -1.0) if self.yields is None else np.nan_to_num(
            self.yields, nan=-1.0)

    @cached_property
    def objectives(self) -> np.ndarray:
        """Objectives minimised by the search (N, k)."""
        return self.problem.objectives(self.evaluation)

    @cached_property
    def complexity(self) -> np.ndarray:
        """How much a candidate asks of the fab and the layout: layers, then mitigations,
        then vias per ground connection (used to break ties between equal trade-offs)."""
        g = self.evaluation.geometry
        mits = sum((f.astype(np.int64) for f in g.flags.values()), np.zeros(self.n, np.int64))
        return g.layers * 1000 + mits * 100 + g.vias

    @cached_property
    def on_front(self) -> np.ndarray:
        """Non-dominated among every feasible candidate evaluated; where several boards
        give the same objective values, only the simplest is flagged."""
        mask = np.zeros(self.n, dtype=bool)
        idx = np.flatnonzero(self.feasible)
        nd = idx[nondominated(self.objectives[idx])]
        if len(nd):
            obj = np.round(self.objectives[nd], 9)
            order = np.lexsort((nd, self.complexity[nd], *obj.T[::-1]))
            nd, obj = nd[order], obj[order]
            first = np.r_[True, np.any(obj[1:] != obj[:-1], axis=1)]
            mask[nd[first]] = True
        return mask

    @cached_property
    def front_order(self) -> np.ndarray:
        """Front members by increasing unit cost."""
        idx = np.flatnonzero(self.on_front)
        return idx[np.lexsort((self.objectives[idx, 1], self.evaluation.unit_cost[idx]))]

    def best(self, mask: np.ndarray, by: str) -> int | None:
        """The best row of ``mask``: the cheapest (``by="cost"``; ties by the electrical
        objective, then the simplest) or the best electrical objective (``"perf"``; ties by
        cost, then the simplest); ``None`` if the mask is empty."""
        idx = np.flatnonzero(mask)
        if not len(idx):
            return None
        ev = self.evaluation
        cx = self.complexity[idx]
        if by == "cost":  # cheapest; ties by better electrical objective, then simplest
            order = np.lexsort((idx, cx, self.objectives[idx, 1], ev.unit_cost[idx]))
        elif by == "robust":  # best robust margin; ties by yield, cost, then simplest
            order = np.lexsort((idx, cx, ev.unit_cost[idx], -self.yield_or_low[idx],
                                -self.robust_margin[idx]))
        else:  # best electrical objective; ties by cost, then simplest
            order = np.lexsort((idx, cx, ev.unit_cost[idx], self.objectives[idx, 1]))
        return int(idx[order[0]])

    @cached_property
    def picks(self) -> dict[str, int | None]:
        """Index of each named pick of :data:`~stackopt.search.picks.PICKS` (``None`` when
        nothing qualifies)."""
        return {name: p.select(self) for name, p in PICKS.items()}

    @cached_property
    def sweeps(self) -> Sweeps:
        """Dense-sweep responses of candidates the outputs show, each solved once
        (:mod:`stackopt.search.responses`)."""
        return Sweeps(self.problem, self.candidates)

    @cached_property
    def ladder(self) -> Ladder | None:
        """The mitigation ladder (:mod:`stackopt.search.ladder`), computed once per result;
        ``None`` without two-layer boards in the space."""
        return mitigation_ladder(self)

    def prepreg_pick(self) -> list[dict]:
        """For each dielectric used between the top copper and its plane (by a feasible
        candidate): the best robust margin reached with it (ties: yield, then
        cost) and the cheapest stackup using it that meets every requirement. Sorted by
        best robust margin, best first."""
        feas = np.flatnonzero(self.feasible)
        if not len(feas):
            return []
        names = self.problem.space.slot_names(self.candidates)[:, 0]
        ev = self.evaluation
        out: list[dict[str, Any]] = []
        for name in sorted(set(names[feas])):  # a few dozen catalogue options at most
            rows = feas[names[feas] == name]
            best = int(rows[np.lexsort((ev.unit_cost[rows], -self.yield_or_low[rows],
                                        -self.robust_margin[rows]))[0]])
            ok = rows[self.meets[rows]]
            cheap = (int(ok[np.lexsort((-ev.margin[ok], ev.unit_cost[ok]))[0]])
                     if len(ok) else None)
            out.append({"top_dielectric": str(name), "er": _num(ev.geometry.trace_er[best]),
                        "thickness_m": _num(ev.geometry.trace_height[best]),
                        "best_margin_dB": _num(ev.margin[best]),
                        "best_robust_margin_dB": _num(self.robust_margin[best]),
                        "best_id": self.ids[best],
                        "best_index": best,
                        "cheapest_meeting_id": None if cheap is None else self.ids[cheap],
                        "cheapest_meeting_index": cheap,
                        "cheapest_meeting_unit_cost": (None if cheap is None
                                                       else _num(ev.unit_cost[cheap]))})
        out.sort(key=lambda r: (-r["best_robust_margin_dB"], r["top_dielectric"]))
        return out

    def closest(self, k: int = 3) -> list[int]:
        """The ``k`` candidates nearest to meeting the requirements: the feasible ones with
        the best margin or, when none is feasible, the least violating ones."""
        ev = self.evaluation
        idx = np.flatnonzero(self.feasible)
        if len(idx):
            order = np.lexsort((ev.unit_cost[idx], -ev.margin[idx]))
            return [int(i) for i in idx[order[:k]]]
        total = sum((v for v in ev.violations.values()), np.zeros(self.n))
        order = np.lexsort((ev.unit_cost, -ev.margin, total))
        return [int(i) for i in order[:k]]

    def stackup(self, i: int):
        """The stackup of candidate ``i``."""
        return candidate_stackup(self.problem.space, self.candidates, i)

    # ---- records -----------------------------------------------------------------------
    @cached_property
    def _line_solves(self) -> dict:
        """Field solves of line cross-sections, shared between candidates."""
        return {}

    def lines(self, i: int, check: bool = True) -> list:
        """The impedance table of candidate ``i``: every line's layer, width, spacing and
        achieved impedance; ``check`` adds the field-solver check and refined width
        (:func:`stackopt.analyses.lines.line_rows`; solves are cached)."""
        from stackopt.analyses.lines import line_rows

        g = self.problem.space.geometry(self.candidates.take(np.array([i])))
        return line_rows(self.problem, g, 0, self.evaluation.widths[i], check,
                         self._line_solves)

    def record(self, i: int, check_lines: bool = False) -> dict:
        """Candidate ``i`` as a JSON-ready dict (the summary's candidate record)."""
        ev = self.evaluation
        desc = self.problem.space.describe(self.candidates, i)
        st = self.stackup(i)
        layers = []
        for rec in st.to_records():
            layer = {"kind": rec["kind"], "material": rec["material"],
                     "thickness_m": _num(rec["thickness_m"])}
            if rec["kind"] == "copper":
                layer["role"] = rec["role"]
            else:
                layer["er"] = _num(rec["er"])
                layer["df"] = _num(rec["df"])
            layers.append(layer)
        sc = self.problem.scenario
        met = metrics_record(self.problem, ev, i)
        out = {
            "id": self.ids[i], "layers": met.pop("layers"),
            "arrangement": desc["arrangement"],
            "thickness_m": met.pop("thickness_m"),
            "ground_plane_depth_m": met.pop("ground_plane_depth_m"),
            "top_dielectric": desc["materials"][0],
            "er_top": met.pop("er_top"),
            "copper_m": _num(desc["copper_m"]),
            "drill_m": _num(desc["drill_m"]),
            "vias_per_ground": int(desc["vias"]),
            "mitigations": [m for m in self.problem.space.mitigations if desc[m]],
            **met,
            "line_spacings_m": {ln.name: ln.spacing for ln in sc.lines
                                if ln.spacing is not None},
            "lines": [r.to_summary() for r in self.lines(i, check_lines)],
            "stackup": layers,
        }
        if self.spread:
            out["margin_by_model_dB"] = {m: _num(v[i]) for m, v in self.spread.items()}
            sp = [float(v[i]) for v in self.spread.values() if np.isfinite(v[i])]
            out["model_spread_dB"] = _num(max(sp) - min(sp)) if sp else None
            out["model_dependent"] = bool(sp) and max(sp) - min(sp) > MODEL_DEPENDENT_DB
        if self.robust:
            out["robust_margin_dB"] = _num(self.robust_margin[i])
            out["meets_under_every_model"] = bool(self.robust_meets[i])
        if self.yields is not None and np.isfinite(self.yields[i]):
            n_builds = self.problem.scenario.search.robustness.samples
            p = float(self.yields[i])
            out["yield"] = p
            out["yield_standard_error"] = math.sqrt(p * (1 - p) / n_builds)
            if self.impedance_range is not None:
                out["impedance_range_ohm"] = {
                    ln.name: [_num(self.impedance_range[i, j, 0]),
                              _num(self.impedance_range[i, j, 1])]
                    for j, ln in enumerate(self.problem.scenario.lines)}
        return out

    @cached_property
    def table(self) -> pd.DataFrame:
        """Every evaluated candidate, one row each, with every metric and the front flag
        (the whole :meth:`frame`; writers of large results take it in row blocks)."""
        return self.frame()

    def frame(self, rows: np.ndarray | None = None) -> pd.DataFrame:
        """The rows ``rows`` (default: all) of the table of candidates; only those rows'
        strings are built, so a large result can be written in bounded blocks."""
        rows = np.arange(self.n) if rows is None else np.asarray(rows, dtype=np.int64)
        ev, g, sc, sp = self.evaluation, self.evaluation.geometry, self.problem.scenario, \
            self.problem.space
        c = self.candidates.take(rows)
        arr_names = np.array([a.name for a in sp.arrangements])
        # materials text built once per distinct build (arrangement + slot options)
        _, first, inv = np.unique(np.column_stack([c.arr, c.slot]), axis=0,
                                  return_index=True, return_inverse=True)
        names = sp.slot_names(c.take(first))
        mats = np.array([" / ".join(x for x in r if x) for r in names], dtype=object)[
            inv.reshape(-1)]
        cols: dict[str, object] = {
            "id": np.char.mod("C%05d", rows + 1).astype(object),
            "layers": g.layers[rows],
            "arrangement": arr_names[c.arr],
            "materials": mats,
            "thickness_m": g.thickness[rows],
            "ground_plane_depth_m": g.via_height[rows],
            "er_top": g.trace_er[rows],
            "copper_m": g.copper[rows],
            "drill_m": g.drill[rows],
            "vias_per_ground": g.vias[rows],
        }
        for m in sp.mitigations:
            cols[m] = g.flags[m][rows]
        cols.update({
            "unit_cost": ev.unit_cost[rows], "lot_cost": ev.lot_cost[rows],
            "lead_time_days": ev.lead_time_days[rows], "margin_dB": ev.margin[rows],
            "ground_inductance_H": ev.inductance[rows],
        })
        for k, r in enumerate(sc.requirements):
            cols[f"attenuation_dB_{r.key}Hz"] = ev.attenuation[rows, k]
        for j, ln in enumerate(sc.lines):
            cols[f"width_{ln.name}_m"] = ev.widths[rows, j]
        cols["feasible"] = self.feasible[rows]
        cols["meets_requirements"] = self.meets[rows]
        cols["violations"] = self._violation_text(rows)
        cols["on_front"] = self.on_front[rows]
        return pd.DataFrame(cols)

    def _violation_text(self, rows: np.ndarray) -> np.ndarray:
        """The constraints each of ``rows`` violates, as text; strings are built only for
        the rows that violate something."""
        text = np.full(len(rows), "", dtype=object)
        for k, v in self.evaluation.violations.items():
            hit = np.flatnonzero(v[rows] > 0)
            if not len(hit):
                continue
            new = [f"{k} (+{x:.3g})" for x in v[rows[hit]].tolist()]
            text[hit] = [f"{a}; {b}" if a else b for a, b in zip(text[hit].tolist(), new)]
        return text

    def to_summary(self, extra: dict | None = None) -> dict:
        """The JSON-ready summary (see the README for the contract)."""
        sc, table = self.problem.scenario, self.problem.table
        out = {
            "scenario": sc.name,
            "fab": table.fab,
            "currency": table.currency,
            "quantity": sc.board.quantity,
            "method": self.method,
            "seed": self.seed,
            "version": __version__,
            "objective": sc.search.objective,
            "via_model": sc.search.via_model,
            "calibration": (sc.search.calibration.echo()
                            if sc.search.calibration is not None
                            and not isinstance(sc.search.calibration, str) else None),
            "space_size": int(self.space_size),
            "evaluated": int(self.evaluated),
            "requirements": [{"key": r.key, "label": r.label,
                              "min_attenuation_dB": r.min_attenuation}
                             for r in sc.requirements],
            "front": [self.record(int(i)) for i in self.front_order],
            "picks": {k: (None if v is None else self.record(v, check_lines=True))
                      for k, v in self.picks.items()},
            "prepreg_pick": [{k: v for k, v in r.items() if not k.endswith("_index")}
                             for r in self.prepreg_pick()],
            "stats": {k: (int(v) if isinstance(v, int | np.integer) else v)
                      for k, v in self.stats.items()},
        }
        if self.robust:
            rb = sc.search.robustness
            out["robustness"] = {"models": list(rb.models), "samples": rb.samples,
                                 "yield_target": rb.yield_target,
                                 "distribution": rb.distribution,
                                 "model_dependent_above_dB": MODEL_DEPENDENT_DB}
        if self.limits:
            out["limits"] = self.limits
        if extra:
            out.update(extra)
        return out
