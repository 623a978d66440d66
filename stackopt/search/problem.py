"""One search problem: scenario + fab table → design space and a batched evaluator.

:meth:`Problem.evaluate` takes a batch of :class:`~stackopt.search.space.Candidates` and
returns arrays of every metric. Electrical work is done once per unique *phenotype* (the
quantized fields of the ground batch the circuit receives, and of the line batches the
width synthesis receives; :mod:`stackopt.search.phenotype`) and broadcast back; every
candidate is priced.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from stackopt.circuit import GroundBatch, ground_inductance_matrix, solve
from stackopt.circuit.grounds import DEFAULT_POUR_GAP
from stackopt.circuit.metrics import attenuation_db
from stackopt.cost import PriceBatch, price
from stackopt.model.costtable import BoardOrder, CostTable
from stackopt.model.geometry import LayerStack
from stackopt.model.scenario import Scenario
from stackopt.rows import unique_rows
from stackopt.search.lineroutes import LineWork
from stackopt.search.memo import ResponseMemo
from stackopt.search.phenotype import batch_key, exact_key
from stackopt.search.space import Candidates, DielectricOptions, Geometry, Space

__all__ = ["Problem", "Evaluation", "dielectric_options", "min_trace"]

#: Phenotypes solved per circuit call (bounds memory; not a loop over candidates).
PHENOTYPE_CHUNK = 4096


def dielectric_options(table: CostTable, max_plies: int) -> dict[str, DielectricOptions]:
    """The fab's stocked dielectrics as slot options: prepreg openings of 1..``max_plies``
    plies of one glass style, and cores; options thinner than the fab's minimum
    dielectric are left out (the search only uses what the fab can build)."""
    items = table.materials_list()
    t_min = table.capabilities.min_dielectric * (1 - 1e-9)
    rows: dict[str, list[tuple]] = {"prepreg": [], "core": []}
    for k, it in enumerate(items):
        plies = range(1, max_plies + 1) if it.kind == "prepreg" else (1,)
        for p in plies:
            t = it.thickness * p
            if t < t_min:
                continue
            label = f"{it.glass or it.id} x{p}" if it.kind == "prepreg" else it.id
            rows[it.kind].append((round(t, 12), label, t, it.dk, it.df, k, p))
    out = {}
    for kind, rs in rows.items():
        rs.sort(key=lambda r: (r[0], r[1]))
        out[kind] = DielectricOptions(
            kind=kind, names=tuple(r[1] for r in rs),
            thickness=np.array([r[2] for r in rs], dtype=float),
            er=np.array([r[3] for r in rs], dtype=float),
            df=np.array([r[4] for r in rs], dtype=float),
            material=np.array([r[5] for r in rs], dtype=np.int64),
            count=np.array([r[6] for r in rs], dtype=np.int64))
    return out


def min_trace(widths: np.ndarray) -> np.ndarray:
    """Narrowest controlled-impedance trace of each candidate (N,), m, from the widths
    (N, lines); NaN where no line has a width (the fab's trace limit then does not apply)."""
    n = widths.shape[0]
    with np.errstate(invalid="ignore"):
        w = np.nanmin(np.where(np.isnan(widths), np.inf, widths), axis=1,
                      initial=np.inf) if widths.shape[1] else np.full(n, np.nan)
    return np.where(np.isfinite(w), w, np.nan)


@dataclass(frozen=True)
class Evaluation:
    """Metrics of a batch (arrays over N candidates)."""

    unit_cost: np.ndarray
    lot_cost: np.ndarray
    lead_time_days: np.ndarray
    attenuation: np.ndarray  # (N, R) dB per requirement (worst over a band)
    attenuation_f: np.ndarray  # (N, F) dB at every sampled frequency (Problem.freqs)
    margin: np.ndarray  # (N,) dB, min over requirements of attenuation - required
    inductance: np.ndarray  # (N,) H, sum of the ground connections' self inductance
    widths: np.ndarray  # (N, routes) m, NaN where no width reaches the target or no layer
    line_layers: np.ndarray  # (N, routes) 0-based copper layer of each route; -1: absent
    violations: dict[str, np.ndarray]  # name -> (N,) >= 0
    geometry: Geometry
    cost_items: dict[str, np.ndarray]  # itemised unit cost, items sum to unit_cost

    @cached_property
    def feasible(self) -> np.ndarray:
        """No constraint violated (computed once per evaluation)."""
        v = np.zeros(len(self.unit_cost), dtype=bool)
        for a in self.violations.values():
            v |= a > 0
        return ~v

    def violated(self, i: int) -> list[str]:
        """Names of the constraints candidate ``i`` violates, with by how much."""
        return [f"{k} (+{a[i]:.3g})" for k, a in self.violations.items() if a[i] > 0]


@dataclass(frozen=True, eq=False)
class Problem(LineWork):
    """A scenario priced by one fab; ``memo`` (optional) shares solved responses with
    other problems of the same circuit (other quantities, other fabs); ``stacks``
    (optional) are stackups from outside the space (``stackopt eval``) whose layers the
    :attr:`routes` cover too."""

    scenario: Scenario
    table: CostTable
    memo: ResponseMemo | None = field(default=None, compare=False)
    stacks: tuple[LayerStack, ...] = field(default=(), compare=False)

    @cached_property
    def space(self) -> Space:
        """The design space for this scenario and fab."""
        items = self.table.materials_list()
        return Space.build(
            self.scenario,
            dielectric_options(self.table, self.scenario.space.max_plies),
            n_materials=len(items), material_names=tuple(i.id for i in items),
            max_layers=self.table.max_layers, min_drill=self.table.capabilities.min_drill,
            constructions=(self.table.constructions
                           if self.scenario.space.constructions == "standard" else None))

    @cached_property
    def order(self) -> BoardOrder:
        """Board outline and quantity, as the cost module takes them."""
        b = self.scenario.board
        return BoardOrder(width=b.width, height=b.height, quantity=b.quantity)

    @cached_property
    def placed(self):
        """(compiled circuit, placement notes): the scenario's circuit compiled once, its
        via placement checked for the largest drill and via count of the space against the
        fab's minimum spacing (:func:`stackopt.circuit.placement.place_circuit`)."""
        from stackopt.circuit.placement import place_circuit

        sp = self.space
        return place_circuit(self.scenario.circuit, max(sp.drills), max(sp.vias),
                             self.table.capabilities.min_space)

    @property
    def compiled(self):
        """The scenario's circuit, compiled once (see :attr:`placed`)."""
        return self.placed[0]

    @cached_property
    def freqs(self) -> np.ndarray:
        """Frequencies the requirements sample, Hz."""
        fs = self.scenario.frequencies
        return np.asarray(fs if fs else (1e9,), dtype=float)

    @cached_property
    def requirement_index(self) -> list[np.ndarray]:
        """For each requirement, the indices of :attr:`freqs` it covers."""
        out = []
        for r in self.scenario.requirements:
            if r.frequency is not None:
                out.append(np.flatnonzero(np.isclose(self.freqs, r.frequency, rtol=1e-12)))
            else:
                lo, hi = r.band  # type: ignore[misc]
                out.append(np.flatnonzero((self.freqs >= lo * (1 - 1e-12))
                                          & (self.freqs <= hi * (1 + 1e-12))))
        return out

    @cached_property
    def required(self) -> np.ndarray:
        """Required attenuation per requirement, dB."""
        return np.array([r.min_attenuation for r in self.scenario.requirements], dtype=float)

    # ---- electrical work, once per phenotype -----------------------------------------
    @cached_property
    def pour_gap(self) -> float:
        """Gap of the coplanar ground pour, m: the first line's ``gap`` if one gives it,
        else :data:`~stackopt.circuit.grounds.DEFAULT_POUR_GAP` (the same gap sizes the
        CPWG lines in :meth:`line_widths` and the pad-to-pour bridges)."""
        gaps = [ln.gap for ln in self.scenario.lines if ln.gap is not None]
        return float(gaps[0]) if gaps else DEFAULT_POUR_GAP

    def ground_batch(self, g: Geometry, model: str | None = None) -> GroundBatch:
        """The circuit's view of a batch: ground-via height, drill, vias and switches
        (``coplanar``: a stitched ground pour, see :mod:`stackopt.circuit.grounds`), and
        the calibration factor of via model ``model`` (default the scenario's)."""
        n = len(g)
        off = np.zeros(n, dtype=bool)
        search = self.scenario.search
        return GroundBatch(height=g.via_height, drill=g.drill, vias=g.vias,
                           via_in_pad=g.flags.get("via_in_pad", off),
                           own_vias=g.flags.get("own_vias", off), copper=g.copper,
                           coplanar=g.flags.get("coplanar", off),
                           pour_gap=np.full(n, self.pour_gap),
                           via_scale=np.full(n, search.via_scale(model or search.via_model)),
                           **self._line_fields(g))

    def _line_fields(self, g: Geometry) -> dict[str, np.ndarray]:
        """The top layer's dielectric under interconnect lines, only when the circuit has
        lines (otherwise the defaults keep the phenotype key unchanged)."""
        if not len(self.compiled.line_length):
            return {}
        return {"line_height": g.trace_height, "line_er": g.trace_er}

    def phenotype(self, g: Geometry) -> np.ndarray:
        """The electrical phenotype key, one int row per candidate: every field of the
        ground batch and of every line's batch, quantized (:mod:`stackopt.search.phenotype`)."""
        lines = [self.line_batch(g, r) for r in range(len(self.routes))]
        return batch_key(self.ground_batch(g), *lines)

    def response(self, g: Geometry, model: str | None = None) -> tuple[np.ndarray, np.ndarray]:
        """(S (N, F, 2, 2), ground inductance sum (N,)), computed once per distinct ground
        batch (the circuit's whole input) and broadcast back."""
        model = model or self.scenario.search.via_model
        gb = self.ground_batch(g, model)
        key = batch_key(gb)
        first, inv = unique_rows(key)
        s = np.empty((len(first), len(self.freqs), 2, 2), dtype=complex)
        lsum = np.zeros(len(first))
        todo = np.arange(len(first))
        if self.memo is not None:  # copy what another problem solved for the same numbers
            keys = exact_key(gb.take(first))
            self.memo.bind(self.scenario.circuit, self.freqs)
            found, s_known, l_known = self.memo.lookup(model, keys, s.shape[1:])
            s[found], lsum[found] = s_known, l_known
            todo = np.flatnonzero(~found)
        for i0 in range(0, len(todo), PHENOTYPE_CHUNK):  # chunks bound the memory
            rows = todo[i0:i0 + PHENOTYPE_CHUNK]
            sub = gb.take(first[rows])
            lmat = ground_inductance_matrix(self.compiled, sub, model)
            s[rows] = solve(self.compiled, self.freqs, sub, model, lg=lmat)
            if lmat.shape[-1]:
                lsum[rows] = np.trace(lmat, axis1=-2, axis2=-1)
        if self.memo is not None:
            self.memo.store(model, keys[todo], s[todo], lsum[todo])
        return s[inv], lsum[inv]

    def attenuation(self, att_f: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(attenuation per requirement (N, R), margin (N,)) from attenuation per frequency."""
        n = att_f.shape[0]
        if not self.scenario.requirements:
            return np.zeros((n, 0)), np.zeros(n)
        att = np.column_stack([att_f[:, idx].min(axis=1) for idx in self.requirement_index])
        margin = (att - self.required[None, :]).min(axis=1)
        return att, margin

    def objectives(self, ev: Evaluation) -> np.ndarray:
        """Objectives to minimise, (N, 2 or 3): unit cost, then the electrical objective
        (negative margin, negative attenuation at ``search.at``, or ground inductance), then
        lead time if asked for."""
        obj = self.scenario.search.objective
        if obj == "margin":
            perf = -ev.margin
        elif obj == "attenuation":
            k = int(np.argmin(np.abs(self.freqs - self.scenario.search.at)))
            perf = -ev.attenuation_f[:, k]
        else:
            perf = ev.inductance * 1e9  # nH
        cols = [ev.unit_cost, perf]
        if self.scenario.search.third_objective == "lead_time":
            cols.append(ev.lead_time_days.astype(float))
        return np.column_stack(cols)

    # ---- everything ------------------------------------------------------------------
    def price_batch(self, g: Geometry, min_trace: np.ndarray,
                    min_space: np.ndarray | float = np.nan) -> PriceBatch:
        """What the fab prices for a batch."""
        n = len(g)
        off = np.zeros(n, dtype=bool)
        return PriceBatch.broadcast(
            layers=g.layers, material_counts=g.material_counts, copper=g.copper,
            inner_copper=g.inner_copper, min_drill=g.drill, thickness=g.thickness,
            min_dielectric=g.min_dielectric, min_trace=min_trace, min_space=min_space,
            via_in_pad=g.flags.get("via_in_pad", off),
            impedance_control=np.full(n, bool(self.scenario.lines)))

    def evaluate(self, c: Candidates, model: str | None = None) -> Evaluation:
        """Every metric and constraint of a batch of candidates."""
        return self.evaluate_geometry(self.space.geometry(c), model)

    def evaluate_geometry(self, g: Geometry, model: str | None = None) -> Evaluation:
        """Every metric and constraint of a batch given as geometry arrays."""
        s, lsum = self.response(g, model)
        att_f = attenuation_db(s)
        att, margin = self.attenuation(att_f)
        widths = self.line_widths(g)
        layers = self.line_layers(g)
        pr = price(self.table, self.order, self.price_batch(g, min_trace(widths),
                                                            self.min_space(layers)))
        viol = dict(pr.violations)
        win = self.scenario.space.thickness
        if win is not None:
            lo, hi = win.bounds
            viol["thickness_window"] = np.maximum(lo - g.thickness, 0) / lo + np.maximum(
                g.thickness - hi, 0) / hi
        viol.update(self.line_violations(widths, layers))
        viol["circuit_nonfinite"] = (~np.isfinite(margin)).astype(float)
        margin = np.nan_to_num(margin, nan=-999.0, posinf=999.0, neginf=-999.0)
        return Evaluation(unit_cost=pr.unit_cost, lot_cost=pr.lot_cost,
                          lead_time_days=pr.lead_time_days, attenuation=att,
                          attenuation_f=att_f, margin=margin,
                          inductance=lsum, widths=widths, line_layers=layers,
                          violations=viol, geometry=g,
                          cost_items=dict(pr.items))
