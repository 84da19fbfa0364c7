"""The one-resistor pass with 3-part resistor networks (``_Pass.run1``: a first bound, the value
sweep, then the capacitor networks in order of a lower bound) finds the same best error as the
plain exhaustive reference of test_search_exact.py (``reference_best``: every option scored),
with each of its first bounds forced on small stocks: the bound from the 1-2 part networks over
every capacitor network, the same from a spread subset of them, and the fallback to a sample of
exact look-ups when the first gives none."""

from __future__ import annotations

import math

import numpy as np
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


@settings(**_SETTINGS)
@given(st.sampled_from(["monostable", "rc", "rc-corner", "output-fed"]),
       st.lists(st.floats(1e-10, 1e-4), min_size=1, max_size=6), st.floats(1e-9, 0.3),
       st.floats(0.5, 2.0))
def test_window_holds_every_r_within_the_bound(kind_key, c_values, margin, duty_ratio):
    """``_window1`` against a plain scan of the circuit's own error on a fine grid of R on each
    side of R*: every R whose |error| is within the bound lies inside the window, and the window
    ends within its stated tolerance of the last such R (the grid is refined near each end)."""
    from selector.core import circuits
    from selector.core.search import resolve_limits

    conn = "rc" if kind_key.startswith("rc") else kind_key
    lim = resolve_limits(conn, "bipolar", 9.0, 0.65)
    if kind_key == "monostable":
        target = Target("monostable", width=1e-3)
    elif kind_key == "rc":
        target = Target("rc", tau=1e-3)
    elif kind_key == "rc-corner":
        target = Target("rc", tau=1 / (2 * math.pi * 200.0), corner_hz=200.0)
    else:
        target = Target("astable", t_high=1e-3, t_low=1e-3 * duty_ratio)
    p = sk._Bound(circuits.get(conn), target, lim)
    c = np.array(c_values)
    r_star = np.asarray(p.r_ideal(c), dtype=float)
    floor = float(np.min(np.abs(p.error1(r_star, c)[0])))
    bound = floor + margin  # the smallest error any c reaches, plus some room
    wl, wh = sk._window1(p, r_star, c, bound)
    tol = sk._WINDOW_TOL
    for i in range(c.size):
        e_star = abs(float(p.error1(r_star[i:i + 1], c[i:i + 1])[0][0]))
        if e_star > bound:
            assert wl[i] > wh[i]  # empty: even R* misses the bound
            continue
        for sign, end in ((-1.0, wl[i]), (1.0, wh[i])):
            x_end = abs(math.log(end / r_star[i]))
            # a grid out to three times the end, fine around the end, and out to 30 x the margin
            x = np.unique(np.concatenate([np.linspace(0, 3 * x_end, 3001), np.linspace(0, 30 * margin, 3001),
                                          np.linspace(x_end * (1 - 5 * tol), x_end * (1 + 5 * tol), 2001)]))
            e = np.abs(p.error1(r_star[i] * np.exp(sign * x), np.full(x.size, c[i]))[0])
            assert np.all(x[e <= bound] <= x_end * (1 + 1e-12))  # nothing within the bound left out
            # and not much wider than needed: just inside the end the error is within the bound
            x_near = x_end - 2 * max(tol * x_end, sk._WINDOW_ABS)
            if x_near <= 0:
                continue
            e_near = abs(float(p.error1(np.array([r_star[i] * math.exp(sign * x_near)]), c[i:i + 1])[0][0]))
            assert e_near <= bound
