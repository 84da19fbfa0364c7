"""The fast network index equals a plain exhaustive enumeration (tests/reference_networks.py) on
random small stocks: the same set of networks, the same values and worst-case bounds, the same
best errors for nearest look-ups (1, 2 and 3 parts, resistors and capacitors, quantity 1 and more,
several boards, polarized capacitors)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings, seed
from hypothesis import strategies as st

from selector.core.networks import build_index
from selector.core.types import StockLine
from reference_networks import enumerate_all, network_key

# Values: a few repeated "drawer" values (so equal-value lines and equal-value networks occur)
# plus arbitrary ones.
_VALUES = st.one_of(st.sampled_from([1.0, 2.2, 4.7, 10.0, 22.0, 47.0, 100.0, 4.7, 10.0]),
                    st.floats(min_value=0.5, max_value=500.0, allow_nan=False))


@st.composite
def stocks(draw, max_lines: int = 6):
    kind = draw(st.sampled_from(["resistor", "capacitor"]))
    n = draw(st.integers(min_value=1, max_value=max_lines))
    scale = 1.0 if kind == "resistor" else 1e-9
    lines = []
    for i in range(n):
        lines.append(StockLine(
            id=draw(st.integers(min_value=1, max_value=10_000)) * 100 + i,  # unique, unordered ids
            kind=kind,
            value=draw(_VALUES) * scale,
            tol_minus=draw(st.sampled_from([0.0, 0.01, 0.05, 0.2])),
            tol_plus=draw(st.sampled_from([0.01, 0.05, 0.1, 0.8])),
            quantity=draw(st.integers(min_value=0, max_value=4)),
            polarized=kind == "capacitor" and draw(st.booleans()),
        ))
    max_parts = draw(st.integers(min_value=1, max_value=3))
    boards = draw(st.integers(min_value=1, max_value=3))
    allow = draw(st.booleans())
    return kind, lines, max_parts, boards, allow


SETTINGS = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def _err(v: float, t: float) -> float:
    return abs(math.log(v / t))


def check_nearest_few(index, ref, targets, k):
    """``index.nearest_few(targets, k)`` against the exhaustive list ``ref``: per target the same
    k smallest |ln(value/target)| (ties may swap networks, not errors), padded with -1 at the end."""
    got = index.nearest_few(targets, k)
    assert got.shape == (len(targets), k)
    for t, row in zip(targets, got):
        want = sorted((_err(r.value, t), len(r.physical)) for r in ref)[:k]
        ids = row[row >= 0]
        assert np.all(row[len(ids):] == -1)  # padding only at the end
        assert len(ids) == len(want)
        errs = [_err(v, t) for v in index.values(ids)]
        # the same error sequence as the exhaustive ranking (ties may swap networks, not errors)
        assert errs == pytest.approx([w[0] for w in want], rel=1e-9, abs=1e-12)
        assert errs == sorted(errs) or np.allclose(errs, sorted(errs), rtol=1e-9, atol=1e-12)
    return got


@seed(20261202)
@SETTINGS
@given(stocks())
def test_every_network_exactly_once_with_values_and_bounds(case):
    kind, lines, max_parts, boards, allow = case
    index = build_index(lines, max_parts=max_parts, boards=boards, allow_polarized_series=allow)
    ref = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow)
    offsets, ids = index.between([0.0], [math.inf])
    assert offsets.tolist() == [0, len(ids)]
    got = index.networks(ids)
    assert len(set(ids.tolist())) == len(ids)  # canonical ids: no network twice
    got_by_key = {network_key(n): n for n in got}
    ref_by_key = {network_key(n): n for n in ref}
    assert len(got_by_key) == len(got)
    assert set(got_by_key) == set(ref_by_key)
    for key, r in ref_by_key.items():
        g = got_by_key[key]
        assert g.value == pytest.approx(r.value, rel=1e-12)
        assert g.vmin == pytest.approx(r.vmin, rel=1e-12)
        assert g.vmax == pytest.approx(r.vmax, rel=1e-12)
        assert g.usage == r.usage
        # combine() applied to the nominal part values gives the network value
        assert g.combine(np.array([[p.value] for p in g.physical]))[0] == pytest.approx(r.value, rel=1e-12)
    sizes = index.size_by_parts()
    for n in range(1, max_parts + 1):
        assert sizes[n] == sum(1 for r in ref if len(r.physical) == n)
    # values()/bounds()/nparts() agree with network()
    assert np.allclose(index.values(ids), [n.value for n in got], rtol=1e-15)
    assert index.nparts(ids).tolist() == [len(n.physical) for n in got]


@seed(20261203)
@SETTINGS
@given(stocks(), st.lists(st.floats(min_value=0.2, max_value=3000.0), min_size=1, max_size=5),
       st.integers(min_value=1, max_value=6))
def test_nearest_few_matches_exhaustive_ranking(case, raw_targets, k):
    kind, lines, max_parts, boards, allow = case
    scale = 1.0 if kind == "resistor" else 1e-9
    targets = np.array(raw_targets) * scale
    index = build_index(lines, max_parts=max_parts, boards=boards, allow_polarized_series=allow)
    ref = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow)
    check_nearest_few(index, ref, targets, k)


@seed(20261204)
@SETTINGS
@given(stocks(), st.floats(min_value=0.2, max_value=3000.0), st.integers(min_value=1, max_value=4))
def test_nearest_sides_match_exhaustive(case, raw_target, k):
    kind, lines, max_parts, boards, allow = case
    t = raw_target * (1.0 if kind == "resistor" else 1e-9)
    ref = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow)
    # a target on a network value is covered by the hand-made case below
    assume(all(abs(r.value / t - 1) > 1e-9 for r in ref))
    index = build_index(lines, max_parts=max_parts, boards=boards, allow_polarized_series=allow)
    below, above = index.nearest_sides([t], k)
    want_below = sorted((r.value for r in ref if r.value <= t), reverse=True)[:k]
    want_above = sorted(r.value for r in ref if r.value >= t)[:k]
    got_below = index.values(below[0][below[0] >= 0])
    got_above = index.values(above[0][above[0] >= 0])
    assert got_below.tolist() == pytest.approx(want_below, rel=1e-12)
    assert got_above.tolist() == pytest.approx(want_above, rel=1e-12)


@seed(20261205)
@SETTINGS
@given(stocks(), st.lists(st.tuples(st.floats(min_value=0.1, max_value=3000.0),
                                    st.floats(min_value=1.0, max_value=5.0)), min_size=1, max_size=4))
def test_between_lists_exactly_the_networks_in_range(case, ranges):
    kind, lines, max_parts, boards, allow = case
    scale = 1.0 if kind == "resistor" else 1e-9
    lo = np.array([a for a, _ in ranges]) * scale
    hi = lo * np.array([f for _, f in ranges])
    ref = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow)
    for a, b in zip(lo, hi):
        assume(all(abs(r.value / a - 1) > 1e-9 and abs(r.value / b - 1) > 1e-9 for r in ref))
    index = build_index(lines, max_parts=max_parts, boards=boards, allow_polarized_series=allow)
    offsets, ids = index.between(lo, hi)
    assert len(offsets) == len(lo) + 1
    for i, (a, b) in enumerate(zip(lo, hi)):
        row = ids[offsets[i]:offsets[i + 1]]
        vals = index.values(row)
        assert np.all(np.diff(vals) >= 0)  # sorted by value
        got = sorted(network_key(n) for n in index.networks(row))
        want = sorted(network_key(r) for r in ref if a <= r.value <= b)
        assert got == want


@seed(20261206)
@SETTINGS
@given(stocks(), st.data())
def test_quantity_rule_usage_and_fits_together(case, data):
    kind, lines, max_parts, boards, allow = case
    index = build_index(lines, max_parts=max_parts, boards=boards, allow_polarized_series=allow)
    _, ids = index.between([0.0], [math.inf])
    assume(len(ids) > 0)
    qty = {ln.id: ln.quantity for ln in lines}
    pos, cnt = index.usage_arrays(ids)
    for net, prow, crow in zip(index.networks(ids), pos, cnt):
        # the quantity rule: no network uses more of a line than quantity x boards allows
        for line_id, n in net.usage.items():
            assert n * boards <= qty[line_id]
        used = {int(index.line_ids[p]): int(c) for p, c in zip(prow, crow) if p >= 0}
        assert used == net.usage
    a = np.array(data.draw(st.lists(st.sampled_from(ids.tolist()), min_size=1, max_size=20)))
    b = np.array(data.draw(st.lists(st.sampled_from(ids.tolist()), min_size=len(a), max_size=len(a))))
    for other_boards in (None, 1, 2):
        fit = index.fits_together(a, b, boards=other_boards)
        nb = boards if other_boards is None else other_boards
        for ia, ib, f in zip(a, b, fit):
            total: dict[int, int] = {}
            for part_id, n in list(index.network(ia).usage.items()) + list(index.network(ib).usage.items()):
                total[part_id] = total.get(part_id, 0) + n
            assert f == all(n * nb <= qty[i] for i, n in total.items())


def test_target_exactly_on_a_network_value_is_on_both_sides():
    # hand-checkable: 10 k + 10 k = 20 k exactly (facts.md §11.3)
    lines = [StockLine(1, "resistor", 10e3, 0.01, 0.01, 2), StockLine(2, "resistor", 33e3, 0.01, 0.01, 1)]
    index = build_index(lines, max_parts=2)
    below, above = index.nearest_sides([20e3], 1)
    assert index.network(below[0, 0]).shape == "series"
    assert below[0, 0] == above[0, 0]
    assert index.values(below[0]) == pytest.approx([20e3])


def test_quantity_running_out_keeps_the_next_variant():
    # Two lines of the same value: when each drawer holds one part, 10 k + 10 k is still
    # possible from the two drawers, but not from one drawer alone.
    one = StockLine(1, "resistor", 10e3, 0.01, 0.01, 1)
    two = StockLine(2, "resistor", 10e3, 0.01, 0.01, 1)
    index = build_index([one, two], max_parts=2)
    ids = index.nearest_few([20e3], 3)[0]
    best = index.network(ids[0])
    assert best.shape == "series" and best.usage == {1: 1, 2: 1}
    # with quantity 1 in a single drawer the nearest to 20 k is the single 10 k part
    index1 = build_index([one], max_parts=2)
    best1 = index1.network(index1.nearest_few([20e3], 1)[0, 0])
    assert best1.shape == "single"
    # boards multiply: two boards of "10 k + 10 k" need four parts
    index2 = build_index([StockLine(1, "resistor", 10e3, 0.01, 0.01, 3)], max_parts=2, boards=2)
    assert index2.size_by_parts() == {1: 1, 2: 0}


def test_empty_and_padding():
    index = build_index([], max_parts=3)
    assert index.nearest_few([1e3], 2).tolist() == [[-1, -1]]
    b, a = index.nearest_sides([1e3], 1)
    assert b.tolist() == [[-1]] and a.tolist() == [[-1]]
    index = build_index([StockLine(1, "resistor", 1e3, 0.05, 0.05, 1)], max_parts=3)
    assert index.nearest_few([1e3], 3).tolist()[0][1:] == [-1, -1]
    with pytest.raises(ValueError):
        index.nearest_few([0.0], 1)
    with pytest.raises(ValueError):
        build_index([StockLine(1, "resistor", 1e3, 0.05, 0.05, 1)], max_parts=4)


@seed(20261207)
@SETTINGS
@given(stocks(), st.data(), st.integers(min_value=1, max_value=5))
def test_target_on_a_network_value_wide_range(case, data, k):
    # values spread over seven decades so pair and 3-part values crowd each other at 1e-12
    kind, lines, max_parts, boards, allow = case
    spread = data.draw(st.lists(st.sampled_from([1.0, 1e3, 1e6, 1e7]), min_size=len(lines), max_size=len(lines)))
    lines = [StockLine(ln.id, ln.kind, ln.value * f, ln.tol_minus, ln.tol_plus, ln.quantity,
                       polarized=ln.polarized) for ln, f in zip(lines, spread)]
    ref = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow)
    assume(ref)
    t = data.draw(st.sampled_from(ref)).value
    index = build_index(lines, max_parts=max_parts, boards=boards, allow_polarized_series=allow)
    best = index.values(index.nearest_few([t], k)[0, :1])[0]
    assert best == pytest.approx(t, rel=1e-14)
    below, above = index.nearest_sides([t], k)
    got_b = index.values(below[0][below[0] >= 0]).tolist()
    got_a = index.values(above[0][above[0] >= 0]).tolist()

    def near(v):  # the two formulas round differently by a few ulps: treat these as "on" t
        return abs(v / t - 1) <= 1e-14

    # the network on the target is the nearest on both sides
    assert near(got_b[0]) and near(got_a[0])
    n_on = sum(1 for r in ref if near(r.value))
    for got, clear in ((got_b, sorted((r.value for r in ref if r.value < t and not near(r.value)), reverse=True)),
                       (got_a, sorted(r.value for r in ref if r.value > t and not near(r.value)))):
        on = [v for v in got if near(v)]
        off = [v for v in got if not near(v)]
        assert 1 <= len(on) <= n_on
        assert off == pytest.approx(clear[:len(off)], rel=1e-12)
        assert len(got) == min(k, len(on) + len(clear)) or len(on) < min(k, n_on)
