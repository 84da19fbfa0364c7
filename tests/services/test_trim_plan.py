"""The trimmer pass inside the timing plan (services.find_timing.plan_timing): offered unasked only
when the best fixed option's yield is below the 90 % threshold (issue 14), always with --trim,
numbered after the fixed options without counting against --top. Random small stocks (invented
demo data); the yields are the plan's own Monte Carlo, the threshold is the issue's."""

from __future__ import annotations

import random

import pytest

from selector.core.types import StockLine
from selector.services.find_timing import TimingRequest, plan_timing

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)


def _stock(rng: random.Random):
    rs = [StockLine(1 + i, "resistor", rng.choice(E12) * 10 ** rng.randint(2, 5), t, t, 4)
          for i, t in enumerate(rng.choice((0.01, 0.05)) for _ in range(rng.randint(4, 8)))]
    cs = [StockLine(50 + i, "capacitor", rng.choice((1.0, 2.2, 4.7, 10.0)) * 1e-6, t, t, 3,
                    dielectric="film", rating=63.0)
          for i, t in enumerate(rng.choice((0.02, 0.1, 0.2)) for _ in range(rng.randint(1, 3)))]
    ts = [StockLine(80 + i, "trimmer", v, 0.2, 0.2, 2, location="T1", rating=0.5)
          for i, v in enumerate((1e3, 10e3, 100e3))]
    return rs, cs, ts


@pytest.mark.parametrize("seed", range(6))
def test_unasked_only_below_the_threshold_and_forced_by_the_flag(seed):
    rng = random.Random(seed)
    rs, cs, ts = _stock(rng)
    req = dict(mode="monostable", width_s=rng.uniform(0.01, 1.0), top=3, samples=10_000)
    plain = plan_timing(rs, cs, TimingRequest(**req), None, ts)  # every seed here has a fixed option
    fixed = [o for o in plain.options if not o["adjustable"]]
    offered = [o for o in plain.options if o["adjustable"]]
    best = max(o["yield"] for o in fixed)
    if offered:
        assert best < 0.90
    forced = plan_timing(rs, cs, TimingRequest(trim=True, **req), None, ts)
    assert [o for o in forced.options if not o["adjustable"]] == fixed
    assert len(fixed) <= 3 and len(forced.options) <= len(fixed) + 3
    assert [o["rank"] for o in forced.options] == list(range(1, len(forced.options) + 1))
    if best < 0.90:  # below the threshold the unasked pass is the forced one
        assert offered == [o for o in forced.options if o["adjustable"]]
    else:
        assert not offered
    assert forced.params.get("trim") is True and "trim" not in plain.params


def test_no_trimmer_lines_no_trimmer_options():
    rng = random.Random(3)
    rs, cs, _ts = _stock(rng)
    rep = plan_timing(rs, cs, TimingRequest(mode="monostable", width_s=0.2, trim=True), None, ())
    assert not any(o["adjustable"] for o in rep.options)


def test_a_tight_stock_gets_no_unasked_trimmer_but_the_flag_forces_one():
    """1 % parts hitting the width exactly: yield above 90 %, so no trimmer unless asked.
    Width = ln3·R·C [S3, S5]: 10 kΩ and 10 µF give ln3 × 0.1 s."""
    import math

    rs = [StockLine(i + 1, "resistor", v, 0.01, 0.01, 5) for i, v in enumerate((10e3, 4.7e3, 5.6e3, 2.2e3))]
    cs = [StockLine(20, "capacitor", 10e-6, 0.01, 0.01, 5, dielectric="film", rating=63.0)]
    ts = [StockLine(30, "trimmer", 10e3, 0.2, 0.2, 2, location="T1", rating=0.5)]
    req = dict(mode="monostable", width_s=math.log(3.0) * 0.1, top=3)
    plain = plan_timing(rs, cs, TimingRequest(**req), None, ts)
    assert max(o["yield"] for o in plain.options) >= 0.90
    assert not any(o["adjustable"] for o in plain.options)
    forced = plan_timing(rs, cs, TimingRequest(trim=True, **req), None, ts)
    assert any(o["adjustable"] for o in forced.options)
