"""The first row in a lexicographic order, without sorting.

``numpy.lexsort(keys)[0]`` sorts every row to read one; :func:`lexmin` narrows the rows
key by key (the primary key first) to those equal to the smallest value, in time linear
in the rows: the picks and the comparisons of a large result take the best of 445,000
candidates several times.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

__all__ = ["lexmin"]


def lexmin(keys: Sequence[np.ndarray]) -> int:
    """``int(numpy.lexsort(keys)[0])``: the position of the first row when sorted by
    ``keys`` (as :func:`numpy.lexsort`: the *last* key is the primary one), ties by
    position; NaN sorts after every number, and -0.0 equals 0.0, as in numpy's sort.

    Raises
    ------
    ValueError
        No rows.
    """
    n = len(keys[-1]) if len(keys) else 0
    if not n:
        raise ValueError("lexmin of no rows")
    cand = np.arange(n)
    for k in reversed(keys):  # primary key first
        v = np.asarray(k)[cand]
        if v.dtype.kind == "f":
            nan = np.isnan(v)
            if nan.all():
                continue  # every remaining row ties on this key
            keep = ~nan & (v == np.min(v[~nan]))
        else:
            keep = v == v.min()
        cand = cand[keep]
        if len(cand) == 1:
            break
    return int(cand[0])
