"""The table of candidates' helpers against the built-ins they stand in for.

``CandidateIds`` replaced a list of every id: it must index, slice and fail like that
list (Python's list is the reference). ``distinct_rows`` replaced ``numpy.unique(...,
axis=0)``: the same partition of the rows and the same first row of each group
(numpy is the reference)."""

from __future__ import annotations

import numpy as np
import pytest

from stackopt.rows import distinct_rows
from stackopt.search.table import ID_FORMAT, CandidateIds, Template


def test_ids_index_and_slice_as_the_list_of_every_id():
    n = 1234
    ref = [f"C{i + 1:05d}" for i in range(n)]  # the list Result.ids used to build
    ids = CandidateIds(n)
    assert len(ids) == n and ids[0] == "C00001" and ids[-1] == ref[-1]
    for i in (0, 7, n - 1, -1, -n, np.int64(42), np.intp(3)):
        assert ids[i] == ref[i]
    for s in (slice(None, 3), slice(5, 50, 7), slice(-4, None), slice(None, None, -100)):
        assert ids[s] == ref[s]
    assert list(ids) == ref and ids.index("C00100") == 99 and "C01234" in ids
    for bad in (n, -n - 1):
        with pytest.raises(IndexError):
            ids[bad]
    assert len(CandidateIds(0)) == 0 and CandidateIds(0)[:] == []


def test_template_text_is_the_id_format():
    t = Template(ID_FORMAT, np.array([1, 99999, 123456]))
    assert t.text().tolist() == ["C00001", "C99999", "C123456"]


@pytest.mark.parametrize("shape,high", [((500, 4), 3), ((2000, 11), 2), ((50, 1), 40),
                                        ((1, 3), 5), ((0, 3), 5)])
def test_distinct_rows_partitions_as_numpy_unique(shape, high):
    a = np.random.default_rng(shape[0]).integers(-1, high, size=shape)
    first, inv = distinct_rows(a)
    _, ref_first, ref_inv = np.unique(a, axis=0, return_index=True, return_inverse=True)
    ref_inv = ref_inv.reshape(-1)
    assert len(first) == len(ref_first) and len(inv) == len(a)
    assert np.array_equal(a[first][inv], a)  # every row is its group's first row
    assert sorted(first.tolist()) == sorted(ref_first.tolist())  # the same first rows
    # the same partition: equal codes exactly where numpy's are equal
    assert np.array_equal(ref_inv[first][inv], ref_inv)
    assert np.array_equal(np.sort(first), np.unique(first))  # each group once
