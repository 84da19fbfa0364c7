"""The ranking evaluates many options in one model call (issue 12, speed). The laws checked here:
stacking changes no figure. Every listed option's predictions, range, spread, score, yield,
parts-only yield and sample count equal those of a stand-alone ``ranking.evaluate`` of that option
(the plain one-option reference), bit for bit; the Shockley solve on stacked rows gives each row
exactly what it gives alone; ``draw_parts`` is ``scale_draws`` of ``unit_draws``."""

from __future__ import annotations

import numpy as np
import pytest

from selector.core import ranking, timing, tolerance
from demo_stock import e12_demo_stock
from selector.services.find_timing import TimingRequest, _target, plan_timing

def _stock():
    """The shared demo stock with capacitors at 5 % (C0G) and 10 % (X7R)."""
    return e12_demo_stock(((0.05, "C0G"), (0.10, "X7R")))


@pytest.mark.parametrize("fields", [
    dict(mode="astable", freq_hz=1234.0, duty=0.62, seed=3),                           # standard and diode
    dict(mode="astable", freq_hz=987.0, duty=0.35, distribution="normal", seed=11),   # diode only
    dict(mode="monostable", width_s=0.00123, seed=5),
])
def test_listed_options_equal_a_stand_alone_evaluate_in_every_figure(fields):
    r, c = _stock()
    req = TimingRequest(max_parts=2, top=6, **fields)
    report = plan_timing(r, c, req)
    assert report.ranked
    target = _target(req)
    for o in report.ranked:
        alone = ranking.evaluate(o.found, target, report.limits[o.connection], req.accept, req.distribution,
                                 req.samples, req.seed)
        assert o.predicted == alone.predicted
        assert o.range == alone.range
        assert (o.spread, o.score, o.errors, o.asked_error, o.tier) == \
            (alone.spread, alone.score, alone.errors, alone.asked_error, alone.tier)
        assert (o.yield_fraction, o.yield_parts_only, o.yield_samples) == \
            (alone.yield_fraction, alone.yield_parts_only, alone.yield_samples)
        assert o.cautions == alone.cautions
        # an alternative's yield (the same build from other drawers) is the stand-alone yield on
        # the stated, smaller number of builds
        for alt, y in o.alternatives:
            assert y == ranking.evaluate(alt, target, report.limits[o.connection], req.accept, req.distribution,
                                         o.alternative_samples, req.seed, screen=True).yield_fraction
    assert any(o.alternatives for o in report.ranked)  # the check above did run


def test_shockley_on_stacked_rows_equals_each_row_alone():
    """Rows of 1000 samples: alone each takes the small-input path of the charge integral (nodes
    on a leading axis), stacked (4000 samples) the node-by-node path; both sum in the same order."""
    rng = np.random.default_rng(4)
    n, m = 1000, 4
    ra = 10 ** rng.uniform(3, 5, size=(m, 1)) * (1 + 0.05 * (2 * rng.random((m, n)) - 1))
    rb = 10 ** rng.uniform(3, 5, size=(m, 1)) * (1 + 0.05 * (2 * rng.random((m, n)) - 1))
    c = 1e-7 * (1 + 0.1 * (2 * rng.random((m, n)) - 1))
    vf = 0.62 * (1 + 0.05 * (2 * rng.random((m, n)) - 1))
    th, tl = timing.diode_shockley_times(ra, rb, c, 9.0, vf, 1.9, 10.0)
    z = rng.uniform(-5, 60, size=(m, n))
    z[1] = rng.uniform(0, 1, size=n)   # a row that converges in fewer steps than the others
    y = timing.log_wright_omega(z)
    for i in range(m):
        a, b = timing.diode_shockley_times(ra[i], rb[i], c[i], 9.0, vf[i], 1.9, 10.0)
        assert np.array_equal(th[i], a) and np.array_equal(tl[i], b)
        assert np.array_equal(y[i], timing.log_wright_omega(z[i]))


@pytest.mark.parametrize("distribution", ["uniform", "normal"])
def test_draw_parts_is_scaled_unit_draws(distribution):
    nominal, tm, tp = [1e3, 4.7e-8, 2.2e4], [0.05, 0.2, 0.01], [0.05, 0.8, 0.01]
    a = tolerance.draw_parts(nominal, tm, tp, 5000, tolerance.rng_for(21), distribution)
    u = tolerance.unit_draws(3, 5000, tolerance.rng_for(21), distribution)
    assert np.array_equal(a, tolerance.scale_draws(nominal, tm, tp, u, distribution))
