"""The evolutionary search's genome: a fixed-length integer row per candidate.

``[arrangement, gene_0..gene_{G-1}, copper, drill, vias, mitigation bits]``; see
:func:`genome_bounds`. Decoding gives :class:`~stackopt.search.space.Candidates`.
"""

from __future__ import annotations

import numpy as np

from stackopt.search.space import Candidates, Space

__all__ = ["genome_bounds", "decode_genome", "encode_candidates"]


def _gene_bounds(space: Space) -> tuple[np.ndarray, np.ndarray]:
    k = max(len(o) for o in space.options.values())
    g = max(len(a.genes) for a in space.arrangements)
    xu = [len(space.arrangements) - 1, *([k - 1] * g), len(space.copper) - 1,
          len(space.drills) - 1, len(space.vias) - 1, *([1] * len(space.mitigations))]
    return np.zeros(len(xu), dtype=np.int64), np.array(xu, dtype=np.int64)


def genome_bounds(space: Space) -> tuple[np.ndarray, np.ndarray]:
    """Inclusive integer bounds of the fixed-length genome used by the evolutionary search:
    ``[arrangement, gene_0..gene_{G-1}, copper, drill, vias, mitigation bits]``. A gene value
    ``g`` in ``[0, K-1]`` (K = the largest option count) picks option ``g * n // K`` of a
    slot kind with ``n`` options, so that neighbouring values are neighbouring thicknesses."""
    return _gene_bounds(space)


def decode_genome(space: Space, x: np.ndarray) -> Candidates:
    """Decode genomes (N, len(bounds)) into :class:`Candidates` (mirrored slots filled)."""
    x = np.asarray(np.rint(x), dtype=np.int64)
    _, xu = _gene_bounds(space)
    x = np.clip(x, 0, xu)
    n = len(x)
    k = int(xu[1]) + 1 if len(xu) > 1 else 1
    g_max = max(len(a.genes) for a in space.arrangements)
    arr = x[:, 0]
    slot = np.full((n, space.n_slots), -1, dtype=np.int64)
    for ai, a in enumerate(space.arrangements):
        rows = arr == ai
        if not rows.any():
            continue
        for gi, slots in enumerate(a.genes):
            n_opt = len(space.options[a.slot_kinds[slots[0]]])
            opt = (x[rows, 1 + gi] * n_opt) // k
            for s in slots:
                slot[rows, s] = opt
    rest = x[:, 1 + g_max:]
    return Candidates(arr=arr, slot=slot, copper=rest[:, 0], drill=rest[:, 1],
                      vias=rest[:, 2], mit=rest[:, 3:].astype(bool))


def encode_candidates(space: Space, c: Candidates) -> np.ndarray:
    """A genome that decodes to ``c`` (used to seed the evolutionary search)."""
    _, xu = _gene_bounds(space)
    k = int(xu[1]) + 1
    g_max = max(len(a.genes) for a in space.arrangements)
    genes = np.zeros((len(c), g_max), dtype=np.int64)
    for ai, a in enumerate(space.arrangements):
        rows = c.arr == ai
        for gi, slots in enumerate(a.genes):
            n_opt = len(space.options[a.slot_kinds[slots[0]]])
            genes[rows, gi] = -((-c.slot[rows, slots[0]] * k) // n_opt)  # ceil
    return np.column_stack([c.arr, genes, c.copper, c.drill, c.vias,
                            c.mit.astype(np.int64)])
