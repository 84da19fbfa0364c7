"""Rich output for the stock commands: the stock table, import/kit plans, single-line changes."""

from __future__ import annotations

from typing import Iterable, Sequence

from rich.console import Console

from selector.core.types import VALUELESS_KINDS, StockLine
from selector.core.cautions import CAUTIONS as CAUTION_TEXTS
from selector.render.layout import WIDE, Col, paragraph, print_lines, table_lines
from selector.render.safe import printable

POLARITY_CAUTION = CAUTION_TEXTS["polarity"]


def _units(kind: str):
    from selector.core.notation import kind_units

    return kind_units(kind)


def value_text(kind: str, value: float) -> str:
    from selector.core.notation import format_value

    return format_value(value, _units(kind)[0])


def rating_text(kind: str, rating: float | None, rating_current: float | None = None) -> str:
    """Watts, volts, or a diode's forward drop with the current it is stated at ("620 mV @ 1 mA")."""
    if rating is None:
        return ""
    from selector.core.notation import format_value

    text = format_value(rating, _units(kind)[1])
    return text if rating_current is None else f"{text} @ {format_value(rating_current, 'A')}"


def line_value_text(ln) -> str:
    """What names a line in a table: its value, or the part text of an IC or diode."""
    return ln.part if ln.kind in VALUELESS_KINDS else value_text(ln.kind, ln.value)


def line_tolerance_text(ln) -> str:
    return "" if ln.kind in VALUELESS_KINDS else tolerance_text(ln.tol_minus, ln.tol_plus)


def reorder_text(ln) -> str:
    """The reorder level, and "low" when the line is at or below it ("" without a level)."""
    if ln.reorder_at is None:
        return ""
    return f"{ln.reorder_at} low" if ln.low else str(ln.reorder_at)


def _dielectric_text(ln) -> str:
    return ln.dielectric + (" (polarised)" if ln.polarized else "")


def _details(ln) -> str:
    """Package, dielectric (and polarity) and a trimmer's turns: the narrow layout's "type" column."""
    diel = _dielectric_text(ln)
    turns = f"{ln.turns}-turn" if ln.turns is not None and ln.turns > 1 else ""  # single-turn goes unsaid
    return " ".join(x for x in (ln.package, diel, turns) if x)


def tolerance_text(minus: float, plus: float) -> str:
    from selector.core.notation import format_tolerance

    return format_tolerance(minus, plus)


STOCK_COLUMNS = (
    # kind is implied by the value's unit (Ω or F): the first column to go at narrow widths
    Col("id", right=True), Col("kind", drop=1), Col("value", right=True), Col("tolerance"),
    Col("qty", right=True), Col("location", wrap=True, min_wrap=8), Col("package", wrap=True, min_wrap=7),
    Col("rating", right=True), Col("dielectric", wrap=True, min_wrap=10), Col("turns", right=True, hide_empty=True),
    Col("reorder", right=True, hide_empty=True), Col("note", wrap=True, min_wrap=8, hide_empty=True),
)


NARROW_STOCK_COLUMNS = (
    Col("id", right=True), Col("value", right=True), Col("tolerance"), Col("qty", right=True),
    Col("location", wrap=True, min_wrap=8), Col("type", wrap=True, min_wrap=12), Col("rating", right=True),
    # the reorder level goes first when room is short (the footer then counts the low lines)
    Col("reorder", right=True, hide_empty=True, drop=1), Col("note", wrap=True, min_wrap=8, hide_empty=True),
)


def stock_lines(lines: Sequence[StockLine], width: int) -> list:
    """One row per stock line: id, kind, value (an IC's or diode's part text), tolerance, qty,
    location, package, rating, dielectric, turns, reorder level, note. Values never wrap; below
    110 columns the kind goes (the value's unit or part text says it) and package, dielectric and
    turns share one "type" column."""
    if width < WIDE:
        rows = [[printable(x) for x in (
            ln.id, line_value_text(ln), line_tolerance_text(ln), ln.quantity, ln.location, _details(ln),
            rating_text(ln.kind, ln.rating, ln.rating_current), reorder_text(ln), ln.note)] for ln in lines]
        return table_lines(NARROW_STOCK_COLUMNS, rows, width)
    rows = [[printable(x) for x in (
        ln.id, ln.kind, line_value_text(ln), line_tolerance_text(ln), ln.quantity, ln.location, ln.package,
        rating_text(ln.kind, ln.rating, ln.rating_current), _dielectric_text(ln), "" if ln.turns is None else ln.turns,
        reorder_text(ln), ln.note)]
        for ln in lines]
    return table_lines(STOCK_COLUMNS, rows, width)


def print_stock(console: Console, lines: Sequence[StockLine], *, low_only: bool = False) -> None:
    if not lines:
        console.print("No stock line is at or below its reorder level." if low_only else
                      "No stock lines match. Add parts with `selector stock import FILE` or `selector stock kit`.")
        return
    out = stock_lines(lines, console.width)
    parts = sum(ln.quantity for ln in lines)
    out.append(f"{len(lines)} stock line{'s' if len(lines) != 1 else ''}, {parts} part{'s' if parts != 1 else ''}")
    low = sum(ln.low for ln in lines)
    if low and not low_only:
        out += paragraph(f"{low} line{'s are' if low != 1 else ' is'} at or below {'their' if low != 1 else 'its'} "
                         "reorder level; `selector stock list --low` lists them.", console.width)
    if any(ln.polarized for ln in lines):
        out += paragraph(POLARITY_CAUTION, console.width)
    print_lines(console, out)


def _spec_cells(x) -> list[str]:
    """The plan's cells of a PartSpec or a StockLine (both carry the same fields)."""
    return [x.kind, line_value_text(x), line_tolerance_text(x), x.location, x.package,
            rating_text(x.kind, x.rating, x.rating_current), x.dielectric]


PLAN_ROWS_SHOWN = 100
PLAN_ROWS_SHORT = 20
"""An import or kit plan of at most this many lines is listed without --verbose."""

PLAN_COLUMNS = (
    # at narrow widths the kind goes first (the unit says it), then the CSV rows, dielectric,
    # rating and package (`stock list` and --verbose at full width show them)
    Col("action"), Col("line", right=True), Col("kind", drop=5), Col("value", right=True), Col("tolerance"),
    Col("location", wrap=True, min_wrap=8), Col("package", drop=1, wrap=True, min_wrap=7),
    Col("rating", right=True, drop=2), Col("dielectric", drop=3, wrap=True, min_wrap=10), Col("qty", right=True),
    Col("change", right=True), Col("rows", wrap=True, min_wrap=4, sep=", ", drop=4, hide_empty=True),
)


def plan_lines(plan, width: int, limit: int = PLAN_ROWS_SHOWN) -> list:
    """The lines an import/kit plan creates or changes (ImportPlan from services/stock.py), at
    most ``limit`` of them (the summary line always counts all)."""
    rows = []
    for n in plan.new_lines:
        if len(rows) == limit:
            break
        rows.append(["new", "", *_spec_cells(n.spec), n.quantity, f"+{n.quantity}", _rows(n.rows)])
    for ch in plan.changes:
        if len(rows) == limit:
            break
        ln = ch.line
        rows.append(["set" if plan.replace else "add", ln.id,
                     *_spec_cells(ln),
                     f"{ln.quantity} → {ch.new_quantity}", f"{ch.delta:+d}", _rows(ch.rows)])
    return table_lines(PLAN_COLUMNS, [[printable(x) for x in r] for r in rows], width)


def _rows(rows: Iterable[int]) -> str:
    rows = [r for r in rows if r]
    return ", ".join(str(r) for r in rows)


def print_plan(console: Console, plan, *, dry_run: bool, verb: str = "import", verbose: bool = False) -> None:
    """One summary line saying what was (or would be) written; the plan's lines before it with
    ``verbose`` or when there are few of them."""
    count = len(plan.new_lines) + len(plan.changes)
    out: list = []
    if count and (verbose or count <= PLAN_ROWS_SHORT):
        out += plan_lines(plan, console.width)
        hidden = count - PLAN_ROWS_SHOWN
        if hidden > 0:
            out.append(f"… and {hidden} more line{'s' if hidden != 1 else ''} not shown")
    summary = (f"{len(plan.new_lines)} new line{'s' if len(plan.new_lines) != 1 else ''}, "
               f"{len(plan.changes)} changed, {len(plan.unchanged)} unchanged; "
               f"+{plan.parts_added}\u00a0/\u00a0-{plan.parts_removed}\u00a0parts")
    if dry_run:
        text = f"Dry run ({verb} from {plan.source}): {summary}. Nothing was written."
    else:
        text = (f"{verb.capitalize()}ed from {plan.source}: {summary}." if verb == "import"
                else f"Kit {plan.source}: {summary}.")
    out += paragraph(printable(text), console.width)
    if count > PLAN_ROWS_SHORT and not verbose:
        out.append("`selector stock list` shows the stock; --verbose lists every line changed.")
    print_lines(console, out)


def print_change(console: Console, before: StockLine, after: StockLine) -> None:
    """One line: which stock line changed and how."""
    delta = after.quantity - before.quantity
    where = f" in {after.location}" if after.location else ""
    console.print(printable(
        f"Stock line {after.id} ({' '.join(x for x in (after.kind, line_value_text(after), line_tolerance_text(after)) if x)}"
        f"{where}): {before.quantity} → {after.quantity} ({delta:+d})"
        + (f"; at or below its reorder level ({after.reorder_at})" if after.low else "")
    ), markup=False, highlight=False)
