"""The short paths the search takes through the standard astable's timing (``timing``: one RD
for a 1-D array of finite RA; RA, RB and C as equal 1-D arrays) give the very bits of the general
form, so the exact search finds the same options with the same errors whichever path served it.

The general form is reached with the same numbers by passing RD as an array and C as a scalar.
The law itself is checked against a plain per-value evaluation written here (Python floats and
``math.log``), from the discharge law in ``timing`` (derived there: C falls through
RB + RA∥RD toward d = VCC·RD/(RA+RD), from 2VCC/3 to VCC/3) and t_high = ln2·(RA+RB)·C
[S2, S3 bipolar 555 data sheet]; the published checks of that law are in
tests/reference/test_discharge_reference.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from selector.core import timing as T


def _values(seed: int, n: int = 4000):
    rng = np.random.default_rng(seed)
    ra = 10 ** rng.uniform(-1, 7, n)
    # RA at, just above and just below 2·RD of the RDs used below (where L becomes infinite),
    # tiny and negative RA (no physical meaning, still the same bits), huge RA
    edges = [24.0, 24.0 * (1 + 1e-15), 24.0 * (1 - 1e-15), 80.0, 80.0 * (1 + 2e-16), 1e-300, 0.0,
             -3.0, -12.0, -6.0, 1e300, 5e-3, 2e-3]
    ra = np.concatenate([ra, edges])
    rb = 10 ** rng.uniform(-1, 7, ra.size)
    c = 10 ** rng.uniform(-12, -3, ra.size)
    return ra, rb, c


def _same(a, b) -> bool:
    a, b = np.asarray(a), np.asarray(b)
    return a.shape == b.shape and bool(np.all((a == b) | (np.isnan(a) & np.isnan(b))))


@pytest.mark.parametrize("rd", [12.0, 40.0, 1e-3, 3e5])
def test_discharge_terms_short_path_gives_the_general_bits(rd):
    ra, rb, c = _values(int(rd * 1000) % 97)
    with np.errstate(all="ignore"):
        fast = T._discharge_terms(ra, rd)
        general = T._discharge_terms(ra, np.full(ra.shape, rd))
        assert T._discharge_terms_finite(ra, rd) is not None  # the short path did serve ``fast``
        assert _same(fast[0], general[0]) and _same(fast[1], general[1])
        for fn, args in ((T.discharge_low, (ra, rb, c)), (T.discharge_rb_for_low, (rb * c, ra, c))):
            assert _same(fn(*args, rd), fn(*args, np.full(ra.shape, rd)))


def test_discharge_terms_short_path_declines_infinite_ra():
    ra = np.array([1e3, np.inf, 5e3])
    assert T._discharge_terms_finite(ra, 12.0) is None
    par, big_l = T._discharge_terms(ra, 12.0)  # the general form: RA = inf gives (RD, ln 2)
    assert par[1] == 12.0 and big_l[1] == math.log(2.0)


@pytest.mark.parametrize("rd", [0.0, 12.0, 40.0])
def test_standard_times_short_path_gives_the_general_bits(rd):
    ra, rb, c = _values(7 + int(rd))
    with np.errstate(all="ignore"):
        th, tl = T.standard_times(ra, rb, c, rd)
        for i in range(0, ra.size, 97):  # the general form: scalar C (broadcast)
            gh, gl = T.standard_times(ra[i:i + 1], rb[i:i + 1], c[i], np.full(1, rd))
            assert _same(th[i:i + 1], gh) and _same(tl[i:i + 1], gl)


@pytest.mark.parametrize("rd", [0.0, 12.0, 40.0])
def test_standard_times_against_a_plain_evaluation(rd):
    ra, rb, c = _values(3)
    keep = ra > 2 * rd * (1 + 1e-9)  # where the capacitor reaches VCC/3 (t_low finite)
    ra, rb, c = ra[keep & (ra < 1e200)], rb[keep & (ra < 1e200)], c[keep & (ra < 1e200)]
    th, tl = T.standard_times(ra, rb, c, rd)
    for i in range(0, ra.size, 13):
        a, b, cc = float(ra[i]), float(rb[i]), float(c[i])
        want_h = math.log(2.0) * (a + b) * cc
        delta = rd / (a + rd)
        par = a * rd / (a + rd)
        want_l = (b + par) * cc * math.log((2.0 - 3.0 * delta) / (1.0 - 3.0 * delta))
        assert th[i] == pytest.approx(want_h, rel=1e-14)
        assert tl[i] == pytest.approx(want_l, rel=1e-12)
