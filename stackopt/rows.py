"""Distinct rows of integer arrays: one owner for every "solve (or format) each
distinct row once and broadcast back" in the package (phenotypes, via rows, builds).
Below circuit and search, so both can use it; numpy only."""

from __future__ import annotations

import numpy as np

__all__ = ["unique_rows", "factorize", "distinct_rows"]


def unique_rows(key: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(index of the first candidate of every distinct key, inverse (N,)) of a key."""
    if not len(key):
        return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64)
    _, first, inv = np.unique(key, axis=0, return_index=True, return_inverse=True)
    return first, inv.reshape(-1)


def factorize(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``(codes, uniques)`` of a 1-D array: the distinct values in order of first
    appearance and each element's index among them (``uniques[codes] == values``), as
    pandas' ``factorize`` gives them (tested against it), without loading pandas. Numbers
    by one sort (``np.unique``); objects (text) by a dict, a distinct value at a time.
    Floats are compared by value: pass ``view(np.int64)`` to keep -0.0 and NaNs apart."""
    if values.dtype.kind == "O":
        index: dict[object, int] = {}
        codes = np.fromiter((index.setdefault(v, len(index)) for v in values.tolist()),
                            dtype=np.intp, count=len(values))
        uniques = np.empty(len(index), dtype=object)
        uniques[:] = list(index)
        return codes, uniques
    uniq, first, inv = np.unique(values, return_index=True, return_inverse=True)
    order = np.argsort(first, kind="stable")  # the distinct values by first appearance
    rank = np.empty(len(order), dtype=np.intp)
    rank[order] = np.arange(len(order))
    return rank[inv.reshape(-1)], uniq[order]


def distinct_rows(a: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(index of the first row of every distinct row of the integer array ``a`` (N, k),
    in order of first appearance; inverse (N,)), one :func:`factorize` per column (the
    row's code so far and the column's code combined in one int64 < N * N)."""
    n = a.shape[0]
    code = np.zeros(n, dtype=np.int64)
    for col in np.asarray(a, dtype=np.int64).T:  # a handful of columns
        cc, v = factorize(col)
        code, _ = factorize(code * len(v) + cc)
    if not n:
        return np.zeros(0, dtype=np.int64), code
    first = np.full(int(code.max()) + 1, n, dtype=np.int64)
    np.minimum.at(first, code, np.arange(n))
    return first, code
