"""Tolerance analysis: worst-case corners, Monte Carlo draws and build yield.

Outside references: the worked example of facts.md §10 (derived there, Monte Carlo 2×10⁵ runs),
scipy.stats distributions (uniform, normal, truncnorm) and plain exhaustive grids written here.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from scipy import stats

from selector.core import timing as T
from selector.core import tolerance as tol
from selector.core.errors import UnknownDistribution


def astable(ra, rb, c):
    return T.frequency_duty(*T.standard_times(ra, rb, c))


def diode_astable(ra, rb, c, vcc=5.0, vf=0.6):
    return T.frequency_duty(*T.diode_times(ra, rb, c, vcc, vf))


# facts.md §10 worked example: RA = 1 k ±5 %, RB = 10 k ±5 %, C = 100 nF ±10 %.
NOM = [1e3, 10e3, 100e-9]
TOL = [0.05, 0.05, 0.10]


def test_worked_example_nominal_and_worst_case():
    # facts.md §10 (derived): f0 687.00 Hz, D0 52.38 %, worst case +16.96 % (803.5 Hz) and
    # −13.42 % (594.8 Hz), duty range 52.16–52.62 %.
    f0, d0 = (float(x) for x in astable(*NOM))
    assert f0 == pytest.approx(687.00, abs=0.005)
    assert d0 == pytest.approx(0.5238, abs=0.00005)
    lows, highs = tol.band(NOM, TOL, TOL)
    (f_min, d_min), (f_max, d_max) = tol.corners(astable, list(lows), list(highs))
    assert f_max / f0 - 1 == pytest.approx(0.1696, abs=0.00005)
    assert f_min / f0 - 1 == pytest.approx(-0.1342, abs=0.00005)
    assert f_max == pytest.approx(803.5, abs=0.05)
    assert f_min == pytest.approx(594.8, abs=0.05)
    assert d_min == pytest.approx(0.5216, abs=0.00005)
    assert d_max == pytest.approx(0.5262, abs=0.00005)


def test_worked_example_monte_carlo_spread():
    # facts.md §10: uniform σ = 6.40 % linearised, 6.46 % by Monte Carlo (2×10⁵ runs); mean shifted
    # up about +0.4 % (f ∝ 1/C is convex). Normal with tolerance = 3σ (common practice):
    # RSS σ = 3.69 %, MC 3.71 % untruncated; we truncate at ±3σ, which scales σ by
    # scipy.stats.truncnorm(-3, 3).std().
    f0 = float(astable(*NOM)[0])
    n = 200_000
    f_u = tol.monte_carlo(astable, NOM, TOL, TOL, n, tol.rng_for(0), "uniform")[0]
    assert tol.relative_sigma(f_u, f0) == pytest.approx(0.0646, abs=0.0003)
    assert tol.relative_sigma(f_u, f0) > 0.0640
    assert f_u.mean() / f0 - 1 == pytest.approx(0.004, abs=0.0006)
    f_n = tol.monte_carlo(astable, NOM, TOL, TOL, n, tol.rng_for(0), "normal")[0]
    k = stats.truncnorm(-3, 3).std()
    assert tol.relative_sigma(f_n, f0) == pytest.approx(0.0371 * k, rel=0.01)
    assert tol.relative_sigma(f_n, f0) < tol.relative_sigma(f_u, f0)


@pytest.mark.parametrize("distribution", tol.DISTRIBUTIONS)
@pytest.mark.parametrize("fn, nominal, tm, tp", [
    (astable, NOM, TOL, TOL),
    (diode_astable, [10e3, 3e3, 10e-9], [0.05, 0.05, 0.1], [0.05, 0.05, 0.1]),  # piecewise region
    (diode_astable, [10e3, 10e3, 10e-9], [0.01, 0.01, 0.2], [0.01, 0.01, 0.8]),  # −20/+80 % cap
    (lambda r, c: T.monostable_width(r, c), [100e3, 1e-6], [0.01, 0.2], [0.01, 0.2]),
])
def test_worst_case_bounds_contain_every_sample(distribution, fn, nominal, tm, tp):
    lows, highs = tol.band(nominal, tm, tp)
    mins, maxs = tol.corners(fn, list(lows), list(highs))
    samples = tol.monte_carlo(fn, nominal, tm, tp, tol.MIN_SAMPLES, tol.rng_for(3), distribution)
    slack = 1e-12
    assert np.all(samples >= mins[:, None] * (1 - slack))
    assert np.all(samples <= maxs[:, None] * (1 + slack))


def test_corners_equal_exhaustive_grid_for_diode_astable():
    """Plain reference: evaluate on a 7-level grid of every part, one point at a time, and take
    the extremes. The corners must be the exact worst case (monotone model, see corners())."""
    rng = np.random.default_rng(11)
    for _ in range(20):
        ra = 10 ** rng.uniform(3, 5)
        rb = ra * 10 ** rng.uniform(-1.5, 1)          # spans all three diode regions
        c = 10 ** rng.uniform(-9, -6)
        t = rng.uniform(0.01, 0.2, 3)
        lows = [ra * (1 - t[0]), rb * (1 - t[1]), c * (1 - t[2])]
        highs = [ra * (1 + t[0]), rb * (1 + t[1]), c * (1 + t[2])]
        mins, maxs = tol.corners(diode_astable, lows, highs)
        levels = [np.linspace(lo, hi, 7) for lo, hi in zip(lows, highs)]
        ref = [[math.inf, -math.inf], [math.inf, -math.inf]]
        for a, b, cc in itertools.product(*levels):
            f, d = (float(x) for x in diode_astable(a, b, cc))
            for j, v in enumerate((f, d)):
                ref[j][0] = min(ref[j][0], v)
                ref[j][1] = max(ref[j][1], v)
        for j in range(2):
            assert mins[j] == pytest.approx(ref[j][0], rel=1e-12)
            assert maxs[j] == pytest.approx(ref[j][1], rel=1e-12)


def test_corners_vectorised_over_options_equals_loop():
    ra = np.array([1e3, 4.7e3, 22e3])
    rb = np.array([10e3, 1e3, 22e3])
    c = np.array([1e-7, 4.7e-9, 1e-6])
    lows = [ra * 0.99, rb * 0.95, c * 0.9]
    highs = [ra * 1.01, rb * 1.05, c * 1.2]
    mins, maxs = tol.corners(astable, lows, highs)
    assert mins.shape == (2, 3)
    for i in range(3):
        m1, x1 = tol.corners(astable, [l[i] for l in lows], [h[i] for h in highs])
        np.testing.assert_allclose(mins[:, i], m1, rtol=0)
        np.testing.assert_allclose(maxs[:, i], x1, rtol=0)


def test_grid_extremes_finds_interior_extreme_corners_miss():
    # A non-monotone function: corners alone miss the interior maximum at x = 0.
    mins, maxs = tol.corners(lambda x: 1 - x ** 2, [-1.0], [1.0])
    assert float(maxs[0]) == 0.0
    mins, maxs = tol.grid_extremes(lambda x: 1 - x ** 2, [-1.0], [1.0], points=5)
    assert float(maxs[0]) == 1.0


def test_seeded_reproducibility():
    a = tol.draw_parts(NOM, TOL, TOL, 1000, tol.rng_for(42), "normal")
    b = tol.draw_parts(NOM, TOL, TOL, 1000, tol.rng_for(42), "normal")
    c = tol.draw_parts(NOM, TOL, TOL, 1000, tol.rng_for(43), "normal")
    np.testing.assert_array_equal(a, b)
    assert not np.array_equal(a, c)


@pytest.mark.parametrize("distribution", tol.DISTRIBUTIONS)
def test_draws_stay_in_band(distribution):
    nominal = np.array([1e3, 47e-6, 10e3])
    tm = np.array([0.05, 0.2, 0.01])
    tp = np.array([0.05, 0.8, 0.01])
    x = tol.draw_parts(nominal, tm, tp, 50_000, tol.rng_for(5), distribution)
    assert x.shape == (3, 50_000)
    assert np.all(x >= (nominal * (1 - tm))[:, None])
    assert np.all(x <= (nominal * (1 + tp))[:, None])


def test_uniform_draws_follow_scipy_uniform():
    # Kolmogorov–Smirnov against scipy.stats.uniform on the band of a −20/+80 % part.
    x = tol.draw_parts([100.0], [0.2], [0.8], 20_000, tol.rng_for(1), "uniform")[0]
    p = stats.kstest(x, stats.uniform(loc=80.0, scale=100.0).cdf).pvalue
    assert p > 1e-3
    # σ = t/√3 for a symmetric band (facts §10, derived)
    y = tol.draw_parts([1.0], [0.1], [0.1], 200_000, tol.rng_for(2), "uniform")[0]
    assert np.std(y) == pytest.approx(0.1 / math.sqrt(3), rel=0.01)


def test_normal_draws_follow_scipy_truncnorm_per_side():
    # Each side is half of a normal with σ = that side's tolerance / 3 (common practice), cut at
    # the band edge; the median stays at nominal. Compare each half with scipy's truncnorm.
    x = tol.draw_parts([100.0], [0.2], [0.8], 40_000, tol.rng_for(8), "normal")[0]
    assert np.mean(x >= 100.0) == pytest.approx(0.5, abs=0.01)
    upper = (x[x > 100.0] - 100.0) / (80.0 / 3)
    lower = (100.0 - x[x < 100.0]) / (20.0 / 3)
    half = stats.truncnorm(0, 3)          # |z| of a standard normal cut at 3σ
    assert stats.kstest(upper, half.cdf).pvalue > 1e-3
    assert stats.kstest(lower, half.cdf).pvalue > 1e-3


def test_yield_against_plain_count():
    rng = np.random.default_rng(0)
    v = rng.normal(1.0, 0.05, 5000)
    v[::97] = np.nan
    target, accept = 1.01, 0.04
    plain = sum(1 for x in v if x == x and abs(x / target - 1) <= accept) / len(v)
    assert tol.yield_fraction(v, target, accept) == pytest.approx(plain, abs=0)


def test_yield_two_dimensional_targets():
    v = np.array([[0.9, 1.0, 1.1, 1.2], [2.0, 2.1, 2.4, np.inf]])
    got = tol.yield_fraction(v, np.array([1.0, 2.0]), 0.1)
    np.testing.assert_allclose(got, [0.5, 0.5])   # 1.1/1.0−1 = 0.1000…09 > 0.1 in floats


def test_yield_matches_analytic_uniform_and_normal():
    # τ = R·C with an exact R and C ±10 %: uniform → P(|ΔC/C| ≤ 5 %) = 0.5 (derived);
    # normal with 10 % = 3σ, truncated: P(|z| ≤ 1.5 | |z| ≤ 3) from scipy.stats.norm.
    fn = lambda r, c: T.rc_tau(r, c)    # noqa: E731
    for dist, expected in (("uniform", 0.5),
                           ("normal", (2 * stats.norm.cdf(1.5) - 1) / (2 * stats.norm.cdf(3) - 1))):
        s = tol.monte_carlo(fn, [10e3, 1e-6], [0.0, 0.1], [0.0, 0.1], 100_000, tol.rng_for(4), dist)
        assert tol.yield_fraction(s[0], 10e-3, 0.05) == pytest.approx(expected, abs=0.006)


def test_unknown_distribution_message():
    with pytest.raises(UnknownDistribution) as e:
        tol.draw_parts([1.0], [0.1], [0.1], 10, tol.rng_for(), "triangular")
    assert str(e.value) == "unknown distribution 'triangular'; expected one of: uniform, normal"
    assert e.value.exit_code == 2
