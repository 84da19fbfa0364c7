"""IEC 60063 E-series tables and look-ups, checked against the standard as quoted in
shared/reference/facts.md section 9 (source tag [S9]) and against the `eseries` package (a
general-purpose preferred-number library, used here only as an independent reference)."""

from __future__ import annotations

import math

import eseries
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.core.eseries import (
    SERIES,
    SERIES_TOLERANCE,
    nearest_in_series,
    series_key,
    series_values,
)
from selector.core.errors import UnparseableValue

# IEC 60063 Table 1, as quoted in facts.md section 9 [S9] (literal, not computed).
IEC_E3 = (1.0, 2.2, 4.7)
IEC_E6 = (1.0, 1.5, 2.2, 3.3, 4.7, 6.8)
IEC_E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
IEC_E24 = (
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
    3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
)

ESERIES_KEY = {
    "E3": eseries.E3, "E6": eseries.E6, "E12": eseries.E12, "E24": eseries.E24,
    "E48": eseries.E48, "E96": eseries.E96, "E192": eseries.E192,
}


def test_table_one_series_are_the_printed_values():
    # IEC 60063 Table 1 [S9]
    assert SERIES["E3"] == IEC_E3
    assert SERIES["E6"] == IEC_E6
    assert SERIES["E12"] == IEC_E12
    assert SERIES["E24"] == IEC_E24


def test_series_have_their_counts_and_stay_in_one_decade():
    # IEC 60063: EN has N members per decade, 1 <= v < 10, strictly increasing [S9]
    for name, values in SERIES.items():
        assert len(values) == int(name[1:])
        assert values[0] == 1.0 and values[-1] < 10.0
        assert all(a < b for a, b in zip(values, values[1:]))


def test_e24_departs_from_the_formula_at_exactly_eight_historical_places():
    # facts.md section 9 [S9]: round(10**(i/24), 1) gives 2.6 2.9 3.2 3.5 3.8 4.2 4.6 8.3 at
    # i = 10..16 and 22, where the standard has 2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2.
    formula = [round(10 ** (i / 24), 1) for i in range(24)]
    differ = [i for i in range(24) if formula[i] != SERIES["E24"][i]]
    assert differ == [10, 11, 12, 13, 14, 15, 16, 22]
    assert [formula[i] for i in differ] == [2.6, 2.9, 3.2, 3.5, 3.8, 4.2, 4.6, 8.3]
    assert [SERIES["E24"][i] for i in differ] == [2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]


def test_table_two_series_follow_the_formula_except_e192_9_20():
    # facts.md section 9 [S9]: E48/E96/E192 are round(10**(i/N), 2) with one exception,
    # E192 i = 185 is 9.20 (the formula gives 9.19).
    for n in (48, 96, 192):
        values = SERIES[f"E{n}"]
        for i in range(n):
            expected = 9.20 if (n == 192 and i == 185) else round(10 ** (i / n), 2)
            assert values[i] == expected, (n, i)
    assert round(10 ** (185 / 192), 2) == 9.19
    assert 9.20 in SERIES["E192"] and 9.19 not in SERIES["E192"]


def test_every_second_member_makes_the_coarser_series():
    # IEC 60063 [S9]: E48 = every 2nd E96, E96 = every 2nd E192, E12 = every 2nd E24, E6 = every
    # 2nd E12 (and E3 = every 2nd E6, from the printed lists).
    assert SERIES["E48"] == SERIES["E96"][::2]
    assert SERIES["E96"] == SERIES["E192"][::2]
    assert SERIES["E12"] == SERIES["E24"][::2]
    assert SERIES["E6"] == SERIES["E12"][::2]
    assert SERIES["E3"] == SERIES["E6"][::2]


def test_e96_begins_and_ends_as_printed():
    # facts.md section 9, E96 decade as printed [S9]
    assert SERIES["E96"][:12] == (1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30)
    assert SERIES["E96"][-4:] == (9.09, 9.31, 9.53, 9.76)


@pytest.mark.parametrize("name", list(ESERIES_KEY))
def test_tables_match_the_eseries_package(name):
    # Reference library `eseries`: series() gives the members as integers (10, 22, 47 / 100 ... 976)
    digits = 10 if int(name[1:]) <= 24 else 100
    ours = [round(v * digits) for v in SERIES[name]]
    assert ours == list(eseries.series(ESERIES_KEY[name]))


@pytest.mark.parametrize("name", [n for n in ESERIES_KEY if n != "E3"])
def test_tolerances_match_the_standard_and_the_package(name):
    # facts.md section 9 [S9]: E6 20 %, E12 10 %, E24 5 %, E48 2 %, E96 1 %, E192 0.5 %;
    # the `eseries` package gives the same figures.
    printed = {"E6": 0.20, "E12": 0.10, "E24": 0.05, "E48": 0.02, "E96": 0.01, "E192": 0.005}
    assert SERIES_TOLERANCE[name] == printed[name]
    assert SERIES_TOLERANCE[name] == pytest.approx(eseries.tolerance(ESERIES_KEY[name]))


@pytest.mark.parametrize("name", list(ESERIES_KEY))
@pytest.mark.parametrize("low, high", [(1.0, 1e6), (0.1, 10.0), (1e-12, 1e-3), (4.7e3, 4.7e3), (0.95, 1.05)])
def test_series_values_match_eseries_erange(name, low, high):
    # Reference library `eseries.erange` (inclusive of both ends)
    expected = list(eseries.erange(ESERIES_KEY[name], low, high))
    ours = series_values(name, low, high)
    assert len(ours) == len(expected)
    for a, b in zip(ours, expected):
        assert a == pytest.approx(b, rel=1e-12)


def test_series_values_are_clean_floats_and_inclusive():
    # A member in any decade is the float of its decimal writing (4.7e3, not 4699.999...).
    values = series_values("E24", 1.0, 1e7)
    assert 4700.0 in values and 2.2e6 in values and 10e6 in values
    for v in values:
        assert v == float(f"{v:.2g}")
    for v in series_values("E192", 1e-12, 1e-9):
        assert v == float(f"{v:.3g}")
    assert series_values("E12", 4.7e3, 4.7e3) == [4700.0]
    assert series_values("E12", 4.8e3, 5.5e3) == []
    assert series_values("E12", 10.0, 1.0) == []
    assert series_values("e12", 1.0, 10.0) == [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2, 10.0]


def test_unknown_series_is_refused_with_the_known_names():
    with pytest.raises(UnparseableValue) as err:
        series_values("E25", 1, 10)
    assert str(err.value) == 'unknown E-series "E25": expected one of E3, E6, E12, E24, E48, E96, E192'
    with pytest.raises(UnparseableValue):
        nearest_in_series(1.0, "R10")
    assert series_key(" e96 ") == "E96"


@pytest.mark.parametrize("bad", [0.0, -1.0, math.inf, math.nan])
def test_nearest_refuses_values_with_no_log(bad):
    with pytest.raises(UnparseableValue):
        nearest_in_series(bad, "E24")


@pytest.mark.parametrize(
    "x, name, expected",
    [
        (46.8e3, "E96", 46.4e3),   # charger data sheet: "the closest standard value, 46.4 kΩ" [S22]
        (5.00e3, "E24", 5.1e3),    # facts.md 11.2 (derived)
        (5.00e3, "E12", 4.7e3),    # facts.md 11.2 (derived)
        (5.14e3, "E12", 5.6e3),    # facts.md 11.2: by ratio 5.6 k (an absolute rule gives 4.7 k)
        (7.2e3, "E24", 7.5e3),     # facts.md 11.2 (derived)
        (7.2e3, "E12", 6.8e3),     # facts.md 11.2 (derived)
        (0.95, "E24", 0.91),       # facts.md 11.2: decade crossing downwards
        (0.95, "E12", 1.0),        # facts.md 11.2: decade crossing upwards
        (9.195, "E192", 9.20),     # facts.md 11.2: the table holds 9.20, not 9.19 [S9]
    ],
)
def test_nearest_value_cases_from_the_reference(x, name, expected):
    assert nearest_in_series(x, name) == expected


def _brute_nearest(x: float, name: str) -> float:
    """Plain exhaustive reference: every member of 30 decades, smallest |ln(x/v)|."""
    best, best_d = None, math.inf
    for e in range(-15, 15):
        for m in SERIES[name]:
            v = float(f"{m}e{e}")
            d = abs(math.log(x / v))
            if d < best_d:
                best, best_d = v, d
    return best


@settings(max_examples=300, deadline=None)
@given(
    mantissa=st.floats(min_value=1.0, max_value=10.0, exclude_max=True),
    exponent=st.integers(min_value=-12, max_value=9),
    name=st.sampled_from(list(SERIES)),
)
def test_nearest_equals_exhaustive_log_search(mantissa, exponent, name):
    x = mantissa * 10.0 ** exponent
    assert nearest_in_series(x, name) == pytest.approx(_brute_nearest(x, name), rel=1e-12)


@settings(max_examples=200, deadline=None)
@given(
    mantissa=st.floats(min_value=1.0, max_value=10.0, exclude_max=True),
    exponent=st.integers(min_value=-9, max_value=6),
    name=st.sampled_from([n for n in ESERIES_KEY]),
)
def test_nearest_is_one_of_the_eseries_brackets(mantissa, exponent, name):
    # Reference library `eseries`: the members just below and just above x; the nearest by ratio
    # is whichever of the two has the smaller |ln| distance (facts.md section 9 metric).
    x = mantissa * 10.0 ** exponent
    key = ESERIES_KEY[name]
    below = eseries.find_less_than_or_equal(key, x)
    above = eseries.find_greater_than_or_equal(key, x)
    expected = below if abs(math.log(x / below)) <= abs(math.log(above / x)) else above
    assert nearest_in_series(x, name) == pytest.approx(expected, rel=1e-12)
