r"""Compile a validated :class:`~stackopt.model.circuit.Circuit` into index arrays.

Every element becomes one *branch* between two node indices (``-1`` is ground) with

.. math:: Z_e(\omega) = r + j\omega\,l + \frac{d}{j\omega}

where ``r`` collects the resistance (value, ESR, and the loss of a Q given at a
frequency), ``l`` the inductance (value, ESL; complex ``L(1 - j/Q)`` for a constant Q) and
``d`` the elastance ``1/C`` (complex ``(1 + j/Q)/C`` for a constant Q). An element whose
``gnd`` end goes through a ground connection gets that connection's inductance in series
(:mod:`stackopt.circuit.grounds`): one *ground terminal* per such element, so that the
pad node disappears and the topology is the same for shared and own vias. A mounted part
(``mount``) gets its loop inductance over the candidate's plane in series the same way:
grounded parts on their ground terminal, other parts on a terminal of their own (no
ground connection, ``terminal_conn == -1``). ``l`` holds ``esl`` (intrinsic) or
``mounted_esl`` (measured, replaces the mount model). An inductor's ``srf`` becomes a
capacitor ``<name>.srf`` in parallel with it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from stackopt.circuit.filters import filter_circuit
from stackopt.errors import InputError
from stackopt.model.circuit import GROUND_NODE, Circuit, Element

__all__ = ["CompiledCircuit", "LadderStage", "compile_circuit", "without_interconnect"]


def _frozen(a: np.ndarray) -> np.ndarray:
    a = np.ascontiguousarray(a)
    a.setflags(write=False)
    return a


_EMPTY = np.zeros(0)
_EMPTY.setflags(write=False)
_EMPTY_INT = np.zeros(0, dtype=int)
_EMPTY_INT.setflags(write=False)


@dataclass(frozen=True)
class LadderStage:
    """One step of a ladder: ``kind`` "series" (one element) or "shunt" (one or more)."""

    kind: str
    elements: tuple[int, ...]


@dataclass(frozen=True)
class CompiledCircuit:
    """Index arrays and values of a circuit (immutable). ``E`` elements, ``K`` nodes
    (ground excluded), ``G`` ground terminals, ``C`` ground connections."""

    z0: float
    nodes: tuple[str, ...]
    ports: tuple[int, int]
    names: tuple[str, ...]
    node_a: np.ndarray  # (E,) int, -1 = ground
    node_b: np.ndarray  # (E,) int
    r: np.ndarray  # (E,) ohm
    l: np.ndarray  # (E,) complex H  # noqa: E741
    d: np.ndarray  # (E,) complex 1/F
    mutual: np.ndarray  # (E, E) H, inductor couplings (zero diagonal)
    zero: np.ndarray  # (E,) bool, identically zero impedance
    terminal_element: np.ndarray  # (G,) element of each ground terminal
    terminal_conn: np.ndarray  # (G,) its ground connection
    terminal_rank: np.ndarray  # (G,) 0 for the first element on that connection
    mount_body: np.ndarray  # (G,3) m: body length, width, thickness; nan = no mount model
    conn_names: tuple[str, ...]
    conn_xy: np.ndarray  # (C, 2) m
    conn_trace_length: np.ndarray  # (C,) m
    conn_trace_width: np.ndarray  # (C,) m, nan = no trace
    conn_vias: np.ndarray  # (C,) int, 0 = from the candidate
    conn_pitch: np.ndarray  # (C,) m, nan = default (3 drills)
    conn_drill: np.ndarray  # (C,) m, nan = from the candidate
    conn_offsets: tuple[np.ndarray | None, ...]  # explicit via offsets (n, 2) or None
    ladder: tuple[LadderStage, ...] | None  # stages from port 1 to port 2, or None
    # interconnect lines (T,): node of each end, length [m], width [m] (nan: z0 width)
    line_a: np.ndarray = field(default_factory=lambda: _EMPTY_INT)
    line_b: np.ndarray = field(default_factory=lambda: _EMPTY_INT)
    line_length: np.ndarray = field(default_factory=lambda: _EMPTY)
    line_width: np.ndarray = field(default_factory=lambda: _EMPTY)

    @property
    def n_elements(self) -> int:
        """Number of elements E."""
        return len(self.names)

    @property
    def n_terminals(self) -> int:
        """Number of terminals G: elements grounded through a connection, then mounted
        elements that are not (``terminal_conn == -1``)."""
        return len(self.terminal_element)

    @property
    def n_ground_terminals(self) -> int:
        """Number of terminals on a ground connection (they come first)."""
        return int(np.count_nonzero(self.terminal_conn >= 0))

    def impedance(self, freqs: np.ndarray) -> np.ndarray:
        """Element impedances without ground parasitics, shape (F, E) complex [ohm]."""
        jw = 2j * np.pi * np.asarray(freqs, dtype=float)[:, None]
        return self.r + jw * self.l + self.d / jw


def _values(e) -> tuple[float, complex, complex]:
    r, d = e.esr, 0j
    l = complex(e.esl if e.mounted_esl is None else e.mounted_esl)  # noqa: E741
    if e.type == "R":
        r += e.value
    elif e.type == "L":
        if e.q is not None and e.q_at is not None:
            r += 2 * math.pi * e.q_at * e.value / e.q
            l += e.value
        else:
            l += e.value * (1 - 1j / e.q) if e.q is not None else e.value
    else:
        if e.q is not None and e.q_at is not None:
            r += 1.0 / (2 * math.pi * e.q_at * e.value * e.q)
            d = 1.0 / e.value
        else:
            d = (1 + 1j / e.q) / e.value if e.q is not None else 1.0 / e.value
    return r, l, d


def _ladder(a: np.ndarray, b: np.ndarray, zero: np.ndarray, ports: tuple[int, int],
            coupled: bool, k: int) -> tuple[LadderStage, ...] | None:
    """Stages if the circuit is a plain ladder between the ports, else None.

    A ladder: series elements form one path from port 1 to port 2 through every node,
    every other element is a shunt from a path node to ground (not a zero-ohm link), and
    no inductors are coupled.
    """
    is_series = (a >= 0) & (b >= 0)
    if coupled or np.any(zero & ~is_series):
        return None
    path, order, remaining = [ports[0]], [], set(np.flatnonzero(is_series).tolist())
    while remaining:
        nxt = [i for i in remaining if path[-1] in (a[i], b[i])]
        if len(nxt) != 1:
            return None
        i = nxt[0]
        remaining.discard(i)
        order.append(i)
        n = int(b[i] if a[i] == path[-1] else a[i])
        if n in path:
            return None
        path.append(n)
    if path[-1] != ports[1] or len(path) != k:
        return None
    stages = []
    for j, n in enumerate(path):
        here = tuple(int(i) for i in np.flatnonzero(~is_series & (np.maximum(a, b) == n)))
        if here:
            stages.append(LadderStage("shunt", here))
        if j < len(order):
            stages.append(LadderStage("series", (int(order[j]),)))
    return tuple(stages)


nan = float("nan")


def _body(e) -> tuple[float, float, float] | None:
    """Body dimensions of an element's mount model, or None (no mount, or measured)."""
    return e.mount.body if e.mount is not None and e.mounted_esl is None else None


def _with_self_resonance(spec: Circuit) -> Circuit:
    r"""The circuit with a parallel capacitor ``<name>.srf`` beside every inductor that
    gives ``srf``: :math:`C_p = 1/((2\pi f_{srf})^2 L)` (the usual one-resonance model
    of a chip inductor)."""
    extra = []
    for e in spec.elements:
        if e.srf is not None:
            cp = 1.0 / ((2 * math.pi * e.srf) ** 2 * float(e.value))  # type: ignore[arg-type]
            extra.append(Element(name=f"{e.name}.srf", type="C", value=cp,
                                 between=e.between))
    if not extra:
        return spec
    return spec.model_copy(update={"elements": spec.elements + tuple(extra)})


def compile_circuit(spec: Circuit) -> CompiledCircuit:
    """Compile a circuit (expanding a ``filter:`` generator) into a :class:`CompiledCircuit`.

    Raises
    ------
    InputError
        If a filter's generated circuit is invalid, or inductor couplings make the
        inductance matrix non-passive (not positive definite).
    """
    if spec.filter is not None:
        try:
            spec = filter_circuit(spec.filter, spec.z0, spec.input, spec.output)
        except ValueError as exc:
            raise InputError(str(exc), key="circuit.filter") from None
    spec = _with_self_resonance(spec)
    lines = spec.interconnect
    nodes = ([spec.input] + [n for e in spec.elements for n in e.between]
             + [n for ln in lines for n in ln.between])
    names = tuple(dict.fromkeys(n for n in nodes if n != GROUND_NODE))
    idx = {n: i for i, n in enumerate(names)}
    idx[GROUND_NODE] = -1
    el = spec.elements
    a = np.array([idx[e.between[0]] for e in el], dtype=int)
    b = np.array([idx[e.between[1]] for e in el], dtype=int)
    vals = [_values(e) for e in el]
    ename = [e.name for e in el]
    mutual = np.zeros((len(el), len(el)))
    for cp in spec.couplings:
        i, j = ename.index(cp.between[0]), ename.index(cp.between[1])
        mutual[i, j] = mutual[j, i] = cp.k * math.sqrt(float(el[i].value or 0.0)
                                                       * float(el[j].value or 0.0))
    if spec.couplings:
        lmat = mutual + np.diag([float(e.value or 0.0) if e.type == "L" else 1.0 for e in el])
        if np.linalg.eigvalsh(lmat).min() <= 0:
            raise InputError("the inductor couplings are not passive (inductance matrix not "
                             "positive definite)", key="circuit.couplings",
                             fix="reduce the coupling coefficients k")
    conns = {g.name: c for c, g in enumerate(spec.grounds)}
    term = [(i, conns[e.ground]) for i, e in enumerate(el) if e.ground is not None]
    rank = [sum(1 for _, c2 in term[:t] if c2 == c) for t, (_, c) in enumerate(term)]
    mounted = [(i, -1) for i, e in enumerate(el) if e.ground is None and _body(e) is not None]
    term += mounted
    rank += [0] * len(mounted)
    body = np.array([_body(el[i]) or (nan, nan, nan) for i, _ in term],
                    dtype=float).reshape(-1, 3)
    gr = spec.grounds
    ports = (idx[spec.input], idx[spec.output])
    zero = np.array([e.zero_impedance for e in el], dtype=bool)
    return CompiledCircuit(
        z0=spec.z0, nodes=names, ports=ports, names=tuple(ename),
        node_a=_frozen(a), node_b=_frozen(b),
        r=_frozen(np.array([v[0] for v in vals], dtype=float)),
        l=_frozen(np.array([v[1] for v in vals], dtype=complex)),
        d=_frozen(np.array([v[2] for v in vals], dtype=complex)),
        mutual=_frozen(mutual), zero=_frozen(zero),
        terminal_element=_frozen(np.array([t[0] for t in term], dtype=int)),
        terminal_conn=_frozen(np.array([t[1] for t in term], dtype=int)),
        terminal_rank=_frozen(np.array(rank, dtype=int)),
        mount_body=_frozen(body),
        conn_names=tuple(g.name for g in gr),
        conn_xy=_frozen(np.array([g.at for g in gr], dtype=float).reshape(-1, 2)),
        conn_trace_length=_frozen(np.array([g.trace_length for g in gr], dtype=float)),
        conn_trace_width=_frozen(np.array([g.trace_width or nan for g in gr], dtype=float)),
        conn_vias=_frozen(np.array([len(g.vias_at) if g.vias_at else (g.vias or 0)
                                    for g in gr], dtype=int)),
        conn_pitch=_frozen(np.array([g.pitch or nan for g in gr], dtype=float)),
        conn_drill=_frozen(np.array([g.drill or nan for g in gr], dtype=float)),
        conn_offsets=tuple(_frozen(np.array(g.vias_at, dtype=float)) if g.vias_at else None
                           for g in gr),
        ladder=None if lines else _ladder(a, b, zero, ports, bool(spec.couplings),
                                          len(names)),
        line_a=_frozen(np.array([idx[ln.between[0]] for ln in lines], dtype=int)),
        line_b=_frozen(np.array([idx[ln.between[1]] for ln in lines], dtype=int)),
        line_length=_frozen(np.array([ln.length for ln in lines], dtype=float)),
        line_width=_frozen(np.array([ln.width or nan for ln in lines], dtype=float)),
    )


def without_interconnect(spec: Circuit) -> Circuit:
    """The circuit (a generated filter expanded) with every interconnect line shorted:
    each line's second node is merged into its first."""
    if spec.filter is not None:
        spec = filter_circuit(spec.filter, spec.z0, spec.input, spec.output)
    merge = {ln.between[1]: ln.between[0] for ln in spec.interconnect}

    def root(n: str) -> str:
        while n in merge:
            n = merge[n]
        return n
    els = tuple(e.model_copy(update={"between": (root(e.between[0]), root(e.between[1]))})
                for e in spec.elements)
    return spec.model_copy(update={"elements": els, "interconnect": (),
                                   "input": root(spec.input), "output": root(spec.output)})
