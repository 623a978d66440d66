"""The electrical phenotype: what the physics receives, as an integer key per candidate.

The key is built from the fields of the batches the physics actually gets — the circuit's
:class:`~stackopt.circuit.grounds.GroundBatch` and the line synthesis's :class:`LineBatch`
— by iterating their dataclass fields, never from a hand-kept list: a field added to
either batch is in the key by construction. Every float is quantized by :func:`quantize`,
the same function the exact search uses for its thickness states, so both agree on when
two stackups are electrically the same. :func:`exact_key` is the same row without the
quantization (each float's bit pattern): equal only where the physics receives identical
numbers, the key under which a response may be handed from one search to another.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, fields

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["QUANTUM", "quantize", "batch_key", "exact_key", "LineBatch"]

#: Resolution of the key, in SI units: 1 nm for lengths; Dk and the like resolve to 1e-9.
QUANTUM = 1e-9


def quantize(x: ArrayLike) -> np.ndarray:
    """Integer multiples of :data:`QUANTUM` (floats), or the integers / booleans as they are.

    >>> quantize([0.115e-3, 35e-6]).tolist()
    [115000, 35000]
    """
    a = np.asarray(x)
    if a.dtype.kind in "biu":
        return a.astype(np.int64)
    return np.rint(a.astype(float) * (1.0 / QUANTUM)).astype(np.int64)


def bits(x: ArrayLike) -> np.ndarray:
    """The exact value as int64: a float's IEEE-754 bit pattern (0.0 and -0.0 differ, as
    do two floats a part in 1e16 apart), the integers / booleans as they are.

    >>> bits([1.0, -0.0]).tolist()
    [4607182418800017408, -9223372036854775808]
    """
    a = np.asarray(x)
    if a.dtype.kind in "biu":
        return a.astype(np.int64)
    return np.ascontiguousarray(a, dtype=np.float64).view(np.int64)


def _key(batches: tuple[object, ...], convert: Callable[[ArrayLike], np.ndarray]
         ) -> np.ndarray:
    """One int64 row per candidate from every field of ``batches`` (each field an array
    of N, or (N, k); ``None`` fields left out), each converted by ``convert``."""
    cols = []
    for b in batches:
        for f in fields(b):  # type: ignore[arg-type]
            v = getattr(b, f.name)
            if v is None:
                continue
            q = convert(v)
            cols.append(q[:, None] if q.ndim == 1 else q.reshape(q.shape[0], -1))
    return np.concatenate(cols, axis=1)


def batch_key(*batches: object) -> np.ndarray:
    """One int64 row per candidate from every field of the given dataclass batches (each
    field an array of N, or (N, k)), each quantized by :func:`quantize`."""
    return _key(batches, quantize)


def exact_key(*batches: object) -> np.ndarray:
    """:func:`batch_key` without the quantization: every field's exact value (:func:`bits`),
    so two rows are equal only where every number the physics receives is identical."""
    return _key(batches, bits)


@dataclass(frozen=True)
class LineBatch:
    """What the width synthesis of one controlled-impedance line receives, arrays of N:
    the cross-section on the line's layer (:class:`stackopt.model.routing.LineSection`:
    dielectric height to the reference plane (m) and its Dk, copper thickness (m), for
    stripline the height to the second plane and its Dk; 0 where there is no layer),
    whether the line is a grounded coplanar waveguide (a ground pour beside it), and its
    copper layer (-1: no layer on that stackup carries it)."""

    height: np.ndarray
    er: np.ndarray
    copper: np.ndarray
    coplanar: np.ndarray
    height_above: np.ndarray
    er_above: np.ndarray
    layer: np.ndarray

    def take(self, idx: np.ndarray) -> LineBatch:
        """The candidates at ``idx``."""
        return LineBatch(*(getattr(self, f.name)[idx] for f in fields(self)))
