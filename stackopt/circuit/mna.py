r"""Batched modified nodal analysis: S-parameters of N candidates at F frequencies.

Unknowns are the K node voltages and the currents of the *current branches* (elements
that are coupled — inductor couplings, ground terminals — or have zero impedance);
every other element is stamped as an admittance. For each candidate and frequency

.. math::

    \begin{pmatrix} Y & A \\ A^\mathsf{T} & -Z \end{pmatrix}
    \begin{pmatrix} V \\ I \end{pmatrix} =
    \begin{pmatrix} J \\ 0 \end{pmatrix},\qquad
    Z = \mathrm{diag}(Z_e) + j\omega (M + L_g)

with :math:`A` the ±1 incidence of the current branches, :math:`M` the inductor
couplings and :math:`L_g` the ground-terminal matrix
(:func:`stackopt.circuit.grounds.ground_inductance_matrix`). Both ports are terminated in
:math:`Z_0`; port ``p`` is driven by a Norton source :math:`2/Z_0` (incident wave 1 V),
so :math:`S_{pp} = V_p - 1` and :math:`S_{qp} = V_q` (Ho, Ruehli & Brennan, "The modified
nodal approach to network analysis", IEEE Trans. Circuits Syst. 22(6), 504–509, 1975).
One ``numpy.linalg.solve`` over stacked (candidate × frequency) matrices, in chunks.
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from stackopt.circuit.compile import CompiledCircuit
from stackopt.circuit.grounds import GroundBatch, ground_inductance_matrix
from stackopt.circuit.ladder import ladder_s
from stackopt.errors import InputError

__all__ = ["solve", "mna_s", "CHUNK"]

#: Matrices per linear-solve call (bounds memory: CHUNK × n² × 16 bytes).
CHUNK = 16384

Method = Literal["auto", "mna", "ladder"]


def _check_freqs(freqs: np.ndarray) -> np.ndarray:
    f = np.asarray(freqs, dtype=float).reshape(-1)
    if f.size == 0 or not np.all(np.isfinite(f) & (f > 0)):
        raise InputError("frequencies must be finite and greater than zero",
                         fix="give a grid such as 10 MHz to 3 GHz")
    return f


def mna_s(compiled: CompiledCircuit, freqs: np.ndarray, lg: np.ndarray | None) -> np.ndarray:
    """S-parameters (N, F, 2, 2) by nodal analysis; ``lg`` (N, G, G) [H] or None (ideal)."""
    c = compiled
    f = _check_freqs(freqs)
    nf, k = len(f), len(c.nodes)
    jw = 2j * np.pi * f
    grounded = np.zeros(c.n_elements, dtype=bool)
    if lg is not None:
        grounded[c.terminal_element] = True
    current = c.zero | grounded | np.any(c.mutual != 0, axis=1)
    cb = np.flatnonzero(current)
    sb = np.flatnonzero(~current)
    n = k + len(cb)
    ze = c.impedance(f)  # (F, E)
    base = np.zeros((nf, n, n), dtype=complex)
    for p in set(c.ports):
        base[:, p, p] += 1.0 / c.z0 * c.ports.count(p)
    for e in sb:  # admittance stamps (a handful of elements)
        y = 1.0 / ze[:, e]
        for p, q, sign in ((c.node_a[e], c.node_a[e], 1.0), (c.node_b[e], c.node_b[e], 1.0),
                           (c.node_a[e], c.node_b[e], -1.0), (c.node_b[e], c.node_a[e], -1.0)):
            if p >= 0 and q >= 0:
                base[:, p, q] += sign * y
    for j, e in enumerate(cb):
        for node, sign in ((c.node_a[e], 1.0), (c.node_b[e], -1.0)):
            if node >= 0:
                base[:, node, k + j] = sign
                base[:, k + j, node] = sign
        base[:, k + j, k + j] = -ze[:, e]
    zsub = np.ix_(cb, cb)
    base[:, k:, k:] -= jw[:, None, None] * c.mutual[zsub][None]
    nb = 1 if lg is None else lg.shape[0]
    lemb = np.zeros((nb, len(cb), len(cb)))
    if lg is not None and c.n_terminals:
        pos = np.searchsorted(cb, c.terminal_element)
        lemb[:, pos[:, None], pos[None, :]] = lg
    rhs = np.zeros((n, 2), dtype=complex)
    for col, p in enumerate(c.ports):
        rhs[p, col] += 2.0 / c.z0
    out = np.empty((nb, nf, 2, 2), dtype=complex)
    step = max(1, CHUNK // nf)
    for i0 in range(0, nb, step):  # chunks of candidates (memory bound, not per candidate)
        sl = slice(i0, i0 + step)
        mat = base[None].repeat(len(lemb[sl]), axis=0)
        mat[:, :, k:, k:] -= jw[None, :, None, None] * lemb[sl, None]
        try:
            x = np.linalg.solve(mat, np.broadcast_to(rhs, mat.shape[:-1] + (2,)))
        except np.linalg.LinAlgError:
            raise InputError("the circuit matrix is singular at some frequency: an ideal "
                             "L-C loop resonating exactly on a grid point or a loop of "
                             "zero-impedance parts", key="circuit.elements",
                             fix="add a small 'esr' to one element or shift the grid"
                             ) from None
        out[sl, :, :, 0] = x[..., list(c.ports), 0]
        out[sl, :, :, 1] = x[..., list(c.ports), 1]
    out[..., 0, 0] -= 1.0
    out[..., 1, 1] -= 1.0
    return out


def solve(compiled: CompiledCircuit, freqs: np.ndarray, batch: GroundBatch | None = None,
          model: str = "goldfarb-pucel", *, method: Method = "auto", mutual: bool = True
          ) -> np.ndarray:
    """S-parameters of the circuit for every candidate of a batch.

    Parameters
    ----------
    compiled : CompiledCircuit
        From :func:`stackopt.circuit.compile.compile_circuit`.
    freqs : array_like, shape (F,)
        Frequencies [Hz], > 0.
    batch : GroundBatch, optional
        N candidate stackups; None means ideal grounds (N = 1).
    model : {"goldfarb-pucel", "johnson", "rosa", "image"}
        Single-via inductance model.
    method : {"auto", "mna", "ladder"}
        "auto" uses the ABCD ladder cascade where it is exact (a plain ladder whose shunt
        branches are uncoupled) and nodal analysis otherwise; "ladder" insists on it.
    mutual : bool, default True
        Mutual inductance between different ground connections' vias (see
        :func:`~stackopt.circuit.grounds.ground_inductance_matrix`).

    Returns
    -------
    ndarray of complex, shape (N, F, 2, 2)
        ``S[..., 0, 0]`` = S11, ``[..., 1, 0]`` = S21, ``[..., 0, 1]`` = S12,
        ``[..., 1, 1]`` = S22, for reference impedance ``compiled.z0``.

    Raises
    ------
    InputError
        Frequencies not > 0, a singular circuit, or ``method="ladder"`` where the
        cascade is not exact.
    """
    f = _check_freqs(freqs)
    lg = None if batch is None else ground_inductance_matrix(compiled, batch, model,
                                                             mutual=mutual)
    g = compiled.n_terminals
    uncoupled = lg is None or not np.any(lg[:, ~np.eye(g, dtype=bool)])
    ladder_ok = compiled.ladder is not None and uncoupled
    if method == "ladder" and not ladder_ok:
        raise InputError("the ABCD fast path needs a plain ladder with uncoupled shunt "
                         "branches", key="method",
                         fix="use method 'auto' or 'mna' (or mutual=False, own vias)")
    if method != "mna" and ladder_ok:
        self_l = np.zeros((1, g)) if lg is None else np.diagonal(lg, axis1=1, axis2=2)
        return ladder_s(compiled, f, self_l)
    if method not in ("auto", "mna", "ladder"):
        raise InputError(f"unknown method {method!r}", key="method",
                         fix="use auto, mna or ladder")
    return mna_s(compiled, f, lg)
