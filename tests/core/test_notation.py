"""Value notation: reading and writing values, tolerances, ratings and fractions.

Sources named beside the checks: IEC 60062 letter-and-digit (RKM) code [S10], capacitor marking
and tolerance-code pages [S11], a metal-film resistor specification [S17] (tags as in
shared/reference/facts.md sections 8.2-8.4). Expected values are written literally or built in
the test from the printed rule (the letter stands for the decimal point), never with the code
under test.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.core.errors import UnparseableValue
from selector.core.notation import (
    FARAD,
    HERTZ,
    OHM,
    SECOND,
    VOLT,
    WATT,
    format_rkm,
    format_tolerance,
    format_value,
    infer_kind,
    parse_fraction,
    parse_marked_value,
    parse_rating,
    parse_tolerance,
    parse_value,
)

# IEC 60063 E24 decade (facts.md section 9 [S9]), written as text so the test can build the
# RKM spelling by string rules alone.
E24_TEXT = (
    "1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 3.3 3.6 3.9 4.3 4.7 5.1 5.6 6.2 6.8 7.5 8.2 9.1"
).split()
E96_TEXT = (
    "1.00 1.02 1.05 1.07 1.10 1.13 1.15 1.18 1.21 1.24 1.27 1.30 1.33 1.37 1.40 1.43 1.47 1.50 "
    "1.54 1.58 1.62 1.65 1.69 1.74 1.78 1.82 1.87 1.91 1.96 2.00 2.05 2.10 2.15 2.21 2.26 2.32 "
    "2.37 2.43 2.49 2.55 2.61 2.67 2.74 2.80 2.87 2.94 3.01 3.09 3.16 3.24 3.32 3.40 3.48 3.57 "
    "3.65 3.74 3.83 3.92 4.02 4.12 4.22 4.32 4.42 4.53 4.64 4.75 4.87 4.99 5.11 5.23 5.36 5.49 "
    "5.62 5.76 5.90 6.04 6.19 6.34 6.49 6.65 6.81 6.98 7.15 7.32 7.50 7.68 7.87 8.06 8.25 8.45 "
    "8.66 8.87 9.09 9.31 9.53 9.76"
).split()  # IEC 60063 E96 decade [S9], checked against the eseries package in test_eseries.py


def _rkm_cases():
    """(text, kind, expected) for every E24 member in several decades, by the IEC 60062 rule:
    1.0 x letter-decade -> '1<L>0', 10 -> '10<L>', 100 -> '100<L>' [S10]."""
    cases = []
    for m in E24_TEXT:
        whole, frac = m.split(".")
        two = str(int(whole + frac))           # "4.7" -> "47"
        for letter, exp, kind in (("R", 0, "resistor"), ("K", 3, "resistor"), ("M", 6, "resistor"),
                                  ("p", -12, "capacitor"), ("n", -9, "capacitor"),
                                  ("u", -6, "capacitor"), ("µ", -6, "capacitor")):
            cases.append((f"{whole}{letter}{frac}", kind, float(f"{m}e{exp}")))     # 4K7
            cases.append((f"{two}{letter}", kind, float(f"{m}e{exp + 1}")))         # 47K
            cases.append((f"{two}0{letter}", kind, float(f"{m}e{exp + 2}")))        # 470K
        cases.append((f"R{whole}{frac}", "resistor", float(f"{m}e-1")))             # R47 = 0.47
    return cases


@pytest.mark.parametrize("text, kind, expected", _rkm_cases())
def test_every_e24_value_in_rkm_reads_back(text, kind, expected):
    # IEC 60062 RKM code: the letter replaces the decimal point and gives the multiplier [S10]
    assert parse_value(text, kind) == expected
    assert parse_value(text) == expected


@pytest.mark.parametrize(
    "text, expected",
    [
        # printed examples of the RKM code [S10]
        ("R47", 0.47), ("4R7", 4.7), ("470R", 470.0), ("4K7", 4.7e3), ("47K", 47e3),
        ("47K3", 47.3e3), ("4M7", 4.7e6), ("R10", 0.1), ("2M2", 2.2e6), ("1K0", 1e3),
        ("15M0", 15e6), ("R300", 0.3),
        # the same rule applied (facts.md 8.4, derived from the rule)
        ("2R2", 2.2), ("M47", 470e3), ("K47", 470.0), ("1M5", 1.5e6),
        ("0R47", 0.47), ("0R1", 0.1),  # common practice (shop and BOM usage)
        ("1G0", 1e9), ("4L7", 4.7e-3),
        ("4k7", 4.7e3),  # lower-case k is common practice for kilo
    ],
)
def test_resistor_rkm_examples(text, expected):
    assert parse_value(text, "resistor") == expected


@pytest.mark.parametrize(
    "text, expected",
    [
        ("10p", 10e-12), ("4n7", 4.7e-9), ("1µ0", 1e-6),  # printed examples [S10]
        ("2p2", 2.2e-12), ("p68", 0.68e-12), ("u22", 0.22e-6), ("u47", 0.47e-6),  # rule [S10]
        ("\u00b5" "47", 0.47e-6), ("\u03bc" "47", 0.47e-6),  # micro sign and Greek mu
        ("1m5", 1.5e-3), ("1F5", 1.5),
        ("4R7", 4.7e-12),  # R as decimal point in pF below 10 pF (facts.md 8.3, from memory)
    ],
)
def test_capacitor_rkm_examples(text, expected):
    assert parse_value(text, "capacitor") == expected


@pytest.mark.parametrize(
    "text, kind, unit, expected",
    [
        ("4700", None, None, 4700.0), ("4.7e3", None, None, 4700.0), ("1e-7", None, None, 1e-7),
        ("4.7k", None, None, 4.7e3), ("4.7 kΩ", None, None, 4.7e3), ("4.7kohm", None, None, 4.7e3),
        ("4.7 kohms", "resistor", None, 4.7e3), ("4.7 k Ω", "resistor", None, 4.7e3),
        ("4.7KΩ", None, OHM, 4.7e3), ("470 Ω", "resistor", None, 470.0), ("470Ω", None, None, 470.0),
        ("470 ohm", None, None, 470.0), ("47 Ohms", None, None, 47.0), ("4.7R", None, None, 4.7),
        ("4.7 k\u2126", None, None, 4.7e3),  # the ohm sign U+2126
        ("10n", None, None, 10e-9), ("10 nF", None, None, 10e-9), ("0.01u", None, None, 0.01e-6),
        ("2.2\u00b5F", None, None, 2.2e-6), ("2.2\u03bcF", None, None, 2.2e-6), ("2.2uF", None, None, 2.2e-6),
        ("2.2 uf", "capacitor", None, 2.2e-6), ("100pF", "capacitor", None, 100e-12),
        ("1M", "resistor", None, 1e6), ("1M", None, None, 1e6), ("1meg", None, None, 1e6),
        ("1MEG", "resistor", None, 1e6), ("2.2 Mohm", None, None, 2.2e6),
        ("1m", "capacitor", None, 1e-3), ("1mF", None, None, 1e-3), ("1 mF", "capacitor", None, 1e-3),
        ("470m", "resistor", None, 0.47), ("470 mΩ", None, None, 0.47),
        ("150ms", None, None, 0.15), ("150 ms", None, SECOND, 0.15), ("10us", None, SECOND, 10e-6),
        ("2 s", None, SECOND, 2.0), ("2.5kHz", None, None, 2500.0), ("2.5 khz", None, HERTZ, 2500.0),
        ("1MHz", None, HERTZ, 1e6), ("50 mHz", None, HERTZ, 0.05), ("9V", None, None, 9.0),
        ("9 V", None, VOLT, 9.0), ("250mW", None, WATT, 0.25), ("  4.7k  ", None, None, 4.7e3),
        (".47", "resistor", None, 0.47), ("+100", None, None, 100.0), ("0R", "resistor", None, 0.0), ("-0", None, None, 0.0),
        ("1.5e-6", "capacitor", None, 1.5e-6), ("4.7E-9", "capacitor", None, 4.7e-9),
        ("0.000047", "capacitor", None, 47e-6),  # a plain decimal below 1 mF is farads
        ("4k7Ω", "resistor", None, 4.7e3), ("4n7F", "capacitor", None, 4.7e-9),
    ],
)
def test_numbers_prefixes_and_units(text, kind, unit, expected):
    assert parse_value(text, kind, unit) == expected


@pytest.mark.parametrize(
    "text, expected",
    [
        # EIA three-digit code: two significant digits, then the number of zeros, in pF [S11]
        ("104", 100e-9), ("103", 10e-9), ("102", 1e-9), ("101", 100e-12), ("100", 10e-12),
        ("222", 2.2e-9), ("470", 47e-12), ("473", 47e-9), ("105", 1e-6), ("335", 3.3e-6),
        ("010", 1e-12), ("047", 4.7e-12),  # leading-zero forms in one stored table [S11]
        # multiplier 8 and 9 mean x0.01 and x0.1: the trade's rule (facts.md 8.3, from memory)
        ("109", 1.0e-12), ("479", 4.7e-12), ("228", 0.22e-12),
        ("107", 100e-6),  # multiplier 7 as on tantalum parts (from memory)
        ("47", 47e-12), ("10", 10e-12),  # a two-digit marking reads directly in pF [S11]
    ],
)
def test_capacitor_codes(text, expected):
    assert parse_value(text, "capacitor") == pytest.approx(expected, rel=1e-15)


def test_codes_apply_only_to_capacitors():
    assert parse_value("470", "resistor") == 470.0
    assert parse_value("470") == 470.0
    assert parse_value("104", unit=FARAD) == 104.0  # no kind: plain SI farads


@pytest.mark.parametrize(
    "text, kind, unit, message",
    [
        ("4k7k", "resistor", None,
         'cannot read "4k7k" as a resistance: expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
        ("10nF", "resistor", None,
         'cannot read "10nF" as a resistance: it is written in farads; expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
        ("4n7", "resistor", None,
         'cannot read "4n7" as a resistance: "n" is a capacitance letter; expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
        ("10n", "resistor", None,
         'cannot read "10n" as a resistance: the prefix "n" belongs to a capacitance; expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
        ("4K7", "capacitor", None,
         'cannot read "4K7" as a capacitance: "K" is a resistance letter; expected e.g. 100n, 4n7, 0.1uF, 100 nF, 104'),
        ("1M", "capacitor", None,
         'cannot read "1M" as a capacitance: "M" is ambiguous for a capacitance; write u, µ or m; '
         "expected e.g. 100n, 4n7, 0.1uF, 100 nF, 104"),
        ("0.1", "capacitor", None,
         'cannot read "0.1" as a capacitance: a bare number on a capacitor is ambiguous; give a prefix '
         "or unit (100n, 0.1uF), a 3-digit code (104) or farads with an exponent (1e-7); "
         "expected e.g. 100n, 4n7, 0.1uF, 100 nF, 104"),
        ("10mf", "capacitor", None,
         'cannot read "10mf" as a capacitance: "mf" is ambiguous (old marking for microfarads); write uF, '
         "or mF for millifarads; expected e.g. 100n, 4n7, 0.1uF, 100 nF, 104"),
        ("", "resistor", None,
         'cannot read "" as a resistance: it is empty; expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
        ("-4.7k", "resistor", None,
         'cannot read "-4.7k" as a resistance: it is negative; expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
        ("150ms", None, HERTZ,
         'cannot read "150ms" as a frequency: it is written in seconds; expected e.g. 2500, 2.5k, 2.5 kHz'),
        ("3 mhz", None, None,
         'cannot read "3 mhz" as a value: "mhz" could be millihertz or megahertz; write mHz or MHz; '
         "expected e.g. 4.7k, 100n, 150ms, 2.5 kHz"),
        ("4 7k", "resistor", None,
         'cannot read "4 7k" as a resistance: expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
        ("1e999", None, None,
         '"1e999" is out of range for a value: expected 1e-15 to 1e12'),
        ("1e-999", "resistor", None,
         '"1e-999" is out of range for a resistance: expected 1 mΩ to 1 TΩ (1e-3 to 1e12 Ω)'),
    ],
)
def test_refusals_quote_the_text_and_say_what_was_expected(text, kind, unit, message):
    with pytest.raises(UnparseableValue) as err:
        parse_value(text, kind, unit)
    assert str(err.value) == message


@pytest.mark.parametrize(
    "text",
    ["abc", "4.7.1k", "4K7K", "1,5k", "k", "4700", "1", "nan", "inf", "4.7x", "1MF", "1f", "4.7kF", "4M7"],
)
def test_more_capacitor_refusals(text):
    with pytest.raises(UnparseableValue) as err:
        parse_value(text, "capacitor")
    assert f'"{text}"' in str(err.value) and "capacitance" in str(err.value)


def test_kind_and_unit_must_agree_when_both_given():
    with pytest.raises(ValueError):
        parse_value("1k", "resistor", FARAD)
    with pytest.raises(ValueError):
        parse_value("1k", "inductor")


@pytest.mark.parametrize(
    "text, kind",
    [
        ("10nF", "capacitor"), ("2.2 µF", "capacitor"), ("100pF", "capacitor"), ("1mF", "capacitor"),
        ("4n7", "capacitor"), ("2p2", "capacitor"), ("u47", "capacitor"), ("µ47", "capacitor"),
        ("10n", "capacitor"), ("1m5", "capacitor"),
        ("4K7", "resistor"), ("4k7", "resistor"), ("2R2", "resistor"), ("R47", "resistor"),
        ("1M", "resistor"), ("470R", "resistor"), ("4.7 kΩ", "resistor"), ("10 ohm", "resistor"),
        ("4.7k", "resistor"), ("1meg", "resistor"),
        ("4700", None), ("104", None), ("1e-7", None), ("470m", None), ("150ms", None),
        ("9V", None), ("2.5kHz", None), ("junk", None), ("", None),
    ],
)
def test_infer_kind(text, kind):
    # Upper case usually resistance, lower case capacitance (IEC 60062 [S10])
    assert infer_kind(text) == kind


# --- tolerances ---------------------------------------------------------------------------

@pytest.mark.parametrize(
    "text, kind, value, expected",
    [
        ("5%", None, None, (0.05, 0.05)), ("±5 %", None, None, (0.05, 0.05)),
        ("+/-5%", None, None, (0.05, 0.05)), ("+-1 %", None, None, (0.01, 0.01)),
        ("0.05", None, None, (0.05, 0.05)), ("5", None, None, (0.05, 0.05)),
        ("1", "resistor", None, (0.01, 0.01)), ("0.5%", None, None, (0.005, 0.005)),
        ("-20/+80%", None, None, (0.20, 0.80)), ("+80/-20 %", None, None, (0.20, 0.80)),
        ("-10+50%", None, None, (0.10, 0.50)), ("- 20 % / + 80 %", None, None, (0.20, 0.80)),
        ("−20/+80 %", None, None, (0.20, 0.80)),  # U+2212 minus sign
        ("-0.1/+0.5", None, None, (0.10, 0.50)),  # bare numbers below 1 are fractions
        # IEC 60062 letters as percent: capacitor pages [S11] and resistor specification [S17]
        ("B", "resistor", None, (0.001, 0.001)), ("C", "resistor", None, (0.0025, 0.0025)),
        ("D", "resistor", None, (0.005, 0.005)), ("F", "resistor", None, (0.01, 0.01)),
        ("G", "resistor", None, (0.02, 0.02)), ("J", "resistor", None, (0.05, 0.05)),
        ("K", "resistor", None, (0.10, 0.10)), ("j", "resistor", None, (0.05, 0.05)),
        ("J", "capacitor", 100e-9, (0.05, 0.05)), ("K", "capacitor", 100e-9, (0.10, 0.10)),
        ("M", "capacitor", 100e-9, (0.20, 0.20)), ("N", "capacitor", 100e-9, (0.30, 0.30)),
        ("F", "capacitor", 100e-9, (0.01, 0.01)),  # 10 pF and above: percent [S11]
        ("G", "capacitor", 10e-12, (0.02, 0.02)),
        ("Z", "capacitor", None, (0.20, 0.80)), ("S", "capacitor", None, (0.20, 0.50)),  # [S11]
        ("P", "capacitor", None, (0.0, 1.0)),  # +100/-0 % (EIA usage) [S11]
        ("P", "resistor", None, (0.0002, 0.0002)),  # ±0.02 % (IEC 60062; from memory)
        ("W", "resistor", None, (0.0005, 0.0005)), ("L", "resistor", None, (0.0001, 0.0001)),
        # below 10 pF, B C D F G are absolute pF (facts.md 8.2 parser rule; pF sense of F and G
        # from memory)
        ("C", "capacitor", 4.7e-12, (0.25 / 4.7, 0.25 / 4.7)),
        ("B", "capacitor", 1e-12, (0.1, 0.1)), ("D", "capacitor", 2.2e-12, (0.5 / 2.2, 0.5 / 2.2)),
        ("±0.25 pF", "capacitor", 5e-12, (0.05, 0.05)),
    ],
)
def test_tolerances(text, kind, value, expected):
    minus, plus = parse_tolerance(text, kind, value)
    assert minus == pytest.approx(expected[0], rel=1e-12, abs=1e-15)
    assert plus == pytest.approx(expected[1], rel=1e-12, abs=1e-15)


@pytest.mark.parametrize(
    "text, kind, value, fragment",
    [
        ("E", "resistor", None, "the letter E means ±0.5 %, ±0.25 % or ±0.005 % in different tables"),
        ("H", None, None, "the letter H means ±3 % or ±2.5 % in different tables"),
        ("A", "capacitor", 1e-6, "the letter A means"),
        ("P", None, None, "say which kind"),
        ("C", "capacitor", None, "it needs the capacitance"),
        ("Z", "resistor", None, "the letter Z is a capacitor tolerance letter"),
        ("W", "capacitor", 1e-6, "the letter W is a resistor tolerance letter"),
        ("Q", None, None, "Q is not a tolerance letter"),
        ("100%", None, None, "the minus side must be below 100 %"),
        ("-10/+150%", None, None, "the plus side must be at most +100 %"),
        ("+10/+20%", None, None, "one minus and one plus side"),
        ("±0.25 pF", "capacitor", None, "needs the capacitance"),
        ("five", None, None, "not a percentage, fraction or tolerance letter"),
        ("", None, None, "it is empty"),
    ],
)
def test_tolerance_refusals(text, kind, value, fragment):
    with pytest.raises(UnparseableValue) as err:
        parse_tolerance(text, kind, value)
    msg = str(err.value)
    assert msg.startswith(f'cannot read "{text}" as ')
    assert fragment in msg
    assert msg.endswith("expected e.g. 5%, ±5 %, 0.05, J, -20/+80%")


@pytest.mark.parametrize(
    "minus, plus, text",
    [(0.05, 0.05, "±5 %"), (0.2, 0.8, "-20/+80 %"), (0.005, 0.005, "±0.5 %"), (0.0025, 0.0025, "±0.25 %"),
     (0.0, 1.0, "-0/+100 %"), (0.1, 0.5, "-10/+50 %"), (0.0002, 0.0002, "±0.02 %"), (0.01, 0.01, "±1 %")],
)
def test_format_tolerance_and_back(minus, plus, text):
    assert format_tolerance(minus, plus) == text
    assert parse_tolerance(text) == pytest.approx((minus, plus), rel=1e-12, abs=1e-15)


# --- fractions and ratings -----------------------------------------------------------------

@pytest.mark.parametrize(
    "text, expected",
    [("65%", 0.65), ("65 %", 0.65), ("0.65", 0.65), ("5%", 0.05), ("0.05", 0.05), ("100%", 1.0),
     ("0", 0.0), ("0%", 0.0), (".5", 0.5), ("12.5 %", 0.125)],
)
def test_fractions(text, expected):
    assert parse_fraction(text) == expected


@pytest.mark.parametrize(
    "text, message",
    [
        ("5", 'cannot read "5" as a fraction: a bare number must be below 1; write "5%" for percent, or e.g. 0.65'),
        ("1", 'cannot read "1" as a fraction: a bare number must be below 1; write "1%" for percent, or e.g. 0.65'),
        ("150%", 'cannot read "150%" as a fraction: it is above 100 %; expected e.g. 65%, 0.65'),
        ("-5%", 'cannot read "-5%" as a fraction: expected e.g. 65%, 0.65'),
        ("half", 'cannot read "half" as a fraction: expected e.g. 65%, 0.65'),
    ],
)
def test_fraction_refusals(text, message):
    with pytest.raises(UnparseableValue) as err:
        parse_fraction(text)
    assert str(err.value) == message


@pytest.mark.parametrize(
    "text, kind, expected",
    [
        # through-hole power classes 1/8 ... 3 W [S17]
        ("0.25", "resistor", 0.25), ("1/4W", "resistor", 0.25), ("1/4 W", "resistor", 0.25),
        ("0.25 W", "resistor", 0.25), ("250mW", "resistor", 0.25), ("1/8", "resistor", 0.125),
        ("2W", "resistor", 2.0), ("1/2 w", "resistor", 0.5),
        ("50", "capacitor", 50.0), ("50V", "capacitor", 50.0), ("6.3 V", "capacitor", 6.3),
        ("1kV", "capacitor", 1000.0), ("6V3", "capacitor", 6.3), ("50VDC", "capacitor", 50.0),
        ("25 WV", "capacitor", 25.0), ("16 v", "capacitor", 16.0),
    ],
)
def test_ratings(text, kind, expected):
    assert parse_rating(text, kind) == expected


@pytest.mark.parametrize(
    "text, kind, message",
    [
        ("50V", "resistor", 'cannot read "50V" as a resistor power rating: it is written in volts; '
                            "expected e.g. 0.25, 1/4W, 0.25 W, 250mW"),
        ("0.25W", "capacitor", 'cannot read "0.25W" as a capacitor voltage rating: it is written in watts; '
                               "expected e.g. 50, 50V, 6.3 V, 6V3, 1kV"),
        ("0", "resistor", 'cannot read "0" as a resistor power rating: it must be above zero; '
                          "expected e.g. 0.25, 1/4W, 0.25 W, 250mW"),
        ("250VAC", "capacitor", 'cannot read "250VAC" as a capacitor voltage rating: an AC rating is not '
                                "a DC working voltage; expected e.g. 50, 50V, 6.3 V, 6V3, 1kV"),
        ("1/0W", "resistor", 'cannot read "1/0W" as a resistor power rating: division by zero; '
                             "expected e.g. 0.25, 1/4W, 0.25 W, 250mW"),
        ("lots", "capacitor", 'cannot read "lots" as a capacitor voltage rating: expected e.g. 50, 50V, 6.3 V, 6V3, 1kV'),
    ],
)
def test_rating_refusals(text, kind, message):
    with pytest.raises(UnparseableValue) as err:
        parse_rating(text, kind)
    assert str(err.value) == message


# --- writing ------------------------------------------------------------------------------

@pytest.mark.parametrize(
    "value, unit, text",
    [
        (4700, OHM, "4.7 kΩ"), (1e-7, FARAD, "100 nF"), (0.15, SECOND, "150 ms"), (2500, HERTZ, "2.5 kHz"),
        (47, OHM, "47 Ω"), (0.47, OHM, "470 mΩ"), (2.2e-6, FARAD, "2.2 µF"), (1e6, OHM, "1 MΩ"),
        (999.6, OHM, "1 kΩ"), (12345, OHM, "12.3 kΩ"), (9.0, VOLT, "9 V"), (0.25, WATT, "250 mW"),
        (0, OHM, "0 Ω"), (4700, "", "4.7 k"), (47, "", "47"), (1e-15, FARAD, "0.001 pF"),
        (1e-6, OHM, "0.001 mΩ"), (2.0, FARAD, "2 F"), (1e12, OHM, "1000 GΩ"), (-0.15, SECOND, "-150 ms"),
        (687.0, HERTZ, "687 Hz"), (6.8e-13, FARAD, "0.68 pF"), (math.inf, HERTZ, "∞ Hz"),
    ],
)
def test_format_value(value, unit, text):
    assert format_value(value, unit) == text


@pytest.mark.parametrize(
    "value, kind, text",
    [
        (4700, "resistor", "4K7"), (470, "resistor", "470R"), (0.47, "resistor", "R47"),
        (1000, "resistor", "1K0"), (47e3, "resistor", "47K"), (47.3e3, "resistor", "47K3"),
        (2.2e6, "resistor", "2M2"), (4.99e3, "resistor", "4K99"), (0, "resistor", "0R"),
        (4.7e-9, "capacitor", "4n7"), (1e-6, "capacitor", "1µ0"), (6.8e-13, "capacitor", "p68"),
        (100e-9, "capacitor", "100n"), (10e-12, "capacitor", "10p"), (2.2e-12, "capacitor", "2p2"),
    ],
)
def test_format_rkm(value, kind, text):
    # forms printed as IEC 60062 examples or following its rule [S10]
    assert format_rkm(value, kind) == text


UNIT_AND_KIND = [(OHM, "resistor"), (FARAD, "capacitor"), (SECOND, None), (HERTZ, None), (VOLT, None), (WATT, None)]
DECADES = {OHM: range(-2, 10), FARAD: range(-13, 0)}


@settings(max_examples=400, deadline=None)
@given(
    member=st.sampled_from(E24_TEXT + E96_TEXT),
    exponent=st.integers(min_value=-13, max_value=9),
    pair=st.sampled_from(UNIT_AND_KIND),
)
def test_e_series_values_round_trip_exactly(member, exponent, pair):
    unit, kind = pair
    if unit in DECADES and exponent not in DECADES[unit]:
        exponent = DECADES[unit][len(DECADES[unit]) // 2]
    v = float(f"{member}e{exponent}")
    text = format_value(v, unit)
    assert "e" not in text.lower().replace("meg", "")  # never scientific notation
    assert parse_value(text, unit=unit) == v
    if kind is not None:
        assert parse_value(text, kind) == v
        assert parse_value(format_rkm(v, kind), kind) == v


@settings(max_examples=400, deadline=None)
@given(
    v=st.floats(min_value=1e-12, max_value=1e9, allow_nan=False, allow_infinity=False),
    unit=st.sampled_from([SECOND, HERTZ, VOLT, WATT, ""]),
)
def test_any_value_round_trips_within_three_digit_rounding(v, unit):
    # documented bound: 3 significant digits -> relative error at most 0.5 %
    back = parse_value(format_value(v, unit), unit=unit or None)
    assert abs(back - v) <= 0.005 * v * (1 + 1e-12)


@settings(max_examples=300, deadline=None)
@given(v=st.floats(min_value=1e-3, max_value=1e9), kind=st.sampled_from(["resistor", "capacitor"]))
def test_parts_round_trip_within_three_digit_rounding(v, kind):
    if kind == "capacitor":
        v = v * 1e-12  # 1 fF ... 1 mF
    unit = OHM if kind == "resistor" else FARAD
    for text in (format_value(v, unit), format_rkm(v, kind)):
        back = parse_value(text, kind)
        assert abs(back - v) <= 0.005 * v * (1 + 1e-12), text


@pytest.mark.parametrize(
    "text, kind, value, tolerance",
    [
        ("4K7J", "resistor", 4.7e3, (0.05, 0.05)),   # trailing tolerance letter (facts.md 8.4, from memory)
        ("104K", "capacitor", 100e-9, (0.10, 0.10)),  # "104K": the letter after a code is the tolerance [S11]
        ("47K", "capacitor", 47e-12, (0.10, 0.10)),   # two-digit pF marking + K [S11]
        ("47K", "resistor", 47e3, None),              # whole text reads as a value first
        ("4n7J", "capacitor", 4.7e-9, (0.05, 0.05)),
        ("1K0F", "resistor", 1e3, (0.01, 0.01)),
        ("2p2C", "capacitor", 2.2e-12, (0.25 / 2.2, 0.25 / 2.2)),  # below 10 pF: ±0.25 pF [S11]
        ("473Z", "capacitor", 47e-9, (0.20, 0.80)),
        ("100nF", "capacitor", 100e-9, None),
    ],
)
def test_marked_values(text, kind, value, tolerance):
    got_value, got_tol = parse_marked_value(text, kind)
    assert got_value == pytest.approx(value, rel=1e-15)
    if tolerance is None:
        assert got_tol is None
    else:
        assert got_tol == pytest.approx(tolerance, rel=1e-12)


def test_marked_value_refusals_quote_the_whole_marking():
    with pytest.raises(UnparseableValue) as err:
        parse_marked_value("104E", "capacitor")
    assert str(err.value).startswith('cannot read "104E" as a capacitor tolerance: the letter E means')
    with pytest.raises(UnparseableValue) as err:
        parse_marked_value("1M", "capacitor")
    assert str(err.value).startswith('cannot read "1M" as a capacitance: "M" is ambiguous')


def test_negative_zero_reads_as_plain_zero():
    assert math.copysign(1.0, parse_value("-0")) == 1.0
