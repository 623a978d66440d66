"""The design space: which stackups the fab can build for this scenario, and their encoding.

A candidate is a row of small integers (:class:`Candidates`): an *arrangement* (layer count
and the role of every copper layer), one catalogue option per dielectric slot, and indices
into the scenario's copper weights, drills, vias-per-ground-connection and mitigation
switches (arrangements: :mod:`stackopt.search.arrangement`). :meth:`Space.geometry` turns a
batch of rows into arrays of geometry without a Python loop over candidates.

Construction (common practice, no source): foil lamination — the outer dielectrics are
prepreg, inner ones alternate core / prepreg; a two-layer board is one core. A prepreg
opening is 1..``max_plies`` plies of one glass style.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from stackopt.errors import InputError
from stackopt.model.construction import Construction, parse_entry, slot_kinds
from stackopt.model.geometry import LayerStack, role_codes
from stackopt.model.mitigations import MITIGATIONS
from stackopt.model.scenario import Scenario
from stackopt.search.arrangement import Arrangement, arrangements

__all__ = ["Arrangement", "DielectricOptions", "Candidates", "Geometry", "Space", "arrangements",
           "candidate_stackup"]


@dataclass(frozen=True)
class DielectricOptions:
    """The choices for one kind of dielectric slot, sorted by thickness."""

    kind: str
    names: tuple[str, ...]
    thickness: np.ndarray
    er: np.ndarray
    df: np.ndarray
    material: np.ndarray  # catalogue index of the material used
    count: np.ndarray  # plies (prepreg) or 1 (core)

    def __len__(self) -> int:
        return len(self.names)


@dataclass(frozen=True)
class Candidates:
    """A batch of N candidates as integer choices (see module docstring)."""

    arr: np.ndarray  # (N,) arrangement index
    slot: np.ndarray  # (N, S) option index per dielectric slot, -1 where the board has none
    copper: np.ndarray  # (N,)
    drill: np.ndarray  # (N,)
    vias: np.ndarray  # (N,)
    mit: np.ndarray  # (N, len(space.mitigations)) bool

    def __len__(self) -> int:
        return len(self.arr)

    def matrix(self) -> np.ndarray:
        """All choices side by side as one int array (N, columns): a board's identity."""
        return np.column_stack([self.arr, self.slot, self.copper, self.drill, self.vias,
                                self.mit.astype(np.int64)]).astype(np.int64)

    @classmethod
    def from_matrix(cls, m: np.ndarray, n_slots: int) -> Candidates:
        """Inverse of :meth:`matrix`."""
        m = np.asarray(m, dtype=np.int64)
        s = 1 + n_slots
        return cls(arr=m[:, 0], slot=m[:, 1:s], copper=m[:, s], drill=m[:, s + 1],
                   vias=m[:, s + 2], mit=m[:, s + 3:].astype(bool))

    def replace(self, **changes: np.ndarray) -> Candidates:
        """A copy with the named fields changed (``c.replace(drill=..., vias=...)``)."""
        return dataclasses.replace(self, **changes)

    def with_switch(self, k: int, on: bool = True) -> Candidates:
        """A copy with mitigation switch ``k`` (index in the space's mitigations) set."""
        mit = self.mit.copy()
        mit[:, k] = on
        return self.replace(mit=mit)

    def with_slot(self, s: int, option: int) -> Candidates:
        """A copy with dielectric slot ``s`` set to ``option``."""
        slot = self.slot.copy()
        slot[:, s] = option
        return self.replace(slot=slot)

    def take(self, idx: np.ndarray) -> Candidates:
        """The rows ``idx``."""
        return Candidates(self.arr[idx], self.slot[idx], self.copper[idx], self.drill[idx],
                          self.vias[idx], self.mit[idx])

    @staticmethod
    def concat(parts: list[Candidates]) -> Candidates:
        """Rows of several batches, in order."""
        return Candidates(*(np.concatenate([getattr(p, f) for p in parts])
                            for f in ("arr", "slot", "copper", "drill", "vias", "mit")))


@dataclass(frozen=True)
class Geometry:
    """A batch of N candidates as the physics and the pricing see them (SI units).

    Every height comes from :attr:`stack` (:mod:`stackopt.model.geometry`, the one owner of
    stackup geometry); the properties below only name the ones the search uses (computed
    once per batch: a record of one candidate reads them again and again).
    """

    stack: LayerStack  # per-layer arrays of the N stackups
    drill: np.ndarray  # (N,) m
    vias: np.ndarray  # (N,) int, vias per ground connection
    material_counts: np.ndarray  # (N, M) plies / cores per catalogue item
    flags: dict[str, np.ndarray] = field(default_factory=dict)  # mitigation -> (N,) bool
    #: (N, S) catalogue index of every dielectric slot's material, -1: none or unknown
    #: (the tolerance Monte Carlo reads each material's thickness tolerance by it).
    slot_material: np.ndarray | None = None

    def __len__(self) -> int:
        return len(self.drill)

    @property
    def layers(self) -> np.ndarray:
        """Copper layers (N,)."""
        return self.stack.n_layers

    @property
    def copper(self) -> np.ndarray:
        """Top copper thickness, m (N,)."""
        return self.stack.copper[:, 0]

    @cached_property
    def inner_copper(self) -> np.ndarray:
        """Thickest inner copper (the top copper where there is no inner layer), m (N,)."""
        inner = self.stack.copper[:, 1:-1]
        inner = np.where(self.stack.role[:, 1:-1] >= 0, inner, 0.0)
        thick = inner.max(axis=1, initial=0.0)
        return np.where(self.stack.n_layers > 2, thick, self.copper)

    @property
    def thickness(self) -> np.ndarray:
        """Finished thickness, m (N,)."""
        return self.stack.thickness

    @cached_property
    def via_height(self) -> np.ndarray:
        """Ground-via height from the top copper to its ground plane, m (N,)."""
        return self.stack.via_height(0)

    @property
    def trace_height(self) -> np.ndarray:
        """Dielectric height of the top trace over its reference plane, m (N,)."""
        return self.stack.trace_height

    @property
    def trace_er(self) -> np.ndarray:
        """Dk under the top trace (N,)."""
        return self.stack.trace_er

    @property
    def min_dielectric(self) -> np.ndarray:
        """Thinnest dielectric, m (N,)."""
        return self.stack.min_dielectric


@dataclass(frozen=True)
class Space:
    """All stackups the search may visit for one scenario and one fab table."""

    arrangements: tuple[Arrangement, ...]
    options: dict[str, DielectricOptions]  # 'prepreg', 'core'
    copper: tuple[float, ...]
    drills: tuple[float, ...]
    vias: tuple[int, ...]
    mitigations: tuple[str, ...]
    n_materials: int
    material_names: tuple[str, ...]
    #: The fab's standard constructions the search is restricted to, as (name, layers,
    #: option index per slot); empty: every catalogue material in every slot.
    constructions: tuple[tuple[str, int, tuple[int, ...]], ...] = ()

    @classmethod
    def build(cls, scenario: Scenario, catalogue: dict[str, DielectricOptions],
              n_materials: int, material_names: tuple[str, ...], max_layers: int,
              min_drill: float, constructions: tuple[Construction, ...] | None = None
              ) -> Space:
        """The scenario's space limited by the fab (layer count, drill); with
        ``constructions``, only those builds."""
        sp = scenario.space
        counts = sorted({n for n in sp.layers if n <= max_layers})
        drills = tuple(d for d in sp.drills if d >= min_drill * (1 - 1e-9))
        arrs = tuple(a.with_lines(scenario.lines) for n in counts
                     for a in arrangements(n, sp.symmetric)
                     if all(len(catalogue.get(k, ())) for k in a.slot_kinds))
        mits = tuple(m for m in MITIGATIONS if m in sp.mitigations)
        builds = _resolve(constructions or (), catalogue, material_names, counts)
        if constructions is not None:
            arrs = tuple(a for a in arrs if any(b[1] == a.n_layers for b in builds))
        return cls(arrs, catalogue, tuple(sp.copper), drills, tuple(sp.vias_per_ground),
                   mits, n_materials, material_names, builds)

    @cached_property
    def n_slots(self) -> int:
        """Dielectric slots of the thickest board."""
        return max(a.n_layers for a in self.arrangements) - 1

    @cached_property
    def layer_counts(self) -> np.ndarray:
        """Copper layer count of each arrangement."""
        return np.array([a.n_layers for a in self.arrangements])

    def gene_options(self, a: Arrangement) -> list[int]:
        """Number of options of each gene of arrangement ``a``."""
        return [len(self.options[a.slot_kinds[g[0]]]) for g in a.genes]

    def arrangement_size(self, a: Arrangement) -> int:
        """Stackups in the space with arrangement ``a`` (all other choices included)."""
        if self.constructions:
            n = sum(1 for b in self.constructions if b[1] == a.n_layers)
        else:
            n = int(np.prod(self.gene_options(a), dtype=np.float64))
        return n * len(self.copper) * len(self.drills) * len(self.vias) * 2 ** len(
            self.mitigations)

    @property
    def size(self) -> int:
        """Number of distinct stackups in the space."""
        return int(sum(self.arrangement_size(a) for a in self.arrangements))

    def geometry(self, c: Candidates) -> Geometry:
        """Geometry of a batch; vectorized over candidates (loops over slots only)."""
        n = len(c)
        S = self.n_slots
        kind_core = np.zeros((len(self.arrangements), S), dtype=bool)
        for i, a in enumerate(self.arrangements):
            kind_core[i, : a.n_layers - 1] = [k == "core" for k in a.slot_kinds]
        used = c.slot >= 0
        is_core = kind_core[c.arr] & used
        t = np.zeros((n, S))
        er = np.ones((n, S))
        counts = np.zeros((n, self.n_materials), dtype=np.int64)
        material = np.full((n, S), -1, dtype=np.int64)
        rows = np.arange(n)
        for kind, mask in (("core", is_core), ("prepreg", used & ~is_core)):
            o = self.options[kind]
            if not len(o):
                continue
            idx = np.where(mask, c.slot, 0)
            t = np.where(mask, o.thickness[idx], t)
            er = np.where(mask, o.er[idx], er)
            material = np.where(mask, o.material[idx], material)
            for s in range(S):
                m = mask[:, s]
                np.add.at(counts, (rows[m], o.material[idx[m, s]]), o.count[idx[m, s]])
        cu = np.asarray(self.copper)[c.copper]
        role = self.role_codes[c.arr]
        stack = LayerStack(dielectric=t, er=er, copper=np.where(role >= 0, cu[:, None], 0.0),
                           role=role)
        return Geometry(
            stack=stack, drill=np.asarray(self.drills)[c.drill],
            vias=np.asarray(self.vias)[c.vias], material_counts=counts,
            flags={m: c.mit[:, i] for i, m in enumerate(self.mitigations)},
            slot_material=material,
        )

    @cached_property
    def role_codes(self) -> np.ndarray:
        """Role code of every copper layer of each arrangement, (arrangements, L); -1
        below the last layer."""
        out = np.full((len(self.arrangements), self.n_slots + 1), -1, dtype=np.int64)
        for i, a in enumerate(self.arrangements):  # a handful of arrangements
            out[i, : a.n_layers] = role_codes(a.roles)
        return out

    def slot_names(self, c: Candidates, slots: slice | int = slice(None)) -> np.ndarray:
        """Material name of every dielectric slot, (N, S) object array ('' where unused);
        ``slots`` selects columns (``0``: the dielectric under the top copper, (N,))."""
        kinds = list(self.options)
        names = np.array([n for k in kinds for n in self.options[k].names] + [""], dtype=object)
        start = np.cumsum([0] + [len(self.options[k].names) for k in kinds])
        # first name code of each (arrangement, slot); -1: the slot is unused
        base = np.full((len(self.arrangements), self.n_slots), -1, dtype=np.int64)
        for ai, a in enumerate(self.arrangements):  # a handful of arrangements
            base[ai, :len(a.slot_kinds)] = [start[kinds.index(k)] for k in a.slot_kinds]
        b = base[c.arr][:, slots]
        code = np.where(b >= 0, b + c.slot[:, slots], len(names) - 1)
        return names[code]

    def describe(self, c: Candidates, i: int) -> dict:
        """One candidate in words: arrangement, materials per slot, copper, drill, vias."""
        a = self.arrangements[int(c.arr[i])]
        mats = []
        for s, kind in enumerate(a.slot_kinds):
            o = self.options[kind]
            mats.append(o.names[int(c.slot[i, s])])
        return {"arrangement": a.name, "roles": a.roles, "materials": mats,
                "copper_m": self.copper[int(c.copper[i])],
                "drill_m": self.drills[int(c.drill[i])], "vias": self.vias[int(c.vias[i])],
                **{m: bool(c.mit[i, k]) for k, m in enumerate(self.mitigations)}}


def _resolve(constructions, catalogue: dict[str, DielectricOptions],
             material_names: tuple[str, ...], counts: list[int]
             ) -> tuple[tuple[str, int, tuple[int, ...]], ...]:
    """Standard constructions as slot option indices (those with an allowed layer count)."""
    out = []
    for c in constructions:
        if c.layers not in counts:
            continue
        idx = []
        for entry, kind in zip(c.dielectrics, slot_kinds(c.layers), strict=True):
            mid, plies = parse_entry(entry)
            o = catalogue[kind]
            hit = np.flatnonzero((o.material == material_names.index(mid)) & (o.count == plies))
            if not len(hit):
                many = kind == "prepreg" and plies > int(o.count.max(initial=0))
                why = (f"{plies} plies, more than space.max_plies allows" if many else
                       "thinner than the fab's minimum dielectric")
                raise InputError(
                    f"construction {c.name!r} uses {entry!r}, which the search cannot build "
                    f"({why})", key="space.max_plies" if many else "space.constructions",
                    fix=f"raise space.max_plies to {plies}" if many else
                    "correct the construction or capabilities.min_dielectric in the cost "
                    "table")
            idx.append(int(hit[0]))
        out.append((c.name, c.layers, tuple(idx)))
    return tuple(out)


def candidate_stackup(space: Space, c: Candidates, i: int):
    """The :class:`~stackopt.model.stackup.Stackup` of candidate ``i``."""
    from stackopt.model.stackup import Copper, Dielectric, Stackup

    a = space.arrangements[int(c.arr[i])]
    cu = space.copper[int(c.copper[i])]
    copper = tuple(Copper(thickness=cu, role=r, name=f"L{k + 1}")
                   for k, r in enumerate(a.roles))
    diel = []
    for s, kind in enumerate(a.slot_kinds):
        o = space.options[kind]
        j = int(c.slot[i, s])
        diel.append(Dielectric(kind=kind, material=o.names[j],
                               thickness=float(o.thickness[j]), er=float(o.er[j]),
                               df=float(o.df[j]), plies=int(o.count[j])))
    return Stackup(copper=copper, dielectrics=tuple(diel))
