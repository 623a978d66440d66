r"""Which copper layer carries each controlled-impedance line, and the cross-section it sees.

Vectorized over N stackups (a :class:`~stackopt.model.geometry.LayerStack`, the one owner
of heights). A line's layer rule (:attr:`stackopt.model.scenario.ControlledLine.layer_rule`)
is ``"outer"`` (the top layer, the component side), ``"inner"`` (the shallowest inner
signal layer with a plane on each side) or a 0-based layer index. The layer must carry
signals (role ``signal`` or ``mixed``) and suit the type: the outer types (microstrip,
cpwg, diff-microstrip) need an outer layer with a plane on its inner side, the stripline
types an inner layer with a plane on each side. Where no layer qualifies the index is -1
(the search turns that into the named violation ``line_<name>_no_layer`` for those
stackups only, e.g. a stripline on a two-layer board or ``L5`` on a four-layer one).

The cross-section follows :mod:`stackopt.physics.linetypes`: ``h`` from the trace's face
to its (lower) reference plane, ``er`` that dielectric's Dk (thickness-weighted mean
where several lie between); for stripline also ``h_above`` from the trace's other face
to the second plane plus the copper (the trace sits in that dielectric) and its Dk.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from stackopt.model.geometry import ROLES, LayerStack
from stackopt.physics.linetypes import STRIPLINE_TYPES

__all__ = ["LineSection", "line_layer", "line_section", "line_slots"]

_SIGNAL = np.array([ROLES.index("signal"), ROLES.index("mixed")])


def line_layer(stack: LayerStack, line_type: str, rule: str | int) -> np.ndarray:
    """0-based copper layer of the line on each stackup, (N,) int; -1 where none fits."""
    n_cu = stack.role.shape[1]
    k = np.broadcast_to(np.arange(n_cu), stack.role.shape)
    tg = stack.trace(k)
    last = (stack.n_layers - 1)[:, None]
    signal = np.isin(stack.role, _SIGNAL)
    if line_type in STRIPLINE_TYPES:
        ok = signal & (tg.plane_above >= 0) & (tg.plane_below >= 0) & (k > 0) & (k < last)
    else:
        ok = signal & (((k == 0) & (tg.plane_below >= 0)) | ((k == last) & (tg.plane_above
                                                                          >= 0)))
    if rule == "outer":
        return np.where(ok[:, 0], 0, -1)
    if rule == "inner":
        return np.where(ok.any(axis=1), np.argmax(ok, axis=1), -1)
    idx = int(rule)
    if idx >= n_cu:
        return np.full(len(stack), -1)
    return np.where(ok[:, idx], idx, -1)


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
