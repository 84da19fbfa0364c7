"""Laws and hand-checkable cases for the network engine: textbook series/parallel results,
published parallel pairs, worst-case bounds that contain every Monte Carlo sample, the polarized
rule, and exact nearest look-ups on a larger stock against a plain numpy enumeration written
here."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from selector.core.networks import build_index, nearest_networks
from selector.core.types import StockLine


def R(i, v, q=5, tol=0.01, tol_plus=None, loc=""):
    return StockLine(i, "resistor", v, tol, tol if tol_plus is None else tol_plus, q, location=loc)


def C(i, v, q=5, tol=0.1, tol_plus=None, polarized=False, dielectric=""):
    return StockLine(i, "capacitor", v, tol, tol if tol_plus is None else tol_plus, q,
                     polarized=polarized, dielectric=dielectric)


def _only(index, shape):
    _, ids = index.between([0.0], [math.inf])
    return [n for n in index.networks(ids) if n.shape == shape]


# --------------------------------------------------------------- hand-checkable (derived by hand)

@pytest.mark.parametrize("kind_lines, shape, expected", [
    # hand-checkable: 10 k + 10 k = 20 k; 10 k ∥ 10 k = 5 k; 1 k ∥ 1 k = 500 Ω (facts.md §11.3,
    # the last one also in the data-sheet table [S21])
    ([R(1, 10e3)], "series", 20e3),
    ([R(1, 10e3)], "parallel", 5e3),
    ([R(1, 1e3)], "parallel", 500.0),
    # hand-checkable: 100 nF ∥ 100 nF = 200 nF; two 100 nF in series = 50 nF
    ([C(1, 100e-9)], "parallel", 200e-9),
    ([C(1, 100e-9)], "series", 50e-9),
    # hand-checkable (facts.md §11.3): 1 µF in series with 2.2 µF = 2.2/3.2 µF = 0.6875 µF
    ([C(1, 1e-6, q=1), C(2, 2.2e-6, q=1)], "series", 0.6875e-6),
    ([C(1, 100e-9, q=1), C(2, 47e-9, q=1)], "parallel", 147e-9),
    # hand-checkable: three 3 k in series = 9 k; three 3 k in parallel = 1 k;
    # (2 k ∥ 2 k) + 1 k = 2 k; (1 k + 1 k) ∥ 2 k = 1 k
    ([R(1, 3e3)], "series3", 9e3),
    ([R(1, 3e3)], "parallel3", 1e3),
    ([R(1, 2e3, q=2), R(2, 1e3, q=1)], "series+parallel", None),
    ([R(1, 1e3, q=2), R(2, 2e3, q=1)], "parallel+series", None),
])
def test_hand_checkable_values(kind_lines, shape, expected):
    index = build_index(kind_lines, max_parts=3)
    nets = _only(index, shape)
    if expected is None:  # the mixed shapes: pick the variant with the roles named above
        if shape == "series+parallel":
            nets = [n for n in nets if [p.value for p in n.physical] == [2e3, 2e3, 1e3]]
            expected = 2e3
        else:
            nets = [n for n in nets if [p.value for p in n.physical] == [1e3, 1e3, 2e3]]
            expected = 1e3
    assert nets, shape
    assert nets[0].value == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("a, b, table, worked", [
    # Published pairs of 1 % parts in parallel for a wanted value, data-sheet table "Parallel of
    # two 1 % tolerance resistors" [S21]; the worked results (5 significant figures) are the
    # ones listed beside it in facts.md §11.3.
    (2.43e3, 3.92e3, 1.5e3, 1.5001e3),
    (4.42e3, 5.76e3, 2.5e3, 2.5009e3),
    (5.36e3, 6.81e3, 3.0e3, 2.9993e3),
    (6.19e3, 11.3e3, 4.0e3, 3.9993e3),
    (12.4e3, 15.0e3, 6.788e3, 6.7883e3),
    (18.2e3, 18.7e3, 9.223e3, 9.2233e3),
])
def test_published_parallel_pairs(a, b, table, worked):
    index = build_index([R(1, a, q=1), R(2, b, q=1)], max_parts=2)
    best = index.network(index.nearest_few([table], 1)[0, 0])
    assert best.shape == "parallel"
    assert sorted(p.value for p in best.physical) == [a, b]
    assert best.value == pytest.approx(worked, abs=0.05e3 * 1e-3 + worked * 2e-5)
    # the table's pairs hit the wanted value well inside the parts' own 1 % tolerance
    assert abs(best.value / table - 1) < 0.0005
    # and the law itself, written out: 1/(1/a + 1/b)
    assert best.value == pytest.approx(a * b / (a + b), rel=1e-12)


def test_asymmetric_tolerance_bounds_by_hand():
    # -20/+80 % capacitors (tolerance letter Z, facts.md §8.2): 100 nF ∥ 100 nF ranges
    # 2 × 80 nF = 160 nF to 2 × 180 nF = 360 nF; in series 40 nF to 90 nF (hand-checkable).
    index = build_index([C(1, 100e-9, tol=0.2, tol_plus=0.8)], max_parts=2)
    par = _only(index, "parallel")[0]
    ser = _only(index, "series")[0]
    assert (par.vmin, par.vmax) == (pytest.approx(160e-9), pytest.approx(360e-9))
    assert (ser.vmin, ser.vmax) == (pytest.approx(40e-9), pytest.approx(90e-9))


# --------------------------------------------------------------- laws on random networks

def _random_stock(kind, rng, n=8):
    vals = rng.choice([1.0, 1.5, 2.2, 3.3, 4.7, 6.8], n) * 10.0 ** rng.integers(0, 4, n)
    if kind == "capacitor":
        vals = vals * 1e-9
    out = []
    for i, v in enumerate(vals):
        tm, tp = rng.choice([0.01, 0.05, 0.1, 0.2]), rng.choice([0.01, 0.05, 0.1, 0.8])
        out.append(StockLine(i + 1, kind, float(v), float(tm), float(tp), int(rng.integers(1, 4))))
    return out


@pytest.mark.parametrize("kind", ["resistor", "capacitor"])
def test_series_parallel_laws_and_monte_carlo_inside_worst_case(kind):
    rng = np.random.default_rng(20261202)
    for _ in range(5):
        lines = _random_stock(kind, rng)
        index = build_index(lines, max_parts=3)
        _, ids = index.between([0.0], [math.inf])
        for net in index.networks(rng.choice(ids, size=min(60, len(ids)), replace=False)):
            vals = [p.value for p in net.physical]
            # Laws (resistors): series >= the largest part, parallel <= the smallest part;
            # capacitors the other way round.  Mixed shapes sit between.
            grows = (net.shape in ("series", "series3")) == (kind == "resistor")
            if net.shape in ("series", "series3", "parallel", "parallel3"):
                if grows:
                    assert net.value >= max(vals) * (1 - 1e-12)
                else:
                    assert net.value <= min(vals) * (1 + 1e-12)
            # Monte Carlo: every draw inside the part tolerances lands inside [vmin, vmax]
            n = 4000
            low = np.array([p.value * (1 - p.tol_minus) for p in net.physical])[:, None]
            high = np.array([p.value * (1 + p.tol_plus) for p in net.physical])[:, None]
            draws = low + (high - low) * rng.random((len(vals), n))
            corners = np.array(list(itertools.product(*zip(low[:, 0], high[:, 0])))).T
            out = net.combine(np.concatenate([draws, corners], axis=1))
            assert np.all(out >= net.vmin * (1 - 1e-12))
            assert np.all(out <= net.vmax * (1 + 1e-12))
            assert net.vmin <= net.value <= net.vmax


# --------------------------------------------------------------- polarized capacitors

def test_polarized_capacitors_not_in_series_unless_allowed():
    el = C(1, 10e-6, q=3, tol=0.2, polarized=True, dielectric="electrolytic")
    film = C(2, 1e-6, q=3, tol=0.05, dielectric="film-PP")
    strict = build_index([el, film], max_parts=3)
    _, ids = strict.between([0.0], [math.inf])
    nets = strict.networks(ids)
    assert nets and not any(n.polarized_in_series for n in nets)
    # the polarized part may sit in parallel, also beside a series pair of film parts
    assert any(n.shape == "parallel+series" and n.physical[2].polarized for n in nets)
    loose = build_index([el, film], max_parts=3, allow_polarized_series=True)
    _, ids = loose.between([0.0], [math.inf])
    flagged = [n for n in loose.networks(ids) if n.polarized_in_series]
    # hand-checkable: two 10 µF in series = 5 µF, flagged
    assert any(n.shape == "series" and n.value == pytest.approx(5e-6) for n in flagged)
    assert len(ids) > sum(strict.size_by_parts().values())
    mixed = [n for n in nets if len(n.dielectrics) > 1]
    assert mixed and all(set(n.dielectrics) == {"electrolytic", "film-PP"} for n in mixed)


def test_nearest_networks_convenience_and_boards():
    lines = [R(1, 10e3, q=4), R(2, 2.2e3, q=1)]
    nets = nearest_networks(lines, 12.2e3, k=3)
    # hand-checkable: 10 k + 2.2 k = 12.2 k exactly
    assert nets[0].shape == "series" and nets[0].value == pytest.approx(12.2e3)
    # for 2 boards the single 2.2 k line (1 part) cannot be used at all
    nets2 = nearest_networks(lines, 12.2e3, k=3, boards=2)
    assert all(2 not in n.usage for n in nets2)
    assert all(c * 2 <= 4 for n in nets2 for c in n.usage.values())


# --------------------------------------------------------------- larger stock, 3 parts

def _plain_numpy_enumeration(values: np.ndarray) -> np.ndarray:
    """Every network value of 1-3 resistors from lines of plenty quantity, written out plainly:
    each combination with repetition, every shape (resistor laws)."""
    n = len(values)
    out = [values]
    i, j = np.triu_indices(n)
    a, b = values[i], values[j]
    out += [a + b, a * b / (a + b)]
    combos = np.array(list(itertools.combinations_with_replacement(range(n), 3)))
    x, y, z = (values[combos[:, c]] for c in range(3))
    out += [x + y + z, 1 / (1 / x + 1 / y + 1 / z)]
    # every choice of the single part, each distinct network once: choosing the 2nd (3rd) line
    # as the single one repeats the 1st (2nd) choice when those two lines are the same
    first, second, third = combos[:, 0], combos[:, 1], combos[:, 2]
    for single, p, q, new in ((x, y, z, np.ones(len(x), bool)), (y, x, z, second != first),
                              (z, x, y, third != second)):
        s, p, q = single[new], p[new], q[new]
        out += [s + p * q / (p + q), 1 / (1 / s + 1 / (p + q))]
    return np.concatenate(out)


def test_three_part_nearest_on_a_larger_stock_matches_plain_enumeration():
    # E96 1 kΩ-9.76 kΩ from the general-purpose `eseries` library (an outside reference for
    # IEC 60063), quantity 10 each so every combination is allowed.
    eseries = pytest.importorskip("eseries")
    values = np.array(sorted(float(v) for v in eseries.erange(eseries.E96, 1e3, 9.9e3)))
    assert len(values) == 96
    lines = [R(i + 1, float(v), q=10) for i, v in enumerate(values)]
    index = build_index(lines, max_parts=3)
    every = _plain_numpy_enumeration(values)
    assert len(every) == sum(index.size_by_parts().values())  # each network exactly once
    rng = np.random.default_rng(7)
    targets = np.exp(rng.uniform(np.log(200.0), np.log(40e3), 40))
    got = index.nearest_few(targets, 5)
    for t, row in zip(targets, got):
        want = np.sort(np.abs(np.log(every / t)))[:5]
        mine = np.abs(np.log(index.values(row) / t))
        assert mine == pytest.approx(want, rel=1e-9, abs=1e-15)
