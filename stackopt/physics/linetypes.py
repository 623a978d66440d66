r"""Every controlled-impedance line type, by closed form or by field solve: one owner.

A line is described by its type and one geometry convention shared by the scenario, the
search and ``stackopt calc line``: ``h`` is the dielectric from the reference plane to the
trace's bottom face (Dk ``er``); ``h_above`` (stripline only) from that face to the second
plane (Dk ``er_above``), so the copper of thickness ``t`` sits inside the upper dielectric;
``s`` the edge-to-edge spacing of a pair; ``gap`` the coplanar ground gap of a cpwg line;
``mask_t``/``mask_er`` an optional solder mask over an outer-layer line (field solve only).

Closed forms (vectorized over arrays; the search's workhorse):
microstrip — Hammerstad & Jensen 1980 (or the other :data:`MICROSTRIP_MODELS`); stripline
— Cohn 1954 × Wheeler 1978, off-centre by Wadell's parallel combination, two dielectrics
by the thickness-weighted mean Dk (an approximation the field solve checks); cpwg —
Ghione & Naldi 1984; diff-microstrip — Kirschning & Jansen 1984; diff-stripline — Cohn
1955 (centred). Citations and validity: the kernels in :mod:`stackopt.physics`.

The field solver (:mod:`stackopt.physics.fieldlines`) solves one cross-section at a time;
it takes the two dielectrics, the offset and the solder mask as they are.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    from stackopt.physics.synthesis import LineKind

__all__ = ["LINE_TYPES", "PAIR_TYPES", "STRIPLINE_TYPES", "POUR_TYPE", "SOLVERS",
           "LineTypeEntry", "is_plain",
           "LineSpec", "check_line_type", "closed_form", "field", "line_width",
           "sized_impedance"]


@dataclass(frozen=True)
class LineTypeEntry:
    """What a line type is made of; every reader (closed forms, field solve, width
    synthesis, the scenario's checks and default layers) dispatches on these, never on the
    type's name."""

    #: An edge-coupled pair: sized for Z_diff = 2 Z_odd, needs a spacing ``s``.
    pair: bool = False
    #: Between two planes (stripline family): needs ``h_above``; an inner layer.
    between_planes: bool = False
    #: With a coplanar ground beside the trace: needs a ``gap``.
    coplanar: bool = False


#: The line-type registry, as the scenario and ``calc line`` spell the names. Adding a
#: type is one entry here (and a kernel in :func:`closed_form` if its features are new).
LINE_TYPES: dict[str, LineTypeEntry] = {
    "microstrip": LineTypeEntry(),
    "stripline": LineTypeEntry(between_planes=True),
    "cpwg": LineTypeEntry(coplanar=True),
    "diff-microstrip": LineTypeEntry(pair=True),
    "diff-stripline": LineTypeEntry(pair=True, between_planes=True),
}


#: The type a plain outer-layer line becomes with a coplanar ground pour beside it.
POUR_TYPE = "cpwg"


def is_plain(name: str) -> bool:
    """A single trace over one plane with no coplanar ground (the microstrip form)."""
    e = LINE_TYPES[name]
    return not (e.pair or e.between_planes or e.coplanar)


class _TypesWith:
    """The registered line types with one feature: a live view of :data:`LINE_TYPES`
    (``name in PAIR_TYPES``; iterates in registry order)."""

    def __init__(self, feature: str) -> None:
        self.feature = feature

    def __contains__(self, name: object) -> bool:
        entry = LINE_TYPES.get(name) if isinstance(name, str) else None
        return entry is not None and bool(getattr(entry, self.feature))

    def __iter__(self) -> Iterator[str]:
        return (n for n, e in LINE_TYPES.items() if getattr(e, self.feature))

    def __repr__(self) -> str:
        return f"<line types with {self.feature}: {', '.join(self)}>"


#: The edge-coupled (differential) types; their target is Z_diff = 2 Z_odd.
PAIR_TYPES = _TypesWith("pair")
#: Types between two planes (need ``h_above``).
STRIPLINE_TYPES = _TypesWith("between_planes")


def check_line_type(name: str) -> str:
    """``name`` if it is a registered line type.

    Raises
    ------
    ValueError
        Naming the registered types (and the nearest one).
    """
    if name not in LINE_TYPES:
        from stackopt.errors import did_you_mean

        raise ValueError(f"unknown line type {name!r}{did_you_mean(name, list(LINE_TYPES))}; "
                         f"use one of: {', '.join(LINE_TYPES)}")
    return name

#: How a line is solved.
SOLVERS: tuple[str, ...] = ("closed-form", "field")


@dataclass(frozen=True)
class LineSpec:
    """A line's type and cross-section but its width [m, -]; see the module docstring.

    Fields may be numpy arrays (one element per candidate) for :func:`closed_form` and
    :func:`line_width`; :func:`field` wants scalars.
    """

    type: str
    h: Any
    er: Any
    t: Any = 35e-6
    h_above: Any = None
    er_above: Any = None
    s: Any = None
    gap: Any = None
    mask_t: float = 0.0
    mask_er: float = 3.5
    model: str = "hammerstad-jensen"

    def __post_init__(self) -> None:
        check_line_type(self.type)
        if (self.type in STRIPLINE_TYPES) != (self.h_above is not None):
            raise ValueError(f"{self.type} {'needs' if self.h_above is None else 'takes no'}"
                             " h_above (the dielectric from the trace to the upper plane)")
        if (self.type in PAIR_TYPES) != (self.s is not None):
            raise ValueError(f"{self.type}: a spacing s is for the diff- types only")
        if LINE_TYPES[self.type].coplanar != (self.gap is not None):
            raise ValueError(f"{self.type}: gap is for cpwg only")

    @property
    def pair(self) -> bool:
        """True for a differential (edge-coupled) pair."""
        return self.type in PAIR_TYPES

    def stripline_equivalent(self) -> tuple[Any, Any, Any]:
        """``(b, offset, er)`` of the closed forms: plane spacing, trace centre above the
        midplane, and the thickness-weighted mean Dk of the two dielectrics."""
        h, ha = np.asarray(self.h, float), np.asarray(self.h_above, float)
        t = np.asarray(self.t, float)
        ea = np.asarray(self.er if self.er_above is None else self.er_above, float)
        b = h + ha
        return b, h + t / 2.0 - b / 2.0, (np.asarray(self.er, float) * h + ea * ha) / b


def closed_form(spec: LineSpec, w) -> dict[str, np.ndarray]:
    """Closed-form modes of ``spec`` at width ``w`` [m] (arrays broadcast).

    Returns ``z0`` [ohm] and ``eps_eff`` [-] of one trace alone (for a pair: one strip of
    the pair without its partner), and for pairs ``z_even``, ``z_odd``, ``z_diff``,
    ``z_common`` [ohm], ``eps_even``, ``eps_odd`` [-]. The closed forms ignore a solder
    mask. An off-centre pair between planes has no closed form here (NaN modes).
    """
    from stackopt.physics.coplanar import cpwg
    from stackopt.physics.coupled import coupled_microstrip, coupled_stripline
    from stackopt.physics.lines import microstrip
    from stackopt.physics.stripline import stripline

    w = np.asarray(w, float)
    out: dict[str, np.ndarray] = {}
    if spec.type in STRIPLINE_TYPES:
        b, off, er = spec.stripline_equivalent()
        z0 = np.asarray(stripline(w, b, er, spec.t, off), float)
        out["z0"], out["eps_eff"] = z0, np.broadcast_to(er, z0.shape).astype(float)
        if spec.pair:
            m = coupled_stripline(w, spec.s, b, er, spec.t)
            centred = np.abs(off) <= 1e-9 * b
            out.update({k: np.where(centred, v, np.nan) for k, v in m.items()})
            out["eps_even"] = out["eps_odd"] = out["eps_eff"]
    elif LINE_TYPES[spec.type].coplanar:
        out["z0"], out["eps_eff"] = cpwg(w, spec.gap, spec.h, spec.er, spec.t)
    else:
        out["z0"], out["eps_eff"] = microstrip(w, spec.h, spec.er, spec.t,
                                               spec.model)  # type: ignore[arg-type]
        if spec.pair:
            out.update(coupled_microstrip(w, spec.s, spec.h, spec.er, spec.t))
    return {k: np.asarray(v, float) for k, v in out.items()}


def _section(spec: LineSpec, w: float, pair: bool = True):
    from stackopt.physics.fieldlines import Section

    return Section(float(w), float(spec.h), float(spec.er), float(spec.t),
                   h_above=None if spec.h_above is None else float(spec.h_above),
                   er_above=None if spec.er_above is None else float(spec.er_above),
                   top_plane=spec.type in STRIPLINE_TYPES,
                   s=float(spec.s) if (pair and spec.s is not None) else None,
                   gap=None if spec.gap is None else float(spec.gap),
                   mask_t=float(spec.mask_t), mask_er=float(spec.mask_er))


def field(spec: LineSpec, w: float, resolution: float = 1.0) -> dict[str, float]:
    """Field-solved modes of ``spec`` (scalars) at width ``w`` [m]: the keys of
    :func:`closed_form` plus ``error`` (the solver's error estimate)."""
    from stackopt.physics.fieldlines import solve_section

    single = solve_section(_section(spec, w, pair=False), resolution)
    out = {"z0": single["z0"], "eps_eff": single["eps_eff"], "error": single["error"]}
    if spec.pair:
        modes = solve_section(_section(spec, w), resolution)
        out.update({k: v for k, v in modes.items() if k != "unknowns"})
        out["error"] = max(out["error"], modes["error"])
    return out


def _synthesis_form(spec: LineSpec) -> tuple[Any, Any, LineKind, dict[str, Any]]:
    """``(h, er, kind, options)`` of the closed form that sizes ``spec``
    (:data:`~stackopt.physics.synthesis.LINE_KINDS`): between planes the plane spacing,
    mean Dk and offset; a pair between planes by the centred Cohn form (an offset pair
    starts from it too)."""
    if spec.type in STRIPLINE_TYPES:
        b, off, er = spec.stripline_equivalent()
        if spec.pair:
            return b, er, "coupled_stripline", {"s": spec.s}
        return b, er, "stripline", {"offset": off}
    if LINE_TYPES[spec.type].coplanar:
        return spec.h, spec.er, "cpwg", {"gap": spec.gap}
    if spec.pair:
        return spec.h, spec.er, "coupled_microstrip", {"s": spec.s}
    return spec.h, spec.er, "microstrip", {"model": spec.model}


def sized_impedance(spec: LineSpec, w) -> np.ndarray:
    """The impedance :func:`line_width` sizes for, at width ``w`` [m]: Z0 [ohm], or
    Z_diff for a pair, by the same closed form (arrays broadcast; so a width from
    :func:`line_width` gives back its target, and a perturbed cross-section the
    impedance a build really gets)."""
    from stackopt.physics.synthesis import line_impedance

    h, er, kind, kw = _synthesis_form(spec)
    return line_impedance(w, h, er, spec.t, kind, **kw)


def line_width(spec: LineSpec, target, w_min=10e-6, w_max=50e-3,
               solver: str = "closed-form", start: tuple[float, float] | None = None
               ) -> tuple[np.ndarray, np.ndarray]:
    """Width [m] at which the line reaches ``target`` [ohm] (Z0; Z_diff for pairs).

    Closed form: vectorized bisection (:func:`~stackopt.physics.synthesis.synthesize_width`)
    inside ``[w_min, w_max]``. ``solver="field"`` (scalars only) starts there and refines
    by field solves (:func:`~stackopt.physics.fieldlines.field_width`); ``start``
    ``(width, field impedance there)`` starts from a width already solved instead. Returns
    ``(width, ok)``; NaN width where no width in range reaches the target.
    """
    from stackopt.physics.synthesis import synthesize_width

    h, er, kind, kw = _synthesis_form(spec)
    w, ok = synthesize_width(target, h, er, spec.t, kind, w_min, w_max, **kw)
    if solver == "closed-form" or not bool(np.all(ok)):
        return w, ok
    from stackopt.physics.fieldlines import field_width

    w0, z0 = (float(w), None) if start is None else start
    wf, _ = field_width(float(target), _section(spec, w0), z_start=z0)
    ok_f = bool(np.isfinite(wf) and w_min <= wf <= w_max)
    return np.asarray(wf if ok_f else np.nan), np.asarray(ok_f)
