"""Rich output for the stock commands: the stock table, import/kit plans, single-line changes."""

from __future__ import annotations

from typing import Iterable, Sequence

from rich.console import Console

from selector.core.types import StockLine
from selector.core.cautions import CAUTIONS as CAUTION_TEXTS
from selector.render.layout import WIDE, Col, paragraph, print_lines, table_lines
from selector.render.safe import printable

POLARITY_CAUTION = CAUTION_TEXTS["polarity"]


def _units(kind: str):
    from selector.core.notation import FARAD, OHM, VOLT, WATT

    return (OHM, WATT) if kind == "resistor" else (FARAD, VOLT)


def value_text(kind: str, value: float) -> str:
    from selector.core.notation import format_value

    return format_value(value, _units(kind)[0])


def rating_text(kind: str, rating: float | None) -> str:
    if rating is None:
        return ""
    from selector.core.notation import format_value

    return format_value(rating, _units(kind)[1])


def tolerance_text(minus: float, plus: float) -> str:
    from selector.core.notation import format_tolerance

    return format_tolerance(minus, plus)


STOCK_COLUMNS = (
    # kind is implied by the value's unit (Ω or F): the first column to go at narrow widths
    Col("id", right=True), Col("kind", drop=1), Col("value", right=True), Col("tolerance"),
    Col("qty", right=True), Col("location", wrap=True, min_wrap=8), Col("package", wrap=True, min_wrap=7),
    Col("rating", right=True), Col("dielectric", wrap=True, min_wrap=10), Col("note", wrap=True, min_wrap=8, hide_empty=True),
)


NARROW_STOCK_COLUMNS = (
    Col("id", right=True), Col("value", right=True), Col("tolerance"), Col("qty", right=True),
    Col("location", wrap=True, min_wrap=8), Col("part", wrap=True, min_wrap=12), Col("rating", right=True),
    Col("note", wrap=True, min_wrap=8, hide_empty=True),
)


def stock_lines(lines: Sequence[StockLine], width: int) -> list:
    """One row per stock line: id, kind, value, tolerance, qty, location, package, rating,
    dielectric, note. Values never wrap; below 110 columns the kind goes (the value's unit says
    it) and package and dielectric share one "part" column."""
    def diel(ln):
        return ln.dielectric + (" (polarised)" if ln.polarized else "")

    if width < WIDE:
        rows = [[printable(x) for x in (
            ln.id, value_text(ln.kind, ln.value), tolerance_text(ln.tol_minus, ln.tol_plus), ln.quantity,
            ln.location, " ".join(x for x in (ln.package, diel(ln)) if x), rating_text(ln.kind, ln.rating),
            ln.note)] for ln in lines]
        return table_lines(NARROW_STOCK_COLUMNS, rows, width)
    rows = [[printable(x) for x in (
        ln.id, ln.kind, value_text(ln.kind, ln.value), tolerance_text(ln.tol_minus, ln.tol_plus),
        ln.quantity, ln.location, ln.package, rating_text(ln.kind, ln.rating), diel(ln), ln.note)]
        for ln in lines]
    return table_lines(STOCK_COLUMNS, rows, width)


def print_stock(console: Console, lines: Sequence[StockLine]) -> None:
    if not lines:
        console.print("No stock lines match. Add parts with `selector stock import FILE` or `selector stock kit`.")
        return
    out = stock_lines(lines, console.width)
    parts = sum(ln.quantity for ln in lines)
    out.append(f"{len(lines)} stock line{'s' if len(lines) != 1 else ''}, {parts} part{'s' if parts != 1 else ''}")
    if any(ln.polarized for ln in lines):
        out += paragraph(POLARITY_CAUTION, console.width)
    print_lines(console, out)


def _spec_cells(kind, value, tol_minus, tol_plus, location, package, rating, dielectric) -> list[str]:
    return [kind, value_text(kind, value), tolerance_text(tol_minus, tol_plus), location, package,
            rating_text(kind, rating), dielectric]


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
        s = n.spec
        rows.append(["new", "", *_spec_cells(s.kind, s.value, s.tol_minus, s.tol_plus, s.location,
                                             s.package, s.rating, s.dielectric),
                     n.quantity, f"+{n.quantity}", _rows(n.rows)])
    for ch in plan.changes:
        if len(rows) == limit:
            break
        ln = ch.line
        rows.append(["set" if plan.replace else "add", ln.id,
                     *_spec_cells(ln.kind, ln.value, ln.tol_minus, ln.tol_plus, ln.location, ln.package,
                                  ln.rating, ln.dielectric),
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
        f"Stock line {after.id} ({after.kind} {value_text(after.kind, after.value)}"
        f" {tolerance_text(after.tol_minus, after.tol_plus)}{where}): {before.quantity} → {after.quantity}"
        f" ({delta:+d})"
    ), markup=False, highlight=False)
