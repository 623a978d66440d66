"""Circuit responses remembered across the searches of one run.

Physics does not depend on the order quantity or on the fab's prices: the numbers the
circuit receives (a ground batch row) give the same S-parameters whatever the lot size or
the cost table. A :class:`ResponseMemo` shared by several
:class:`~stackopt.search.problem.Problem` objects (one scenario at several quantities, or
against several fabs) lets each search solve only the rows no earlier search has solved;
the others are copied, bit for bit.

The memo is keyed by the exact row (:func:`~stackopt.search.phenotype.exact_key`, each
float's bit pattern), not by the quantized phenotype a search deduplicates its own batch
on: two stackups a fraction of a nanometre apart share a quantized key, and a search
handed the other one's response would no longer be the search run alone (NSGA-II's
tie-breaks follow the last bits). With the exact key a search gets from the memo only
what it would have solved itself.

The memo is bound to the first problem's circuit and frequency grid (the inputs of the
response besides the key) and refuses a problem with others, so it cannot hand out a
response of another circuit. Look-ups and stores are vectorized (no loop over phenotypes).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["ResponseMemo"]


def _rows(keys: np.ndarray) -> np.ndarray:
    """Each key row as one opaque value (equal rows, equal values), for sorting and
    searching a whole batch at once."""
    k = np.ascontiguousarray(keys, dtype=np.int64)
    return k.view(np.dtype((np.void, 8 * k.shape[1]))).reshape(-1)


@dataclass
class _Store:
    """Solved phenotypes of one via model: responses in arrays that grow by doubling,
    and the keys kept sorted (with each key's row) for vectorized look-ups."""

    width: int
    shape_s: tuple[int, ...]
    s: np.ndarray = field(init=False)
    lsum: np.ndarray = field(init=False)
    sorted_keys: np.ndarray = field(init=False)
    sorted_rows: np.ndarray = field(init=False)
    n: int = 0

    def __post_init__(self) -> None:
        self.s = np.empty((0, *self.shape_s), dtype=complex)
        self.lsum = np.empty(0)
        self.sorted_keys = _rows(np.zeros((0, self.width), dtype=np.int64))
        self.sorted_rows = np.zeros(0, dtype=np.int64)

    def find(self, keys: np.ndarray) -> np.ndarray:
        """Row in the store of each key (-1 where not solved yet)."""
        if not self.n or not len(keys):
            return np.full(len(keys), -1, dtype=np.int64)
        v = _rows(keys)
        at = np.minimum(np.searchsorted(self.sorted_keys, v), self.n - 1)
        return np.where(self.sorted_keys[at] == v, self.sorted_rows[at], -1)

    def add(self, keys: np.ndarray, s: np.ndarray, lsum: np.ndarray) -> None:
        """Append distinct, new phenotypes."""
        need = self.n + len(keys)
        if need > len(self.s):
            cap = max(need, 2 * len(self.s), 64)
            self.s = _grow(self.s, cap)
            self.lsum = _grow(self.lsum, cap)
        self.s[self.n:need] = s
        self.lsum[self.n:need] = lsum
        v = _rows(keys)
        order = np.argsort(v, kind="stable")
        at = np.searchsorted(self.sorted_keys, v[order])
        self.sorted_keys = np.insert(self.sorted_keys, at, v[order])
        self.sorted_rows = np.insert(self.sorted_rows, at, self.n + order)
        self.n = need


def _grow(a: np.ndarray, cap: int) -> np.ndarray:
    out = np.empty((cap, *a.shape[1:]), dtype=a.dtype)
    out[: len(a)] = a
    return out


@dataclass(eq=False)
class ResponseMemo:
    """Responses (S (F, 2, 2) and the ground-inductance sum) by via model and exact key
    of the circuit's input, for one circuit on one frequency grid.

    Attributes
    ----------
    solved, reused
        Phenotypes solved and phenotypes copied from the memo so far (for the run's
        statistics).
    """

    solved: int = 0
    reused: int = 0
    _bound: tuple | None = field(default=None, repr=False)
    _stores: dict[str, _Store] = field(default_factory=dict, repr=False)

    def bind(self, circuit: object, freqs: np.ndarray) -> None:
        """Check that a problem's circuit and frequencies are those the memo holds
        responses of (the first problem binds it).

        Raises
        ------
        ValueError
            Another circuit or frequency grid: a memo serves one scenario's physics.
        """
        f = np.asarray(freqs, dtype=float)
        if self._bound is None:
            self._bound = (circuit, f.copy())
            return
        c0, f0 = self._bound
        if (c0 is not circuit and c0 != circuit) or f0.shape != f.shape or np.any(f0 != f):
            raise ValueError("a ResponseMemo holds the responses of one circuit on one "
                             "frequency grid; use a new memo for another scenario")

    def lookup(self, model: str, keys: np.ndarray, shape_s: tuple[int, ...]
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(rows found (U,) bool, S of the found rows, ground sums of the found rows) for
        distinct exact keys ``keys`` (U, P) int64
        (:func:`~stackopt.search.phenotype.exact_key`) under ``model``."""
        st = self._stores.get(model)
        if st is None:
            st = self._stores[model] = _Store(keys.shape[1], tuple(shape_s))
        pos = st.find(keys)
        found = pos >= 0
        self.reused += int(found.sum())
        return found, st.s[pos[found]], st.lsum[pos[found]]

    def store(self, model: str, keys: np.ndarray, s: np.ndarray, lsum: np.ndarray) -> None:
        """Remember newly solved phenotypes (call :meth:`lookup` first for the model)."""
        self._stores[model].add(keys, s, lsum)
        self.solved += len(keys)
