"""IEC 60063 preferred-number series (E3 ... E192) as data, and look-ups over them.

The decade tables below are written out literally as printed in IEC 60063 (Table 1: E3-E24 with
two significant digits; Table 2: E48-E192 with three). They are NOT computed: E6/E12/E24 differ
from round(10**(i/N), 1) at eight historical places (2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2), and E192
has 9.20 where the formula would give 9.19 (IEC 60063; shared/reference/facts.md section 9).

Pure module: standard library only. Values are SI floats (ohms or farads, the series are the
same for both); a member of the series in any decade is the nearest float to its decimal
writing, e.g. 4.7e3, never 4699.999...
"""

from __future__ import annotations

import math
from decimal import Decimal

from selector.core.errors import UnparseableValue

# One decade, 1.0 <= v < 10, as printed in IEC 60063 (Table 1 and Table 2).
SERIES: dict[str, tuple[float, ...]] = {
    "E3": (1.0, 2.2, 4.7),
    "E6": (1.0, 1.5, 2.2, 3.3, 4.7, 6.8),
    "E12": (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2),
    "E24": (
        1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
        3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
    ),
    "E48": (
        1.00, 1.05, 1.10, 1.15, 1.21, 1.27, 1.33, 1.40, 1.47, 1.54, 1.62, 1.69, 1.78, 1.87,
        1.96, 2.05, 2.15, 2.26, 2.37, 2.49, 2.61, 2.74, 2.87, 3.01, 3.16, 3.32, 3.48, 3.65,
        3.83, 4.02, 4.22, 4.42, 4.64, 4.87, 5.11, 5.36, 5.62, 5.90, 6.19, 6.49, 6.81, 7.15,
        7.50, 7.87, 8.25, 8.66, 9.09, 9.53,
    ),
    "E96": (
        1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30, 1.33, 1.37,
        1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74, 1.78, 1.82, 1.87, 1.91,
        1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32, 2.37, 2.43, 2.49, 2.55, 2.61, 2.67,
        2.74, 2.80, 2.87, 2.94, 3.01, 3.09, 3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74,
        3.83, 3.92, 4.02, 4.12, 4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23,
        5.36, 5.49, 5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
        7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76,
    ),
    "E192": (
        1.00, 1.01, 1.02, 1.04, 1.05, 1.06, 1.07, 1.09, 1.10, 1.11, 1.13, 1.14, 1.15, 1.17,
        1.18, 1.20, 1.21, 1.23, 1.24, 1.26, 1.27, 1.29, 1.30, 1.32, 1.33, 1.35, 1.37, 1.38,
        1.40, 1.42, 1.43, 1.45, 1.47, 1.49, 1.50, 1.52, 1.54, 1.56, 1.58, 1.60, 1.62, 1.64,
        1.65, 1.67, 1.69, 1.72, 1.74, 1.76, 1.78, 1.80, 1.82, 1.84, 1.87, 1.89, 1.91, 1.93,
        1.96, 1.98, 2.00, 2.03, 2.05, 2.08, 2.10, 2.13, 2.15, 2.18, 2.21, 2.23, 2.26, 2.29,
        2.32, 2.34, 2.37, 2.40, 2.43, 2.46, 2.49, 2.52, 2.55, 2.58, 2.61, 2.64, 2.67, 2.71,
        2.74, 2.77, 2.80, 2.84, 2.87, 2.91, 2.94, 2.98, 3.01, 3.05, 3.09, 3.12, 3.16, 3.20,
        3.24, 3.28, 3.32, 3.36, 3.40, 3.44, 3.48, 3.52, 3.57, 3.61, 3.65, 3.70, 3.74, 3.79,
        3.83, 3.88, 3.92, 3.97, 4.02, 4.07, 4.12, 4.17, 4.22, 4.27, 4.32, 4.37, 4.42, 4.48,
        4.53, 4.59, 4.64, 4.70, 4.75, 4.81, 4.87, 4.93, 4.99, 5.05, 5.11, 5.17, 5.23, 5.30,
        5.36, 5.42, 5.49, 5.56, 5.62, 5.69, 5.76, 5.83, 5.90, 5.97, 6.04, 6.12, 6.19, 6.26,
        6.34, 6.42, 6.49, 6.57, 6.65, 6.73, 6.81, 6.90, 6.98, 7.06, 7.15, 7.23, 7.32, 7.41,
        7.50, 7.59, 7.68, 7.77, 7.87, 7.96, 8.06, 8.16, 8.25, 8.35, 8.45, 8.56, 8.66, 8.76,
        8.87, 8.98, 9.09, 9.20, 9.31, 9.42, 9.53, 9.65, 9.76, 9.88,
    ),
}

# Tolerance traditionally associated with each series (IEC 60063 explanatory text as quoted in
# facts.md section 9). E3 is "wider than 20 %" and has no single figure, so it is not listed.
# E192 parts are sold at 0.5 % and tighter; 0.5 % is the loosest of them.
SERIES_TOLERANCE: dict[str, float] = {
    "E6": 0.20,
    "E12": 0.10,
    "E24": 0.05,
    "E48": 0.02,
    "E96": 0.01,
    "E192": 0.005,
}

# Decimal writing of each member ("4.7", "9.20"), so decade scaling is exact decimal arithmetic.
_DIGITS: dict[str, tuple[Decimal, ...]] = {
    name: tuple(Decimal(f"{v:.1f}" if len(values) <= 24 else f"{v:.2f}") for v in values)
    for name, values in SERIES.items()
}

# Slack for "inclusive" range ends and for float noise in callers' bounds (relative).
_EDGE = 1e-9


def series_key(name: str) -> str:
    """The canonical key ("E24") for a series name given in any case ("e24", " E24 ");
    UnparseableValue listing the known series otherwise."""
    key = str(name).strip().upper()
    if key not in SERIES:
        known = ", ".join(SERIES)
        raise UnparseableValue(f'unknown E-series "{name}": expected one of {known}')
    return key


def _member(digits: Decimal, exponent: int) -> float:
    """digits x 10**exponent as the nearest float (exact decimal scaling, one rounding)."""
    return float(digits.scaleb(exponent))


def _check_positive(x: float, what: str) -> float:
    try:
        v = float(x)
    except (TypeError, ValueError):
        raise UnparseableValue(f'cannot use "{x}" as {what}: expected a positive number') from None
    if not math.isfinite(v) or v <= 0:
        raise UnparseableValue(f'cannot use "{x}" as {what}: expected a positive number')
    return v


def series_values(name: str, low: float, high: float) -> list[float]:
    """Every member of series `name` in [low, high] (both inclusive), ascending, across as many
    decades as needed. Empty when high < low. low and high must be positive."""
    key = series_key(name)
    lo = _check_positive(low, "the low end of an E-series range")
    hi = _check_positive(high, "the high end of an E-series range")
    if hi < lo:
        return []
    first = math.floor(math.log10(lo)) - 1
    last = math.floor(math.log10(hi)) + 1
    out: list[float] = []
    for exponent in range(first, last + 1):
        for digits in _DIGITS[key]:
            v = _member(digits, exponent)
            if lo * (1 - _EDGE) <= v <= hi * (1 + _EDGE):
                out.append(v)
    return out


def nearest_in_series(x: float, name: str) -> float:
    """The member of series `name` closest to x on a log scale (smallest |ln(x/v)|), looking in
    x's decade and both neighbours, so 0.95 -> 0.91 in E24 and 1.0 in E12 (facts.md section 9).
    An exact geometric tie goes to the lower member."""
    key = series_key(name)
    v = _check_positive(x, f"a value to round to {key}")
    exponent = math.floor(math.log10(v))
    best = None
    best_distance = math.inf
    for e in (exponent - 1, exponent, exponent + 1):
        for digits in _DIGITS[key]:
            m = _member(digits, e)
            distance = abs(math.log(v / m))
            if distance < best_distance - 1e-15:
                best, best_distance = m, distance
    assert best is not None
    return best
