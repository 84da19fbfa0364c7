"""lookup.sorted_unique stands in for np.unique on the search path (numpy 2's np.unique imports
numpy.ma on its first call); checked against numpy's own np.unique (the reference library)."""

from __future__ import annotations

import numpy as np

from selector.core.search.lookup import sorted_unique


def test_sorted_unique_equals_numpy_unique():
    rng = np.random.default_rng(12)
    cases = [np.array([], dtype=np.int64), np.array([5], dtype=np.int64), np.array([3, 3, 3], dtype=np.int64)]
    cases += [rng.integers(0, n, size=m) for n, m in ((3, 50), (1000, 40), (10, 10_000), (1 << 40, 500))]
    for a in cases:
        got, want = sorted_unique(a), np.unique(a)
        assert got.dtype == want.dtype and np.array_equal(got, want), a
