"""The notation edge refuses every number outside the documented ranges (README "Accepted
ranges", selector.core.notation.RANGES) with one line naming the text, the quantity and the range,
and never lets a decimal/int conversion error escape: huge exponents (decimal.Overflow on
"1e999999k" used to crash), thousands of digits, inf/nan, digits of other scripts.

The ranges are our own documented choice, not an outside fact; the checks below test that the
documented edges are where the code puts them."""

from __future__ import annotations

import math

import pytest
from hypothesis import example, given, settings, strategies as st

from selector.core.errors import UnparseableValue
from selector.core.notation import (
    FARAD, HERTZ, OHM, RANGES, SECOND, VOLT, WATT, parse_fraction, parse_marked_value, parse_rating,
    parse_tolerance, parse_value, quoted,
)

THOUSANDS = "9" * 5000


@pytest.mark.parametrize("text, kind, unit, message", [
    ("1e999999k", "resistor", OHM,
     '"1e999999k" is out of range for a resistance: expected 1 mΩ to 1 TΩ (1e-3 to 1e12 Ω)'),
    ("1e999999n", "capacitor", FARAD,
     '"1e999999n" is out of range for a capacitance: expected 1 fF to 10000 F (1e-15 to 1e4 F)'),
    ("1e999999k", None, HERTZ, '"1e999999k" is out of range for a frequency: expected 1e-15 to 1e12 Hz'),
    ("1e999999k", None, VOLT, '"1e999999k" is out of range for a voltage: expected 1e-15 to 1e12 V'),
    ("1e999999k", None, SECOND, '"1e999999k" is out of range for a time: expected 1e-15 to 1e12 s'),
    ("1e308", "resistor", OHM,
     '"1e308" is out of range for a resistance: expected 1 mΩ to 1 TΩ (1e-3 to 1e12 Ω)'),
    ("1e-999999999999", None, HERTZ,
     '"1e-999999999999" is out of range for a frequency: expected 1e-15 to 1e12 Hz'),
    (THOUSANDS, "resistor", OHM,
     f'"{THOUSANDS[:32]}…" (5000 characters) is out of range for a resistance: expected 1 mΩ to 1 TΩ (1e-3 to 1e12 Ω)'),
    ("1" * 400 + "K7", "resistor", OHM,  # an RKM code with 400 digits before the letter
     f'"{"1" * 32}…" (402 characters) is out of range for a resistance: expected 1 mΩ to 1 TΩ (1e-3 to 1e12 Ω)'),
])
def test_out_of_range_values_are_one_line_naming_the_range(text, kind, unit, message):
    with pytest.raises(UnparseableValue) as err:
        parse_value(text, kind, unit)
    assert str(err.value) == message
    assert "\n" not in str(err.value)


@pytest.mark.parametrize("text", ["inf", "-inf", "nan", "NaN", "Infinity", "1e", "١٠k", "１００", "𝟏𝟎",
                                  "0x10", "1_000", "1e999999e5", "\x1b[31m5"])
def test_non_numbers_and_other_scripts_digits_are_refused(text):
    with pytest.raises(UnparseableValue) as err:
        parse_value(text, "resistor", OHM)
    assert str(err.value).startswith(f"cannot read {quoted(text)} as a resistance")


@pytest.mark.parametrize("unit, inside, outside", [
    (OHM, ("1m", "1e12", "1000G"), ("0.999m", "1.001e12", "1e-4")),
    (FARAD, ("0.001p", "1e4", "1e-15"), ("0.0009p", "1.0001e4", "1e-16")),
    (HERTZ, ("1e-15", "1e12"), ("9e-16", "1.01e12")),
    (WATT, ("1e-15", "1e12"), ("9e-16", "2e12")),
])
def test_range_edges_are_where_documented(unit, inside, outside):
    kind = {OHM: "resistor", FARAD: "capacitor"}.get(unit)
    low, high, _ = RANGES[unit]
    for text in inside:
        v = parse_value(text, kind, unit)
        assert low <= v <= high, text
    for text in outside:
        with pytest.raises(UnparseableValue, match="out of range"):
            parse_value(text, kind, unit)


def test_zero_and_minus_zero_read_as_plain_zero():
    for text in ("0", "-0", "0.000", "-0e5"):
        v = parse_value(text, unit=HERTZ)
        assert v == 0 and math.copysign(1.0, v) == 1.0, text  # never -0.0


@pytest.mark.parametrize("text, kind, message", [
    ("1" * 400 + "/1W", "resistor",
     f'"{"1" * 32}…" (403 characters) is out of range for a resistor power rating: expected 1e-15 to 1e12 W'),
    ("1/" + THOUSANDS, "resistor",  # no int() of 5000 digits (Python refuses past 4300)
     '"1/999999999999999999999999999999…" (5002 characters) is out of range for a resistor power rating: '
     "expected 1e-15 to 1e12 W"),
    ("1e999999V", "capacitor",
     '"1e999999V" is out of range for a capacitor voltage rating: expected 1e-15 to 1e12 V'),
    ("9" * 400 + "V3", "capacitor",
     f'"{"9" * 32}…" (402 characters) is out of range for a capacitor voltage rating: expected 1e-15 to 1e12 V'),
])
def test_ratings_are_finite_and_in_range(text, kind, message):
    with pytest.raises(UnparseableValue) as err:
        parse_rating(text, kind)
    assert str(err.value) == message


def test_quoted_cuts_long_text_to_its_start_and_length():
    assert quoted("4k7") == '"4k7"'
    assert quoted("x" * 40) == '"' + "x" * 40 + '"'
    assert quoted("x" * 41) == '"' + "x" * 32 + '…" (41 characters)'
    assert quoted("a\nb\x1b[31m\x9b") == '"a\\x0ab\\x1b[31m\\x9b"'  # one printable line


# --- the law: any text is either a finite in-range number or one UnparseableValue line ---------

_EXTREME = st.one_of(
    st.builds(lambda e, s: f"1e{e}{s}", st.integers(300, 10**12), st.sampled_from(["", "k", "M", "n", "p", "Hz", "V"])),
    st.builds(lambda e, s: f"1e-{e}{s}", st.integers(300, 10**12), st.sampled_from(["", "k", "u", "F"])),
    st.builds(lambda n, s: "9" * n + s, st.integers(20, 6000), st.sampled_from(["", "k", "R", "K7", "/1W", "%"])),
    st.sampled_from(["inf", "nan", "-0", "+inf", "Infinity", "-1e999999", "١٠٠", "１００", "1e999999/1W", ""]),
    st.text(max_size=30),
)


@settings(max_examples=300, deadline=None)
@given(text=_EXTREME, kind=st.sampled_from(["resistor", "capacitor", None]))
@example(text="1e999999k", kind=None)
@example(text="4k7\n\x1b[2J", kind="resistor")
def test_any_text_is_a_finite_ranged_value_or_one_refusal(text, kind):
    unit = {"resistor": OHM, "capacitor": FARAD}.get(kind)
    for read, key in ((lambda: parse_value(text, kind, unit), unit), (lambda: parse_value(text, None, HERTZ), HERTZ),
                      (lambda: parse_marked_value(text, kind or "resistor")[0], unit or OHM)):
        try:
            v = read()
        except UnparseableValue as err:
            assert "\n" not in str(err) and len(str(err)) <= 300  # user text is quoted short
            continue
        low, high, _ = RANGES[key]
        assert v == 0 or low <= v <= high


@settings(max_examples=200, deadline=None)
@given(text=_EXTREME, kind=st.sampled_from(["resistor", "capacitor"]))
def test_any_text_is_a_finite_rating_tolerance_fraction_or_one_refusal(text, kind):
    for read in (lambda: (parse_rating(text, kind),), lambda: parse_tolerance(text, kind, 1e-9),
                 lambda: (parse_fraction(text),)):
        try:
            numbers = read()
        except UnparseableValue as err:
            assert "\n" not in str(err) and len(str(err)) <= 300
            continue
        assert all(math.isfinite(x) and 0 <= x <= 1e12 for x in numbers)
