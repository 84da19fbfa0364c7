"""``format_display``: frequencies and times as a bench reads them (DESIGN "Output for people"):
never ``mHz`` (read as MHz at a glance) nor ``ks``; the number read back, times its unit, is the
value within the 3-digit rounding. Expected texts below are worked by hand."""

from __future__ import annotations

import re

import pytest
from hypothesis import given, strategies as st

from selector.core.notation import format_display

_SCALE = {"p": 1e-12, "n": 1e-9, "µ": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3, "M": 1e6, "G": 1e9}


@pytest.mark.parametrize("value, unit, text", [
    (0.5, "Hz", "0.5 Hz"),          # not "500 mHz"
    (0.0123, "Hz", "0.0123 Hz"),
    (1200.0, "Hz", "1.2 kHz"),
    (0.15, "s", "150 ms"),
    (999.0, "s", "999 s"),
    (1000.0, "s", "16.7 min"),      # 1000/60 = 16.666...
    (7200.0, "s", "2 h"),           # 7200/3600
    (90 * 60.0, "s", "90 min"),
])
def test_worked_examples(value, unit, text):
    assert format_display(value, unit) == text


def _read_back(text: str) -> float:
    m = re.fullmatch(r"([0-9.]+) (min|h|[pnµmkMG]?(?:Hz|s))", text)
    assert m, text
    number, unit = float(m.group(1)), m.group(2)
    if unit == "min":
        return number * 60.0
    if unit == "h":
        return number * 3600.0
    prefix = unit[:-2] if unit.endswith("Hz") else unit[:-1]
    return number * _SCALE[prefix]


@given(st.floats(min_value=1e-6, max_value=1e8, allow_nan=False, allow_infinity=False),
       st.sampled_from(["Hz", "s"]))
def test_never_millihertz_nor_kiloseconds_and_reads_back(value, unit):
    text = format_display(value, unit)
    assert "mHz" not in text and "ks" not in text and "e" not in text.split(" ")[0]
    assert _read_back(text) == pytest.approx(value, rel=0.005)
