"""Reading the rows of a stock file: each cell's text → a validated part spec with its quantity
(``validate_rows``), and the small parsers it uses (kind, quantity, whole numbers, a diode's
forward drop). Every problem of the whole file is collected and raised together, one line each
naming row, column, value and what was expected. Used by services/stock.py (import, kits).

What each column means per kind is in the README ("Stock CSV"); the identity of a line (what
merges) is ``PartSpec.key`` / ``line_key``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Iterable, Optional

from selector.core.errors import InvalidStockFile, UnparseableValue
from selector.core.limits import MAX_QUANTITY
from selector.core.notation import quoted
from selector.core.parts import default_tolerance, is_polarized, normalize_dielectric
from selector.core.types import VALUELESS_KINDS, StockLine

_KIND_WORDS = {"resistor": "resistor", "r": "resistor", "capacitor": "capacitor", "c": "capacitor",
               "trimmer": "trimmer", "potentiometer": "trimmer", "pot": "trimmer", "ic": "ic", "diode": "diode"}
_PART_EXAMPLE = {"ic": '"NE555P", "555 CMOS" or "74HC14"', "diode": '"1N4148" or "BAT85"'}

TRIMMER_TOLERANCE = (0.2, 0.2)
"""A trimmer line without a tolerance: ±20 % end to end, the usual grade of cermet trimmers
(common practice; ±10 % and ±25-30 % grades exist, so a line should state its own)."""

MAX_TURNS = 100
"""The most turns end to end a trimmer line may state (multi-turn trimmers are 10-25 turns; a
bigger number is a typing slip)."""

_CURRENT_RANGE = (1e-9, 10.0)  # amperes: a diode's forward drop is stated somewhere in here
_QTY_RE = re.compile(r"\+?([0-9]+)(?:\.0*)?")  # ASCII digits only
_TEXT_COLUMNS = ("location", "package", "note")  # free text stored as written (textrules.py); part: by kind


def clean(x: float) -> float:
    """Round to 12 significant digits: removes float noise from notation arithmetic (4.7 * 1e3)
    so that equal parts compare equal; no real part is specified that finely."""
    return float(f"{x:.12g}")


def parse_kind(text: str) -> str:
    """'resistor'/'R', 'capacitor'/'C', 'trimmer' (or 'pot', 'potentiometer'), 'ic' or 'diode' in
    any case → the canonical kind."""
    try:
        return _KIND_WORDS[text.strip().lower()]
    except KeyError:
        raise UnparseableValue(f"{quoted(text.strip())}: expected resistor, capacitor, trimmer, ic or diode "
                               "(or R / C)") from None


def parse_whole(text: str, low: int, high: int, what: str) -> int:
    """A whole number from ``low`` to ``high`` ("25", "+25", "25.0"), else one line saying so."""
    t = text.strip()
    m = _QTY_RE.fullmatch(t)
    digits = (m.group(1).lstrip("0") or "0") if m else ""
    if not m or len(digits) > len(str(high)) or not low <= int(digits) <= high:
        raise UnparseableValue(f"{quoted(t)}: expected a whole number of {what}, {low} to {high}")
    return int(digits)


def parse_forward_drop(text: str) -> tuple[float, Optional[float]]:
    """A diode's rating: its forward drop in volts, optionally at a current: "0.62V@1mA",
    "620mV @ 1 mA", "0.3V@10mA", "0.7" → (volts, amperes or None)."""
    from selector.core.notation import VOLT, parse_value

    t = text.strip()
    volts_text, at, amps_text = t.partition("@")
    expected = 'expected a forward drop in volts, optionally at a current, e.g. "0.62V@1mA" or "0.3V"'
    try:
        volts = parse_value(volts_text.strip(), None, VOLT)
    except UnparseableValue:
        raise UnparseableValue(f"{quoted(t)}: {expected}") from None
    if not 0 < volts < 10:
        raise UnparseableValue(f"{quoted(t)}: the drop must be above 0 V and below 10 V; {expected}")
    if not at:
        return volts, None
    a = amps_text.strip()
    a = a[:-1].rstrip() if a[-1:] in ("A", "a") else ""  # the unit A is required after @
    try:
        amps = parse_value(a, None, None) if a else None
    except UnparseableValue:
        amps = None
    if amps is None or not _CURRENT_RANGE[0] <= amps <= _CURRENT_RANGE[1]:
        raise UnparseableValue(f"{quoted(t)}: after @ expected a current from 1 nA to 10 A with its unit, "
                               'e.g. "1mA" or "10 mA"')
    return volts, amps


def parse_quantity(text: str) -> int:
    """A whole number of parts, 0 or more ("3", "+3", "3.0"), at most MAX_QUANTITY."""
    t = text.strip()
    m = _QTY_RE.fullmatch(t)
    if not m:
        raise UnparseableValue(f"{quoted(t)}: expected a whole number of parts, 0 or more")
    digits = m.group(1).lstrip("0") or "0"
    if len(digits) > len(str(MAX_QUANTITY)) or int(digits) > MAX_QUANTITY:  # no int() of 5000 digits
        raise UnparseableValue(f"{quoted(t)}: expected at most {MAX_QUANTITY} parts on one line")
    return int(digits)


# --------------------------------------------------------------------------- specs and plans

@dataclass(frozen=True)
class PartSpec:
    """A validated part description (everything but the quantity), SI values."""

    kind: str
    value: float
    tol_minus: float
    tol_plus: float
    location: str = ""
    package: str = ""
    rating: Optional[float] = None
    dielectric: str = ""
    note: str = ""
    part: str = ""
    turns: Optional[int] = None
    rating_current: Optional[float] = None
    reorder_at: Optional[int] = None  # like the note, not part of the identity

    @property
    def polarized(self) -> bool:
        return is_polarized(self.dielectric)

    @property
    def key(self) -> tuple:
        return tuple(getattr(self, name) for name in IDENTITY_FIELDS)  # already clean()ed by validate_rows


IDENTITY_FIELDS: tuple[str, ...] = ("kind", "value", "tol_minus", "tol_plus", "location", "package", "rating",
                                    "dielectric", "part", "turns", "rating_current")
"""What makes two stock lines the same line (PartSpec.key, line_key); the note and reorder_at do not."""
_CLEANED_FIELDS = frozenset({"value", "tol_minus", "tol_plus", "rating", "rating_current"})


def line_key(line: StockLine) -> tuple:
    """The identity of an existing stock line, comparable with PartSpec.key."""
    return tuple(clean(x) if name in _CLEANED_FIELDS and x is not None else x
                 for name, x in ((name, getattr(line, name)) for name in IDENTITY_FIELDS))


@dataclass(frozen=True)
class ImportRow:
    """One validated file row: its spreadsheet row number, the part and the quantity."""

    row: int
    spec: PartSpec
    quantity: int


def reading_kind(kind: str) -> str:
    """The kind whose notation rules read a cell: a trimmer's value, tolerance and rating read as a
    resistor's (ohms, percent, watts)."""
    return "resistor" if kind == "trimmer" else kind


def validate_rows(raw_rows: Iterable) -> list[ImportRow]:
    """Turn csvio.RawRow text cells into ImportRows. Every problem of every row is collected; any
    problem raises InvalidStockFile (nothing is half-read).

    Per kind (README "Stock file"): resistor and capacitor as always (no part, turns); trimmer:
    value = end-to-end ohms, tolerance default ±20 % (TRIMMER_TOLERANCE), rating watts, turns
    (default 1), part optional (a model name); ic and diode: the part text from the part column
    or, when that is empty, the value column; no tolerance, turns or dielectric; a diode's rating
    is its forward drop, optionally at a current ("0.62V@1mA"). reorder_at: optional, any kind."""
    from selector.core.notation import FARAD, OHM, parse_rating, parse_tolerance, parse_value
    from selector.store.csvio import COLUMNS as STOCK_COLUMNS
    from selector.store.models import StockLineRow
    from selector.store.textrules import text_problem

    lines = StockLineRow.__table__
    problems: list[str] = []
    out: list[ImportRow] = []
    for raw in raw_rows:
        c = {column: "" for column in STOCK_COLUMNS} | dict(raw.cells)
        errs: list[str] = []

        def bad(column: str, message: str) -> None:
            errs.append(f"row {raw.row}, column {column}: {message}")

        def need(column: str) -> bool:
            if not c[column]:
                bad(column, f"empty: the {column} is required")
                return False
            return True

        def refuse_cell(column: str, why: str) -> None:
            if c[column]:
                bad(column, f"{quoted(c[column])}: {why}; leave it empty")

        kind = value = None
        if need("kind"):
            try:
                kind = parse_kind(c["kind"])
            except UnparseableValue as e:
                bad("kind", str(e))
        dielectric = ""
        if kind in ("resistor", "capacitor"):
            try:
                dielectric = normalize_dielectric(c["dielectric"])
            except UnparseableValue as e:
                bad("dielectric", str(e))
        if kind == "resistor" and dielectric:
            bad("dielectric", f'{quoted(c["dielectric"])}: a resistor has no dielectric; leave it empty')
        elif kind in ("trimmer", "ic", "diode"):
            refuse_cell("dielectric", f"a dielectric is for capacitors, not a{'n' if kind == 'ic' else ''} {kind}")
        part = ""
        if kind in ("resistor", "capacitor"):
            refuse_cell("part", f"a {kind} is named by its value; put other text in the note")
        elif kind == "trimmer":
            part = c["part"]
            problem = text_problem(part, lines.c.part) if part else None
            if problem:
                bad("part", problem)
        elif kind in VALUELESS_KINDS:
            part = c["part"] or c["value"]
            if c["part"] and c["value"] and c["part"] != c["value"]:
                bad("value", f'{quoted(c["value"])}: the part column already names this {kind} '
                             f'({quoted(c["part"])}); give the part text in one of the two')
            elif not part:
                bad("part", f"empty: an {kind} needs its part text (e.g. {_PART_EXAMPLE[kind]}) "
                            "in the part or the value column")
            else:
                problem = text_problem(part, lines.c.part)
                if problem:
                    bad("part" if c["part"] else "value", problem)
        turns: Optional[int] = None
        if kind == "trimmer":
            turns = 1
            if c["turns"]:
                try:
                    turns = parse_whole(c["turns"], 1, MAX_TURNS, "turns end to end")
                except UnparseableValue as e:
                    bad("turns", str(e))
        elif kind:
            refuse_cell("turns", "turns are for trimmers")
        if kind in VALUELESS_KINDS:
            value = 0.0
        elif kind and need("value"):
            pk = reading_kind(kind)
            try:
                value = parse_value(c["value"], pk, OHM if pk == "resistor" else FARAD)
                if not value > 0:
                    bad("value", f'{quoted(c["value"])}: expected a value above zero')
                    value = None
            except UnparseableValue as e:
                bad("value", str(e))
        tol: Optional[tuple[float, float]] = None
        if kind in VALUELESS_KINDS:
            tol = (0.0, 0.0)
            refuse_cell("tolerance", f"a{'n' if kind == 'ic' else ''} {kind} has no value tolerance")
        elif kind:
            if c["tolerance"]:
                if value is not None:
                    try:
                        tol = parse_tolerance(c["tolerance"], reading_kind(kind), value)
                        if not (0 <= tol[0] < 1 and tol[1] >= 0):
                            bad("tolerance", f'{quoted(c["tolerance"])}: expected less than 100 % below nominal')
                            tol = None
                    except UnparseableValue as e:
                        bad("tolerance", str(e))
            elif kind == "trimmer":
                tol = TRIMMER_TOLERANCE
            else:
                tol = default_tolerance(kind, dielectric)
        rating = rating_current = None
        if kind == "ic":
            refuse_cell("rating", "an ic has no rating here; put its limits in the note")
        elif kind == "diode" and c["rating"]:
            try:
                rating, rating_current = parse_forward_drop(c["rating"])
            except UnparseableValue as e:
                bad("rating", str(e))
        elif kind and c["rating"]:
            try:
                rating = parse_rating(c["rating"], reading_kind(kind))
                if not rating > 0:
                    bad("rating", f'{quoted(c["rating"])}: expected a rating above zero')
            except UnparseableValue as e:
                bad("rating", str(e))
        quantity = None
        if need("quantity"):
            try:
                quantity = parse_quantity(c["quantity"])
            except UnparseableValue as e:
                bad("quantity", str(e))
        reorder_at = None
        if c["reorder_at"]:
            try:
                reorder_at = parse_whole(c["reorder_at"], 0, MAX_QUANTITY, "parts (the reorder level)")
            except UnparseableValue as e:
                bad("reorder_at", str(e))
        for column in _TEXT_COLUMNS:
            problem = text_problem(c[column], lines.c[column])
            if problem:
                bad(column, problem)
        if errs:
            problems.extend(errs)
            continue
        assert kind and value is not None and tol is not None and quantity is not None
        spec = PartSpec(kind, clean(value), clean(tol[0]), clean(tol[1]), c["location"], c["package"],
                        None if rating is None else clean(rating), dielectric, c["note"], part=part, turns=turns,
                        rating_current=None if rating_current is None else clean(rating_current),
                        reorder_at=reorder_at)
        out.append(ImportRow(raw.row, spec, quantity))
    if problems:
        raise InvalidStockFile(problems)
    return out
