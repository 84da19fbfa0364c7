"""``circuits.base.nan_to`` (the search's short form of ``numpy.nan_to_num(x, nan=...)``) against
numpy's own function, the reference: the same values and signs (zeros included) for nan, both
infinities, the largest and smallest floats and ordinary numbers."""

from __future__ import annotations

import numpy as np
import pytest

from selector.core.circuits.base import nan_to


@pytest.mark.parametrize("fill", [0.0, -np.inf, np.inf, 3.5, -0.0])
def test_nan_to_matches_numpy(fill):
    rng = np.random.default_rng(5)
    big = np.finfo(float).max
    x = np.concatenate([[np.nan, np.inf, -np.inf, 0.0, -0.0, big, -big, 5e-324, -5e-324, 1.0],
                        rng.normal(0, 1e5, 500)])
    x[rng.integers(0, x.size, 60)] = np.nan
    got, want = nan_to(x, fill), np.nan_to_num(x, nan=fill)
    assert got.dtype == want.dtype and got.shape == want.shape
    assert np.array_equal(got, want) and np.array_equal(np.signbit(got), np.signbit(want))
    assert np.isnan(x).any()  # the case the function exists for is in the data
