r"""Stackup geometry: every derived height of N stackups, from per-layer arrays.

This module is the one owner of stackup geometry. The search's batches
(:meth:`stackopt.search.space.Space.geometry`) and a single
:class:`~stackopt.model.stackup.Stackup` (``stackopt eval``, the report's stackup table)
both build a :class:`LayerStack` and read every height from it; nothing else derives one.

Inputs, one row per stackup (L = the most copper layers in the batch, S = L - 1)::

    copper[:, k]      thickness of copper layer k (0-based from the top), m; 0: no layer
    role[:, k]        ROLES code of copper layer k; -1: no layer
    dielectric[:, j]  thickness of the dielectric between copper j and j + 1, m; 0: none
    er[:, j]          its relative permittivity (Dk); 1 where there is none

The cross-section (a four-layer S-P-G-S board; heights face to face, copper faces at z)::

    z=0 ┌──────────────┐ ┬ copper[0]  L1 signal (trace, vias start here)
        └──────────────┘ ┴ ─────┬─────────────── ┬
          dielectric[0], er[0]  │ trace_height   │
        ┌──────────────┐ ─────── ┴ (= height(0, reference_plane(0)), Dk trace_er)
        │ L2 power     │ copper[1]  ← reference_plane(0): nearest plane of any kind
        └──────────────┘                         │ via_height
          dielectric[1], er[1]                   │ (= height(0, ground_plane(0)))
        ┌──────────────┐ ──────────────────────── ┴
        │ L3 ground    │ copper[2]  ← ground_plane(0): nearest ground (else nearest plane)
        └──────────────┘
          dielectric[2], er[2]
        ┌──────────────┐
        └──────────────┘ copper[3]  L4 signal
                         thickness = sum(copper) + sum(dielectric)  (finished, over copper)

For a trace on an inner layer k between two planes (stripline), :meth:`LayerStack.trace`
gives both sides: ``height_above`` / ``er_above`` to :meth:`LayerStack.plane_above` and
``height_below`` / ``er_below`` to :meth:`LayerStack.plane_below`; each Dk is the
thickness-weighted mean of the dielectrics on that side (the dielectric itself where there
is one). A missing plane gives NaN heights and index -1.

Names, one per quantity, from the scenario to the report: ``thickness`` (finished
thickness), ``via_height`` (the ``h`` of the ground-via models: the dielectric and the
inner copper between the top copper's lower face and its ground plane's upper face; the
outputs' ``ground_plane_depth_m``), ``trace_height`` / ``trace_er`` (the top trace's
dielectric height and Dk; the outputs' ``er_top``), ``min_dielectric`` (thinnest
dielectric). Everything is vectorized over stackups (a loop only over a handful of
layers is allowed nowhere here: none is needed).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from functools import cached_property

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["ROLES", "PLANE_ROLES", "role_codes", "LayerStack", "TraceGeometry"]

#: Copper roles; a layer's code is its index here (-1: no layer).
ROLES = ("signal", "ground", "power", "plane", "mixed")
#: Roles that form a solid reference plane.
PLANE_ROLES = ("ground", "power", "plane")
_PLANE_CODES = np.array([ROLES.index(r) for r in PLANE_ROLES])
_GROUND = ROLES.index("ground")


def role_codes(roles: Sequence[str]) -> np.ndarray:
    """Role names as codes (index in :data:`ROLES`)."""
    return np.array([ROLES.index(r) for r in roles], dtype=np.int64)


def _prefix(x: np.ndarray) -> np.ndarray:
    """Running sums with a leading 0: ``out[..., k] = x[..., :k].sum(-1)``."""
    return np.concatenate([np.zeros(x.shape[:-1] + (1,)), np.cumsum(x, axis=-1)], axis=-1)


def _at(a: np.ndarray, idx: np.ndarray) -> np.ndarray:
    """``a[n, idx[n, k]]`` for every row n, idx (N, K) clipped into range."""
    return np.take_along_axis(a, np.clip(idx, 0, a.shape[-1] - 1), axis=-1)


def _reach(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(last True layer at or above, first True layer at or below) every layer (N, L);
    -1 and L where there is none."""
    n_cu = mask.shape[-1]
    k = np.arange(n_cu)
    ups = np.maximum.accumulate(np.where(mask, k, -1), axis=-1)
    downs = np.minimum.accumulate(np.where(mask, k, n_cu)[:, ::-1], axis=-1)[:, ::-1]
    return ups, downs


def _nearest(reach: tuple[np.ndarray, np.ndarray], layer: np.ndarray
             ) -> tuple[np.ndarray, np.ndarray]:
    """Index of the nearest True layer strictly above and strictly below ``layer`` (N, K)
    of a mask given by its :func:`_reach`; -1 where there is none."""
    ups, downs = reach
    n_cu = ups.shape[-1]
    above = np.where(layer > 0, _at(ups, layer - 1), -1)
    below = np.where(layer < n_cu - 1, _at(downs, layer + 1), n_cu)
    return above, np.where(below < n_cu, below, -1)


def _closest(above: np.ndarray, below: np.ndarray, layer: np.ndarray) -> np.ndarray:
    """Of a layer above and one below (-1: none), the nearer in layer count; a tie goes
    to the one above."""
    take_above = (above >= 0) & ((below < 0) | (layer - above <= below - layer))
    return np.where(take_above, above, below)


@dataclass(frozen=True)
class TraceGeometry:
    """What a trace on a copper layer sees, (N, K) each: the nearest planes above and below
    (-1: none) and the dielectric height (m, NaN: none) and Dk to each."""

    plane_above: np.ndarray
    height_above: np.ndarray
    er_above: np.ndarray
    plane_below: np.ndarray
    height_below: np.ndarray
    er_below: np.ndarray


@dataclass(frozen=True, eq=False)
class LayerStack:
    """N stackups as per-layer arrays (see the module docstring); every derived height.

    Examples
    --------
    Two-layer board, 1.5 mm core, 35 um copper:

    >>> s = LayerStack.of([1.5e-3], [4.5], [35e-6, 35e-6], ["signal", "ground"])
    >>> round(float(s.thickness[0]) * 1e3, 3), round(float(s.via_height()[0]) * 1e3, 3)
    (1.57, 1.5)
    """

    dielectric: np.ndarray  # (N, S) m
    er: np.ndarray  # (N, S)
    copper: np.ndarray  # (N, L) m
    role: np.ndarray  # (N, L) int, -1 where no layer

    @classmethod
    def of(cls, dielectric: ArrayLike, er: ArrayLike, copper: ArrayLike,
           roles: Sequence[str]) -> LayerStack:
        """One stackup (N = 1) from its lists of layers, top to bottom."""
        return cls(np.atleast_2d(np.asarray(dielectric, dtype=float)).reshape(1, -1),
                   np.atleast_2d(np.asarray(er, dtype=float)).reshape(1, -1),
                   np.atleast_2d(np.asarray(copper, dtype=float)),
                   role_codes(roles)[None, :])

    def __len__(self) -> int:
        return self.role.shape[0]

    def _layer(self, layer: ArrayLike) -> np.ndarray:
        """A layer index (scalar, (N,) or (N, K)) as an (N, K) int array."""
        a = np.asarray(layer, dtype=np.int64)
        if a.ndim < 2:
            a = np.broadcast_to(a.reshape(-1, 1) if a.ndim else a, (len(self), 1))
        return a

    # ---- whole-board quantities ----------------------------------------------------
    @cached_property
    def n_layers(self) -> np.ndarray:
        """Copper layers of each stackup (N,)."""
        return (self.role >= 0).sum(axis=-1)

    @cached_property
    def thickness(self) -> np.ndarray:
        """Finished thickness over copper (no mask or plating build-up), m (N,)."""
        return self.dielectric.sum(axis=-1) + self.copper.sum(axis=-1)

    @cached_property
    def min_dielectric(self) -> np.ndarray:
        """Thinnest dielectric, m (N,); inf for a single copper layer."""
        return np.where(self.dielectric > 0, self.dielectric, np.inf).min(axis=-1, initial=np.inf)

    @cached_property
    def z_top(self) -> np.ndarray:
        """z of each copper layer's upper face, m (N, L); 0 at the top, positive down."""
        return self._sum_dielectric + self._sum_copper[..., :-1]

    @cached_property
    def z_bottom(self) -> np.ndarray:
        """z of each copper layer's lower face, m (N, L)."""
        return self.z_top + self.copper

    @cached_property
    def is_plane(self) -> np.ndarray:
        """Layers that are solid reference planes (N, L) bool."""
        return np.isin(self.role, _PLANE_CODES)

    @cached_property
    def _plane_reach(self) -> tuple[np.ndarray, np.ndarray]:
        """:func:`_reach` of the plane layers, found once per batch."""
        return _reach(self.is_plane)

    @cached_property
    def _ground_reach(self) -> tuple[np.ndarray, np.ndarray]:
        """:func:`_reach` of the ground layers, found once per batch."""
        return _reach(self.role == _GROUND)

    # ---- running sums from the top (each once per stack) ------------------------------
    @cached_property
    def _sum_dielectric(self) -> np.ndarray:
        """Dielectric thickness above each copper layer, m (N, L)."""
        return _prefix(self.dielectric)

    @cached_property
    def _sum_copper(self) -> np.ndarray:
        """Copper thickness above each copper layer (and the total last), m (N, L + 1)."""
        return _prefix(self.copper)

    @cached_property
    def _sum_dk_thickness(self) -> np.ndarray:
        """Sum of Dk × thickness of the dielectrics above each copper layer, m (N, L)."""
        return _prefix(self.dielectric * self.er)

    # ---- between two layers --------------------------------------------------------
    def height(self, a: ArrayLike, b: ArrayLike) -> np.ndarray:
        """Dielectric plus inner copper between the faces of copper ``a`` and ``b`` that
        face each other, m (N, K); NaN where either index is -1."""
        a, b = self._layer(a), self._layer(b)
        lo, hi = np.minimum(a, b), np.maximum(a, b)
        t = self._sum_dielectric
        d = _at(t, hi) - _at(t, lo)
        cu = self._sum_copper
        inner = np.where(hi > lo + 1, _at(cu, hi) - _at(cu, lo + 1), 0.0)
        return np.where((a < 0) | (b < 0), np.nan, d + inner)

    def er_between(self, a: ArrayLike, b: ArrayLike) -> np.ndarray:
        """Dk between copper ``a`` and ``b``: the dielectric's own where one lies between,
        else the thickness-weighted mean (N, K); NaN where either index is -1."""
        a, b = self._layer(a), self._layer(b)
        lo, hi = np.minimum(a, b), np.maximum(a, b)
        t, w = self._sum_dielectric, self._sum_dk_thickness
        with np.errstate(invalid="ignore", divide="ignore"):
            mean = (_at(w, hi) - _at(w, lo)) / (_at(t, hi) - _at(t, lo))
        one = _at(self.er, lo)
        return np.where((a < 0) | (b < 0), np.nan, np.where(hi == lo + 1, one, mean))

    # ---- planes ----------------------------------------------------------------------
    def reference_plane(self, layer: ArrayLike = 0) -> np.ndarray:
        """The nearest plane to ``layer`` other than itself (a tie: the one above), (N, K);
        -1 if the board has none."""
        la = self._layer(layer)
        return _closest(*_nearest(self._plane_reach, la), la)

    def ground_plane(self, layer: ArrayLike = 0) -> np.ndarray:
        """The plane a ground via from ``layer`` goes to: the nearest ``ground`` layer (a
        tie: the one above), else the nearest plane of any kind; -1 if none (N, K)."""
        la = self._layer(layer)
        g = _closest(*_nearest(self._ground_reach, la), la)
        return np.where(g >= 0, g, self.reference_plane(la))

    def via_height(self, layer: ArrayLike = 0) -> np.ndarray:
        """Height ``h`` of a ground via from ``layer`` to its :meth:`ground_plane`, m:
        dielectric and inner copper between the two copper faces (the substrate height of
        the ground-via models). (N,) for a scalar ``layer``, else (N, K); NaN: no plane."""
        la = self._layer(layer)
        h = self.height(la, self.ground_plane(la))
        return h[:, 0] if np.ndim(layer) == 0 else h

    def planes_around(self, layer: ArrayLike = 0) -> tuple[np.ndarray, np.ndarray]:
        """The nearest plane strictly above and strictly below ``layer``, (N, K) each;
        -1 where there is none (the planes of :meth:`trace`, without its heights)."""
        return _nearest(self._plane_reach, self._layer(layer))

    def trace(self, layer: ArrayLike = 0) -> TraceGeometry:
        """Planes, heights and Dk above and below a trace on ``layer`` (stripline: both;
        microstrip on the top layer: only below), (N, K) each."""
        la = self._layer(layer)
        up, down = self.planes_around(la)
        return TraceGeometry(plane_above=up, height_above=self.height(la, up),
                             er_above=self.er_between(la, up), plane_below=down,
                             height_below=self.height(la, down),
                             er_below=self.er_between(la, down))

    @cached_property
    def trace_height(self) -> np.ndarray:
        """Dielectric height of a trace on the top layer over its reference plane, m (N,)."""
        return self.height(0, self.reference_plane(0))[:, 0]

    @cached_property
    def trace_er(self) -> np.ndarray:
        """Dk under a trace on the top layer, to its reference plane (N,)."""
        return self.er_between(0, self.reference_plane(0))[:, 0]
