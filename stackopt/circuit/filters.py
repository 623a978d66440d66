r"""Butterworth and Chebyshev ladder filters from their low-pass prototype values.

The prototype values :math:`g_1 \dots g_n` are those of Matthaei, Young & Jones (1964),
section 4.05, for equal 1-ohm terminations and a 1 rad/s cutoff; they are scaled to the
circuit impedance and cutoff and, for a high-pass, transformed element by element
(:math:`\omega \to -\omega_c^2/\omega`: a shunt C becomes a shunt L, a series L a series C).

References
----------
.. [1] G. L. Matthaei, L. Young and E. M. T. Jones, *Microwave Filters,
   Impedance-Matching Networks, and Coupling Structures*, McGraw-Hill, 1964, eqs.
   (4.05-1) Butterworth and (4.05-2) Chebyshev.
"""

from __future__ import annotations

import math

import numpy as np

from stackopt.circuit.elliptic import elliptic_prototype
from stackopt.model.circuit import (
    GROUND_NODE,
    Circuit,
    Coupling,
    Element,
    FilterSpec,
    Ground,
    Interconnect,
)

__all__ = ["butterworth_g", "chebyshev_g", "prototype_g", "filter_circuit"]


def butterworth_g(n: int) -> np.ndarray:
    r"""Butterworth (maximally flat) low-pass prototype values.

    .. math:: g_k = 2 \sin\frac{(2k-1)\pi}{2n}, \qquad k = 1 \dots n, \quad g_{n+1} = 1

    Parameters
    ----------
    n : int
        Filter order, >= 1.

    Returns
    -------
    ndarray, shape (n,)
        :math:`g_1 \dots g_n` (normalized: farad or henry at 1 ohm, 1 rad/s); the load
        is 1 ohm.

    References
    ----------
    Matthaei, Young & Jones (1964), eq. (4.05-1).
    """
    k = np.arange(1, n + 1)
    return 2.0 * np.sin((2 * k - 1) * np.pi / (2 * n))


def chebyshev_g(n: int, ripple_db: float) -> np.ndarray:
    r"""Chebyshev (equal-ripple) low-pass prototype values.

    .. math::

        \beta = \ln\coth\frac{L_{Ar}}{17.37},\quad \gamma = \sinh\frac{\beta}{2n},\quad
        a_k = \sin\frac{(2k-1)\pi}{2n},\quad b_k = \gamma^2 + \sin^2\frac{k\pi}{n},

        g_1 = \frac{2a_1}{\gamma},\qquad g_k = \frac{4a_{k-1}a_k}{b_{k-1}g_{k-1}}

    with :math:`17.37 = 40/\ln 10`. The cutoff is the edge of the ripple band (the
    attenuation there equals the ripple).

    Parameters
    ----------
    n : int
        Filter order, >= 1 (odd orders have a 1-ohm load; even orders need
        :math:`g_{n+1} = \coth^2(\beta/4)`, which equal terminations cannot give).
    ripple_db : float
        Passband ripple :math:`L_{Ar}` [dB], > 0.

    Returns
    -------
    ndarray, shape (n,)
        :math:`g_1 \dots g_n`.

    References
    ----------
    Matthaei, Young & Jones (1964), eq. (4.05-2).
    """
    beta = math.log(1.0 / math.tanh(ripple_db * math.log(10.0) / 40.0))
    gamma = math.sinh(beta / (2 * n))
    k = np.arange(1, n + 1)
    a = np.sin((2 * k - 1) * np.pi / (2 * n))
    b = gamma**2 + np.sin(k * np.pi / n) ** 2
    g = np.empty(n)
    g[0] = 2 * a[0] / gamma
    for i in range(1, n):  # a recurrence over the (few) elements
        g[i] = 4 * a[i - 1] * a[i] / (b[i - 1] * g[i - 1])
    return g


def prototype_g(spec: FilterSpec) -> np.ndarray:
    """Prototype values for a :class:`~stackopt.model.circuit.FilterSpec`."""
    if spec.family == "butterworth":
        return butterworth_g(spec.order)
    return chebyshev_g(spec.order, float(spec.ripple))  # type: ignore[arg-type]


def filter_circuit(spec: FilterSpec, z0: float, input: str = "in", output: str = "out"
                   ) -> Circuit:
    """Expand a filter specification into an explicit, validated :class:`Circuit`.

    Elements are named by prototype position and type (``C1``, ``L2``, …); internal
    nodes are ``n1``, ``n2``, …; with a ``ground`` template every shunt element gets its
    own ground connection ``g<k>``, the connections ``spacing`` apart along x.

    Parameters
    ----------
    spec : FilterSpec
        Family, response, order, cutoff [Hz], ripple, first element, ground template.
    z0 : float
        Termination impedance [ohm] (both ports).
    input, output : str
        Port node names.

    Returns
    -------
    Circuit
    """
    if spec.family == "elliptic":
        return _with_coupling(spec, _elliptic_circuit(spec, z0, input, output))
    g = prototype_g(spec)
    wc = 2.0 * math.pi * spec.cutoff
    shunt = [(k % 2 == 0) == (spec.first == "shunt") for k in range(spec.order)]
    n_series = spec.order - sum(shunt)
    if n_series == 0:  # a single shunt element across a through line: one node, two ports
        output = input
    chain = [input] + [f"n{i}" for i in range(1, n_series)] + [output][:n_series]
    if (n_series and input == output) or any(n in (input, output) for n in chain[1:-1]):
        raise ValueError("filter port nodes must be two names other than n1, n2, ...; "
                         "rename 'input'/'output'")
    elements: list[Element] = []
    grounds: list[Ground] = []
    node = 0
    for k, (gk, is_shunt) in enumerate(zip(g, shunt, strict=True), start=1):
        # low-pass: shunt C = g/(wc z0), series L = g z0/wc; high-pass: shunt L, series C
        if spec.response == "lowpass":
            typ, value = ("C", gk / (wc * z0)) if is_shunt else ("L", gk * z0 / wc)
        else:
            typ, value = ("L", z0 / (wc * gk)) if is_shunt else ("C", 1.0 / (wc * gk * z0))
        par = (spec.capacitor if typ == "C" else spec.inductor).model_dump()
        if is_shunt:
            gname = None
            if spec.ground is not None:
                gname = f"g{k}"
                grounds.append(Ground(name=gname, at=(len(grounds) * spec.spacing, 0.0),
                                      **spec.ground.model_dump()))
            elements.append(Element.model_validate(
                {"name": f"{typ}{k}", "type": typ, "value": value, "ground": gname,
                 "between": (chain[node], GROUND_NODE), **par}))
        else:
            elements.append(Element.model_validate(
                {"name": f"{typ}{k}", "type": typ, "value": value,
                 "between": (chain[node], chain[node + 1]), **par}))
            node += 1
    return _with_coupling(spec, Circuit(z0=z0, input=input, output=output,
                                        elements=tuple(elements), grounds=tuple(grounds)))


def _denorm(spec: FilterSpec, z0: float, typ: str, g: float) -> tuple[str, float]:
    """A normalized prototype L or C (1 ohm, 1 rad/s) at ``z0`` and the cutoff; a
    high-pass maps L -> C and C -> L (omega -> -omega_c^2/omega)."""
    wc = 2.0 * math.pi * spec.cutoff
    if spec.response == "lowpass":
        return (typ, g * z0 / wc) if typ == "L" else (typ, g / (wc * z0))
    return ("C", 1.0 / (wc * g * z0)) if typ == "L" else ("L", z0 / (wc * g))


def _elliptic_circuit(spec: FilterSpec, z0: float, input: str, output: str) -> Circuit:
    """The elliptic ladder (:mod:`stackopt.circuit.elliptic`) as explicit elements."""
    assert spec.ripple is not None and spec.stopband_attenuation is not None  # validated
    pr = elliptic_prototype(spec.order, spec.ripple, spec.stopband_attenuation, spec.first)
    m = len(pr.main)
    if spec.first == "shunt":  # main shunt C on every node, parallel L-C arms between
        nodes = [input] + [f"n{i}" for i in range(1, m - 1)] + [output]
    else:  # main series L between nodes, traps on the nodes in between
        nodes = [input] + [f"n{i}" for i in range(1, m)] + [output]
    chain = nodes
    if any(n in (input, output) for n in chain[1:-1]) or input == output:
        raise ValueError("filter port nodes must be two names other than n1, n2, ...; "
                         "rename 'input'/'output'")
    elements: list[Element] = []
    grounds: list[Ground] = []

    def add(typ: str, g: float, k: int, a: str, b: str, suffix: str = "") -> None:
        t, v = _denorm(spec, z0, typ, g)
        gname = None
        if b == GROUND_NODE and spec.ground is not None:
            gname = f"g{k}"
            grounds.append(Ground(name=gname, at=(len(grounds) * spec.spacing, 0.0),
                                  **spec.ground.model_dump()))
        par = (spec.capacitor if t == "C" else spec.inductor).model_dump()
        elements.append(Element.model_validate(
            {"name": f"{t}{k}{suffix}", "type": t, "value": v, "ground": gname,
             "between": (a, b), **par}))

    k = 0
    for i, g in enumerate(pr.main):  # a handful of sections
        k += 1
        if spec.first == "shunt":
            add("C", g, k, nodes[i], GROUND_NODE)
            if i < len(pr.arm_l):
                k += 1
                add("L", pr.arm_l[i], k, nodes[i], nodes[i + 1])
                add("C", pr.arm_c[i], k, nodes[i], nodes[i + 1], "p")
        else:
            add("L", g, k, nodes[i], nodes[i + 1])
            if i < len(pr.arm_l):
                k += 1
                trap = f"t{k}"
                add("C", pr.arm_c[i], k, nodes[i + 1], trap, "s")
                add("L", pr.arm_l[i], k, trap, GROUND_NODE)
    return Circuit(z0=z0, input=input, output=output, elements=tuple(elements),
                   grounds=tuple(grounds))


def _with_coupling(spec: FilterSpec, c: Circuit) -> Circuit:
    """``spec.coupling`` as the magnetic coupling k between neighbouring generated
    inductors (consecutive in element order), and ``spec.interconnect`` as one line at the
    input end of every series branch (its elements move to a node ``<node>.w``)."""
    if spec.interconnect is not None:
        c = _with_lines(spec, c)
    if not spec.coupling:
        return c
    ls = [e.name for e in c.elements if e.type == "L"]
    cps = [Coupling(between=(a, b), k=spec.coupling) for a, b in zip(ls, ls[1:], strict=False)]
    return c.model_copy(update={"couplings": tuple(cps)}) if cps else c


def _with_lines(spec: FilterSpec, c: Circuit) -> Circuit:
    tpl = spec.interconnect
    assert tpl is not None  # called only with an interconnect template
    pairs: list[tuple[str, str]] = []
    for e in c.elements:  # series branches in generation order
        if GROUND_NODE not in e.between and e.between not in pairs:
            pairs.append(e.between)
    new = {p: f"{p[0]}.w{k + 1}" for k, p in enumerate(pairs)}
    els = tuple(e.model_copy(update={"between": (new[e.between], e.between[1])})
                if e.between in new else e for e in c.elements)
    lines = tuple(Interconnect(between=(p[0], w), length=tpl.length, width=tpl.width)
                  for p, w in new.items())
    return Circuit(z0=c.z0, input=c.input, output=c.output, elements=els,
                   grounds=c.grounds, couplings=c.couplings, interconnect=lines)
