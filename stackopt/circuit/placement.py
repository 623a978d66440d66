"""Via placement checks: no via of one ground connection on or next to another's.

Each connection's vias are laid out by :mod:`stackopt.circuit.grounds` (rows across the
axis to the nearest connection, coplanar stitching vias, own-via copies). Two
connections whose vias come closer than drill + the fab's minimum spacing cannot be
built: for connections the user placed that is an input error naming both; for a
generated filter the connections are moved apart (the ``spacing`` grows) and the circuit
carries a note saying so.
"""

from __future__ import annotations

import numpy as np

from stackopt.circuit.compile import CompiledCircuit, compile_circuit
from stackopt.circuit.grounds import GroundBatch
from stackopt.circuit.viasets import ViaBatch, terminal_vias
from stackopt.errors import InputError
from stackopt.model.circuit import Circuit

__all__ = ["closest_vias", "place_circuit"]

#: Factor the generator's spacing grows by per step when its vias collide.
SPACING_STEP = 1.25


def closest_vias(compiled: CompiledCircuit, drill: float, vias: int, min_space: float
                 ) -> tuple[str, str, float] | None:
    """The first pair of connections whose vias are closer than ``drill + min_space``.

    Checked for the largest drill and via count the search may choose, with and without
    the own-via and coplanar layouts. Returns ``(name_a, name_b, distance_m)`` or None.
    """
    if compiled.n_ground_terminals < 2:
        return None
    flags = np.array([[a, b] for a in (False, True) for b in (False, True)])
    batch = GroundBatch.broadcast(height=1e-3, drill=drill, vias=vias, own_vias=flags[:, 0],
                                  coplanar=flags[:, 1])
    xy, mask, _, dr = terminal_vias(compiled, ViaBatch.of(batch))
    conn = compiled.terminal_conn[:compiled.n_ground_terminals]
    g = len(conn)
    for i in range(g):  # a handful of terminals
        for j in range(i + 1, g):
            if conn[i] == conn[j]:
                continue
            d = xy[:, i, :, None, :] - xy[:, j, None, :, :]
            s = np.where(mask[:, i, :, None] & mask[:, j, None, :],
                         np.hypot(d[..., 0], d[..., 1]), np.inf)
            need = 0.5 * (dr[:, i] + dr[:, j]) + min_space
            if np.any(s.min(axis=(-1, -2)) < need * (1 - 1e-9)):
                return (compiled.conn_names[conn[i]], compiled.conn_names[conn[j]],
                        float(s.min()))
    return None


def place_circuit(spec: Circuit, drill: float, vias: int, min_space: float
                  ) -> tuple[CompiledCircuit, tuple[str, ...]]:
    """Compile ``spec`` and check its via placement for the search's largest drill/vias.

    Returns the compiled circuit and notes (for a generated filter whose connections had
    to be moved apart). Raises :class:`InputError` naming both connections when placed
    grounds collide.
    """
    compiled = compile_circuit(spec)
    hit = closest_vias(compiled, drill, vias, min_space)
    if hit is None:
        return compiled, ()
    if spec.filter is None or spec.filter.ground is None:
        a, b, s = hit
        raise InputError(f"the vias of grounds {a} and {b} come {s * 1e3:.3g} mm apart, "
                         f"closer than drill + minimum spacing "
                         f"({(drill + min_space) * 1e3:.3g} mm)", key="circuit.grounds",
                         fix=f"move {a} or {b} (their 'at') further apart, or give "
                         "'vias_at' explicitly")
    flt, old = spec.filter, spec.filter.spacing
    for _ in range(40):  # a few growth steps
        flt = flt.model_copy(update={"spacing": flt.spacing * SPACING_STEP})
        compiled = compile_circuit(replace_filter(spec, flt))
        if closest_vias(compiled, drill, vias, min_space) is None:
            note = (f"generated ground connections moved apart: spacing {old * 1e3:.3g} mm "
                    f"→ {flt.spacing * 1e3:.3g} mm so that their vias keep drill + minimum "
                    "spacing")
            return compiled, (note,)
    raise InputError("the generated filter's vias collide at any spacing",
                     key="circuit.filter.spacing", fix="give a larger 'spacing'")


def replace_filter(spec: Circuit, flt) -> Circuit:
    """``spec`` with another filter specification."""
    return spec.model_copy(update={"filter": flt})


