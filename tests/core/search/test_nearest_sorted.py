"""The nearest-feasible look-up's batch form for 1-2 part networks (``lookup._nearest_feasible``
on a ``SortedView``, served by ``_nearest_feasible_sorted``) against a plain scan written here:
for each row, every network with lo·(1 − 1e-9) <= value <= hi·(1 + 1e-9) that passes the
feasibility test; the one at or below q = clamp(target, lo, hi) with the largest position (the
nearest, equal values: the later one) and the one at or above q with the smallest position.
Also against the general form (the same index without its sorted array), which asks the index
for k nearest networks a round. The stock is invented (repeated values and a feasibility test
that rejects most networks make ties and wide rounds likely)."""

from __future__ import annotations

import numpy as np
import pytest

from selector.core.networks import build_index
from selector.core.search.lookup import SortedView, _nearest_feasible
from selector.core.types import StockLine

SLACK = 1e-9


def _stock(seed: int):
    rng = np.random.default_rng(seed)
    vals = np.round(10 ** rng.uniform(1, 5, 30), 1)
    vals[::5] = vals[1::5][: len(vals[::5])]        # repeated values: equal networks
    return [StockLine(i + 1, "resistor", float(v), 0.01, 0.01, 10, location=f"D{i}") for i, v in enumerate(vals)]


class _Unsorted:
    """The index without ``sorted_values``: ``_nearest_feasible`` takes its general form."""

    def __init__(self, view):
        self._view = view

    sorted_values = None

    def __getattr__(self, name):
        return getattr(self._view, name)


def _plain(values, target, lo, hi, ok_fn):
    below, above = np.full(len(target), -1), np.full(len(target), -1)
    for i in range(len(target)):
        if np.isnan(target[i]) or not lo[i] <= hi[i] * (1 + SLACK):
            continue
        q = min(max(target[i], lo[i]), hi[i])
        q = max(q, 1e-30) if np.isfinite(q) else 1e-30
        ids = np.arange(values.size)
        keep = (values >= lo[i] * (1 - SLACK)) & (values <= hi[i] * (1 + SLACK))
        keep &= ok_fn(ids, np.full(ids.size, i))
        b = ids[keep & (values <= q)]
        a = ids[keep & (values >= q)]
        below[i] = b.max() if b.size else -1
        above[i] = a.min() if a.size else -1
    return below, above


@pytest.mark.parametrize("seed", range(6))
def test_batch_form_matches_a_plain_scan_and_the_general_form(seed):
    index = build_index(_stock(seed), max_parts=2, kind="resistor")
    view = SortedView(index)
    values = view.sorted_values
    rng = np.random.default_rng(100 + seed)
    n = 300
    target = 10 ** rng.uniform(0.5, 5.5, n)
    target[::17] = values[rng.integers(0, values.size, target[::17].size)]   # exactly on a value
    target[5] = np.nan
    lo = np.where(rng.random(n) < 0.5, 0.0, target * rng.uniform(0.3, 1.0, n))
    hi = np.where(rng.random(n) < 0.3, np.inf, target * rng.uniform(1.0, 3.0, n))
    hi[7], lo[7] = 10.0, 20.0                                              # an empty range
    # feasibility: a pseudo-random test of (id, row) that rejects about 85 % (forces wide rounds)
    def ok_fn(ids, rows):
        return ((ids * 7919 + rows * 104729) % 100) < 15

    got = _nearest_feasible(view, target, lo, hi, ok_fn)
    want = _plain(values, target, lo, hi, ok_fn)
    general = _nearest_feasible(_Unsorted(view), target, lo, hi, ok_fn)
    for side in (0, 1):
        assert np.array_equal(got[side], want[side])
        assert np.array_equal(got[side], general[side])
    assert (got[0] >= 0).sum() > n // 2 and (got[1] >= 0).sum() > n // 3   # the check is not vacuous


@pytest.mark.parametrize("k0, kmax", [(2, 8), (1, 5), (2, 2), (3, 100)])
def test_batch_form_stops_where_the_general_form_stops(k0, kmax):
    """With a small ``kmax`` both forms give up after the same number of steps (the plain scan
    would look further); a test rejecting most networks makes the cut matter."""
    index = build_index(_stock(11), max_parts=2, kind="resistor")
    view = SortedView(index)
    rng = np.random.default_rng(7)
    n = 400
    target = 10 ** rng.uniform(0.5, 5.5, n)
    lo, hi = np.zeros(n), np.full(n, np.inf)

    def ok_fn(ids, rows):
        return ((ids * 7919 + rows * 104729) % 100) < 4

    got = _nearest_feasible(view, target, lo, hi, ok_fn, k0=k0, kmax=kmax)
    general = _nearest_feasible(_Unsorted(view), target, lo, hi, ok_fn, k0=k0, kmax=kmax)
    full = _nearest_feasible(view, target, lo, hi, ok_fn)
    assert np.array_equal(got[0], general[0]) and np.array_equal(got[1], general[1])
    if kmax <= 8:   # the cut did leave some rows without an answer
        assert (got[0] < 0).sum() > (full[0] < 0).sum()
