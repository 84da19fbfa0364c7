"""The token-part rule in the network index (``all_networks=False``) against the plain exhaustive
enumeration with the rule written out joint by joint (tests/reference_networks.py ``token_ok``):
the same set of networks, the same counts, the same nearest look-ups, for 1-3 parts, resistors
and capacitors. The rule itself is the project's own (issue 11, item 1): each branch's share of a
joint's sum at least half the largest tolerance under the joint."""

from __future__ import annotations

import math

import numpy as np
from hypothesis import given, seed
from hypothesis import strategies as st

from selector.core.networks import build_index
from selector.core.types import StockLine
from reference_networks import enumerate_all, network_key, token_ok
from test_networks_exact import SETTINGS, check_nearest_few, stocks


def _index(lines, max_parts, boards, allow, kind):
    return build_index(lines, max_parts=max_parts, boards=boards, allow_polarized_series=allow,
                       kind=kind, all_networks=False)


@seed(20261203)
@SETTINGS
@given(stocks())
def test_same_networks_and_counts_as_the_reference_with_the_rule(case):
    kind, lines, max_parts, boards, allow = case
    ref = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow, kind=kind, all_networks=False)
    ix = _index(lines, max_parts, boards, allow, kind)
    _off, ids = ix.between(np.array([0.0]), np.array([math.inf]))
    got = sorted(network_key(ix.network(int(i))) for i in ids)
    assert got == sorted(network_key(n) for n in ref)
    counts = ix.size_by_parts()
    for n in range(1, max_parts + 1):
        assert counts[n] == sum(1 for r in ref if r.nparts == n)
    # and the rule really removes something whenever the reference without it differs
    everything = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow, kind=kind)
    assert len(everything) - len(ref) == sum(1 for n in everything if not token_ok(n))


@seed(20261204)
@SETTINGS
@given(stocks(), st.lists(st.floats(min_value=0.2, max_value=3000.0), min_size=1, max_size=4),
       st.integers(min_value=1, max_value=4))
def test_nearest_few_and_sides_match_the_reference_with_the_rule(case, raw_targets, k):
    kind, lines, max_parts, boards, allow = case
    scale = 1.0 if kind == "resistor" else 1e-9
    targets = np.array(raw_targets) * scale
    ref = enumerate_all(lines, max_parts, boards, allow_polarized_series=allow, kind=kind, all_networks=False)
    ix = _index(lines, max_parts, boards, allow, kind)
    check_nearest_few(ix, ref, targets, k)
    below, above = ix.nearest_sides(targets, k)
    for row, t in enumerate(targets):
        want_b = sorted((t - n.value for n in ref if n.value <= t))[:k]
        have_b = [t - ix.values(np.array([i]))[0] for i in below[row] if i >= 0]
        assert np.allclose(have_b, want_b, rtol=1e-9, atol=1e-21)
        want_a = sorted((n.value - t for n in ref if n.value >= t))[:k]
        have_a = [ix.values(np.array([i]))[0] - t for i in above[row] if i >= 0]
        assert np.allclose(have_a, want_a, rtol=1e-9, atol=1e-21)


def test_hand_checked_pairs():
    """47 Ω + 39 kΩ of 5 % parts: the small part's share is 47/39047 = 0.12 % < 2.5 %, left out;
    10 kΩ + 4.7 kΩ (share 32 %) and 47 Ω ∥ 39 kΩ's other side are worked the same way by hand."""
    lines = [StockLine(1, "resistor", 47.0, 0.05, 0.05, 5), StockLine(2, "resistor", 39e3, 0.05, 0.05, 5),
             StockLine(3, "resistor", 10e3, 0.05, 0.05, 5), StockLine(4, "resistor", 4.7e3, 0.05, 0.05, 5)]
    ix = build_index(lines, max_parts=2, kind="resistor", all_networks=False)
    offered = {(n.shape, tuple(sorted(p.value for p in n.physical)))
               for n in ix.networks(range(len(ix)))}
    assert ("series", (47.0, 39e3)) not in offered
    assert ("parallel", (47.0, 39e3)) not in offered  # conductance share of 39 kΩ: 0.12 %
    assert ("series", (4.7e3, 10e3)) in offered and ("parallel", (4.7e3, 10e3)) in offered
    assert ("series", (10e3, 39e3)) in offered  # 10/49 = 20 % >= 2.5 %
    everything = build_index(lines, max_parts=2, kind="resistor")
    assert len(everything) - len(ix) == 6  # 47 Ω with each of the three others, both joints
