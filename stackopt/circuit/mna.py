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
Only the ground-terminal block depends on the candidate. Each frequency's fixed network
is therefore reduced once to its G ground terminals and two ports (:func:`_ports`),
leaving one G x G system per candidate and frequency, solved by vectorized elimination
(:func:`stackopt.circuit.smallsolve.schur_small`); frequencies where that reduction is
ill-conditioned solve every whole matrix with one ``numpy.linalg.solve`` over stacked
(candidate × frequency) matrices. Both in chunks.

A candidate's S-parameters do not depend on the batch it is solved in, to the last bit:
the path (ladder cascade, reduced or whole-matrix nodal analysis) is chosen per candidate
and per frequency, never by the batch's size or by its other members, and no GEMM runs
over the candidate axis (a BLAS kernel may round a row differently by its place in the
matrix). Responses solved in one batch can then be reused in another
(:class:`stackopt.search.memo.ResponseMemo`) exactly as if solved there.
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from stackopt.circuit.compile import CompiledCircuit
from stackopt.circuit.grounds import GroundBatch, ground_inductance_matrix
from stackopt.circuit.ladder import ladder_s
from stackopt.circuit.smallsolve import schur_small
from stackopt.errors import InputError
from stackopt.physics.inductance import DEFAULT_VIA_MODEL

__all__ = ["solve", "mna_s", "mna_s_varied", "CHUNK", "SMALL_CHUNK", "COND_LIMIT"]

#: Matrices per linear-solve call (bounds memory: CHUNK × n² × 16 bytes).
CHUNK = 16384
#: (candidate × frequency) systems per chunk of the reduced solve (fastest in
#: benchmarks/bench_circuit.py; bounds memory: SMALL_CHUNK × (G + 2)² × 16 bytes).
SMALL_CHUNK = 8192
#: Largest (equilibrated, 1-norm) condition number of a frequency's fixed network (ground
#: connections shorted) that is reduced to the ground terminals; above it that frequency
#: is solved whole.
COND_LIMIT = 1e6

Method = Literal["auto", "mna", "ladder"]


def _check_freqs(freqs: np.ndarray) -> np.ndarray:
    f = np.asarray(freqs, dtype=float).reshape(-1)
    if f.size == 0 or not np.all(np.isfinite(f) & (f > 0)):
        raise InputError("frequencies must be finite and greater than zero",
                         fix="give a grid such as 10 MHz to 3 GHz")
    return f


def _assemble(c: CompiledCircuit, f: np.ndarray, grounded: bool,
              ze: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Fixed part (F, n, n) of the matrix, right-hand sides (n, 2), terminal unknowns (G,).

    ``ze`` (..., F, E): element impedances varied per batch member (default
    ``c.impedance(f)``); the fixed part is then (..., F, n, n).
    """
    k = len(c.nodes)
    jw = 2j * np.pi * f
    current = c.zero | np.any(c.mutual != 0, axis=1)
    if grounded:
        current[c.terminal_element] = True
    cb = np.flatnonzero(current)
    sb = np.flatnonzero(~current)
    n = k + len(cb)
    ze = c.impedance(f) if ze is None else ze  # (..., F, E)
    base = np.zeros(ze.shape[:-1] + (n, n), dtype=complex)
    for p in set(c.ports):
        base[..., p, p] += 1.0 / c.z0 * c.ports.count(p)
    for e in sb:  # admittance stamps (a handful of elements)
        y = 1.0 / ze[..., e]
        for p, q, sign in ((c.node_a[e], c.node_a[e], 1.0), (c.node_b[e], c.node_b[e], 1.0),
                           (c.node_a[e], c.node_b[e], -1.0), (c.node_b[e], c.node_a[e], -1.0)):
            if p >= 0 and q >= 0:
                base[..., p, q] += sign * y
    for j, e in enumerate(cb):
        for node, sign in ((c.node_a[e], 1.0), (c.node_b[e], -1.0)):
            if node >= 0:
                base[..., node, k + j] = sign
                base[..., k + j, node] = sign
        base[..., k + j, k + j] = -ze[..., e]
    zsub = np.ix_(cb, cb)
    base[..., k:, k:] -= jw[:, None, None] * c.mutual[zsub][None]
    rhs = np.zeros((n, 2), dtype=complex)
    for col, p in enumerate(c.ports):
        rhs[p, col] += 2.0 / c.z0
    term = k + np.searchsorted(cb, c.terminal_element) if grounded else np.zeros(0, int)
    return base, rhs, term


def _conditioned(m: np.ndarray) -> np.ndarray:
    """Per matrix: 1-norm condition number after symmetric row/column equilibration
    (each row and column divided by the square root of its row's largest modulus)
    below :data:`COND_LIMIT`; False for singular matrices."""
    with np.errstate(divide="ignore", invalid="ignore"):
        s = 1.0 / np.sqrt(np.max(np.abs(m), axis=-1))
        return np.linalg.cond(s[..., :, None] * m * s[..., None, :], 1) < COND_LIMIT


def _singular() -> InputError:
    return InputError("the circuit matrix is singular at some frequency: an ideal L-C loop "
                      "resonating exactly on a grid point or a loop of zero-impedance "
                      "parts", key="circuit.elements",
                      fix="add a small 'esr' to one element or shift the grid")


def _full(base: np.ndarray, rhs: np.ndarray, term: np.ndarray, jw: np.ndarray,
          lg: np.ndarray | None, ports: list[int]) -> np.ndarray:
    """Port voltages (N, F, 2, 2): one LAPACK solve of every whole matrix (``base``
    (F, n, n) shared by the batch, or (N, F, n, n) one per member)."""
    nf = base.shape[-3]
    nb = base.shape[0] if base.ndim == 4 else 1 if lg is None else lg.shape[0]
    out = np.empty((nb, nf, 2, 2), dtype=complex)
    step = max(1, CHUNK // nf)
    for i0 in range(0, nb, step):  # chunks of candidates (memory bound, not per candidate)
        sl = slice(i0, i0 + step)
        mat = (base[sl].copy() if base.ndim == 4
               else base[None].repeat(len(range(nb)[sl]), axis=0))
        if lg is not None and len(term):
            mat[:, :, term[:, None], term[None, :]] -= jw[None, :, None, None] * lg[sl, None]
        try:
            x = np.linalg.solve(mat, np.broadcast_to(rhs, mat.shape[:-1] + (2,)))
        except np.linalg.LinAlgError:
            raise _singular() from None
        out[sl] = x[..., ports, :]
    return out


def _ports(base: np.ndarray, rhs: np.ndarray, term: np.ndarray, jw: np.ndarray,
           ports: list[int]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    r"""Reduce the fixed network of each frequency to its G ground terminals and 2 ports.

    The candidate's ground inductance enters only the terminal-current block,
    :math:`M = M_0 - j\omega P L_g P^\mathsf{T}` (``P`` selects the terminal currents,
    ``Q`` the port voltages, ``M_0`` is the network with the ground connections shorted).
    By the Woodbury identity (Golub & Van Loan, *Matrix Computations*, 4th ed., Johns
    Hopkins University Press, 2013, sec. 2.1.4; section number from memory) the terminal
    currents and port voltages are

    .. math:: (I - j\omega W L_g)\,u = U_0,\qquad V = A_0 + j\omega B L_g u

    with :math:`W = P^\mathsf{T} M_0^{-1} P`, :math:`U_0 = P^\mathsf{T} M_0^{-1} R`,
    :math:`A_0 = Q^\mathsf{T} M_0^{-1} R`, :math:`B = Q^\mathsf{T} M_0^{-1} P`, all from
    one solve per frequency. Every term is a response of the shorted network itself, so a
    deep stopband keeps its relative accuracy (no difference of near-equal large terms).
    Returns ``(-jw [W; B] (F, G+2, G), U_0 (F, G, 2), A_0 (F, 2, 2))``.
    """
    unit = np.zeros(base.shape[1:2] + term.shape)
    unit[term, np.arange(len(term))] = 1.0
    cols = np.concatenate([unit, rhs], axis=1)
    x = np.linalg.solve(base, np.broadcast_to(cols, base.shape[:2] + cols.shape[1:]))
    g = len(term)
    rows = np.concatenate([term, ports])
    return -jw[:, None, None] * x[:, rows, :g], x[:, term, g:], x[:, ports, g:]


def _reduced(base: np.ndarray, rhs: np.ndarray, term: np.ndarray, jw: np.ndarray,
             lg: np.ndarray, ports: list[int]) -> np.ndarray:
    """Port voltages (N, F, 2, 2) through :func:`_ports` and one G x G system each."""
    wb, u0, a0 = _ports(base, rhs, term, jw, ports)
    nb, g = lg.shape[:2]
    nf = len(jw)
    out = np.empty((nb, nf, 2, 2), dtype=complex)
    step = max(1, SMALL_CHUNK // nf)
    work = np.empty((g + 2) ** 2 * nf * min(step, nb), dtype=complex)
    # -jw [W; B] as real ((G + 2) 2F, G): rows (row of [W; B], frequency re/im)
    wb = np.ascontiguousarray(wb.transpose(1, 0, 2)).view(float)  # (G + 2, F, 2G)
    wb = np.ascontiguousarray(wb.reshape(g + 2, nf, g, 2).transpose(0, 1, 3, 2)
                              ).reshape(-1, g)
    for i0 in range(0, nb, step):  # chunks of candidates (memory bound, not per candidate)
        sl = slice(i0, i0 + step)
        nc = len(lg[sl])
        # bordered systems [[I - jw W L_g, U_0], [-jw B L_g, A_0]], batch (n, F) last
        a = work[:(g + 2) ** 2 * nc * nf].reshape(g + 2, g + 2, nc, nf)
        # one GEMM of the same shape per candidate (a stack, not one GEMM over the
        # batch): a candidate's bits do not depend on the batch it is solved in
        prod = np.matmul(wb, lg[sl])  # (n, (G + 2) F 2, G)
        a[:, :g].view(float).reshape(g + 2, g, nc, nf, 2)[...] = prod.reshape(
            nc, g + 2, nf, 2, g).transpose(1, 4, 0, 2, 3)
        for t in range(g):
            a[t, t] += 1.0
        a[:g, g:] = u0.transpose(1, 2, 0)[:, :, None, :]
        a[g:, g:] = a0.transpose(1, 2, 0)[:, :, None, :]
        try:
            v = schur_small(a.reshape(g + 2, g + 2, -1), g).reshape(2, 2, nc, nf)
        except np.linalg.LinAlgError:
            raise _singular() from None
        out[sl] = v.transpose(2, 3, 0, 1)
    return out


def _with_lines(c: CompiledCircuit, base: np.ndarray, ylines: np.ndarray) -> np.ndarray:
    """``base`` (F, n, n) or (N, F, n, n) plus every candidate's line admittances:
    (N, F, n, n)."""
    out = np.array(np.broadcast_to(base, (ylines.shape[0],) + base.shape[-3:]))
    for t, (a, b) in enumerate(zip(c.line_a, c.line_b, strict=True)):  # a few lines
        for i, p in enumerate((a, b)):
            for j, q in enumerate((a, b)):
                out[:, :, p, q] += ylines[:, :, t, i, j]
    return out


def mna_s(compiled: CompiledCircuit, freqs: np.ndarray, lg: np.ndarray | None, *,
          reduce: bool = True, ylines: np.ndarray | None = None) -> np.ndarray:
    """S-parameters (N, F, 2, 2) by nodal analysis; ``lg`` (N, G, G) [H] or None (ideal).

    ``reduce`` (default) reduces, per frequency, the fixed network to its ground
    terminals (at frequencies where that is well conditioned) and then solves one G x G
    system per candidate and frequency;
    ``reduce=False`` solves every whole matrix (the reference).
    """
    c = compiled
    f = _check_freqs(freqs)
    jw = 2j * np.pi * f
    base, rhs, term = _assemble(c, f, lg is not None)
    ports = list(c.ports)
    if ylines is not None:  # candidate-dependent lines: every whole matrix
        out = _full(_with_lines(c, base, ylines), rhs, term, jw, lg, ports)
    elif lg is None or not reduce:
        out = _full(base, rhs, term, jw, lg, ports)
    else:
        ok = _conditioned(base)
        out = np.empty((lg.shape[0], len(f), 2, 2), dtype=complex)
        if np.any(ok):
            out[:, ok] = _reduced(base[ok], rhs, term, jw[ok], lg, ports)
        if not np.all(ok):
            out[:, ~ok] = _full(base[~ok], rhs, term, jw[~ok], lg, ports)
    out[..., 0, 0] -= 1.0
    out[..., 1, 1] -= 1.0
    return out


def mna_s_varied(compiled: CompiledCircuit, freqs: np.ndarray, lg: np.ndarray,
                 ze: np.ndarray, ylines: np.ndarray | None = None) -> np.ndarray:
    """S-parameters (N, F, 2, 2) when the parts vary too: element impedances ``ze``
    (N, F, E) [ohm] (e.g. values drawn within their tolerances), ground-terminal
    inductance ``lg`` (N, G, G) [H] and, for a circuit with interconnect lines, their
    admittances ``ylines`` (as :func:`mna_s`) per batch member; every whole matrix is
    solved."""
    c = compiled
    f = _check_freqs(freqs)
    jw = 2j * np.pi * f
    base, rhs, term = _assemble(c, f, True, ze)
    if ylines is not None:
        base = _with_lines(c, base, ylines)
    out = _full(base, rhs, term, jw, lg, list(c.ports))
    out[..., 0, 0] -= 1.0
    out[..., 1, 1] -= 1.0
    return out


def solve(compiled: CompiledCircuit, freqs: np.ndarray, batch: GroundBatch | None = None,
          model: str = DEFAULT_VIA_MODEL, *, method: Method = "auto", mutual: bool = True,
          lg: np.ndarray | None = None) -> np.ndarray:
    """S-parameters of the circuit for every candidate of a batch.

    Parameters
    ----------
    compiled : CompiledCircuit
        From :func:`stackopt.circuit.compile.compile_circuit`.
    freqs : array_like, shape (F,)
        Frequencies [Hz], > 0.
    batch : GroundBatch, optional
        N candidate stackups; None means ideal grounds (N = 1).
    model : str
        A key of :data:`stackopt.physics.inductance.VIA_MODELS`.
        Single-via inductance model.
    method : {"auto", "mna", "ladder"}
        "auto" uses the ABCD ladder cascade for each candidate where it is exact (a plain
        ladder whose shunt branches are uncoupled in that candidate) and nodal analysis
        for the others; "ladder" insists on it for every candidate.
    mutual : bool, default True
        Mutual inductance between different ground connections' vias (see
        :func:`~stackopt.circuit.grounds.ground_inductance_matrix`).
    lg : ndarray, shape (N, G, G), optional
        That matrix, if the caller already computed it for ``batch``, ``model`` and
        ``mutual`` (it is then not computed again).

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
    if lg is None and batch is not None:
        lg = ground_inductance_matrix(compiled, batch, model, mutual=mutual)
    if len(compiled.line_length):
        if batch is None:
            raise InputError("interconnect lines need a candidate stackup", key="batch",
                             fix="pass a GroundBatch, or compile without_interconnect(...)")
        from stackopt.circuit.interconnect import line_admittance

        if method == "ladder":
            raise InputError("the ABCD fast path does not take interconnect lines",
                             key="method", fix="use method 'auto' or 'mna'")
        return mna_s(compiled, f, lg, ylines=line_admittance(compiled, batch, f))
    if method not in ("auto", "mna", "ladder"):
        raise InputError(f"unknown method {method!r}", key="method",
                         fix="use auto, mna or ladder")
    g = compiled.n_terminals
    # per candidate: where its ground connections are uncoupled the cascade is exact
    coupled = (np.zeros(1, dtype=bool) if lg is None
               else np.any(lg[:, ~np.eye(g, dtype=bool)], axis=1))
    if method == "ladder" and (compiled.ladder is None or np.any(coupled)):
        raise InputError("the ABCD fast path needs a plain ladder with uncoupled shunt "
                         "branches", key="method",
                         fix="use method 'auto' or 'mna' (or mutual=False, own vias)")
    if method == "mna" or compiled.ladder is None:
        return mna_s(compiled, f, lg)
    self_l = np.zeros((1, g)) if lg is None else np.diagonal(lg, axis1=1, axis2=2)
    if not np.any(coupled):
        return ladder_s(compiled, f, self_l)
    assert lg is not None
    out = np.empty((len(coupled), len(f), 2, 2), dtype=complex)
    out[~coupled] = ladder_s(compiled, f, self_l[~coupled])
    out[coupled] = mna_s(compiled, f, lg[coupled])
    return out
