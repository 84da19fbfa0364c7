"""Monte Carlo only for what is listed (issue 12 item 3): contenders are screened on a smaller
sample, variants with the same parts share one run. The law checked here: every listed option's
yield, parts-only yield and sample count are exactly those of a stand-alone full evaluation of that
option with the same seed (ranking.evaluate, no screening, no reuse), and each alternative's yield
is that of a stand-alone run on the stated sample."""

from __future__ import annotations

import math

from selector.core import ranking
from selector.core.tolerance import MIN_SAMPLES
from selector.core.types import StockLine
from selector.services.find_timing import TimingRequest, plan_timing

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063 E12


def _stock():
    """Invented demo stock: E12 resistors 1k-82k in two drawers (1 % and 5 %), E12 capacitors
    10 nF-82 nF; enough contenders that screening happens (more than --top of them)."""
    lines, i = [], 1
    for decade in (1e3, 1e4):
        for m in E12:
            for tol in (0.01, 0.05):
                lines.append(StockLine(i, "resistor", m * decade, tol, tol, 10, location=f"R{i}", rating=0.25))
                i += 1
    for m in E12:
        lines.append(StockLine(i, "capacitor", m * 1e-8, 0.05, 0.05, 10, location=f"C{i}", rating=50.0,
                               dielectric="C0G"))
        i += 1
    return lines


def test_listed_yields_are_the_full_stand_alone_monte_carlo():
    lines = _stock()
    r = [ln for ln in lines if ln.kind == "resistor"]
    c = [ln for ln in lines if ln.kind == "capacitor"]
    req = TimingRequest(mode="astable", freq_hz=1234.0, duty=0.62, connection="auto", max_parts=2, top=5,
                        seed=7)
    report = plan_timing(r, c, req)
    assert len(report.ranked) == 5
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
