"""Cross-field checks of a listed circuit (:class:`~stackopt.model.circuit.Circuit`): names
(elements, grounds, couplings) and topology (unknown or dangling nodes, floating parts,
loops of zero-ohm links, a port shorted to ground). Each mistake names the element and
the fix.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from stackopt.errors import InputError, did_you_mean
from stackopt.model.fields import unique_names

if TYPE_CHECKING:
    from stackopt.model.circuit import Circuit

__all__ = ["GROUND_NODE", "check_names", "check_topology"]

#: The reserved name of the reference (ground) node.
GROUND_NODE = "gnd"


def check_names(c: Circuit) -> None:
    """Unique element and ground names; every ground used; couplings between inductors."""
    unique_names([e.name for e in c.elements], "elements", "elements")
    unique_names([g.name for g in c.grounds], "grounds", "grounds")
    gnames = [g.name for g in c.grounds]
    used = set()
    for e in c.elements:
        if e.ground is not None:
            if e.ground not in gnames:
                raise ValueError(f"element {e.name} names ground {e.ground!r}, which is not "
                                 f"in 'grounds'{did_you_mean(e.ground, gnames)}; add it there")
            used.add(e.ground)
    for g in c.grounds:
        if g.name not in used:
            raise ValueError(f"ground {g.name} is used by no element; remove it or name it "
                             "as an element's 'ground'")
    for i, g in enumerate(c.grounds):
        for h in c.grounds[:i]:
            if g.at == h.at:
                raise ValueError(f"grounds {h.name} and {g.name} are at the same place; "
                                 "let the elements share one ground or move one")
    byname = {e.name: e for e in c.elements}
    pairs = set()
    for cp in c.couplings:
        a, b = cp.between
        for n in (a, b):
            if n not in byname:
                raise ValueError(f"coupling names {n!r}, which is not an element"
                                 f"{did_you_mean(n, list(byname))}; name two inductors")
            if byname[n].type != "L" or byname[n].value == 0:
                raise ValueError(f"coupling names {n}, which is not an inductor with a value; "
                                 "couple two L elements")
        key = frozenset((a, b))
        if a == b or key in pairs:
            raise ValueError(f"coupling {a}-{b} is repeated or couples an inductor with "
                             "itself; give each pair once")
        pairs.add(key)


def _find(parent: dict[str, str], x: str) -> str:
    while parent[x] != x:
        parent[x] = parent[parent[x]]
        x = parent[x]
    return x


def check_topology(c: Circuit) -> None:
    """Ports on the circuit, no dangling or floating node, no zero-ohm loop or shorted port."""
    nodes: dict[str, list[str]] = {GROUND_NODE: []}
    edges = [(e.name, e.between) for e in c.elements] + [
        (f"interconnect {ln.between[0]}-{ln.between[1]}", ln.between) for ln in c.interconnect]
    for name, between in edges:
        if GROUND_NODE in between and name.startswith("interconnect"):
            raise ValueError(f"{name}: a line runs between two circuit nodes, not to "
                             f"'{GROUND_NODE}' (its return is the plane); name two nodes")
        for n in between:
            nodes.setdefault(n, []).append(name)
    for port, n in (("input", c.input), ("output", c.output)):
        if n not in nodes:
            raise ValueError(f"{port} node {n!r} is not an end of any element"
                             f"{did_you_mean(n, list(nodes))}; name a node of the circuit")
    for n, touching in nodes.items():
        hint = " (the ground node is 'gnd')" if n.lower() == GROUND_NODE else ""
        if n != GROUND_NODE and len(touching) == 1 and n not in (c.input, c.output):
            raise ValueError(f"node {n!r} is connected only by {touching[0]}{hint}; connect "
                             "its other end or remove it")
    parent = {n: n for n in nodes}
    for a, b in [b for _, b in edges] + [(c.input, GROUND_NODE), (c.output, GROUND_NODE)]:
        parent[_find(parent, a)] = _find(parent, b)
    root = _find(parent, GROUND_NODE)
    for n, touching in nodes.items():
        if _find(parent, n) != root:
            hint = " (the ground node is 'gnd')" if n.lower() == GROUND_NODE else ""
            raise ValueError(f"node {n!r} (element {touching[0]}) floats: no path to ground "
                             f"or a port{hint}; connect it to the rest of the circuit")
    zero = {n: n for n in nodes}
    for e in c.elements:
        if e.zero_impedance:
            a, b = (_find(zero, n) for n in e.between)
            if a == b:
                raise ValueError(f"element {e.name} closes a loop of zero-ohm links (singular "
                                 "circuit); give it a value or remove it")
            zero[a] = b
    short = {n: n for n in nodes}  # zero-ohm links with no ground connection's inductance
    for e in c.elements:
        if e.zero_impedance and e.ground is None:
            short[_find(short, e.between[0])] = _find(short, e.between[1])
    for port, n in (("input", c.input), ("output", c.output)):
        if _find(short, n) == _find(short, GROUND_NODE):
            links = [e.name for e in c.elements if e.zero_impedance and e.ground is None]
            raise InputError(f"the {port} port {n!r} is shorted to ground by zero-ohm "
                             f"links ({', '.join(links)}); the circuit would pass nothing "
                             "and every margin would be meaningless", key=[port],
                             fix="give the link its real value (e.g. 'value: 10 ohm') or "
                             "connect it between other nodes")
