"""The controlled-impedance lines of a search problem, on every layer that carries them.

A mixin of :class:`stackopt.search.problem.Problem`: the routes (one line on one layer,
:mod:`stackopt.model.routing`), what the width synthesis of each receives for a batch,
the closed-form widths once per distinct cross-section, and the lines' constraints with
their named violations (``line_<line>_no_layer`` per line; ``line_<line>@L<k>_unreachable``,
``_too_wide``, ``_too_narrow`` per route). The solder mask the field solver puts over
outer-layer lines is the scenario's if it gives one, else the cost table's.
"""

from __future__ import annotations

from collections.abc import Callable
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np

from stackopt.model.costtable import CostTable, SolderMask
from stackopt.model.geometry import LayerStack
from stackopt.model.routing import Route, line_routes, line_section, route_layer
from stackopt.model.scenario import Scenario
from stackopt.physics.linetypes import (
    LINE_TYPES,
    PAIR_TYPES,
    POUR_TYPE,
    STRIPLINE_TYPES,
    LineSpec,
    is_plain,
    line_width,
    sized_impedance,
)
from stackopt.rows import unique_rows
from stackopt.search.phenotype import LineBatch, batch_key
from stackopt.search.space import Geometry, Space

__all__ = ["LineWork", "WIDTH_RANGE"]

#: Width range searched when synthesizing controlled-impedance traces, m.
WIDTH_RANGE = (20e-6, 10e-3)


class LineWork:
    """The line methods of a :class:`~stackopt.search.problem.Problem`."""

    if TYPE_CHECKING:
        scenario: Scenario
        table: CostTable
        stacks: tuple[LayerStack, ...]

        @property
        def space(self) -> Space:
            """The problem's design space."""

        @property
        def pour_gap(self) -> float:
            """Gap of the coplanar ground pour, m."""

    @cached_property
    def routes(self) -> tuple[Route, ...]:
        """Every (line, layer) of the scenario's lines that some board of the space offers:
        the width columns of the search (:mod:`stackopt.model.routing`)."""
        return line_routes(self.scenario.lines,
                           [a.stack() for a in self.space.arrangements] + list(self.stacks))

    @cached_property
    def solder_mask(self) -> SolderMask | None:
        """The solder mask over the outer layers: the scenario's if it gives one, else the
        cost table's (the fab's process), else none. Only the field solver uses it."""
        return self.scenario.solder_mask or self.table.solder_mask

    def line_batch(self, g: Geometry, route: int) -> LineBatch:
        """What the width synthesis of route ``route`` (index into :attr:`routes`)
        receives for a batch: the cross-section on its layer (-1 where the layer does not
        suit the line; :mod:`stackopt.model.routing`). The coplanar ground pour
        (mitigation) turns a single-ended top-layer microstrip into a cpwg."""
        rt = self.routes[route]
        ln = self.scenario.lines[rt.line]
        layer = route_layer(g.stack, ln.type, ln.layer_rule, rt.layer)
        sec = line_section(g.stack, layer, ln.type)
        cop = g.flags.get("coplanar", np.zeros(len(g), dtype=bool))
        cop = (cop & (layer == 0) & is_plain(ln.type)) | LINE_TYPES[ln.type].coplanar
        return LineBatch(height=np.nan_to_num(sec.h), er=np.nan_to_num(sec.er),
                         copper=np.nan_to_num(sec.t), coplanar=cop & (layer >= 0),
                         height_above=np.nan_to_num(sec.h_above),
                         er_above=np.nan_to_num(sec.er_above), layer=layer)

    def line_spec(self, route: int, lb: LineBatch) -> LineSpec:
        """The :class:`~stackopt.physics.linetypes.LineSpec` of route ``route`` on the
        cross-sections of ``lb`` (arrays; a coplanar pour makes it a cpwg)."""
        ln = self.scenario.lines[self.routes[route].line]
        strip = ln.type in STRIPLINE_TYPES
        kind = POUR_TYPE if bool(np.all(lb.coplanar)) and ln.type not in PAIR_TYPES \
            else ln.type
        gap = ((ln.gap if ln.gap is not None else self.pour_gap)
               if LINE_TYPES[kind].coplanar else None)
        mask = self.solder_mask
        return LineSpec(kind, lb.height, lb.er, lb.copper,
                        h_above=lb.height_above if strip else None,
                        er_above=lb.er_above if strip else None, s=ln.spacing, gap=gap,
                        mask_t=mask.thickness if (mask and not strip) else 0.0,
                        mask_er=mask.er if mask else 3.5)

    def line_widths(self, g: Geometry) -> np.ndarray:
        """Width of every route (controlled-impedance line on one layer) on each candidate,
        (N, routes) (NaN: unreachable, or the layer does not carry the line there),
        synthesized by closed form once per distinct
        :class:`~stackopt.search.phenotype.LineBatch` row (the field solver refines the
        picks' widths afterwards: :mod:`stackopt.analyses.lines`)."""
        out = np.full((len(g), len(self.routes)), np.nan)
        for r, rt in enumerate(self.routes):  # a handful of routes
            lb = self.line_batch(g, r)
            first, inv = unique_rows(batch_key(lb))
            target = self.scenario.lines[rt.line].target

            def size(spec: LineSpec, rows: np.ndarray, target: float = target
                     ) -> np.ndarray:
                w, ok = line_width(spec, target, *WIDTH_RANGE)
                return np.where(ok, w, np.nan)

            out[:, r] = self._per_kind(r, lb.take(first), size)[inv]
        return out

    def line_impedances(self, g: Geometry, widths: np.ndarray) -> np.ndarray:
        """Impedance [ohm] (N, routes) of every route at ``widths`` [m] (N, routes) on
        each candidate's cross-section: Z0, or Z_diff for a pair, by the closed form that
        sizes it (:func:`~stackopt.physics.linetypes.sized_impedance`); NaN where the
        route's layer does not carry the line or there is no width."""
        out = np.full((len(g), len(self.routes)), np.nan)
        for r in range(len(self.routes)):  # a handful of routes
            col = widths[:, r]

            def z(spec: LineSpec, rows: np.ndarray, col: np.ndarray = col) -> np.ndarray:
                return sized_impedance(spec, col[rows])

            out[:, r] = self._per_kind(r, self.line_batch(g, r), z)
        return out

    def _per_kind(self, route: int, lb: LineBatch,
                  fn: Callable[[LineSpec, np.ndarray], np.ndarray]) -> np.ndarray:
        """``fn(spec, rows)`` on the rows of ``lb`` where route ``route`` has its layer,
        one call per line kind (a coplanar pour makes a microstrip a cpwg); NaN elsewhere."""
        out = np.full(len(lb.layer), np.nan)
        for cpw in (False, True):
            rows = np.flatnonzero((lb.coplanar == cpw) & (lb.layer >= 0))
            if len(rows):
                out[rows] = fn(self.line_spec(route, lb.take(rows)), rows)
        return out

    def line_layers(self, g: Geometry) -> np.ndarray:
        """Copper layer (0-based) of every route on each candidate, (N, routes); -1 where
        the route's layer does not carry its line on that candidate."""
        lines = self.scenario.lines
        cols = [route_layer(g.stack, lines[rt.line].type, lines[rt.line].layer_rule,
                            rt.layer) for rt in self.routes]
        return np.column_stack(cols) if cols else np.zeros((len(g), 0), dtype=np.int64)

    def line_present(self, layers: np.ndarray) -> np.ndarray:
        """Whether each scenario line has at least one layer on each candidate, (N, lines),
        from :meth:`line_layers`."""
        out = np.zeros((layers.shape[0], len(self.scenario.lines)), dtype=bool)
        for r, rt in enumerate(self.routes):  # a handful of routes
            out[:, rt.line] |= layers[:, r] >= 0
        return out

    def min_space(self, layers: np.ndarray) -> np.ndarray:
        """Narrowest copper-to-copper space the lines need on each candidate, m (N,): the
        spacing of every pair and the gap of every cpwg line on every route present
        there (``layers`` from :meth:`line_layers`); NaN where none."""
        lines = self.scenario.lines
        sp = np.array([ln.spacing if ln.spacing is not None else
                       (ln.gap or self.pour_gap) if LINE_TYPES[ln.type].coplanar
                       else np.inf
                       for ln in (lines[rt.line] for rt in self.routes)])
        m = np.where(layers >= 0, sp[None, :], np.inf).min(axis=1, initial=np.inf)
        return np.where(np.isfinite(m), m, np.nan)

    def line_violations(self, widths: np.ndarray, layers: np.ndarray
                        ) -> dict[str, np.ndarray]:
        """The lines' named violations (N,) each, from :meth:`line_widths` and
        :meth:`line_layers`: a line no layer carries; per route, no width reaching the
        target, wider than ``max_width`` or narrower than ``min_width`` (relative excess).
        A route whose layer does not carry its line on a candidate violates nothing."""
        viol = {}
        present = self.line_present(layers)
        for j, ln in enumerate(self.scenario.lines):
            viol[f"line_{ln.name}_no_layer"] = (~present[:, j]).astype(float)
        for r, rt in enumerate(self.routes):  # per line and layer: its own constraints
            ln = self.scenario.lines[rt.line]
            has = layers[:, r] >= 0
            w = np.nan_to_num(widths[:, r], nan=0.0)
            viol[f"line_{rt.name}_unreachable"] = (has & np.isnan(widths[:, r])).astype(float)
            if ln.max_width is not None:
                viol[f"line_{rt.name}_too_wide"] = np.maximum(w - ln.max_width, 0) / ln.max_width
            if ln.min_width is not None:
                viol[f"line_{rt.name}_too_narrow"] = np.where(
                    w > 0, np.maximum(ln.min_width - w, 0) / ln.min_width, 0.0)
        return viol
