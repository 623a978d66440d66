r"""Which copper layers carry each controlled-impedance line, and the cross-section it sees.

Vectorized over N stackups (a :class:`~stackopt.model.geometry.LayerStack`, the one owner
of heights). A line's layer rule (:attr:`stackopt.model.scenario.ControlledLine.layer_rule`)
is ``"outer"`` (every outer layer where the type applies), ``"inner"`` (every inner signal
layer with a plane on each side) or a 0-based layer index; a line without ``layer`` takes
the keyword of its type, so by default it runs on every signal layer where its type
applies. The layer must carry signals (role ``signal`` or ``mixed``) and suit the type:
the outer types (microstrip, cpwg, diff-microstrip) need an outer layer with a plane on
its inner side, the stripline types an inner layer with a plane on each side.

A **route** is one line on one copper layer (:class:`Route`, named ``<line>@L<k>`` by
:func:`route_name`, the one owner of that name): the search sizes a width per route and
candidate, with its own constraints. The routes of a search are every (line, layer) that
some board of its space offers (:func:`line_routes`); on a stackup where a route's layer
does not suit the line (``L4`` of a six-layer board for an outer-layer type, ``L6`` of a
four-layer board) the route is simply absent (layer -1, no width, no violation). Where no
layer of a stackup suits a line at all the search names the violation
``line_<name>_no_layer`` for those stackups only (a stripline on a two-layer board, ``L5``
on a four-layer one).

The cross-section follows :mod:`stackopt.physics.linetypes`: ``h`` from the trace's face
to its (lower) reference plane, ``er`` that dielectric's Dk (thickness-weighted mean
where several lie between); for stripline also ``h_above`` from the trace's other face
to the second plane plus the copper (the trace sits in that dielectric) and its Dk. On the
bottom layer "lower" is read towards the board's inside (the plane above it).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from stackopt.model.geometry import ROLES, LayerStack
from stackopt.physics.linetypes import STRIPLINE_TYPES

__all__ = ["LineSection", "Route", "line_layers", "line_routes", "line_section", "line_slots",
           "layer_words", "route_layer", "route_name"]

_SIGNAL = np.array([ROLES.index("signal"), ROLES.index("mixed")])


def line_layers(stack: LayerStack, line_type: str, rule: str | int) -> np.ndarray:
    """Copper layers that may carry a line of ``line_type`` under layer rule ``rule`` on
    each stackup, (N, L) bool (L: copper layers of the batch)."""
    n_cu = stack.role.shape[1]
    k = np.broadcast_to(np.arange(n_cu), stack.role.shape)
    above, below = stack.planes_around(k)  # only where the planes are, not their heights
    last = (stack.n_layers - 1)[:, None]
    signal = np.isin(stack.role, _SIGNAL)
    if line_type in STRIPLINE_TYPES:
        ok = signal & (above >= 0) & (below >= 0) & (k > 0) & (k < last)
    else:
        ok = signal & (((k == 0) & (below >= 0))
                       | ((k == last) & (k > 0) & (above >= 0)))
    if isinstance(rule, str):  # "outer" / "inner": the type already restricts the side
        return ok
    return ok & (k == int(rule))


def route_layer(stack: LayerStack, line_type: str, rule: str | int,
                layer: int) -> np.ndarray:
    """``layer`` (0-based) where a line of ``line_type`` under ``rule`` may run on it,
    else -1; (N,) int."""
    ok = line_layers(stack, line_type, rule)
    if layer >= ok.shape[1]:
        return np.full(len(stack), -1, dtype=np.int64)
    return np.where(ok[:, layer], layer, -1).astype(np.int64)


def layer_words(line_type: str, rule: str | int, article: str = "an") -> str:
    """Where a line of ``line_type`` under layer rule ``rule`` may run, in words (the one
    wording of the report, the console and the violation sentences): ``layer L3``, or
    ``<article> inner signal layer between two planes`` / ``... outer signal layer over a
    plane``."""
    if not isinstance(rule, str):
        return f"layer L{int(rule) + 1}"
    if line_type in STRIPLINE_TYPES:
        return f"{article} inner signal layer between two planes"
    return f"{article} outer signal layer over a plane"


def route_name(line: str, layer: int) -> str:
    """The name of line ``line`` on 0-based copper ``layer``: ``rf50@L1``."""
    return f"{line}@L{layer + 1}"


@dataclass(frozen=True)
class Route:
    """One controlled-impedance line on one copper layer: ``line`` indexes the scenario's
    lines, ``layer`` is 0-based, ``name`` is :func:`route_name` of the two."""

    line: int
    layer: int
    name: str


def line_routes(lines: Sequence, stacks: Iterable[LayerStack]) -> tuple[Route, ...]:
    """Every (line, layer) that some stackup of ``stacks`` offers, by line then layer;
    ``lines`` are the scenario's (each with ``name``, ``type`` and ``layer_rule``)."""
    stacks = list(stacks)
    out = []
    for j, ln in enumerate(lines):  # a handful of lines
        offered: set[int] = set()
        for st in stacks:  # a handful of arrangements
            offered.update(np.flatnonzero(line_layers(st, ln.type,
                                                      ln.layer_rule).any(axis=0)).tolist())
        out += [Route(j, k, route_name(ln.name, k)) for k in sorted(offered)]
    return tuple(out)


@dataclass(frozen=True)
class LineSection:
    """The cross-section of one line on N stackups, arrays of N (NaN where no layer):
    ``h`` [m], ``er``, copper ``t`` [m], ``h_above`` [m] and ``er_above`` (stripline
    types; 0 and 1 otherwise)."""

    h: np.ndarray
    er: np.ndarray
    t: np.ndarray
    h_above: np.ndarray
    er_above: np.ndarray


def line_section(stack: LayerStack, layer: np.ndarray, line_type: str) -> LineSection:
    """The cross-section of a line of ``line_type`` on copper ``layer`` (N,) (-1: none)."""
    la = np.maximum(layer, 0)[:, None]
    tg = stack.trace(la)
    t = np.take_along_axis(stack.copper, la, axis=1)[:, 0]
    none = layer < 0
    below = tg.plane_below[:, 0] >= 0
    if line_type in STRIPLINE_TYPES:
        h, er = tg.height_below[:, 0], tg.er_below[:, 0]
        ha, ea = tg.height_above[:, 0] + t, tg.er_above[:, 0]
    else:  # the top layer's plane is below it, the bottom layer's above
        h = np.where(below, tg.height_below[:, 0], tg.height_above[:, 0])
        er = np.where(below, tg.er_below[:, 0], tg.er_above[:, 0])
        ha, ea = np.zeros(len(layer)), np.ones(len(layer))
    nan = np.where(none, np.nan, 1.0)
    return LineSection(h * nan, er * nan, t * nan, ha * nan, ea * nan)


def line_slots(stack: LayerStack, layer: int) -> frozenset[int]:
    """Dielectric slots (0-based, top down) that set the cross-section of a line on
    ``layer`` of a one-stackup ``stack``: those between its reference plane(s)."""
    if layer < 0:
        return frozenset()
    tg = stack.trace(np.array([[layer]]))
    up, down = int(tg.plane_above[0, 0]), int(tg.plane_below[0, 0])
    lo = up if up >= 0 else layer
    hi = down if down >= 0 else layer
    return frozenset(range(lo, hi))
