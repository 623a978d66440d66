"""``lexmin`` against numpy's own ``lexsort`` (the reference): the first row of the
order, with ties broken by position, NaN last and -0.0 equal to 0.0."""

from __future__ import annotations

import numpy as np
import pytest

from stackopt.search.order import lexmin


@pytest.mark.parametrize("seed", range(40))
def test_lexmin_is_the_first_row_of_numpys_lexsort(seed):
    rng = np.random.default_rng(seed)
    n = int(rng.integers(1, 300))
    vals = np.array([0.0, -0.0, 1.5, -2.0, np.nan, 3.25])
    keys = []
    for _ in range(int(rng.integers(1, 5))):  # few distinct values: many ties
        kind = rng.integers(3)
        keys.append(rng.choice(vals, n) if kind == 0 else
                    rng.integers(0, 3, n) if kind == 1 else rng.random(n) < 0.5)
    if seed % 5 == 0:
        keys.append(np.full(n, np.nan))  # a primary key on which every row ties
    assert lexmin(keys) == int(np.lexsort(keys)[0])


def test_lexmin_of_no_rows_is_an_error():
    with pytest.raises(ValueError):
        lexmin([np.zeros(0)])
