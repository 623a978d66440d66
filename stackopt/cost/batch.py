"""A batch of N candidate boards as the pricer sees them (arrays of N, SI units)."""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

__all__ = ["PriceBatch"]

_FLOAT = ("copper", "inner_copper", "min_drill", "thickness", "min_dielectric", "min_trace",
          "min_space")
_BOOL = ("via_in_pad", "impedance_control", "blind_vias", "buried_vias", "microvias")


@dataclass(frozen=True)
class PriceBatch:
    """N candidate boards for :func:`stackopt.cost.price` (read-only arrays).

    Attributes
    ----------
    layers : (N,) int
        Copper layer count.
    material_counts : (N, M) int
        Plies (prepregs) or cores used of each catalogue item, columns in the order of
        ``CostTable.materials_list()``.
    copper, inner_copper : (N,) float
        Foil thickness of the outer and of the inner layers, m (``"1 oz"`` = 34.3e-6).
    min_drill : (N,) float
        Smallest plated drill, m.
    thickness : (N,) float
        Finished board thickness, m.
    min_dielectric : (N,) float
        Thinnest dielectric between two copper layers, m.
    min_trace, min_space : (N,) float
        Narrowest trace and gap, m; NaN = not constrained (no such line on the board).
    via_in_pad, impedance_control, blind_vias, buried_vias, microvias : (N,) bool
        Features used.

    """

    layers: np.ndarray
    material_counts: np.ndarray
    copper: np.ndarray
    inner_copper: np.ndarray
    min_drill: np.ndarray
    thickness: np.ndarray
    min_dielectric: np.ndarray
    min_trace: np.ndarray
    min_space: np.ndarray
    via_in_pad: np.ndarray
    impedance_control: np.ndarray
    blind_vias: np.ndarray
    buried_vias: np.ndarray
    microvias: np.ndarray

    def __post_init__(self) -> None:
        layers = np.array(self.layers, dtype=np.int64, ndmin=1)
        n = layers.shape[0]
        counts = np.array(self.material_counts, dtype=np.int64, ndmin=2)
        if layers.ndim != 1 or counts.ndim != 2 or counts.shape[0] != n:
            raise ValueError(f"layers must be (N,) and material_counts (N, M); got "
                             f"{layers.shape} and {counts.shape}")
        if np.any(counts < 0) or np.any(layers < 1):
            raise ValueError("material counts must be >= 0 and layer counts >= 1")
        out = {"layers": layers, "material_counts": counts}
        for name in _FLOAT + _BOOL:
            arr = np.array(getattr(self, name), dtype=bool if name in _BOOL else float)
            if arr.shape != (n,):
                raise ValueError(f"{name} must have shape ({n},), got {arr.shape}")
            out[name] = arr
        for name, arr in out.items():
            arr.flags.writeable = False
            object.__setattr__(self, name, arr)

    def __len__(self) -> int:
        return int(self.layers.shape[0])

    @classmethod
    def broadcast(cls, *, layers, material_counts, copper, min_drill, thickness,
                  min_dielectric, inner_copper=None, min_trace=np.nan, min_space=np.nan,
                  via_in_pad=False, impedance_control=False, blind_vias=False,
                  buried_vias=False, microvias=False) -> PriceBatch:
        """Build a batch from scalars and arrays, broadcast to a common N.

        ``material_counts`` may be one row ``(M,)`` for every candidate;
        ``inner_copper`` defaults to ``copper`` (the same weight on every layer).
        """
        counts = np.asarray(material_counts)
        counts = counts[None, :] if counts.ndim == 1 else counts
        given = dict(layers=layers, copper=copper, min_drill=min_drill, thickness=thickness,
                     min_dielectric=min_dielectric,
                     inner_copper=copper if inner_copper is None else inner_copper,
                     min_trace=min_trace, min_space=min_space, via_in_pad=via_in_pad,
                     impedance_control=impedance_control, blind_vias=blind_vias,
                     buried_vias=buried_vias, microvias=microvias)
        arrays = {k: np.asarray(v) for k, v in given.items()}
        n = np.broadcast_shapes(counts.shape[:1], *(a.shape for a in arrays.values()))
        if len(n) != 1:
            raise ValueError(f"batch fields must be scalars or (N,) arrays; got shape {n}")
        full = {k: np.broadcast_to(a, n).copy() for k, a in arrays.items()}
        full["material_counts"] = np.broadcast_to(counts, n + counts.shape[1:]).copy()
        return cls(**full)

    def take(self, index) -> PriceBatch:
        """Return the candidates at ``index`` (an integer array or a boolean mask)."""
        return PriceBatch(**{f.name: getattr(self, f.name)[index] for f in fields(self)})
