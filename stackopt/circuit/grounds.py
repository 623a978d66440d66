r"""Ground-connection parasitics of a batch of candidate stackups.

Each ground terminal (an element whose ``gnd`` end goes through a named ground
connection, see :mod:`stackopt.circuit.compile`) sees, per candidate, a partial
inductance

.. math::

    L_{tt} = L_{trace}(\ell, w, h, t_{cu}) + L_{par}(h, d, \{xy\}),\qquad
    L_{tu} = \frac{1}{n_t n_u}\sum_{i \in t}\sum_{j \in u} M(h, s_{ij}, d)

- :math:`L_{trace}`: the pad-to-via trace over the plane at depth ``h``
  (:func:`stackopt.physics.lines.pad_trace_inductance`); removed for via-in-pad.
- :math:`L_{par}`: the connection's vias in parallel
  (:func:`stackopt.physics.parallel.parallel_via_inductance`); ``n`` vias in a row at the
  connection's pitch (default 3 drills), centred on its position, or at ``vias_at``.
- :math:`M`: mutual inductance of two vias (:func:`stackopt.physics.parallel.via_mutual_inductance`,
  the via model's own inductance times the partial-inductance coupling coefficient, so
  the matrix stays consistent with the chosen model), *averaged over via pairs*: this
  assumes each via of a connection carries an equal share of its current (exact for one
  via; for several it slightly misweights edge and middle vias). The pad traces are not
  coupled to each other (they run in different directions in most layouts).
- Shared via (default): terminals on one connection are one via carrying both currents,
  so :math:`L_{tu} = L_{tt}` for them (fully coupled). ``own_vias``: the second, third …
  element on a connection gets a copy of the connection (trace and vias) moved by one,
  two … pitches in +y.
- ``coplanar``: a ground pour on the top layer around the pads, stitched to the plane.
  Each element lands on the pour right beside its pad, so its pad-to-via trace becomes
  the short pad-to-pour bridge (length ``min(trace, pour_gap)``, same width, still
  :func:`~stackopt.physics.lines.pad_trace_inductance`), every element lands on its own
  patch of pour (as with ``own_vias``), and the pour reaches the plane through the
  connection's vias plus :data:`STITCH_VIAS` stitching vias flanking them, one pitch
  beyond each end of the row (so ``n`` vias become a row of ``n + 2``, all in the partial
  inductance matrix with their mutual terms). Assumptions: the pour between the bridge and
  the vias is wide and short, its own inductance is neglected (optimistic when the
  stitching vias sit more than about one dielectric thickness from the pad); each
  connection's current returns through its own vias (no current crosses the pour to a
  neighbouring connection), the via sets of different connections still couple through
  the mutual term.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np
from numpy.typing import ArrayLike

from stackopt.circuit.compile import CompiledCircuit
from stackopt.errors import InputError
from stackopt.physics.inductance import check_via_model
from stackopt.physics.lines import pad_trace_inductance
from stackopt.physics.parallel import (
    guard_coupling,
    parallel_via_inductance,
    row_positions,
    via_mutual_inductance,
)

__all__ = ["GroundBatch", "ground_inductance_matrix", "DEFAULT_PITCH_DRILLS",
           "DEFAULT_POUR_GAP", "STITCH_VIAS"]

#: Via pitch, in drills, where a ground connection does not give one (common practice,
#: no source: room for the pads' annular rings and the fab's hole-to-hole spacing).
DEFAULT_PITCH_DRILLS = 3.0
#: Pad-to-pour clearance of a coplanar ground pour, m (0.2 mm: a usual coplanar gap on
#: FR-4 boards, well above the 0.1-0.15 mm minimum spaces of common fabs; common
#: practice, no source).
DEFAULT_POUR_GAP = 0.2e-3
#: Stitching vias a coplanar pour adds per ground connection: one beyond each end of the
#: connection's via row, at the connection's pitch (common practice, no source).
STITCH_VIAS = 2


@dataclass(frozen=True)
class GroundBatch:
    """What N candidate stackups do to the ground connections (1-D arrays of N).

    Attributes
    ----------
    height : via length from the top copper to its plane [m], > 0
    drill : drill / plated barrel outer diameter [m], > 0 (where the circuit gives none)
    vias : vias per ground connection (where the circuit gives none), int >= 1
    via_in_pad : bool, pad-to-via traces removed
    own_vias : bool, every element gets its own via(s) instead of sharing a connection's
    copper : top copper thickness [m], > 0 (for the pad trace)
    coplanar : bool, a stitched ground pour on the top layer (see the module docstring);
        default all False
    pour_gap : pad-to-pour clearance of the coplanar pour [m], > 0; default
        :data:`DEFAULT_POUR_GAP`
    """

    height: np.ndarray
    drill: np.ndarray
    vias: np.ndarray
    via_in_pad: np.ndarray
    own_vias: np.ndarray
    copper: np.ndarray
    coplanar: np.ndarray | None = None
    pour_gap: np.ndarray | None = None

    def __post_init__(self) -> None:
        kinds = {"vias": int, "via_in_pad": bool, "own_vias": bool, "coplanar": bool}
        n = np.shape(self.height)
        defaults = {"coplanar": False, "pour_gap": DEFAULT_POUR_GAP}
        arrs: dict[str, np.ndarray] = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if v is None:
                v = np.full(n, defaults[f.name])
            arrs[f.name] = np.asarray(v, dtype=kinds.get(f.name, float))
        shapes = {a.shape for a in arrs.values()}
        if len(shapes) != 1 or len(next(iter(shapes))) != 1:
            raise InputError(f"GroundBatch arrays must be 1-D of one length, got {shapes}",
                             fix="use GroundBatch.broadcast(...) for scalars")
        for name in ("height", "drill", "copper", "pour_gap"):
            if not np.all(np.isfinite(arrs[name]) & (arrs[name] > 0)):
                raise InputError(f"GroundBatch.{name} must be finite and > 0",
                                 fix="give SI metres")
        if np.any(arrs["vias"] < 1):
            raise InputError("GroundBatch.vias must be >= 1", fix="give at least one via")
        for name, a in arrs.items():
            a.setflags(write=False)
            object.__setattr__(self, name, a)

    @classmethod
    def broadcast(cls, height: ArrayLike, drill: ArrayLike = 0.3e-3, vias: ArrayLike = 1,
                  via_in_pad: ArrayLike = False, own_vias: ArrayLike = False,
                  copper: ArrayLike = 35e-6, coplanar: ArrayLike = False,
                  pour_gap: ArrayLike = DEFAULT_POUR_GAP) -> GroundBatch:
        """Build a batch from scalars or arrays, broadcast to one length N."""
        arrs = np.broadcast_arrays(*(np.atleast_1d(x) for x in
                                     (height, drill, vias, via_in_pad, own_vias, copper,
                                      coplanar, pour_gap)))
        return cls(*(np.array(a) for a in arrs))

    @property
    def n(self) -> int:
        """Number of candidates N."""
        return len(self.height)

    @property
    def own_landing(self) -> np.ndarray:
        """Every element has its own via set: ``own_vias`` or a coplanar pour (N,)."""
        return self.own_vias | self.coplanar

    def take(self, idx: ArrayLike) -> GroundBatch:
        """The candidates at ``idx`` (indices or mask)."""
        return GroundBatch(*(getattr(self, f.name)[idx] for f in fields(self)))


def _terminal_vias(c: CompiledCircuit, batch: GroundBatch
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Via centres (N, G, V, 2), mask (N, G, V), count (N, G) and drill (N, G)."""
    conn = c.terminal_conn
    fixed = c.conn_vias[conn]
    count = np.where(fixed > 0, fixed, batch.vias[:, None])
    drill = np.where(np.isnan(c.conn_drill[conn]), batch.drill[:, None], c.conn_drill[conn])
    pitch = np.where(np.isnan(c.conn_pitch[conn]), DEFAULT_PITCH_DRILLS * drill,
                     c.conn_pitch[conn])
    vmax = int(count.max(initial=1))  # initial: an empty batch (N = 0) is valid
    xy = np.zeros(count.shape + (vmax, 2))
    for v in np.unique(count):  # a handful of via counts
        row = np.zeros(count.shape + (vmax, 2))
        row[..., :v, :] = row_positions(int(v), pitch)
        xy = np.where((count == v)[..., None, None], row, xy)
    for t, cn in enumerate(conn):  # explicit coordinates (a few terminals)
        off = c.conn_offsets[cn]
        if off is not None:
            xy[:, t, :len(off)] = off
    if np.any(batch.coplanar):  # stitching vias one pitch beyond each end of the row
        cop = np.broadcast_to(np.asarray(batch.coplanar)[:, None], count.shape)
        k = np.arange(vmax + STITCH_VIAS)[None, None, :]
        inside = k[..., :vmax] < count[..., None]
        ext = np.max(np.where(inside, np.abs(xy[..., 0]), 0.0), axis=-1) + pitch
        xy = np.concatenate([xy, np.zeros(count.shape + (STITCH_VIAS, 2))], axis=-2)
        lo = cop[..., None] & (k == count[..., None])
        hi = cop[..., None] & (k == count[..., None] + 1)
        xy[..., 0] = np.where(lo, -ext[..., None], np.where(hi, ext[..., None], xy[..., 0]))
        xy[..., 1] = np.where(lo | hi, 0.0, xy[..., 1])
        count = count + STITCH_VIAS * cop
        vmax += STITCH_VIAS
    shift = np.where(batch.own_landing[:, None], c.terminal_rank[None, :] * pitch, 0.0)
    xy = xy + c.conn_xy[conn][None, :, None, :]
    xy[..., 1] += shift[..., None]
    mask = np.arange(vmax)[None, None, :] < count[..., None]
    return xy, mask, count, drill


def ground_inductance_matrix(compiled: CompiledCircuit, batch: GroundBatch,
                             model: str = "goldfarb-pucel", *, mutual: bool = True
                             ) -> np.ndarray:
    """Partial-inductance matrix among the ground terminals of every candidate.

    Parameters
    ----------
    compiled : CompiledCircuit
        The circuit; its ground terminals are the elements grounded through a connection.
    batch : GroundBatch
        N candidates.
    model : {"goldfarb-pucel", "johnson", "rosa", "image"}
        Single-via model (:func:`stackopt.physics.inductance.ground_via_inductance`).
    mutual : bool, default True
        Include the mutual inductance between different via sets; False keeps only the
        self terms (and a shared via's full coupling).

    Returns
    -------
    ndarray, shape (N, G, G)
        Inductance [H]; symmetric. G = ``compiled.n_terminals``.
    """
    model = check_via_model(model)
    n, g = batch.n, compiled.n_terminals
    if g == 0:
        return np.zeros((n, 0, 0))
    xy, mask, count, drill = _terminal_vias(compiled, batch)
    h = batch.height[:, None]
    hb = np.broadcast_to(h, (n, g))
    lvia = np.zeros((n, g))
    for v in np.unique(count):  # a handful of via counts; each (candidate, terminal) once
        sel = count == v
        lvia[sel] = parallel_via_inductance(hb[sel], drill[sel], xy[sel][:, :v, :], model)
    conn = compiled.terminal_conn
    trace = compiled.conn_trace_length[conn][None, :]
    bridge = np.minimum(trace, np.asarray(batch.pour_gap)[:, None])  # pad-to-pour
    length = np.where(batch.via_in_pad[:, None], 0.0,
                      np.where(np.asarray(batch.coplanar)[:, None], bridge, trace))
    width = np.nan_to_num(compiled.conn_trace_width[conn], nan=1.0)
    ltrace = np.where(length > 0, pad_trace_inductance(length, width, h, batch.copper[:, None]),
                      0.0)
    self_l = lvia + ltrace
    same = conn[:, None] == conn[None, :]
    shared = same[None] & ~batch.own_landing[:, None, None]
    eye = np.eye(g, dtype=bool)
    out = np.where(shared, self_l[:, :, None], 0.0)
    if mutual and g > 1:
        i, j = np.triu_indices(g, 1)  # each pair of terminals once
        diff = xy[:, i, :, None, :] - xy[:, j, None, :, :]
        s = np.hypot(diff[..., 0], diff[..., 1])  # (N, P, V, V)
        pair = mask[:, i, :, None] & mask[:, j, None, :]
        dd = 0.5 * (drill[:, i] + drill[:, j])[..., None, None]
        m = via_mutual_inductance(h[..., None, None], np.maximum(s, dd))
        mean = np.zeros((n, g, g))
        mean[:, i, j] = (m * pair).sum(axis=(-1, -2)) / pair.sum(axis=(-1, -2))
        mean[:, j, i] = mean[:, i, j]
        # one representative row per shared via (the others repeat it by construction)
        rep = ~(shared & (np.arange(g)[None, None, :] < np.arange(g)[None, :, None])).any(-1)
        mean, _ = guard_coupling(self_l, np.where(shared, 0.0, mean), include=rep)
        out = np.where(shared | eye, out, mean)
    return np.where(eye, self_l[:, :, None], out)
