"""Monte Carlo only for what is listed (issue 12 item 3): contenders are screened on a smaller
sample, variants with the same parts share one run. The law checked here: every listed option's
yield, parts-only yield and sample count are exactly those of a stand-alone full evaluation of that
option with the same seed (ranking.evaluate, no screening, no reuse), and each alternative's yield
is that of a stand-alone run on the stated sample."""

from __future__ import annotations

import math

import pytest

from selector.core import ranking
from selector.core.tolerance import MIN_SAMPLES
from selector.core.yield_runs import YieldRuns
from demo_stock import e12_demo_stock
from selector.services.find_timing import TimingRequest, plan_timing

def _stock():
    """The shared demo stock (C0G capacitors at 5 %); more contenders than --top."""
    r, c = e12_demo_stock()
    return r + c


@pytest.mark.parametrize("top, samples", [(2, 50_000), (10, 10_000)])
def test_listed_yields_are_the_full_stand_alone_monte_carlo(top, samples, monkeypatch):
    # top=2 with 50 000 builds: screening the contenders first saves builds, so they are; top=10:
    # the screen would cut next to nothing, so every contender gets the full sample at once
    lines = _stock()
    r = [ln for ln in lines if ln.kind == "resistor"]
    c = [ln for ln in lines if ln.kind == "capacitor"]
    screens = []
    many = YieldRuns.many
    monkeypatch.setattr(YieldRuns, "many", lambda self, founds, n: screens.append(n) or many(self, founds, n))
    req = TimingRequest(mode="astable", freq_hz=1234.0, duty=0.62, connection="auto", max_parts=2, top=top,
                        seed=7, samples=samples)
    report = plan_timing(r, c, req)
    assert len(report.ranked) == top
    assert (screens[0] == ranking.SCREEN_SAMPLES < req.samples) == (top == 2)   # the first run is the screen
    seen_alternative = False
    for o in report.ranked:
        limits = report.limits[o.connection]
        alone = ranking.evaluate(o.found, report_target(report), limits, req.accept, req.distribution,
                                 req.samples, req.seed)
        assert o.yield_fraction == alone.yield_fraction
        assert o.yield_parts_only == alone.yield_parts_only
        assert o.yield_samples == alone.yield_samples >= MIN_SAMPLES
        for variant, y in o.alternatives:
            seen_alternative = True
            alt = ranking.evaluate(variant, report_target(report), limits, req.accept, req.distribution,
                                   o.alternative_samples, req.seed, screen=True)
            assert y == alt.yield_fraction and alt.yield_samples == o.alternative_samples
    assert seen_alternative  # the two drawers per value give every build other variants


def test_binomial_standard_error():
    # sqrt(y(1 - y)/n): y = 0.9, n = 10 000 -> 0.003 (worked by hand)
    assert math.isclose(ranking.binomial_se(0.9, 10_000), 0.003, rel_tol=1e-12)
    assert math.isnan(ranking.binomial_se(math.nan, 10_000)) and math.isnan(ranking.binomial_se(0.5, 0))


def report_target(report):
    """The Target object the search used (rebuilt from the request the same way plan_timing does)."""
    from selector.services.find_timing import _target

    return _target(report.request)
