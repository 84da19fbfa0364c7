"""Reading and writing component values, tolerances, ratings and fractions (the notation edge).

Inside the tool every quantity is an SI float (ohms, farads, seconds, hertz, volts, watts). This
module is the one place where text becomes such a float and back. Pure: standard library only.

What is read (details and the decisions taken are in the README section "Notations accepted"):

* plain numbers, also scientific: ``4700``, ``4.7e3``, ``1e-7``;
* SI prefixes p n u/µ/μ m k/K M G (and ``meg``) with or without a unit and spaces:
  ``4.7k``, ``4.7 kΩ``, ``4.7kohm``, ``10n``, ``10 nF``, ``2.2µF``, ``150ms``, ``2.5kHz``, ``9V``;
* the IEC 60062 letter-and-digit (RKM) code, where the letter stands for the decimal point:
  ``4K7``, ``2R2``, ``R47``, ``1M5``, ``47K3``, ``M47``, ``4n7``, ``2p2``, ``u47``, ``1µ0``;
* for capacitors only (``kind="capacitor"``): the EIA three-digit code in picofarads, ``104`` =
  100 nF, with multiplier digits 8 and 9 meaning x0.01 and x0.1 (``109`` = 1.0 pF), and the
  two-digit marking read directly in picofarads (``47`` = 47 pF); any other bare number on a
  capacitor must carry an exponent (``1e-7``) or be a plain decimal below 1 mF, because "0.1" or
  "4700" in a capacitor column could mean µF, pF or F.

Refused rather than guessed: ``1M``/``MF``/``mf`` on a capacitor (mega, or the old microfarad
marking?), ``mhz`` (milli or mega?), tolerance letters E, H and A (tables disagree).

Every refusal raises :class:`selector.core.errors.UnparseableValue` with one line that quotes the
text and says what was expected.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from decimal import Decimal

from selector.core.errors import UnparseableValue

OHM = "Ω"
FARAD = "F"
SECOND = "s"
HERTZ = "Hz"
VOLT = "V"
WATT = "W"

UNITS: tuple[str, ...] = (OHM, FARAD, SECOND, HERTZ, VOLT, WATT)


def kind_units(kind: str) -> tuple[str, str]:
    """(value unit, rating unit) of a stock kind: resistors and trimmers Ω and W, capacitors F and
    V; an IC or diode has no value unit, and a diode's rating is its forward drop in V."""
    if kind == "capacitor":
        return FARAD, VOLT
    if kind in ("resistor", "trimmer"):
        return OHM, WATT
    return "", VOLT

_QUANTITY = {
    OHM: "resistance",
    FARAD: "capacitance",
    SECOND: "time",
    HERTZ: "frequency",
    VOLT: "voltage",
    WATT: "power",
    None: "value",
}
_UNIT_WORD = {
    OHM: "ohms",
    FARAD: "farads",
    SECOND: "seconds",
    HERTZ: "hertz",
    VOLT: "volts",
    WATT: "watts",
}
_EXAMPLES = {
    OHM: "4700, 4.7k, 4k7, 4.7 kΩ",
    FARAD: "100n, 4n7, 0.1uF, 100 nF, 104",
    SECOND: "0.15, 150ms, 150 ms",
    HERTZ: "2500, 2.5k, 2.5 kHz",
    VOLT: "9, 9V, 6.3 V",
    WATT: "0.25, 0.25 W, 250mW",
    None: "4.7k, 100n, 150ms, 2.5 kHz",
}
_KIND_UNIT = {"resistor": OHM, "capacitor": FARAD}

# SI prefixes: the power of ten each one stands for.
_PREFIX_EXP = {"p": -12, "n": -9, "u": -6, "m": -3, "": 0, "k": 3, "K": 3, "M": 6, "meg": 6, "G": 9}
# IEC 60062 RKM letters: (power of ten, the quantity the letter belongs to).
_RKM_LETTER = {
    "L": (-3, OHM), "R": (0, OHM), "K": (3, OHM), "k": (3, OHM), "M": (6, OHM), "G": (9, OHM),
    "p": (-12, FARAD), "n": (-9, FARAD), "u": (-6, FARAD), "m": (-3, FARAD), "F": (0, FARAD),
}

# Digits are ASCII only: a regex "\d" also matches the digits of other scripts ("٣", "３"),
# which a spreadsheet shows but which nobody types as a part value; they are refused.
_NUMBER = r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?"
_NUMBER_RE = re.compile(rf"({_NUMBER})\s*(.*)", re.S)
_RKM_RE = re.compile(r"([0-9]*)([LRKkMGpnumF])([0-9]+)(.*)", re.S)


QUOTE_LIMIT = 40


_CONTROL_RE = re.compile(r"[\x00-\x1f\x7f-\x9f]")


def quoted(text: str) -> str:
    """User text in double quotes for a one-line message; text longer than QUOTE_LIMIT characters
    is cut (a 5000-digit cell is named by its start and its length, not printed whole), and a
    control character is shown as its escape (\\x1b), so the message stays one printable line."""
    text = str(text)
    if len(text) > QUOTE_LIMIT:
        head = _CONTROL_RE.sub(lambda m: f"\\x{ord(m.group()):02x}", text[:QUOTE_LIMIT - 8])
        return f'"{head}…" ({len(text)} characters)'
    return '"' + _CONTROL_RE.sub(lambda m: f"\\x{ord(m.group()):02x}", text) + '"'


class _Refused(Exception):
    """Internal: the reason a reading failed, turned into UnparseableValue by the caller."""


@dataclass(frozen=True)
class _Reading:
    """What the text literally says, before checking it against what the caller expects."""

    number: Decimal          # the written digits as a decimal (before the prefix/letter)
    exponent: int            # power of ten from the prefix or RKM letter
    unit: str | None         # a unit written in the text (one of UNITS), or None
    letter_unit: str | None  # the quantity an RKM letter or a prefix belongs to, if it says
    prefix: str              # the SI prefix or RKM letter as written ("" for none)
    form: str                # "bare", "si" (number + prefix/unit) or "rkm"

    @property
    def value(self) -> Decimal:
        return self.number.scaleb(self.exponent)


def _normalise(text: str) -> str:
    s = str(text).strip()
    for micro in ("\u00b5", "\u03bc"):  # micro sign and Greek small mu
        s = s.replace(micro, "u")
    for omega in ("\u03a9", "\u2126"):  # Greek capital omega and the ohm sign
        s = s.replace(omega, "ohm")
    return s.replace("\u2212", "-").replace("\u00a0", " ").replace("\u2009", " ").replace("\u202f", " ")


def _split_unit(suffix: str) -> tuple[str, str | None]:
    """Split 'kohm' into ('k', OHM); 'ms' into ('m', SECOND); 'meg' into ('meg', None)."""
    low = suffix.lower()
    for spelling in ("ohms", "ohm"):
        if low.endswith(spelling):
            return suffix[: -len(spelling)], OHM
    if low.endswith("hz"):
        head = suffix[:-2]
        if head == "m" and suffix[-2:] == "hz":
            raise _Refused('"mhz" could be millihertz or megahertz; write mHz or MHz')
        return head, HERTZ
    last, head = suffix[-1:], suffix[:-1]
    if last == "F":
        if head == "M":
            raise _Refused('"MF" is ambiguous (old marking for microfarads); write uF or µF')
        return head, FARAD
    if last == "f" and head:
        if head.lower() == "m":
            raise _Refused('"mf" is ambiguous (old marking for microfarads); write uF, or mF for millifarads')
        return head, FARAD
    if last == "s":
        return head, SECOND
    if last in ("V", "v"):
        return head, VOLT
    if last in ("W", "w"):
        return head, WATT
    if suffix == "R":
        return "", OHM
    return suffix, None


# The quantity a bare prefix suggests: p n u -> capacitance; k K M G meg -> resistance.
_PREFIX_HINT = {"p": FARAD, "n": FARAD, "u": FARAD, "k": OHM, "K": OHM, "M": OHM, "G": OHM, "meg": OHM}


def _scan(s: str) -> _Reading:
    """Read normalised text into a _Reading, or raise _Refused/ValueError."""
    if not s:
        raise _Refused("it is empty")
    rkm = _RKM_RE.fullmatch(s)
    if rkm:
        lead, letter, tail, rest = rkm.groups()
        exponent, letter_unit = _RKM_LETTER[letter]
        rest = re.sub(r"\s+", "", rest)
        prefix, unit = _split_unit(rest) if rest else ("", None)
        if prefix:
            raise ValueError("prefix after an RKM letter")
        number = Decimal(f"{lead or '0'}.{tail}")
        return _Reading(number, exponent, unit, letter_unit, letter, "rkm")
    m = _NUMBER_RE.fullmatch(s)
    if not m:
        raise ValueError("not a number")
    number_text, rest = m.groups()
    rest = re.sub(r"\s+", "", rest)
    number = Decimal(number_text)
    if not rest:
        return _Reading(number, 0, None, None, "", "bare")
    prefix, unit = _split_unit(rest)
    if prefix.lower() == "meg":
        prefix = "meg"
    if prefix not in _PREFIX_EXP:
        raise ValueError("unknown prefix or unit")
    return _Reading(number, _PREFIX_EXP[prefix], unit, _PREFIX_HINT.get(prefix), prefix, "si")


def _expected(kind: str | None, unit: str | None) -> str | None:
    if kind is not None and kind not in _KIND_UNIT:
        raise ValueError(f"kind must be 'resistor', 'capacitor' or None, not {kind!r}")
    if unit is not None and unit not in UNITS:
        raise ValueError(f"unit must be one of {UNITS} or None, not {unit!r}")
    if kind is not None and unit is not None and _KIND_UNIT[kind] != unit:
        raise ValueError(f"kind {kind!r} does not go with unit {unit!r}")
    return unit if unit is not None else _KIND_UNIT.get(kind) if kind else None


def _fail(
    text: str, q: str | None, reason: str | None = None, what: str | None = None,
    examples: str | None = None,
) -> UnparseableValue:
    what = what or _QUANTITY[q]
    article = "an" if what[0] in "aeiou" else "a"
    expected = f"expected e.g. {examples or _EXAMPLES[q]}"
    tail = f"{reason}; {expected}" if reason else expected
    return UnparseableValue(f'cannot read {quoted(text)} as {article} {what}: {tail}')


def _capacitor_bare(reading: _Reading, raw: str) -> Decimal:
    """The bare-number rules for a capacitor (see module docstring and README)."""
    if re.fullmatch(r"[0-9]{3}", raw):
        # Two significant digits then a multiplier digit, in pF (facts.md 8.3 [S11]); 8 and 9
        # mean x0.01 and x0.1 (the trade's rule, from memory); 7 is used on tantalum parts
        # (107 = 100 µF, from memory).
        if raw[0] == "0":  # leading-zero forms read d.d pF: 010 = 1.0 pF, 047 = 4.7 pF [S11]
            return Decimal(f"{raw[1]}.{raw[2]}") * Decimal("1e-12")
        digits, multiplier = int(raw[:2]), int(raw[2])
        scale = {8: Decimal("0.01"), 9: Decimal("0.1")}.get(multiplier, Decimal(10) ** multiplier)
        return Decimal(digits) * scale * Decimal("1e-12")
    if re.fullmatch(r"[0-9]{2}", raw):
        return Decimal(raw) * Decimal("1e-12")
    if "e" in raw.lower():
        return reading.number
    if "." in raw and reading.number < Decimal("0.001"):
        return reading.number
    raise _Refused(
        "a bare number on a capacitor is ambiguous; give a prefix or unit (100n, 0.1uF), "
        "a 3-digit code (104) or farads with an exponent (1e-7)"
    )


def _parse(
    text: str, kind: str | None, q: str | None, what: str | None = None,
    examples: str | None = None, shown: str | None = None,
) -> float:
    """Read text; `shown` (default: text) is what an error message quotes."""
    raw = _normalise(text)
    text = text if shown is None else shown
    try:
        reading = _scan(raw)
    except _Refused as exc:
        raise _fail(text, q, str(exc), what, examples) from None
    except (ValueError, ArithmeticError):  # decimal.InvalidOperation is an ArithmeticError
        raise _fail(text, q, None, what, examples) from None
    exact: Decimal | None = None
    try:
        if reading.number < 0:
            raise _Refused("it is negative")
        if reading.unit is not None and q is not None and reading.unit != q:
            raise _Refused(f"it is written in {_UNIT_WORD[reading.unit]}")
        if reading.form == "rkm":
            if q not in (None, OHM, FARAD) or (reading.unit not in (None, OHM, FARAD)):
                raise _Refused("the letter-and-digit code is only for resistance and capacitance")
            target = reading.unit or q
            if reading.prefix == "R" and target == FARAD:
                # Below 10 pF capacitors are marked with R as the decimal point in pF: 4R7 =
                # 4.7 pF (facts.md 8.3, from memory).
                exact = reading.number * Decimal("1e-12")
            elif reading.prefix == "m":
                pass  # milli is milli for either quantity
            elif target is not None and reading.letter_unit != target:
                letter = reading.prefix
                if reading.letter_unit == FARAD:
                    raise _Refused(f'"{letter}" is a capacitance letter')
                raise _Refused(f'"{letter}" is a resistance letter')
        elif reading.form == "si":
            target = reading.unit or q
            if target == OHM and reading.prefix in ("p", "n", "u"):
                raise _Refused(f'the prefix "{reading.prefix}" belongs to a capacitance')
            if target == FARAD and reading.prefix in ("k", "K", "M", "G", "meg"):
                if reading.prefix in ("M", "meg"):
                    raise _Refused('"M" is ambiguous for a capacitance; write u, µ or m')
                raise _Refused(f'the prefix "{reading.prefix}" belongs to a resistance')
        elif kind == "capacitor" and q == FARAD:
            exact = _capacitor_bare(reading, raw)
        if exact is None:
            exact = reading.value
    except _Refused as exc:
        raise _fail(text, q, str(exc), what, examples) from None
    except ArithmeticError:  # decimal.Overflow: an exponent far beyond any part ("1e999999k")
        exact = Decimal("Infinity")
    return _in_range(float(exact), reading.number != 0, reading.unit or q, text, q, what, examples)


# The range every quantity read must lie in (README "Accepted ranges"). Part values get ranges
# wide enough for any resistor or capacitor a shop stocks; every other quantity gets 1e-15 to 1e12
# of its unit (f to T). Both keep the products, sums and reciprocals the searches form far from
# float overflow and underflow (1e308 ohms made every later search warn). Zero passes (callers
# that need a positive value say so in their own words); anything else outside is refused.
_GENERAL = (1e-15, 1e12, "1e-15 to 1e12")
RANGES: dict[str | None, tuple[float, float, str]] = {
    OHM: (1e-3, 1e12, "1 mΩ to 1 TΩ (1e-3 to 1e12 Ω)"),
    FARAD: (1e-15, 1e4, "1 fF to 10000 F (1e-15 to 1e4 F)"),
    SECOND: (*_GENERAL[:2], "1e-15 to 1e12 s"),
    HERTZ: (*_GENERAL[:2], "1e-15 to 1e12 Hz"),
    VOLT: (*_GENERAL[:2], "1e-15 to 1e12 V"),
    WATT: (*_GENERAL[:2], "1e-15 to 1e12 W"),
    None: _GENERAL,
}


def _in_range(
    value: float, nonzero: bool, unit: str | None, text: str, q: str | None,
    what: str | None, examples: str | None,
) -> float:
    """`value` (-0 -> 0) if it is zero (and written as zero) or inside RANGES[unit]; else the one
    line that names the text, the quantity and the accepted range."""
    low, high, span = RANGES[unit if unit in RANGES else None]
    if value == 0 and not nonzero:
        return 0.0
    if not (low <= value <= high):  # also NaN and ±inf
        noun = what or _QUANTITY[unit if unit in _QUANTITY else q]
        article = "an" if noun[0] in "aeiou" else "a"
        raise UnparseableValue(f'{quoted(text)} is out of range for {article} {noun}: expected {span}')
    return value + 0.0


def parse_value(text: str, kind: str | None = None, unit: str | None = None) -> float:
    """Read `text` as an SI float. `kind` ("resistor", "capacitor" or None) and `unit` (one of
    OHM FARAD SECOND HERTZ VOLT WATT, or None) say what is expected: a unit or RKM letter in the
    text must agree with it, and the capacitor code rules apply only for kind="capacitor"."""
    q = _expected(kind, unit)
    return _parse(text, kind, q)


def infer_kind(text: str) -> str | None:
    """"capacitor" when the text carries a capacitance unit or prefix/letter (F, pF, 10n, 4n7,
    u47); "resistor" when it carries Ω/ohm/R or a k/K/M/G prefix or letter (4K7, 1M, 2R2);
    None for a bare number, a milli-only form, another unit, or text that cannot be read."""
    try:
        reading = _scan(_normalise(text))
    except (_Refused, ValueError, ArithmeticError):
        return None
    written = reading.unit or reading.letter_unit
    if reading.form == "rkm" and reading.prefix == "m" and reading.unit is None:
        return "capacitor"  # lower-case RKM letters are capacitance letters (IEC 60062)
    if written == OHM:
        return "resistor"
    if written == FARAD:
        return "capacitor"
    return None


def parse_marked_value(text: str, kind: str) -> tuple[float, tuple[float, float] | None]:
    """A value as marked on a part, possibly followed by an IEC 60062 tolerance letter: "4K7J"
    (4.7 kΩ ±5 %), "104K" (100 nF ±10 %), "47K" on a capacitor (47 pF ±10 %). The whole text is
    tried as a value first, so "47K" on a resistor is 47 kΩ with no tolerance (None)."""
    try:
        return parse_value(text, kind), None
    except UnparseableValue as whole_error:
        body = str(text).rstrip()
        if len(body) < 2 or not body[-1].isalpha():
            raise
        try:
            value = parse_value(body[:-1], kind)
        except UnparseableValue:
            raise whole_error from None
        try:
            return value, parse_tolerance(body[-1], kind, value)
        except UnparseableValue as exc:  # quote the whole marking, not just its letter
            raise UnparseableValue(str(exc).replace(f'"{body[-1]}"', quoted(text), 1)) from None


# --- tolerances -----------------------------------------------------------------------------

# IEC 60062 tolerance letters read as percent, symmetric (facts.md 8.2: B C D F G J K M N
# confirmed [S11], the same letters on resistors [S17]; W and L precision resistor letters from
# memory, not confirmed).
_TOL_PERCENT = {
    "B": "0.1", "C": "0.25", "D": "0.5", "F": "1", "G": "2", "J": "5", "K": "10", "M": "20",
    "N": "30",
}
_TOL_RESISTOR_ONLY = {"W": "0.05", "L": "0.01", "P": "0.02"}
# Asymmetric capacitor letters as (minus %, plus %) [S11].
_TOL_CAPACITOR_ONLY = {"Z": ("20", "80"), "S": ("20", "50"), "P": ("0", "100")}
# Below 10 pF, B C D F G on a capacitor are absolute, in pF (facts.md 8.2 parser rule).
_TOL_PF = {"B": "0.1", "C": "0.25", "D": "0.5", "F": "1", "G": "2"}
# Letters whose meaning differs between published tables (facts.md 8.2): refused, not guessed.
_TOL_AMBIGUOUS = {
    "E": "±0.5 %, ±0.25 % or ±0.005 %",
    "H": "±3 % or ±2.5 %",
    "A": "+20/-10 % or ±0.05 pF",
}
_TOL_EXAMPLES = "5%, ±5 %, 0.05, J, -20/+80%"
_TOL_NUMBER = r"(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)"
_TOL_SYM_RE = re.compile(rf"±?({_TOL_NUMBER})(%?)")
_TOL_ASYM_RE = re.compile(rf"([+-])({_TOL_NUMBER})(%?)[/,;]?([+-])({_TOL_NUMBER})(%?)")
_TOL_PF_RE = re.compile(rf"±?({_TOL_NUMBER})(pF|pf|p)")


def _tol_fail(text: str, kind: str | None, reason: str) -> UnparseableValue:
    what = {"resistor": "a resistor tolerance", "capacitor": "a capacitor tolerance"}.get(
        kind or "", "a tolerance"
    )
    return UnparseableValue(f'cannot read {quoted(text)} as {what}: {reason}; expected e.g. {_TOL_EXAMPLES}')


def _tol_result(text: str, kind: str | None, minus: Decimal, plus: Decimal) -> tuple[float, float]:
    if minus >= 1:
        raise _tol_fail(text, kind, "the minus side must be below 100 %")
    if plus > 1:
        raise _tol_fail(text, kind, "the plus side must be at most +100 %")
    return float(minus), float(plus)


def _absolute_pf(text: str, kind: str | None, pf: Decimal, value: float | None) -> tuple[float, float]:
    if value is None or not value > 0:
        raise _tol_fail(text, kind, "a tolerance in pF needs the capacitance it applies to")
    frac = float(pf * Decimal("1e-12") / Decimal(repr(float(value))))
    return _tol_result(text, kind, Decimal(repr(frac)), Decimal(repr(frac)))


def parse_tolerance(
    text: str, kind: str | None = None, value: float | None = None
) -> tuple[float, float]:
    """Read a tolerance as (minus, plus), positive fractions of the nominal value.

    Accepted: "5%", "±5 %", "+/-5%", "0.05", "5", IEC 60062 letters, asymmetric "-20/+80%",
    "+80/-20 %", "-10+50%", and "±0.25 pF" (capacitors, needs `value`). A bare number >= 1 is
    percent ("5" = 5 %), a bare number below 1 is a fraction ("0.05" = 5 %). Letters B C D F G on
    a capacitor whose `value` is below 10 pF are absolute pF and are converted to a fraction of
    `value`; without `value` they are refused for a capacitor. Letters E, H and A are refused as
    ambiguous; P means +100/-0 % on a capacitor and ±0.02 % on a resistor (refused without a kind);
    Z (+80/-20 %) and S (+50/-20 %) are capacitor letters; W and L are resistor letters."""
    if kind is not None and kind not in _KIND_UNIT:
        raise ValueError(f"kind must be 'resistor', 'capacitor' or None, not {kind!r}")
    s = _normalise(text)
    for spelling in ("+/-", "+-", "-/+"):
        s = s.replace(spelling, "±")
    s = re.sub(r"\s+", "", s)
    if not s:
        raise _tol_fail(text, kind, "it is empty")
    hundred = Decimal(100)

    if len(s) == 1 and s.isalpha():
        letter = s.upper()
        if letter in _TOL_AMBIGUOUS:
            raise _tol_fail(text, kind, f'the letter {letter} means {_TOL_AMBIGUOUS[letter]} '
                                        "in different tables; give the percentage")
        if letter in _TOL_PF and kind == "capacitor":
            if value is None:
                raise _tol_fail(text, kind, f"the letter {letter} means pF below 10 pF and % "
                                            "above; it needs the capacitance")
            if value < 10e-12:
                return _absolute_pf(text, kind, Decimal(_TOL_PF[letter]), value)
        if letter in _TOL_PERCENT:
            p = Decimal(_TOL_PERCENT[letter]) / hundred
            return _tol_result(text, kind, p, p)
        if letter == "P" and kind is None:
            raise _tol_fail(text, kind, "the letter P means +100/-0 % on a capacitor and "
                                        "±0.02 % on a resistor; say which kind")
        if letter in _TOL_CAPACITOR_ONLY and kind != "resistor":
            minus, plus = _TOL_CAPACITOR_ONLY[letter]
            return _tol_result(text, kind, Decimal(minus) / hundred, Decimal(plus) / hundred)
        if letter in _TOL_RESISTOR_ONLY and kind != "capacitor":
            p = Decimal(_TOL_RESISTOR_ONLY[letter]) / hundred
            return _tol_result(text, kind, p, p)
        if letter in _TOL_CAPACITOR_ONLY or letter in _TOL_RESISTOR_ONLY:
            other = "capacitor" if letter in _TOL_CAPACITOR_ONLY else "resistor"
            raise _tol_fail(text, kind, f"the letter {letter} is a {other} tolerance letter")
        raise _tol_fail(text, kind, f"{letter} is not a tolerance letter")

    m = _TOL_PF_RE.fullmatch(s)
    if m:
        if kind == "resistor":
            raise _tol_fail(text, kind, "pF is a capacitance")
        return _absolute_pf(text, kind, Decimal(m.group(1)), value)

    m = _TOL_SYM_RE.fullmatch(s)
    if m:
        number = Decimal(m.group(1))
        percent = bool(m.group(2)) or number >= 1
        p = number / hundred if percent else number
        return _tol_result(text, kind, p, p)

    m = _TOL_ASYM_RE.fullmatch(s)
    if m:
        sign1, n1, pc1, sign2, n2, pc2 = m.groups()
        if sign1 == sign2:
            raise _tol_fail(text, kind, "an asymmetric tolerance needs one minus and one plus side")
        a, b = Decimal(n1), Decimal(n2)
        percent = bool(pc1 or pc2) or max(a, b) >= 1
        if percent:
            a, b = a / hundred, b / hundred
        minus, plus = (a, b) if sign1 == "-" else (b, a)
        return _tol_result(text, kind, minus, plus)

    raise _tol_fail(text, kind, "not a percentage, fraction or tolerance letter")


# --- fractions and ratings ------------------------------------------------------------------

_FRACTION_RE = re.compile(rf"({_TOL_NUMBER})(%?)")


def parse_fraction(text: str) -> float:
    """Read a fraction in [0, 1] (a duty cycle, an acceptance band): "65%", "65 %", "0.65".
    A bare number must be below 1 ("0.05"); "5" or "1" without % is refused, because it could
    mean 5 % or 500 %, 1 % or 100 %."""
    s = re.sub(r"\s+", "", _normalise(text))
    m = _FRACTION_RE.fullmatch(s)
    examples = "65%, 0.65"
    if not m:
        raise UnparseableValue(f'cannot read {quoted(text)} as a fraction: expected e.g. {examples}')
    number = Decimal(m.group(1))
    if m.group(2):
        number = number / 100
    elif number >= 1:
        raise UnparseableValue(
            f'cannot read {quoted(text)} as a fraction: a bare number must be below 1; write '
            f'{quoted(m.group(1) + "%")} for percent, or e.g. 0.65'
        )
    if number > 1:
        raise UnparseableValue(f'cannot read {quoted(text)} as a fraction: it is above 100 %; expected e.g. {examples}')
    return float(number)


_WATT_EXAMPLES = "0.25, 1/4W, 0.25 W, 250mW"
_VOLT_EXAMPLES = "50, 50V, 6.3 V, 6V3, 1kV"


def parse_rating(text: str, kind: str) -> float:
    """A part's rating: watts for a resistor ("0.25", "1/4W", "1/4 W", "0.25 W", "250mW"), volts
    for a capacitor ("50", "50V", "6.3 V", "6V3", "1kV", "50VDC", "25WV"). A unit that does not
    fit the kind is refused; the rating must be above zero. An AC rating ("250VAC") is refused:
    it is not the DC working voltage a timing capacitor sees."""
    s = re.sub(r"\s+", "", _normalise(text))
    rating: float | None = None
    if kind == "resistor":
        what, q, examples = "resistor power rating", WATT, _WATT_EXAMPLES
        m = re.fullmatch(r"([0-9]+)/([0-9]+)([Ww]?)", s)
        if m:  # 1/4W: the way through-hole power classes are written
            if Decimal(m.group(2)) == 0:
                raise _fail(text, q, "division by zero", what, examples)
            rating = float(Decimal(m.group(1)) / Decimal(m.group(2)))
            rating = _in_range(rating, Decimal(m.group(1)) != 0, q, text, q, what, examples)
    elif kind == "capacitor":
        what, q, examples = "capacitor voltage rating", VOLT, _VOLT_EXAMPLES
        m = re.fullmatch(r"([0-9]+)[Vv]([0-9]+)", s)
        if m:  # 6V3: the letter V as the decimal point, as printed on electrolytics
            number = Decimal(f"{m.group(1)}.{m.group(2)}")
            rating = _in_range(float(number), number != 0, q, text, q, what, examples)
        elif re.search(r"(?i)[0-9][kmu]?v?ac$", s):
            raise _fail(text, q, "an AC rating is not a DC working voltage", what, examples)
        s = re.sub(r"(?i)(?<=v)dc$", "", s)
        s = re.sub(r"(?i)wv$", "V", s)
    else:
        raise ValueError(f"kind must be 'resistor' or 'capacitor', not {kind!r}")
    if rating is None:
        rating = _parse(s, None, q, what, examples, shown=text)
    if not rating > 0:
        raise _fail(text, q, "it must be above zero", what, examples)
    return rating


# --- writing --------------------------------------------------------------------------------

_PREFIX_SYMBOL = {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}
# Prefix range used per unit, so that what is written is always read back by parse_value with
# the matching kind: no pΩ/nΩ/µΩ (those prefixes mean a capacitance to the reader), and no k/M/G
# farads ("MF" is an old microfarad marking).
_PREFIX_RANGE = {OHM: (-3, 9), FARAD: (-12, 0)}


def _three_digits(x: float) -> Decimal:
    """|x| rounded to 3 significant digits, as an exact decimal (rounding the binary value)."""
    return Decimal(f"{abs(x):.2e}")


def _plain(d: Decimal) -> str:
    """A decimal written without exponent and without trailing zeros: 4.70 -> '4.7', 1E+2 -> '100'."""
    return format(d.normalize(), "f")


def _non_finite(value: float) -> str | None:
    if math.isnan(value):
        return "NaN"
    if math.isinf(value):
        return "∞" if value > 0 else "-∞"
    return None


def format_value(value: float, unit: str = "") -> str:
    """One compact style for every quantity shown: at most 3 significant digits, no trailing
    zeros, an SI prefix (p n µ m k M G) and a space before prefix+unit; never scientific notation.
    4700, "Ω" -> "4.7 kΩ"; 1e-7, "F" -> "100 nF"; 0.15, "s" -> "150 ms"; 0.47, "Ω" -> "470 mΩ".
    parse_value reads the text back to the value within the 3-digit rounding (relative error at
    most 0.5 %), and exactly for any value with 3 or fewer significant digits (all E-series)."""
    bad = _non_finite(value)
    if bad is not None:
        return f"{bad} {unit}" if unit else bad
    if value == 0:
        return f"0 {unit}" if unit else "0"
    d = _three_digits(value)
    low, high = _PREFIX_RANGE.get(unit, (-12, 9))
    eng = max(low, min(high, 3 * math.floor(d.adjusted() / 3)))
    digits = _plain(d.scaleb(-eng))
    sign = "-" if value < 0 else ""
    suffix = _PREFIX_SYMBOL[eng] + unit
    return f"{sign}{digits} {suffix}" if suffix else f"{sign}{digits}"


def _percent(fraction: float) -> str:
    if fraction == 0:
        return "0"
    return _plain(_three_digits(fraction * 100))


def format_tolerance(minus: float, plus: float) -> str:
    """"±5 %" when both sides agree (to 1e-9 relative), else "-20/+80 %"; at most 3 significant
    digits per side: (0.005, 0.005) -> "±0.5 %", (0.2, 0.8) -> "-20/+80 %"."""
    if minus < 0 or plus < 0 or not (math.isfinite(minus) and math.isfinite(plus)):
        raise ValueError(f"tolerance sides must be non-negative fractions, not {minus!r}, {plus!r}")
    if math.isclose(minus, plus, rel_tol=1e-9, abs_tol=1e-15):
        return f"±{_percent(minus)} %"
    return f"-{_percent(minus)}/+{_percent(plus)} %"


# RKM letters used when writing, per power of ten (IEC 60062; facts.md 8.4).
_RKM_WRITE = {
    "resistor": ((0, "R"), (3, "K"), (6, "M"), (9, "G")),
    "capacitor": ((-12, "p"), (-9, "n"), (-6, "µ"), (-3, "m"), (0, "F")),
}


def format_rkm(value: float, kind: str) -> str:
    """The IEC 60062 letter-and-digit code, 3 significant digits at most: 4700 -> "4K7",
    470 -> "470R", 0.47 -> "R47", 1000 -> "1K0", 4.7e-9 -> "4n7", 1e-6 -> "1µ0", 6.8e-13 -> "p68".
    parse_value(format_rkm(v, kind), kind) gives v back exactly for 3-digit values."""
    if kind not in _RKM_WRITE:
        raise ValueError(f"kind must be 'resistor' or 'capacitor', not {kind!r}")
    if not math.isfinite(value) or value < 0 or (value == 0 and kind == "capacitor"):
        raise ValueError(f"cannot write {value!r} as an RKM code")
    if value == 0:
        return "0R"
    d = _three_digits(value)
    letters = _RKM_WRITE[kind]
    exponent, letter = letters[0]
    for e, l in letters:
        if d.adjusted() >= e:
            exponent, letter = e, l
    digits = _plain(d.scaleb(-exponent))
    if "." in digits:
        whole, frac = digits.split(".")
        return f"{'' if whole == '0' else whole}{letter}{frac}"
    if len(digits) == 1:
        return f"{digits}{letter}0"
    return f"{digits}{letter}"


# --- reading on a bench ------------------------------------------------------------------------

_MINUTE = 60.0
_HOUR = 3600.0


def _sig3(x: float) -> str:
    """|x| to 3 significant digits without exponent or trailing zeros: 0.5 -> '0.5', 16.67 -> '16.7'."""
    return _plain(_three_digits(x))


def format_display(value: float, unit: str) -> str:
    """A frequency or a time as a technician reads it at a glance (for people only; machine forms
    keep :func:`format_value`). Frequencies below 1 Hz are written in hertz (``0.5 Hz``, never
    ``500 mHz``, easily read as MHz); times of 1000 s and more in minutes or hours (``16.7 min``,
    ``2.5 h``, never ``ks``). Everything else is :func:`format_value`:
    0.5, "Hz" -> "0.5 Hz"; 1200, "Hz" -> "1.2 kHz"; 999, "s" -> "999 s"; 1000, "s" -> "16.7 min";
    7200, "s" -> "2 h"; 0.15, "s" -> "150 ms"."""
    if _non_finite(value) is not None or value == 0:
        return format_value(value, unit)
    sign = "-" if value < 0 else ""
    mag = abs(value)
    if unit == HERTZ and mag < 1.0 and float(_three_digits(mag)) < 1.0:
        return f"{sign}{_sig3(mag)} {HERTZ}"
    if unit == SECOND and float(_three_digits(mag)) >= 1000.0:
        minutes = mag / _MINUTE
        if float(_three_digits(minutes)) < 100.0:
            return f"{sign}{_sig3(minutes)} min"
        return f"{sign}{_sig3(mag / _HOUR)} h"
    return format_value(value, unit)
