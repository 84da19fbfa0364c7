"""Rich output for the stock commands: the stock table, import/kit plans, single-line changes."""

from __future__ import annotations

from typing import Iterable, Sequence

from rich.console import Console
from rich.table import Table

from selector.core.types import StockLine
from selector.core.cautions import CAUTIONS as CAUTION_TEXTS
from selector.render.safe import cell, printable

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


def stock_table(lines: Sequence[StockLine], title: str | None = None) -> Table:
    """One row per stock line: id, kind, value, tolerance, qty, location, package, rating,
    dielectric, note."""
    table = Table(title=title, show_lines=False, header_style="bold")
    for name, justify in (("id", "right"), ("kind", "left"), ("value", "right"), ("tolerance", "left"),
                          ("qty", "right"), ("location", "left"), ("package", "left"), ("rating", "right"),
                          ("dielectric", "left"), ("note", "left")):
        table.add_column(name, justify=justify, overflow="fold")
    for ln in lines:
        table.add_row(*map(cell, (
            ln.id, ln.kind, value_text(ln.kind, ln.value), tolerance_text(ln.tol_minus, ln.tol_plus),
            ln.quantity, ln.location, ln.package, rating_text(ln.kind, ln.rating),
            ln.dielectric + (" (polarised)" if ln.polarized else ""), ln.note)))
    return table


def print_stock(console: Console, lines: Sequence[StockLine]) -> None:
    if not lines:
        console.print("No stock lines match. Add parts with `selector stock import FILE` or `selector stock kit`.")
        return
    console.print(stock_table(lines))
    parts = sum(ln.quantity for ln in lines)
    console.print(f"{len(lines)} stock line{'s' if len(lines) != 1 else ''}, {parts} part{'s' if parts != 1 else ''}")
    if any(ln.polarized for ln in lines):
        console.print(POLARITY_CAUTION)


def _spec_cells(kind, value, tol_minus, tol_plus, location, package, rating, dielectric) -> list[str]:
    return [kind, value_text(kind, value), tolerance_text(tol_minus, tol_plus), location, package,
            rating_text(kind, rating), dielectric]


PLAN_ROWS_SHOWN = 100


def plan_table(plan, limit: int = PLAN_ROWS_SHOWN) -> Table:
    """The lines an import/kit plan creates or changes (ImportPlan from services/stock.py), at
    most ``limit`` of them (the summary line always counts all)."""
    table = Table(header_style="bold")
    for name, justify in (("action", "left"), ("line", "right"), ("kind", "left"), ("value", "right"),
                          ("tolerance", "left"), ("location", "left"), ("package", "left"), ("rating", "right"),
                          ("dielectric", "left"), ("qty", "right"), ("change", "right"), ("rows", "left")):
        table.add_column(name, justify=justify, overflow="fold")
    shown = 0
    for n in plan.new_lines:
        if shown == limit:
            break
        shown += 1
        s = n.spec
        table.add_row(*map(cell, ("new", "", *_spec_cells(s.kind, s.value, s.tol_minus, s.tol_plus, s.location,
                                                          s.package, s.rating, s.dielectric),
                                  n.quantity, f"+{n.quantity}", _rows(n.rows))))
    for ch in plan.changes:
        if shown == limit:
            break
        shown += 1
        ln = ch.line
        table.add_row(*map(cell, ("set" if plan.replace else "add", ln.id,
                                  *_spec_cells(ln.kind, ln.value, ln.tol_minus, ln.tol_plus, ln.location, ln.package,
                                               ln.rating, ln.dielectric),
                                  f"{ln.quantity} → {ch.new_quantity}", f"{ch.delta:+d}", _rows(ch.rows))))
    return table


def _rows(rows: Iterable[int]) -> str:
    rows = [r for r in rows if r]
    return ", ".join(str(r) for r in rows)


def print_plan(console: Console, plan, *, dry_run: bool, verb: str = "import") -> None:
    """The plan table and one summary line saying what was (or would be) written."""
    if plan.new_lines or plan.changes:
        console.print(plan_table(plan))
        hidden = len(plan.new_lines) + len(plan.changes) - PLAN_ROWS_SHOWN
        if hidden > 0:
            console.print(f"… and {hidden} more line{'s' if hidden != 1 else ''} not shown")
    summary = (f"{len(plan.new_lines)} new line{'s' if len(plan.new_lines) != 1 else ''}, "
               f"{len(plan.changes)} changed, {len(plan.unchanged)} unchanged; "
               f"+{plan.parts_added} / -{plan.parts_removed} parts")
    if dry_run:
        console.print(f"Dry run ({verb} from {plan.source}): {summary}. Nothing was written.")
    else:
        console.print(f"{verb.capitalize()}ed from {plan.source}: {summary}." if verb == "import"
                      else f"Kit {plan.source}: {summary}.")


def print_change(console: Console, before: StockLine, after: StockLine) -> None:
    """One line: which stock line changed and how."""
    delta = after.quantity - before.quantity
    where = f" in {after.location}" if after.location else ""
    console.print(printable(
        f"Stock line {after.id} ({after.kind} {value_text(after.kind, after.value)}"
        f" {tolerance_text(after.tol_minus, after.tol_plus)}{where}): {before.quantity} → {after.quantity}"
        f" ({delta:+d})"
    ), markup=False, highlight=False)
