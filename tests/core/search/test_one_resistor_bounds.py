"""The one-resistor pass with 3-part resistor networks (``_Pass.run1``: a first bound, the value
sweep, then the capacitor networks in order of a lower bound) finds the same best error as the
plain exhaustive reference of test_search_exact.py (``reference_best``: every option scored),
with each of its first bounds forced on small stocks: the bound from the 1-2 part networks over
every capacitor network, the same from a spread subset of them, and the fallback to a sample of
exact look-ups when the first gives none."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import selector.core.networks.nearest as nearest
import selector.core.search.kernels as sk
from selector.core.search import Target
from test_search_exact import _SETTINGS, _check, cases

CONNECTIONS = st.sampled_from(["monostable", "rc", "output-fed"])


def _one_resistor_case(case, connection):
    """A drawn monostable case with the connection's target (as test_search_exact does), 3-part
    networks and a pool of at most 2."""
    r_lines, c_lines, target, lim, _max_parts, boards, pool = case
    if connection == "rc":
        target = Target("rc", tau=target.width)
    elif connection == "output-fed":
        target = Target("astable", t_high=target.width, t_low=target.width * 0.9)
    return r_lines, c_lines, target, lim, 3, boards, min(pool, 2)


def _forced(case, connection, pairs_bound_c=None, no_pairs_bound=False):
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(sk, "PHASE1_SAMPLE", 2)  # the ordered path from 5 capacitor networks on
        patch.setattr(nearest, "SWEEP_MAX_SHARE", 1.0)  # the sweep never gives up
        if pairs_bound_c is not None:
            patch.setattr(sk, "PAIRS_BOUND_C", pairs_bound_c)
        if no_pairs_bound:
            patch.setattr(sk._Pass, "_pairs_bound", lambda self, pool: math.inf)
        _check(_one_resistor_case(case, connection), connection)


@settings(**_SETTINGS)
@given(cases("monostable", max_parts_max=3), CONNECTIONS)
def test_bound_from_a_subset_of_the_pairs_is_exact(case, connection):
    """The 1-2 part bound from 3 capacitor networks only (a spread subset)."""
    _forced(case, connection, pairs_bound_c=3)


@settings(**_SETTINGS)
@given(cases("monostable", max_parts_max=3), CONNECTIONS)
def test_fallback_to_the_sampled_bound_is_exact(case, connection):
    """No bound from the 1-2 part networks: the sample of exact look-ups gives it."""
    _forced(case, connection, no_pairs_bound=True)
