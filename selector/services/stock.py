"""Stock use cases: import a CSV (validate, plan, apply), list, export, adjust, set, add a kit.

Each use case that touches the database is one function and one transaction. Importing follows
"plan, then apply": ``validate_rows`` (services/stock_rows.py) turns the file's text cells into
part specs (every problem of the whole file collected), ``plan_import`` is a pure function of those specs and the current
stock, and ``apply_plan`` writes the plan through the ledger. ``--dry-run`` stops after the plan.

Identity of a stock line (what merges): kind, value, tolerance, location, package, rating,
dielectric, part, turns and rating current, compared exactly after rounding to 12 significant
digits (so "4k7" and "4.7k" are the same part). The note is not part of the identity: a new line
takes the note of the first file row for it, and an import never rewrites the note of an existing
line. Nor is the reorder level: a non-empty reorder_at cell sets the line's level (rows for one
line must agree), an empty one leaves it.
"""

from __future__ import annotations

import io
from decimal import Decimal
from dataclasses import dataclass, replace as replace_fields
from pathlib import Path
from typing import Iterable, Optional, Sequence

from selector.core.errors import (
    DatabaseProblem, InvalidStockFile, TooManyParts, UnknownStockLine, UnparseableValue,
)
from selector.core.limits import MAX_QUANTITY
from selector.core.parts import default_tolerance, normalize_dielectric
from selector.core.types import NETWORK_KINDS, VALUELESS_KINDS, StockLine
from selector.services.stock_rows import (  # noqa: F401  (re-exported: the import's row layer)
    MAX_TURNS, TRIMMER_TOLERANCE, ImportRow, PartSpec, reading_kind, clean, line_key, parse_forward_drop, parse_kind,
    parse_quantity, parse_whole, validate_rows,
)


@dataclass(frozen=True)
class NewLine:
    """A stock line the plan creates, with the file rows that make it up."""

    spec: PartSpec
    quantity: int
    rows: tuple[int, ...]


@dataclass(frozen=True)
class LineChange:
    """An existing stock line whose quantity the plan changes."""

    line: StockLine
    new_quantity: int
    rows: tuple[int, ...]

    @property
    def delta(self) -> int:
        return self.new_quantity - self.line.quantity


@dataclass(frozen=True)
class ReorderChange:
    """An existing stock line whose reorder level the file sets to another number (a level is a
    setting of the line, not part of its identity; an empty cell leaves the level as it is)."""

    line: StockLine
    reorder_at: int
    rows: tuple[int, ...]


@dataclass(frozen=True)
class ImportPlan:
    """What an import (or a kit) will do. ``unchanged`` are matched lines whose quantity stays."""

    replace: bool
    new_lines: tuple[NewLine, ...] = ()
    changes: tuple[LineChange, ...] = ()
    unchanged: tuple[StockLine, ...] = ()
    source: str = ""
    reorders: tuple[ReorderChange, ...] = ()

    @property
    def is_empty(self) -> bool:
        return not self.changes and not self.new_lines and not self.reorders

    @property
    def parts_added(self) -> int:
        return sum(n.quantity for n in self.new_lines) + sum(c.delta for c in self.changes if c.delta > 0)

    @property
    def parts_removed(self) -> int:
        return -sum(c.delta for c in self.changes if c.delta < 0)



def plan_import(rows: Sequence[ImportRow], current: Sequence[StockLine], *, replace: bool = False,
                source: str = "") -> ImportPlan:
    """Pure: what importing ``rows`` into ``current`` does. Rows for the same part merge (their
    quantities add). Without ``replace`` the file's quantity is added to a matching line; with
    ``replace`` the matching line's quantity is SET to the file's; lines the file does not mention
    are left as they are in both modes. A part with no matching line becomes a new line."""
    totals: dict[tuple, list] = {}
    levels: dict[tuple, tuple[int, int]] = {}  # identity -> (first row giving a reorder level, level)
    clashes: list[str] = []
    for r in rows:
        entry = totals.setdefault(r.spec.key, [r.spec, 0, []])
        entry[1] += r.quantity
        entry[2].append(r.row)
        if r.spec.reorder_at is not None:
            first = levels.setdefault(r.spec.key, (r.row, r.spec.reorder_at))
            if first[1] != r.spec.reorder_at:
                clashes.append(f"row {r.row}, column reorder_at: {r.spec.reorder_at} for the same part as row "
                               f"{first[0]}, which gives {first[1]}; give one reorder level per stock line")
    if clashes:
        raise InvalidStockFile(clashes)
    existing: dict[tuple, StockLine] = {}
    for line in sorted(current, key=lambda ln: ln.id):
        existing.setdefault(line_key(line), line)
    new_lines, changes, unchanged, reorders = [], [], [], []
    over: list[str] = []
    for key, (spec, qty, rownums) in totals.items():
        line = existing.get(key)
        target = qty if replace or line is None else line.quantity + qty
        if target > MAX_QUANTITY:
            over.append(_over_limit(spec, line, target, rownums, replace))
            continue
        level = levels.get(key)
        if line is None:
            if level is not None and spec.reorder_at != level[1]:
                spec = replace_fields(spec, reorder_at=level[1])  # the first row may leave it empty
            new_lines.append(NewLine(spec, qty, tuple(rownums)))
            continue
        if level is not None and level[1] != line.reorder_at:
            reorders.append(ReorderChange(line, level[1], tuple(rownums)))
        if target == line.quantity:
            unchanged.append(line)
        else:
            changes.append(LineChange(line, target, tuple(rownums)))
    if over:
        more = f"; and {len(over) - 3} more line{'s' if len(over) > 4 else ''}" if len(over) > 3 else ""
        raise TooManyParts(f"{'; '.join(over[:3])}{more}; at most {MAX_QUANTITY} parts fit on one stock line; "
                           "nothing was changed")
    changes.sort(key=lambda ch: ch.line.id)
    unchanged.sort(key=lambda ln: ln.id)
    reorders.sort(key=lambda ch: ch.line.id)
    return ImportPlan(replace, tuple(new_lines), tuple(changes), tuple(unchanged), source, tuple(reorders))


def _over_limit(spec: PartSpec, line: Optional[StockLine], target: int, rownums: Sequence[int],
                replace: bool) -> str:
    """The part of a TooManyParts message naming one line that would go over the limit."""
    from selector.core.notation import FARAD, OHM, format_value

    rows = [r for r in rownums if r]
    where = f" (row{'s' if len(rows) != 1 else ''} {', '.join(map(str, rows))})" if rows else ""
    if line is None:
        shown = spec.part if spec.kind in VALUELESS_KINDS else \
            format_value(spec.value, FARAD if spec.kind == "capacitor" else OHM)
        what = f"{spec.kind} {shown}"
        return f"the new line for {what}{where} would hold {target}"
    if replace:
        return f"stock line {line.id}{where} would be set to {target}"
    return f"stock line {line.id} holds {line.quantity}; adding{where} would make {target}"


def move_within_limit(session, line_id: int, delta: int, reason: str, reference: str = "",
                      pull_id: Optional[int] = None) -> int:
    """apply_movement (store/db.py), then the upper limit re-checked inside the same transaction:
    a line that would hold more than MAX_QUANTITY parts raises TooManyParts, which rolls the whole
    unit back. Checking the quantity the UPDATE itself produced holds under concurrent writers."""
    from selector.store.db import apply_movement

    new_qty = apply_movement(session, line_id, delta, reason, reference, pull_id=pull_id)
    if new_qty > MAX_QUANTITY:
        raise TooManyParts(f"stock line {line_id} would hold {new_qty} parts after a change of {delta:+d}; "
                           f"at most {MAX_QUANTITY} fit on one stock line; nothing was changed")
    return new_qty


def apply_plan(session, plan: ImportPlan, reason: str, reference: str) -> list[int]:
    """Write a plan in the caller's transaction: each new line is inserted together with the
    ledger movement that brings it to its quantity (none for quantity 0); each changed line gets
    one guarded movement. Returns the ids of the new lines, in plan order."""
    import sqlalchemy as sa

    from selector.store.models import MovementRow, StockLineRow, utcnow

    lines, moves = StockLineRow.__table__, MovementRow.__table__
    session.flush()
    new_ids, ledger = [], []
    now = utcnow()
    for n in plan.new_lines:
        s = n.spec
        result = session.execute(sa.insert(lines).values(
            kind=s.kind, value=s.value, tol_minus=s.tol_minus, tol_plus=s.tol_plus, quantity=n.quantity,
            location=s.location, package=s.package, rating=s.rating, dielectric=s.dielectric,
            polarized=s.polarized, note=s.note, part=s.part, turns=s.turns, rating_current=s.rating_current,
            reorder_at=s.reorder_at, created_at=now, updated_at=now))
        line_id = result.inserted_primary_key[0]
        new_ids.append(line_id)
        if n.quantity:
            ledger.append({"line_id": line_id, "delta": n.quantity, "reason": reason, "reference": reference[:255],
                           "pull_id": None, "created_at": now})
    if ledger:
        session.execute(sa.insert(moves), ledger)
    for ch in plan.changes:
        move_within_limit(session, ch.line.id, ch.delta, reason, reference)
    for rc in plan.reorders:  # a setting, not a quantity: no ledger row
        session.execute(sa.update(lines).where(lines.c.id == rc.line.id).values(reorder_at=rc.reorder_at,
                                                                                  updated_at=now))
    return new_ids


def import_stock(engine, path: str | Path, *, replace: bool = False, dry_run: bool = False) -> ImportPlan:
    """Import a stock CSV in one transaction (reason "import", reference = the file name). The file
    is read and validated before the database is touched; with ``dry_run`` nothing is written."""
    from selector.store.csvio import read_stock_file
    from selector.store.db import load_stock, lock_stock_for_plan, run_in_transaction

    rows = validate_rows(read_stock_file(path))
    from selector.core.cells import without_controls

    name = without_controls(Path(path).name)  # the ledger reference: stored text has no control characters

    def unit(session) -> ImportPlan:
        lock_stock_for_plan(session)
        plan = plan_import(rows, load_stock(session), replace=replace, source=name)
        if not dry_run:
            apply_plan(session, plan, "import", name)
        return plan

    return run_in_transaction(engine, unit)


# --------------------------------------------------------------------------- kits

def check_kit_kind(kind: str) -> str:
    """``kind`` when a kit can hold it; kits are E-series assortments, so trimmers, ICs and diodes
    are refused (UnparseableValue naming the way to add them)."""
    if kind not in NETWORK_KINDS:
        raise UnparseableValue(f"--kind {kind}: a kit is an E-series assortment of resistors or capacitors; "
                               f"add {kind} lines with `selector stock import FILE`")
    return kind


def kit_rows(series: str, kind: str, low: float, high: float, quantity: int, location: str, *,
             tolerance: Optional[tuple[float, float]] = None, dielectric: str = "",
             rating: Optional[float] = None, package: str = "", note: str = "") -> list[ImportRow]:
    """One row per member of an IEC 60063 series within [low, high]. Without a tolerance a
    resistor takes the series' own tolerance (E24 ±5 %, E96 ±1 %, ...), a capacitor the default
    of its dielectric (core/parts.py)."""
    from selector.core.eseries import SERIES_TOLERANCE, series_key, series_values

    from selector.store.models import StockLineRow
    from selector.store.textrules import check_text

    lines = StockLineRow.__table__
    check_text(location, lines.c.location, "--location")
    check_text(package, lines.c.package, "--package")
    check_text(note, lines.c.note, "note")
    if not 0 <= quantity <= MAX_QUANTITY:
        raise UnparseableValue(f"--qty {quantity}: expected 0 to {MAX_QUANTITY} parts of each value")
    kind = check_kit_kind(parse_kind(kind))
    dielectric = normalize_dielectric(dielectric)
    if kind == "resistor" and dielectric:
        raise UnparseableValue(f'"{dielectric}": a resistor has no dielectric')
    if tolerance is None:
        key = series_key(series)
        if kind == "resistor" and key in SERIES_TOLERANCE:
            tolerance = (SERIES_TOLERANCE[key], SERIES_TOLERANCE[key])
        else:
            tolerance = default_tolerance(kind, dielectric)
    values = series_values(series, low, high)
    if not values:
        raise UnparseableValue(f"no {series.upper()} value lies between {low:g} and {high:g}")
    return [
        ImportRow(0, PartSpec(kind, clean(v), clean(tolerance[0]), clean(tolerance[1]), location, package,
                              None if rating is None else clean(rating), dielectric, note), quantity)
        for v in values
    ]


def add_kit(engine, rows: Sequence[ImportRow], reference: str, *, dry_run: bool = False) -> ImportPlan:
    """Add kit rows to stock (merging with identical lines), ledgered with reason "kit"."""
    from selector.store.db import load_stock, lock_stock_for_plan, run_in_transaction

    def unit(session) -> ImportPlan:
        lock_stock_for_plan(session)
        plan = plan_import(rows, load_stock(session), replace=False, source=reference)
        if not dry_run:
            apply_plan(session, plan, "kit", reference)
        return plan

    return run_in_transaction(engine, unit)


# --------------------------------------------------------------------------- list / adjust / set

@dataclass(frozen=True)
class StockFilter:
    """What ``stock list`` shows: None means no restriction."""

    kind: Optional[str] = None
    location: Optional[str] = None
    min_value: Optional[float] = None
    max_value: Optional[float] = None
    low: bool = False  # only lines at or below their reorder level


def filter_lines(lines: Iterable[StockLine], f: StockFilter) -> list[StockLine]:
    """Pure: the lines passing the filter (location compared without regard to case). A value
    bound leaves out ICs and diodes, which have no value."""
    out = []
    for ln in lines:
        if f.kind and ln.kind != f.kind:
            continue
        if f.low and not ln.low:
            continue
        if (f.min_value is not None or f.max_value is not None) and ln.kind in VALUELESS_KINDS:
            continue
        if f.location is not None and ln.location.casefold() != f.location.strip().casefold():
            continue
        if f.min_value is not None and ln.value < f.min_value * (1 - 1e-12):
            continue
        if f.max_value is not None and ln.value > f.max_value * (1 + 1e-12):
            continue
        out.append(ln)
    return out


def list_stock(engine, f: StockFilter = StockFilter()) -> list[StockLine]:
    """The stock lines passing ``f``, ordered by id."""
    from selector.store.db import load_stock, run_in_transaction

    return run_in_transaction(engine, lambda s: filter_lines(load_stock(s, f.kind), f), write=False,
                              core=True)  # Core: listing the stock never imports the ORM


def stock_json(lines: Iterable[StockLine]) -> list[dict]:
    """The ``stock list --json`` records (SI values, tolerances as positive fractions). An IC or
    diode has value 0 and its part text in ``part``; ``low``: at or below ``reorder_at``."""
    return [
        {"line_id": ln.id, "kind": ln.kind, "value": ln.value, "tol_minus": ln.tol_minus, "tol_plus": ln.tol_plus,
         "quantity": ln.quantity, "location": ln.location, "package": ln.package, "rating": ln.rating,
         "dielectric": ln.dielectric, "polarized": ln.polarized, "note": ln.note, "part": ln.part,
         "turns": ln.turns, "rating_current": ln.rating_current, "reorder_at": ln.reorder_at, "low": ln.low}
        for ln in lines
    ]


def _get_line(session, line_id: int, *, lock: bool = False) -> StockLine:
    """The line as it is now; ``lock`` holds its row until the unit ends (PostgreSQL FOR UPDATE;
    SQLite's BEGIN IMMEDIATE already excludes other writers), for read-then-write units."""
    from selector.store.db import to_stock_line
    from selector.store.models import StockLineRow

    row = session.get(StockLineRow, line_id, with_for_update=lock or None) if 0 < line_id < 2**63 else None
    if row is None:
        raise UnknownStockLine(f"there is no stock line {line_id} (see `selector stock list`)")
    session.refresh(row)
    return to_stock_line(row)


def _check_reference(reference: str) -> None:
    from selector.store.models import MovementRow
    from selector.store.textrules import check_text

    check_text(reference, MovementRow.__table__.c.reference, "--reference")


def adjust_line(engine, line_id: int, delta: int, reference: str = "") -> tuple[StockLine, StockLine]:
    """Change a line's quantity by ``delta`` (reason "adjust"); returns (before, after). The line
    may hold at most MAX_QUANTITY parts afterwards (TooManyParts, nothing changed)."""
    from selector.store.db import run_in_transaction

    _check_reference(reference)
    if abs(delta) > MAX_QUANTITY:
        raise UnparseableValue(f"DELTA {delta:+d}: expected a change of -{MAX_QUANTITY} to +{MAX_QUANTITY} parts")

    def unit(session):
        before = _get_line(session, line_id)
        move_within_limit(session, line_id, delta, "adjust", reference)
        return before, _get_line(session, line_id)

    return run_in_transaction(engine, unit)


def set_line(engine, line_id: int, quantity: int, reference: str = "") -> tuple[StockLine, StockLine]:
    """Set a line's quantity (reason "set", the difference goes into the ledger)."""
    from selector.store.db import apply_movement, run_in_transaction

    _check_reference(reference)
    if not 0 <= quantity <= MAX_QUANTITY:
        raise UnparseableValue(f"QTY {quantity}: expected a quantity from 0 to {MAX_QUANTITY}")

    def unit(session):
        before = _get_line(session, line_id, lock=True)  # two benches setting at once: no lost update
        apply_movement(session, line_id, quantity - before.quantity, "set", reference)
        return before, _get_line(session, line_id)

    return run_in_transaction(engine, unit)


# --------------------------------------------------------------------------- export

def _minimal_exp(x: float) -> str:
    """The shortest e-notation text that reads back as exactly ``x`` ("4.7e-05")."""
    for p in range(0, 17):
        t = f"{x:.{p}e}"
        if float(t) == x:
            return t
    return repr(x)


def _first_exact(candidates: Iterable, parse, target) -> str:
    for make in candidates:
        try:
            text = make()
            if text and parse(text) == target:
                return text
        except (UnparseableValue, ValueError, ImportError, ArithmeticError):
            continue
    raise ValueError(f"no lossless text for {target!r}")


def export_cells(line: StockLine) -> dict[str, str]:
    """The CSV cells of a line, each written so that importing it gives back exactly this line:
    the readable notation when it reads back exactly, else a full-precision number."""
    try:
        return _export_cells(line)
    except ValueError as err:  # only a line stored by an older version (an infinite rating, say)
        raise DatabaseProblem(
            f"stock line {line.id} cannot be exported ({err}: outside the accepted ranges, see the README); "
            "nothing was written"
        ) from None


def _export_cells(line: StockLine) -> dict[str, str]:
    from selector.core import notation as n

    extra = {"part": line.part, "turns": "" if line.turns is None else str(line.turns),
             "reorder_at": "" if line.reorder_at is None else str(line.reorder_at)}
    common = {"kind": line.kind, "quantity": str(line.quantity), "location": line.location,
              "package": line.package, "dielectric": line.dielectric, "note": line.note, **extra}
    if line.kind in VALUELESS_KINDS:  # named by the part column; a diode's rating is its forward drop
        rating = ""
        if line.rating is not None:
            volts = _first_exact((lambda: n.format_value(line.rating, n.VOLT), lambda: f"{line.rating!r}V"),
                                 lambda t: clean(parse_forward_drop(t)[0]), line.rating)
            rating = volts
            if line.rating_current is not None:
                amps = _first_exact((lambda: n.format_value(line.rating_current, "A"),
                                     lambda: f"{line.rating_current!r}A"),
                                    lambda t: clean(parse_forward_drop(f"1V@{t}")[1]), line.rating_current)
                rating = f"{volts}@{amps}".replace(" ", "")
        return {**common, "value": "", "tolerance": "", "rating": rating}
    kind = reading_kind(line.kind)
    unit = n.OHM if kind == "resistor" else n.FARAD
    value = _first_exact(
        (lambda: n.format_value(line.value, unit), lambda: repr(line.value) if kind == "resistor" else "",
         lambda: _minimal_exp(line.value)),
        lambda t: clean(n.parse_value(t, kind, unit)), line.value)
    tol = (line.tol_minus, line.tol_plus)

    def pct(x: float) -> str:  # percent in plain decimal digits, never an exponent
        return format(Decimal(repr(clean(x * 100))), "f")

    def frac(x: float) -> str:
        return format(Decimal(repr(x)), "f")

    tolerance = _first_exact(
        (lambda: n.format_tolerance(*tol), lambda: f"±{pct(tol[0])}%" if tol[0] == tol[1] else "",
         lambda: f"-{pct(tol[0])}/+{pct(tol[1])}%", lambda: frac(tol[0]) if tol[0] == tol[1] else "",
         lambda: f"-{frac(tol[0])}/+{frac(tol[1])}"),
        lambda t: tuple(clean(x) for x in n.parse_tolerance(t, kind, line.value)), tol)
    rating = ""
    if line.rating is not None:
        runit = n.WATT if kind == "resistor" else n.VOLT
        rating = _first_exact(
            (lambda: n.format_value(line.rating, runit), lambda: repr(line.rating)),
            lambda t: clean(n.parse_rating(t, kind)), line.rating)
    return {**common, "value": value, "tolerance": tolerance, "rating": rating}


def export_stock(engine, path: str | Path) -> int:
    """Write every stock line to a CSV that re-imports to the identical stock ("-": stdout text is
    returned by export_text instead). Returns the number of lines written."""
    from selector.store.csvio import write_stock_file

    lines = list_stock(engine)
    return write_stock_file(path, [export_cells(ln) for ln in lines])


def export_text(engine) -> str:
    """The export CSV as text (for ``stock export -``)."""
    from selector.store.csvio import write_stock_csv

    buf = io.StringIO()
    write_stock_csv(buf, [export_cells(ln) for ln in list_stock(engine)])
    return buf.getvalue()
