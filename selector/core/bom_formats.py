"""Output forms of a BOM (pure, stdlib + the notation module): text cells, CSV with spreadsheet
formula neutralising, Markdown with escaped cells, and the JSON shape of ``bom --format json``.
Re-exported by :mod:`selector.core.bom`; import from there."""

from __future__ import annotations

import csv
import io
from typing import TYPE_CHECKING, Any, Optional, Sequence

if TYPE_CHECKING:  # only for annotations: selector.core.bom imports this module at its end
    from selector.core.bom_records import Bom, BomLine, PickStop

from selector.core.cells import neutralize_cell, without_controls  # noqa: E402,F401  (shared with the stock export)


def _unit(kind: str) -> str:
    from selector.core.notation import kind_units

    return kind_units(kind)[0]


def value_text(bl: BomLine) -> str:
    from selector.core.notation import format_value

    if bl.value is None:
        return bl.part or bl.description
    return format_value(bl.value, _unit(bl.kind))


def tolerance_text(bl: BomLine) -> str:
    from selector.core.notation import format_tolerance

    if bl.tol_minus is None or bl.tol_plus is None:
        return ""
    return format_tolerance(bl.tol_minus, bl.tol_plus)


def rating_text(bl: BomLine) -> str:
    if bl.rating is None:
        return ""
    from selector.core.notation import VOLT, WATT, format_value

    return format_value(bl.rating, WATT if bl.kind in ("resistor", "trimmer") else VOLT)


def _number(x: Optional[float]) -> str:
    return "" if x is None else repr(float(x))


CSV_COLUMNS = ("ref", "role", "network", "kind", "value", "value_si", "tolerance", "package",
               "rating", "dielectric", "location", "line_id", "per_board", "total", "in_stock",
               "note")


def to_rows(bom: Bom) -> list[dict[str, str]]:
    """The BOM as text cells (what CSV and Markdown show), in ``CSV_COLUMNS`` order."""
    rows = []
    for bl in bom.lines:
        note = bl.note
        if bl.line_id is None:
            note = "not in stock" + (f"; {bl.note}" if bl.note else "")
        elif not bl.in_stock:
            note = "short in stock" + (f"; {bl.note}" if bl.note else "")
        rows.append({
            "ref": bl.ref, "role": bl.role, "network": bl.network, "kind": bl.kind,
            "value": value_text(bl), "value_si": _number(bl.value), "tolerance": tolerance_text(bl),
            "package": bl.package, "rating": rating_text(bl), "dielectric": bl.dielectric,
            "location": bl.location, "line_id": "" if bl.line_id is None else str(bl.line_id),
            "per_board": str(bl.per_board), "total": str(bl.total),
            "in_stock": "yes" if bl.in_stock else "no", "note": note,
        })
    return rows


def to_csv(bom: Bom) -> str:
    """RFC 4180 CSV (CRLF line ends, header row), every text cell neutralised against formula
    injection. The caller writes it as UTF-8 with a byte-order mark to a file (see the CLI)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow(CSV_COLUMNS)
    for row in to_rows(bom):
        w.writerow([neutralize_cell(row[c]) for c in CSV_COLUMNS])
    return buf.getvalue()


def md_cell(text: str) -> str:
    """A Markdown table cell: every line boundary (``str.splitlines``: LF, CR, FF, VT, U+2028 …)
    becomes one space, outer blanks are trimmed, backslashes and pipes are escaped."""
    text = without_controls(" ".join(text.splitlines()).strip())
    return text.replace("\\", "\\\\").replace("|", "\\|")


MD_COLUMNS = ("ref", "role", "network", "value", "tolerance", "package", "rating", "dielectric",
              "location", "line_id", "per_board", "total", "in_stock", "note")


def to_markdown(bom: Bom, stops: Sequence[PickStop] = ()) -> str:
    """A Markdown document: the BOM table, the pick list by drawer, then the notes and cautions."""
    from selector.core.notation import format_value

    out = [f"## BOM: search {bom.search_id}, option {bom.option}, {bom.boards} board"
           f"{'s' if bom.boards != 1 else ''}", ""]
    out.append("| " + " | ".join(MD_COLUMNS) + " |")
    out.append("|" + "|".join("---" for _ in MD_COLUMNS) + "|")
    for row in to_rows(bom):
        out.append("| " + " | ".join(md_cell(row[c]) for c in MD_COLUMNS) + " |")
    if stops:
        out += ["", "## Pick list", "", "| location | line_id | value | take | refs |", "|---|---|---|---|---|"]
        for stop in stops:
            for it in stop.items:
                take = f"{it.quantity}" + (f" (short by {it.missing})" if it.missing else "")
                out.append("| " + " | ".join(md_cell(x) for x in (
                    stop.location or "(no location)", str(it.line_id),
                    it.part or format_value(it.value, _unit(it.kind)),
                    take, " ".join(it.refs))) + " |")
    if bom.notes:
        out.append("")
        out += [f"- {md_cell(n)}" for n in bom.notes]
    return "\n".join(out) + "\n"


def to_json(bom: Bom) -> dict[str, Any]:
    """``{"search", "option", "boards", "lines": [{"ref", "role", "kind", "value", "tolerance",
    "line_id", "location", "per_board", "total", "in_stock", "part"}]}`` in SI units; ``part`` is
    the part text of an IC or diode taken from stock ("" otherwise)."""
    return {
        "search": bom.search_id,
        "option": bom.option,
        "boards": bom.boards,
        "lines": [
            {
                "ref": bl.ref, "role": bl.role, "kind": bl.kind, "value": bl.value,
                "tolerance": bl.tolerance, "line_id": bl.line_id, "location": bl.location,
                "per_board": bl.per_board, "total": bl.total, "in_stock": bl.in_stock, "part": bl.part,
            }
            for bl in bom.lines
        ],
    }
