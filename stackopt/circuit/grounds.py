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
  Each element lands on the pour right beside its pad, so its pad-to-via trace becomes the
  short pad-to-pour bridge (length ``min(trace, pour_gap)``, same width, still
  :func:`~stackopt.physics.lines.pad_trace_inductance`), every element lands on its own
  patch of pour (as with ``own_vias``), and the pour reaches the plane through the
  connection's vias plus :data:`~stackopt.circuit.viasets.STITCH_VIAS` stitching vias
  flanking them, one pitch beyond each end of the row (so ``n`` vias become a row of
  ``n + 2``, all in the partial inductance matrix with their mutual terms). Assumptions: the
  pour between the bridge and the vias is wide and short, its own inductance is neglected
  (optimistic when the stitching vias sit more than about one dielectric thickness from
  the pad); each connection's current returns through its own vias (no current crosses the
  pour to a neighbouring connection), the via sets of different connections still couple
  through the mutual term.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np
from numpy.typing import ArrayLike

from stackopt.circuit.compile import CompiledCircuit
from stackopt.circuit.viasets import ViaBatch, via_terms
from stackopt.errors import InputError
from stackopt.physics.inductance import DEFAULT_VIA_MODEL, check_via_model
from stackopt.physics.lines import pad_trace_inductance
from stackopt.physics.mounting import mount_height, mounted_inductance
from stackopt.physics.parallel import guard_coupling

__all__ = ["GroundBatch", "GroundParts", "ground_parts", "ground_inductance_matrix",
           "worst_path_and_coupling", "ground_breakdown", "DEFAULT_POUR_GAP"]

#: Pad-to-pour clearance of a coplanar ground pour, m (0.2 mm: a usual coplanar gap on
#: FR-4 boards, well above the 0.1-0.15 mm minimum spaces of common fabs; common
#: practice, no source).
DEFAULT_POUR_GAP = 0.2e-3


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
    via_scale : factor on the via model's self and mutual inductances, > 0; default 1.
        A calibration file's factor for the model in use (``stackopt fit``); the pad
        traces are not scaled (the coupons measure vias).
    line_height : dielectric height under the top-layer interconnect lines [m], > 0;
        default ``height``
    line_er : relative permittivity of that dielectric, >= 1; default 1 (only used by
        circuits with ``interconnect``; give it then)
    """

    height: np.ndarray
    drill: np.ndarray
    vias: np.ndarray
    via_in_pad: np.ndarray
    own_vias: np.ndarray
    copper: np.ndarray
    coplanar: np.ndarray | None = None
    pour_gap: np.ndarray | None = None
    via_scale: np.ndarray | None = None
    line_height: np.ndarray | None = None
    line_er: np.ndarray | None = None

    def __post_init__(self) -> None:
        kinds = {"vias": int, "via_in_pad": bool, "own_vias": bool, "coplanar": bool}
        n = np.shape(self.height)
        defaults = {"coplanar": False, "pour_gap": DEFAULT_POUR_GAP, "via_scale": 1.0,
                    "line_er": 1.0}
        arrs: dict[str, np.ndarray] = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if v is None:
                v = (np.array(self.height, dtype=float) if f.name == "line_height"
                     else np.full(n, defaults[f.name]))
            arrs[f.name] = np.asarray(v, dtype=kinds.get(f.name, float))
        shapes = {a.shape for a in arrs.values()}
        if len(shapes) != 1 or len(next(iter(shapes))) != 1:
            raise InputError(f"GroundBatch arrays must be 1-D of one length, got {shapes}",
                             fix="use GroundBatch.broadcast(...) for scalars")
        for name in ("height", "drill", "copper", "pour_gap", "via_scale", "line_height",
                     "line_er"):
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
                  pour_gap: ArrayLike = DEFAULT_POUR_GAP, via_scale: ArrayLike = 1.0,
                  line_height: ArrayLike | None = None, line_er: ArrayLike = 1.0
                  ) -> GroundBatch:
        """Build a batch from scalars or arrays, broadcast to one length N."""
        arrs = np.broadcast_arrays(*(np.atleast_1d(x) for x in
                                     (height, drill, vias, via_in_pad, own_vias, copper,
                                      coplanar, pour_gap, via_scale,
                                      height if line_height is None else line_height,
                                      line_er)))
        return cls(*(np.array(a) for a in arrs))

    @property
    def n(self) -> int:
        """Number of candidates N."""
        return len(self.height)

    @property
    def own_landing(self) -> np.ndarray:
        """Every element has its own via set (:attr:`ViaBatch.own_landing`) (N,)."""
        return ViaBatch.of(self).own_landing

    def take(self, idx: ArrayLike) -> GroundBatch:
        """The candidates at ``idx`` (indices or mask)."""
        return GroundBatch(*(getattr(self, f.name)[idx] for f in fields(self)))


@dataclass(frozen=True)
class GroundParts:
    """Per-candidate pieces of the terminals' inductance (arrays over N candidates).

    ``via`` and ``trace`` (N, G0) for the ground terminals, ``mount`` (N, G) for every
    terminal (0 without a mount model), ``matrix`` (N, G, G) the whole partial-inductance
    matrix, ``guard`` (N,) the smallest mutual scale factor the positive-definite guard
    applied (1: it did not act; :func:`stackopt.physics.parallel.guard_coupling`).
    """

    via: np.ndarray
    trace: np.ndarray
    mount: np.ndarray
    matrix: np.ndarray
    guard: np.ndarray


def ground_parts(compiled: CompiledCircuit, batch: GroundBatch, model: str = DEFAULT_VIA_MODEL,
                 *, mutual: bool = True) -> GroundParts:
    """Every terminal's via, trace and mount inductance and the whole matrix.

    See :func:`ground_inductance_matrix` (which returns ``.matrix``).
    """
    model = check_via_model(model)
    n, g, g0 = batch.n, compiled.n_terminals, compiled.n_ground_terminals
    h = batch.height[:, None]
    body = compiled.mount_body
    lmount = np.nan_to_num(mounted_inductance(
        body[None, :, 0], body[None, :, 1],
        mount_height(h, batch.copper[:, None], body[None, :, 2])), nan=0.0)
    lmount = np.broadcast_to(lmount, (n, g))
    vt = via_terms(compiled, ViaBatch.of(batch), model, mutual=mutual)
    lvia, guard = vt.via, vt.guard
    conn = compiled.terminal_conn[:g0]
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
    eye = np.eye(g0, dtype=bool)
    out = np.where(shared, self_l[:, :, None], 0.0)
    if mutual and g0 > 1:
        # one representative row per shared via (the others repeat it by construction)
        rep = ~(shared & (np.arange(g0)[None, None, :] < np.arange(g0)[None, :, None])).any(-1)
        mean, a = guard_coupling(self_l, np.where(shared, 0.0, vt.mutual), include=rep)
        guard = np.minimum(guard, a)
        out = np.where(shared | eye, out, mean)
    out = np.where(eye, self_l[:, :, None], out)
    full = np.zeros((n, g, g))
    full[:, :g0, :g0] = out
    full[:, np.arange(g), np.arange(g)] += lmount
    return GroundParts(via=lvia, trace=ltrace, mount=lmount, matrix=full, guard=guard)


def ground_inductance_matrix(compiled: CompiledCircuit, batch: GroundBatch,
                             model: str = DEFAULT_VIA_MODEL, *, mutual: bool = True
                             ) -> np.ndarray:
    """Partial-inductance matrix among the terminals of every candidate.

    Parameters
    ----------
    compiled : CompiledCircuit
        The circuit; its terminals are the elements grounded through a connection, then
        the mounted elements that are not.
    batch : GroundBatch
        N candidates.
    model : str
        A key of :data:`stackopt.physics.inductance.VIA_MODELS`.
        Single-via model (:func:`stackopt.physics.inductance.ground_via_inductance`).
    mutual : bool, default True
        Include the mutual inductance between different via sets; False keeps only the
        self terms (and a shared via's full coupling).

    Returns
    -------
    ndarray, shape (N, G, G)
        Inductance [H]; symmetric positive (semi)definite. G = ``compiled.n_terminals``.
        The diagonal holds via + trace + mounted loop; mounted elements without a ground
        connection have only their mounted loop (and no coupling).
    """
    return ground_parts(compiled, batch, model, mutual=mutual).matrix


def worst_path_and_coupling(compiled: CompiledCircuit, batch: GroundBatch,
                            model: str = DEFAULT_VIA_MODEL) -> tuple[np.ndarray, np.ndarray]:
    """What sets a filter's stopband among the ground connections: (the largest self
    inductance of one grounded element's path, via + trace + mounted loop (N,); the
    largest mutual inductance between two elements on different connections (N,)) [H];
    a path of 0 without grounded elements, a coupling of NaN with fewer than two
    connections (there is no pair: a shared connection's coupling is its own path). Both
    are entries of :func:`ground_inductance_matrix`; their sum over connections would
    hide the coupling that limits a two-layer board."""
    lmat = ground_inductance_matrix(compiled, batch, model)
    n, g = lmat.shape[0], lmat.shape[-1]
    if g == 0:
        return np.zeros(n), np.full(n, np.nan)
    own = np.diagonal(lmat, axis1=-2, axis2=-1).max(axis=-1)
    conn = np.asarray(compiled.terminal_conn)
    other = conn[:, None] != conn[None, :]
    mutual = np.where(other[None], np.abs(lmat), 0.0).max(axis=(-2, -1))
    return own, np.where(other.any(), mutual, np.nan)


def ground_breakdown(compiled: CompiledCircuit, batch: GroundBatch,
                     model: str = DEFAULT_VIA_MODEL) -> list[dict[str, np.ndarray]]:
    """Per ground connection: via, trace and mount inductance and their total (N,) [H].

    ``via_H`` and ``trace_H`` are those of the connection's first element (every element
    on a shared connection sees the same), ``mount_H`` the sum of the mounted loops of
    the parts grounded on it, ``total_H`` the sum of the three. Mutual terms are not in
    these numbers (they are in the matrix the solver uses).
    """
    p = ground_parts(compiled, batch, model)
    g0 = compiled.n_ground_terminals
    conn = compiled.terminal_conn[:g0]
    out = []
    for ci, name in enumerate(compiled.conn_names):  # a handful of connections
        ts = np.flatnonzero(conn == ci)
        via, trace = p.via[:, ts[0]], p.trace[:, ts[0]]
        mount = p.mount[:, ts].sum(axis=1)
        out.append({"name": name, "via_H": via, "trace_H": trace, "mount_H": mount,
                    "total_H": via + trace + mount})
    return out
