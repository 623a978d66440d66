r"""The vias of the ground terminals: where they stand and their inductances.

Each ground connection's vias stand in a row across the axis to the nearest other
connection (:func:`row_axes`), at the connection's pitch (default
:data:`DEFAULT_PITCH_DRILLS` drills), with :data:`STITCH_VIAS` stitching vias beyond the
row for a coplanar pour and copies one pitch apart for own vias
(:func:`terminal_vias`; the layout is described in :mod:`stackopt.circuit.grounds`).

:func:`via_terms` gives what the vias contribute to the terminals' partial-inductance
matrix: each terminal's vias in parallel
(:func:`stackopt.physics.parallel.parallel_via_inductance`) and the image-theory mutual
between two terminals' via sets averaged over via pairs
(:func:`stackopt.physics.parallel.via_mutual_inductance`). These depend only on the
fields of a :class:`ViaBatch`, which repeat across many candidates (a stackup's copper,
pads and interconnect do not move a via), so they are computed once per distinct
:class:`ViaBatch` row, bit for bit, and broadcast back.
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Any

import numpy as np

from stackopt.circuit.compile import CompiledCircuit
from stackopt.physics.inductance import DEFAULT_VIA_MODEL
from stackopt.physics.parallel import (
    parallel_via_inductance,
    row_positions,
    via_mutual_inductance,
)
from stackopt.rows import unique_rows

__all__ = ["DEFAULT_PITCH_DRILLS", "STITCH_VIAS", "ViaBatch", "ViaTerms", "row_axes",
           "terminal_vias", "via_terms"]

#: Via pitch, in drills, where a ground connection does not give one (common practice,
#: no source: room for the pads' annular rings and the fab's hole-to-hole spacing).
DEFAULT_PITCH_DRILLS = 3.0
#: Stitching vias a coplanar pour adds per ground connection: one beyond each end of the
#: connection's via row, at the connection's pitch (common practice, no source).
STITCH_VIAS = 2


@dataclass(frozen=True)
class ViaBatch:
    """What the ground terminals' vias depend on, arrays of N (the fields of the same
    names of :class:`stackopt.circuit.grounds.GroundBatch`): via depth [m], drill [m],
    vias per connection, own vias, coplanar pour (stitching vias, own landing) and the
    calibration factor on the via terms. :func:`via_terms` reads nothing else, so its
    values are cached by exactly these fields."""

    height: np.ndarray
    drill: np.ndarray
    vias: np.ndarray
    own_vias: np.ndarray
    coplanar: np.ndarray
    via_scale: np.ndarray

    @classmethod
    def of(cls, batch: Any) -> ViaBatch:
        """The fields of this class taken from a batch that has them (a ground batch)."""
        return cls(*(np.asarray(getattr(batch, f.name)) for f in fields(cls)))

    @property
    def own_landing(self) -> np.ndarray:
        """Every element has its own via set: ``own_vias`` or a coplanar pour (N,)."""
        return self.own_vias | self.coplanar

    def take(self, idx: np.ndarray) -> ViaBatch:
        """The candidates at ``idx``."""
        return ViaBatch(*(getattr(self, f.name)[idx] for f in fields(self)))

    def distinct(self) -> tuple[np.ndarray, np.ndarray]:
        """(index of the first row of every distinct row, inverse (N,)): rows equal bit
        for bit in every field (floats by their bit patterns, so a representative's
        values are each of its rows' own)."""
        cols = [a.view(np.int64) if a.dtype == np.float64 else a.astype(np.int64)
                for a in (np.ascontiguousarray(getattr(self, f.name)) for f in fields(self))]
        return unique_rows(np.column_stack(cols))


def row_axes(xy: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Unit row direction ``u`` and normal ``v`` (C, 2) of each connection's via row.

    The row runs across the axis to the nearest other connection (the principal axis of
    the nearest ones, when several are equally near), so via rows of neighbouring
    connections stand side by side and never point at each other, and the layout turns
    with the board: rotating every position rotates every row with it (the result does
    not depend on how the board is oriented). A lone connection's row runs along x.
    ``v`` points from the row along that axis, away from the connections' centroid.
    """
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    c = len(xy)
    u = np.tile([1.0, 0.0], (c, 1))
    if c < 2:
        return u, np.tile([0.0, 1.0], (c, 1))
    diff = xy[None, :, :] - xy[:, None, :]  # (C, C, 2): from c to every other
    dist = np.hypot(diff[..., 0], diff[..., 1]) + np.where(np.eye(c, dtype=bool), np.inf, 0)
    near = dist <= dist.min(axis=1, keepdims=True) * (1 + 1e-9)
    unit = diff / np.where(np.isfinite(dist), dist, 1.0)[..., None]
    tensor = np.einsum("ij,ijk,ijl->ikl", near.astype(float), unit, unit)
    w, vec = np.linalg.eigh(tensor)
    axis = vec[..., -1]  # principal axis towards the nearest neighbour(s)
    axis = np.where((w[:, 1] - w[:, 0] > 1e-9 * w[:, 1])[:, None], axis, [0.0, 1.0])
    away = xy - xy.mean(axis=0)
    sign = np.where(np.einsum("ik,ik->i", axis, away) < -1e-12 * (np.abs(away).max() + 1),
                    -1.0, 1.0)
    v = axis * sign[:, None]
    u = np.column_stack([v[:, 1], -v[:, 0]])
    return u, v


def terminal_vias(c: CompiledCircuit, batch: ViaBatch
                  ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Via centres (N, G, V, 2), mask (N, G, V), count (N, G) and drill (N, G) of the
    ground terminals (the first ``c.n_ground_terminals``)."""
    conn = c.terminal_conn[:c.n_ground_terminals]
    u_c, v_c = row_axes(c.conn_xy)
    u, v = u_c[conn], v_c[conn]  # (G, 2)
    fixed = c.conn_vias[conn]
    count = np.where(fixed > 0, fixed, batch.vias[:, None])
    drill = np.where(np.isnan(c.conn_drill[conn]), batch.drill[:, None], c.conn_drill[conn])
    pitch = np.where(np.isnan(c.conn_pitch[conn]), DEFAULT_PITCH_DRILLS * drill,
                     c.conn_pitch[conn])
    vmax = int(count.max(initial=1))  # initial: an empty batch (N = 0) is valid
    along = np.zeros(count.shape + (vmax,))  # position along the row, m
    for k in np.unique(count):  # a handful of via counts
        row = np.zeros(count.shape + (vmax,))
        row[..., :k] = row_positions(int(k), pitch)[..., 0]
        along = np.where((count == k)[..., None], row, along)
    if np.any(batch.coplanar):  # stitching vias one pitch beyond each end of the row
        cop = np.broadcast_to(np.asarray(batch.coplanar)[:, None], count.shape)
        k = np.arange(vmax + STITCH_VIAS)[None, None, :]
        inside = k[..., :vmax] < count[..., None]
        ext = np.max(np.where(inside, np.abs(along), 0.0), axis=-1) + pitch
        along = np.concatenate([along, np.zeros(count.shape + (STITCH_VIAS,))], axis=-1)
        lo = cop[..., None] & (k == count[..., None])
        hi = cop[..., None] & (k == count[..., None] + 1)
        along = np.where(lo, -ext[..., None], np.where(hi, ext[..., None], along))
        count = count + STITCH_VIAS * cop
        vmax += STITCH_VIAS
    shift = np.where(batch.own_landing[:, None], c.terminal_rank[None, :len(conn)] * pitch,
                     0.0)
    xy = (along[..., None] * u[None, :, None, :] + shift[..., None, None] * v[None, :, None, :]
          + c.conn_xy[conn][None, :, None, :])
    for t, cn in enumerate(conn):  # explicit coordinates (a few terminals)
        off = c.conn_offsets[cn]
        if off is not None:
            xy[:, t, :len(off)] = (c.conn_xy[cn] + off
                                   + shift[:, t, None, None] * v[t][None, None, :])
    mask = np.arange(vmax)[None, None, :] < count[..., None]
    return xy, mask, count, drill


@dataclass(frozen=True)
class ViaTerms:
    """The via part of the ground terminals' inductance, arrays over N candidates:
    ``via`` (N, G0) each ground terminal's vias in parallel, ``mutual`` (N, G0, G0) the
    mean mutual between two terminals' via sets (0 on the diagonal; all 0 without
    mutual terms), both scaled by ``via_scale``, and ``guard`` (N,) the smallest factor
    the positive-definite guard applied within one terminal's vias (1: it did not act)."""

    via: np.ndarray
    mutual: np.ndarray
    guard: np.ndarray

    def take(self, idx: np.ndarray) -> ViaTerms:
        """The candidates at ``idx``."""
        return ViaTerms(*(getattr(self, f.name)[idx] for f in fields(self)))


def _via_terms(c: CompiledCircuit, b: ViaBatch, model: str, mutual: bool) -> ViaTerms:
    n, g0 = len(b.height), c.n_ground_terminals
    guard = np.ones(n)
    lvia = np.zeros((n, g0))
    mean = np.zeros((n, g0, g0))
    if not g0:
        return ViaTerms(lvia, mean, guard)
    h = b.height[:, None]
    xy, mask, count, drill = terminal_vias(c, b)
    hb = np.broadcast_to(h, (n, g0))
    for v in np.unique(count):  # a handful of via counts; each (candidate, terminal) once
        sel = count == v
        lvia[sel], a = parallel_via_inductance(hb[sel], drill[sel], xy[sel][:, :v, :],
                                               model, with_guard=True)
        guard_t = np.ones((n, g0))
        guard_t[sel] = a
        guard = np.minimum(guard, guard_t.min(axis=1))
    scale = np.asarray(b.via_scale)[:, None]  # calibration: via self and mutual terms
    lvia = lvia * scale
    if mutual and g0 > 1:
        i, j = np.triu_indices(g0, 1)  # each pair of terminals once
        diff = xy[:, i, :, None, :] - xy[:, j, None, :, :]
        s = np.hypot(diff[..., 0], diff[..., 1])  # (N, P, V, V)
        pair = mask[:, i, :, None] & mask[:, j, None, :]
        dd = 0.5 * (drill[:, i] + drill[:, j])[..., None, None]
        m = via_mutual_inductance(h[..., None, None], np.maximum(s, dd)) * scale[..., None, None]
        # sum over each (candidate, pair)'s via pairs, added one after another in row
        # order (bincount adds its weights in sequence): the padding to the batch's most
        # vias is left out, so the rest of the batch cannot change a candidate's bits
        cell = np.broadcast_to(np.arange(n * len(i)).reshape(n, -1, 1, 1), pair.shape)
        total = np.bincount(cell[pair], weights=m[pair], minlength=n * len(i))
        mean[:, i, j] = total.reshape(n, -1) / pair.sum(axis=(-1, -2))
        mean[:, j, i] = mean[:, i, j]
    return ViaTerms(lvia, mean, guard)


def via_terms(c: CompiledCircuit, batch: ViaBatch, model: str = DEFAULT_VIA_MODEL,
              *, mutual: bool = True) -> ViaTerms:
    """The via part of the ground terminals' inductance for every candidate (see
    :class:`ViaTerms`), computed once per distinct row of ``batch``
    (:meth:`ViaBatch.distinct`) and broadcast back: the same values, bit for bit, as
    computing every row.

    ``model`` is a key of :data:`stackopt.physics.inductance.VIA_MODELS` (the self term
    of each via; the mutual is image theory for every model); ``mutual=False`` leaves
    the terms between terminals at 0.
    """
    first, inv = batch.distinct()
    return _via_terms(c, batch.take(first), model, mutual).take(inv)
