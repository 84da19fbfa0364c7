"""Rich tables for the BOM, the pick list, a pull, an undo and the ledger."""

from __future__ import annotations

from typing import Sequence

from rich import box
from rich.console import Console
from rich.table import Table
from rich.text import Text

from selector.core import bom as core_bom
from selector.render.safe import cell, printable


def _cells(*values) -> list[Text]:
    """Table cells as plain, printable Text (render/safe.py): a bracket in a location or note is
    never read as markup, a control character never reaches the terminal."""
    return [cell(v) for v in values]


def _unit(kind: str) -> str:
    from selector.core.notation import FARAD, OHM

    return OHM if kind == "resistor" else FARAD if kind == "capacitor" else ""


def _value(kind: str, value: float) -> str:
    from selector.core.notation import format_value

    return format_value(value, _unit(kind))


def bom_table(bom: core_bom.Bom, width: int = 200) -> Table:
    """One row per physical part. Below about 120 columns the package/dielectric column is left
    out so that the quantities stay visible (the CSV and Markdown forms always carry it)."""
    boards = f"{bom.boards} board{'s' if bom.boards != 1 else ''}"
    wide = width >= 120
    t = Table(title=f"BOM: option {bom.option} of search {bom.search_id}, {boards}", title_justify="left",
              box=box.SIMPLE_HEAD, pad_edge=False)
    short = {"no_wrap": True}
    cols = [("ref", short), ("role", {"ratio": 2}), ("value", {"min_width": 7}), ("tol.", short)]
    cols += [("part", {})] if wide else []
    cols += [("rating", {"justify": "right", **short}), ("location", {}), ("line", {"justify": "right", **short}),
             ("/board", {"justify": "right", **short}), ("total", {"justify": "right", **short}),
             ("in stock", short)]
    for name, kw in cols:
        t.add_column(name, **kw)
    for row, bl in zip(core_bom.to_rows(bom), bom.lines):
        if bl.line_id is None:
            stock = Text("no", style="yellow")
        elif not bl.in_stock:
            stock = Text("short", style="bold red")
        else:
            stock = Text("yes")
        cells = [row["ref"], row["role"], row["value"], row["tolerance"]]
        cells += [", ".join(x for x in (row["package"], row["dielectric"]) if x)] if wide else []
        cells += [row["rating"], row["location"], row["line_id"], row["per_board"], row["total"], stock]
        t.add_row(*_cells(*cells))
    return t


def pick_table(stops: Sequence[core_bom.PickStop]) -> Table:
    from selector.core.notation import format_tolerance

    t = Table(title="Pick list (one visit per drawer)", title_justify="left", box=box.SIMPLE_HEAD,
              pad_edge=False)
    for name, kw in (("location", {}), ("line", {"justify": "right"}), ("value", {}), ("tolerance", {}),
                     ("package", {}), ("take", {"justify": "right"}), ("on hand", {"justify": "right"}),
                     ("refs", {})):
        t.add_column(name, **kw)
    for stop in stops:
        first = True
        for it in stop.items:
            take = Text(str(it.quantity))
            if it.missing:
                take = Text(f"{it.quantity} (short {it.missing})", style="bold red")
            t.add_row(*_cells((stop.location or "(no location)") if first else "", it.line_id,
                              _value(it.kind, it.value), format_tolerance(it.tol_minus, it.tol_plus),
                              it.package, take, it.on_hand, " ".join(it.refs)))
            first = False
    return t


def print_bom(console: Console, report) -> None:
    """The BOM table, the pick list, what to obtain elsewhere, then notes and cautions."""
    bom = report.bom
    console.print(bom_table(bom, console.width))
    for role, network in core_bom.wirings(bom):
        shape, _, formula = network.partition(": ")
        console.print(f"Wiring: {role} = {formula} ({shape})", highlight=False, markup=False)
    if report.stops:
        console.print(pick_table(report.stops))
    missing = core_bom.to_obtain(bom)
    if missing:
        console.print("Not in stock (obtain before building):", highlight=False, markup=False)
        for bl in missing:
            what = bl.description if bl.value is None else _value(bl.kind, bl.value)
            console.print(printable(f"  {bl.ref} {bl.role}: {what} x{bl.total}" + (f" ({bl.note})" if bl.note else "")),
                          highlight=False, markup=False)
    for s in report.shortages:
        console.print(f"Short: stock line {s.line_id} holds {s.on_hand}, the BOM needs {s.needed} "
                      f"({s.missing} missing).", style="red", highlight=False, markup=False)
    if report.shortages and report.alternatives_note:
        console.print(printable("T" + report.alternatives_note[3:] + "."), highlight=False,
                      markup=False)
    for note in bom.notes:
        console.print(note, highlight=False, markup=False)


def print_pull(console: Console, result) -> None:
    from selector.core.notation import format_value

    by_id = {s.id: s for s in result.report.stock}
    head = "Dry run, nothing taken" if result.pull_id is None else f"Pull {result.pull_id}"
    t = Table(title=f"{head}: option {result.option} of search {result.search_id}, "
                    f"{result.boards} board{'s' if result.boards != 1 else ''}", title_justify="left",
              box=box.SIMPLE_HEAD, pad_edge=False)
    taken = "would take" if result.pull_id is None else "taken"
    for name, kw in (("line", {"justify": "right"}), ("value", {}), ("location", {}),
                     (taken, {"justify": "right"}), ("left", {"justify": "right"})):
        t.add_column(name, **kw)
    for line_id, n in result.taken:
        s = by_id[line_id]
        left = s.quantity - n
        t.add_row(*_cells(line_id, format_value(s.value, _unit(s.kind)), s.location, n, left))
    console.print(t)
    missing = core_bom.to_obtain(result.report.bom)
    if missing:
        console.print("Not taken (not in stock): " + ", ".join(f"{bl.ref} {bl.role}" for bl in missing),
                      highlight=False, markup=False)
    if result.pull_id is not None:
        console.print(f"To put these parts back: selector undo {result.pull_id}", highlight=False, markup=False)


def print_undo(console: Console, result) -> None:
    total = sum(n for _, n in result.restored)
    lines = ", ".join(f"line {i} +{n}" for i, n in result.restored)
    console.print(f"Undid pull {result.pull_id}: {total} part{'s' if total != 1 else ''} put back ({lines}).",
                  highlight=False, markup=False)


def ledger_table(entries) -> Table:
    t = Table(title="Ledger (newest first)", title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False)
    for name, kw in (("#", {"justify": "right"}), ("when (UTC)", {"no_wrap": True}), ("line", {"justify": "right"}),
                     ("value", {}), ("location", {}), ("change", {"justify": "right"}), ("reason", {}),
                     ("pull", {"justify": "right"}), ("reference", {"ratio": 1})):
        t.add_column(name, **kw)
    for e in entries:
        t.add_row(*_cells(e.movement_id, e.at.strftime("%Y-%m-%d %H:%M"), e.line_id,
                          _value(e.kind, e.value), e.location, f"{e.delta:+d}", e.reason,
                          "" if e.pull_id is None else e.pull_id, e.reference))
    return t
