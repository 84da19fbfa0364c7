"""``NetworkIndex.values_within`` (the value sweep the 3-part branch and bound reads) against the
plain exhaustive enumeration (tests/reference_networks.py): every network value inside one of
the intervals comes back, and nothing comes back that is not the value of a real network (the
quantity rule and, with ``all_networks=False``, the token-part rule applied). Random small
stocks, narrow intervals around network values (the sweep's coarse-then-fine marks) and wide
ones (one level of marks); the give-up share is raised so the sweep always runs."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, seed
from hypothesis import strategies as st

import selector.core.networks.nearest as nearest
from selector.core.networks import build_index
from reference_networks import enumerate_all
from test_networks_exact import SETTINGS, stocks

REL = 1e-12  # the reference sums in another order: its values may differ in the last bits


def _near(sorted_vals: np.ndarray, v: float) -> bool:
    i = int(np.searchsorted(sorted_vals, v))
    near = sorted_vals[max(i - 1, 0):i + 1]
    return bool(near.size) and bool(np.any(np.abs(near / v - 1) <= REL))


@seed(20261212)
@SETTINGS
@given(stocks(), st.booleans(), st.data())
def test_every_network_value_in_the_intervals_comes_back(case, all_networks, data):
    kind, lines, _max_parts, boards, allow = case
    ref = enumerate_all(lines, 3, boards, allow_polarized_series=allow, all_networks=all_networks)
    if not ref:
        return
    values = sorted(r.value for r in ref)
    centres = data.draw(st.lists(st.sampled_from(values), min_size=1, max_size=5))
    narrow = data.draw(st.booleans())
    if narrow:  # about one network per interval: many fine bins, the coarse marks in front
        widths = data.draw(st.lists(st.floats(1e-9, 1e-5), min_size=len(centres), max_size=len(centres)))
    else:
        widths = data.draw(st.lists(st.floats(0.01, 3.0), min_size=len(centres), max_size=len(centres)))
    shift = data.draw(st.floats(-0.5, 0.5))  # intervals not always centred on a value
    lo = np.array([c * (1 - w * (1 - shift)) for c, w in zip(centres, widths)])
    hi = np.array([c * (1 + w * (1 + shift)) for c, w in zip(centres, widths)])
    lo = np.maximum(lo, np.array(centres) * 1e-3)
    index = build_index(lines, max_parts=3, boards=boards, allow_polarized_series=allow,
                        all_networks=all_networks)
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(nearest, "SWEEP_MAX_SHARE", 1.0)
        got = index.values_within(lo, hi)
    assert got is not None
    assert np.all(np.diff(got) >= 0)
    for v in values:  # every value inside an interval (clear of its ends by more than rounding)
        inside = np.any((v >= lo * (1 + REL)) & (v <= hi * (1 - REL)))
        if inside:
            assert _near(got, v), f"network value {v!r} inside an interval is missing"
    ref_sorted = np.array(values)
    for v in got:  # and only values of real networks
        assert _near(ref_sorted, float(v)), f"{v!r} is no network's value"


def test_the_symmetric_shapes_are_swept_once_per_network():
    """Hand-checked: three 1 kΩ lines (one part each) make exactly one series3 network (3 kΩ) and
    one parallel3 network (333.3 Ω), and three of each mixed shape (which line stands alone); the
    sweep returns each network once (derived: R1 + R2 + R3, 1/(1/R1 + 1/R2 + 1/R3))."""
    from selector.core.types import StockLine

    lines = [StockLine(i + 1, "resistor", 1e3, 0.01, 0.01, 1) for i in range(3)]
    index = build_index(lines, max_parts=3, kind="resistor")
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(nearest, "SWEEP_MAX_SHARE", 1.0)
        got = index.values_within(np.array([100.0]), np.array([1e4]))
    three = [v for v in got if not np.any(np.isclose(v, [500.0, 1e3, 2e3], rtol=1e-12))]
    # 1k + (1k ∥ 1k) = 1.5 kΩ and 1k ∥ (1k + 1k) = 666.7 Ω, once for each line standing alone
    assert sorted(three) == pytest.approx([1e3 / 3] + [2e3 / 3] * 3 + [1.5e3] * 3 + [3e3], rel=1e-12)
