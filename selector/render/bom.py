"""Rich tables for the BOM, the pick list, a pull, an undo and the ledger."""

from __future__ import annotations

from typing import Sequence

from rich.console import Console
from rich.text import Text

from selector.core import bom as core_bom
from selector.render.layout import WIDE, Col, paragraph, print_lines, table_lines
from selector.render.safe import cell, printable


def _cells(*values) -> list[Text]:
    """Table cells as plain, printable Text (render/safe.py): a bracket in a location or note is
    never read as markup, a control character never reaches the terminal."""
    return [cell(v) for v in values]


def _value(kind: str, value: float) -> str:
    from selector.core.notation import format_value, kind_units

    return format_value(value, kind_units(kind)[0])


def bom_lines(bom: core_bom.Bom, width: int = 200) -> list:
    """One row per physical part. Below 110 columns package and dielectric are left out so that
    the quantities stay visible (the CSV and Markdown forms always carry them)."""
    boards = f"{bom.boards} board{'s' if bom.boards != 1 else ''}"
    wide = width >= WIDE
    cols = [Col("ref"), Col("role", wrap=True, min_wrap=9), Col("value", wrap=True, min_wrap=7), Col("tol.")]
    cols += [Col("part", wrap=True)] if wide else []
    cols += [Col("rating", right=True), Col("location", wrap=True, min_wrap=8), Col("line", right=True),
             Col("/board", right=True, drop=1), Col("total", right=True), Col("in stock")]
    rows = []
    for row, bl in zip(core_bom.to_rows(bom), bom.lines):
        if bl.line_id is None:
            stock = Text("no", style="yellow")
        elif not bl.in_stock:
            stock = Text("short", style="bold red")
        else:
            stock = Text("yes")
        value = row["value"].replace(" ", "\u00a0") if bl.part else row["value"]  # a part text stays whole
        cells = [row["ref"], row["role"], value, row["tolerance"]]
        cells += [", ".join(x for x in (row["package"], row["dielectric"]) if x)] if wide else []
        cells += [row["rating"], row["location"], row["line_id"], row["per_board"], row["total"]]
        rows.append(_cells(*cells) + [stock])
    return table_lines(cols, rows, width, title=f"BOM: option {bom.option} of search {bom.search_id}, {boards}")


def pick_lines(stops: Sequence[core_bom.PickStop], width: int = 200) -> list:
    from selector.core.notation import format_tolerance

    cols = [Col("location", wrap=True, min_wrap=8), Col("line", right=True), Col("value"), Col("tolerance"),
            Col("package", drop=1, wrap=True, min_wrap=7), Col("take", right=True),
            Col("on hand", right=True), Col("refs", wrap=True, min_wrap=4)]
    rows = []
    for stop in stops:
        first = True
        for it in stop.items:
            take = Text(str(it.quantity))
            if it.missing:
                take = Text(f"{it.quantity} (short {it.missing})", style="bold red")
            rows.append(_cells((stop.location or "(no location)") if first else "", it.line_id,
                               it.part or _value(it.kind, it.value),
                               "" if it.part else format_tolerance(it.tol_minus, it.tol_plus),
                               it.package) + [take] + _cells(it.on_hand, " ".join(it.refs)))
            first = False
    return table_lines(cols, rows, width, title="Pick list (one visit per drawer)")


def print_bom(console: Console, report) -> None:
    """The BOM table, the pick list, what to obtain elsewhere, then notes and cautions."""
    bom = report.bom
    width = console.width
    lines = bom_lines(bom, width)
    for role, network in core_bom.wirings(bom):
        shape, _, formula = network.partition(": ")
        lines += paragraph(f"Wiring: {role} = {formula} ({shape})", width)
    if report.stops:
        lines.append("")
        lines += pick_lines(report.stops, width)
    missing = core_bom.to_obtain(bom)
    if missing:
        lines.append("Not in stock (obtain before building):")
        for bl in missing:
            what = bl.description if bl.value is None else _value(bl.kind, bl.value)
            lines += paragraph(printable(f"  {bl.ref} {bl.role}: {what} x{bl.total}"
                                         + (f" ({bl.note})" if bl.note else "")), width, "    ")
    for s in report.shortages:
        lines += [Text(x, style="red") for x in paragraph(
            f"Short: stock line {s.line_id} holds {s.on_hand}, the BOM needs {s.needed} ({s.missing} missing).",
            width)]
    note = getattr(report, "alternatives_note", "")
    if report.shortages and note:  # the same build from other drawers (one row per build)
        lines += paragraph(printable("T" + note[3:] + "."), width)
    for note in bom.notes:
        lines += paragraph(printable(note), width)
    print_lines(console, lines)


def print_pull(console: Console, result) -> None:
    from selector.render.stock import line_value_text

    by_id = {s.id: s for s in result.report.stock}
    head = "Dry run, nothing taken" if result.pull_id is None else f"Pull {result.pull_id}"
    title = (f"{head}: option {result.option} of search {result.search_id}, "
             f"{result.boards} board{'s' if result.boards != 1 else ''}")
    taken = "would take" if result.pull_id is None else "taken"
    cols = [Col("line", right=True), Col("value"), Col("location", wrap=True), Col(taken, right=True),
            Col("left", right=True)]
    rows = []
    for line_id, n in result.taken:
        s = by_id[line_id]
        rows.append(_cells(line_id, line_value_text(s), s.location, n, s.quantity - n))
    lines = table_lines(cols, rows, console.width, title=title)
    missing = core_bom.to_obtain(result.report.bom)
    if missing:
        lines += paragraph("Not taken (not in stock): " + ", ".join(f"{bl.ref} {bl.role}" for bl in missing),
                           console.width)
    low = result.low
    if low:
        verb = ("would be" if result.pull_id is None else "are now" if len(low) != 1 else "is now")
        lines += paragraph(printable(
            f"Reorder: {len(low)} line{'s' if len(low) != 1 else ''} {verb} at or below the reorder level: "
            + "; ".join(f"line {ln.id} {line_value_text(ln)}{f' in {ln.location}' if ln.location else ''}, "
                        f"{ln.quantity} left (reorder at {ln.reorder_at})" for ln in low) + "."), console.width)
    if result.pull_id is not None:
        lines.append(f"To put these parts back: selector undo {result.pull_id}")
    print_lines(console, lines)


def print_undo(console: Console, result) -> None:
    total = sum(n for _, n in result.restored)
    lines = ", ".join(f"line {i} +{n}" for i, n in result.restored)
    print_lines(console, paragraph(
        f"Undid pull {result.pull_id}: {total} part{'s' if total != 1 else ''} put back ({lines}).", console.width))


def ledger_lines(entries, width: int = 200) -> list:
    cols = [Col("#", right=True), Col("when (UTC)", wrap=True, min_wrap=10), Col("line", right=True), Col("value"),
            Col("location", wrap=True, min_wrap=8), Col("change", right=True), Col("reason"),
            Col("pull", right=True, hide_empty=True), Col("reference", wrap=True, min_wrap=9, hide_empty=True)]
    rows = [_cells(e.movement_id, e.at.strftime("%Y-%m-%d %H:%M"), e.line_id, e.part or _value(e.kind, e.value),
                   e.location, f"{e.delta:+d}", e.reason, "" if e.pull_id is None else e.pull_id, e.reference)
            for e in entries]
    return table_lines(cols, rows, width, title="Ledger (newest first)")


def print_ledger(console: Console, entries) -> None:
    print_lines(console, ledger_lines(entries, console.width))
