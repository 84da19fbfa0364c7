"""Stock CSV files as plain rows: reading (bytes → header-checked text cells with the row numbers a
spreadsheet shows) and writing. No value parsing here; that happens in services/stock.py with the
notation module, so this module only knows about the file's shape.

Reading rules: UTF-8 with or without a byte-order mark; comma, semicolon or tab delimiter, chosen
from the header line; headers case-insensitive with spaces around them ignored; blank lines
skipped; the header is row 1 when the file starts with it (rows are counted the way a spreadsheet
numbers them, blank rows included). Every structural problem is collected and raised together as
InvalidStockFile, so the user sees all of them at once.

Spreadsheet safety: every cell written is neutralised against formula evaluation, and every cell
read has that neutralisation undone (selector/core/cells.py), so export -> import is identical.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from pathlib import Path
from typing import Iterable, Mapping

from selector.core.cells import neutralize_cell, restore_cell
from selector.core.errors import InvalidStockFile, UnreadableFile

COLUMNS: tuple[str, ...] = (
    "kind", "value", "tolerance", "quantity", "location", "package", "rating", "dielectric", "note",
    "part", "turns", "reorder_at",
)
"""Every column a stock file may have (README "Stock file"); a header cell is matched without
regard to case, with spaces inside read as underscores ("Reorder At" is reorder_at)."""
REQUIRED: tuple[str, ...] = ("kind", "value", "quantity")
_DELIMITERS = (",", ";", "\t")
_REJECTED = "\0rejected"  # a header cell already reported as unknown or duplicate


@dataclass(frozen=True)
class RawRow:
    """One data row of a stock file: its spreadsheet row number and the text of every known column
    (stripped; "" where the file has no such column or the cell is empty)."""

    row: int
    cells: Mapping[str, str]


def column_letter(index: int) -> str:
    """Spreadsheet column name for a 0-based index: 0 → A, 25 → Z, 26 → AA."""
    name = ""
    index += 1
    while index:
        index, rem = divmod(index - 1, 26)
        name = chr(ord("A") + rem) + name
    return name


def _decode(data: bytes) -> str:
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        row = data.count(b"\n", 0, err.start) + 1
        byte = data[err.start]
        raise InvalidStockFile(
            [f"row {row}: byte 0x{byte:02X} is not UTF-8: save the file as UTF-8 (CSV UTF-8) and import again"]
        ) from None


def sniff_delimiter(header_line: str) -> str:
    """The delimiter that occurs most often in the header line (comma when none occurs)."""
    counts = {d: header_line.count(d) for d in _DELIMITERS}
    best = max(_DELIMITERS, key=lambda d: counts[d])
    return best if counts[best] else ","


def read_stock_csv(data: bytes) -> list[RawRow]:
    """Check the file's shape and return its data rows. Raises InvalidStockFile listing every
    problem: empty file, bytes that are not UTF-8, unknown/duplicate/missing columns, rows with more
    cells than the header has columns, broken quoting."""
    text = _decode(data)
    first = next((ln for ln in text.splitlines() if ln.strip()), None)
    if first is None:
        raise InvalidStockFile(
            [f"row 1: the file is empty: expected a header row naming the columns, e.g. {','.join(COLUMNS)}"]
        )
    delimiter = sniff_delimiter(first)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True)
    problems: list[str] = []
    header: list[str] | None = None
    header_row = 0
    names: list[str | None] = []  # column name per cell position (None: ignored blank column)
    rows: list[RawRow] = []
    rownum = 0
    try:
        for record in reader:
            rownum += 1
            if not any(cell.strip() for cell in record):
                continue
            if header is None:
                header, header_row = record, rownum
                names = _check_header(record, rownum, problems)
                continue
            cells = [restore_cell(c.strip()) for c in record]
            if len(cells) > len(names) and any(cells[len(names):]):
                problems.append(
                    f"row {rownum}: {len(cells)} cells but the header (row {header_row}) names "
                    f"{len(names)} columns; remove the extra cells or add a header for them"
                )
                continue
            values = {c: "" for c in COLUMNS}
            for i, (name, cell) in enumerate(zip(names, cells)):
                if name == _REJECTED:  # already reported in the header
                    continue
                if name is None:
                    if cell:
                        problems.append(
                            f'row {rownum}, column {column_letter(i)}: "{cell}": '
                            "this column has no header; name it or leave it empty"
                        )
                    continue
                values[name] = cell
            rows.append(RawRow(rownum, values))
    except csv.Error as err:
        problems.append(f"row {rownum + 1}: the CSV quoting is broken ({err}); check for a stray double quote")
    if problems:
        raise InvalidStockFile(problems)
    return rows


def _check_header(record: list[str], rownum: int, problems: list[str]) -> list[str | None]:
    names: list[str | None] = []
    seen: dict[str, int] = {}
    for i, cell in enumerate(record):
        name = "_".join(cell.strip().lower().split())
        if not name:
            names.append(None)
            continue
        if name not in COLUMNS:
            problems.append(
                f'row {rownum}, column {column_letter(i)}: "{cell.strip()}": unknown column; '
                f"expected some of {', '.join(COLUMNS)}"
            )
            names.append(_REJECTED)
            continue
        if name in seen:
            problems.append(
                f'row {rownum}, column {column_letter(i)}: "{cell.strip()}": duplicate column '
                f"(already column {column_letter(seen[name])}); keep one of them"
            )
            names.append(_REJECTED)
            continue
        seen[name] = i
        names.append(name)
    missing = [c for c in REQUIRED if c not in seen and not (c == "value" and "part" in seen)]  # ICs, diodes
    if missing:
        problems.append(
            f"row {rownum}: missing required column{'s' if len(missing) > 1 else ''} "
            f"{', '.join(missing)} (the header must name at least {', '.join(REQUIRED)})"
        )
    return names


def read_stock_file(path: str | Path) -> list[RawRow]:
    """read_stock_csv on a file; an unreadable file raises UnreadableFile naming it."""
    p = Path(path)
    try:
        data = p.read_bytes()
    except IsADirectoryError:
        raise UnreadableFile(f"cannot read the stock file {p}: it is a directory") from None
    except OSError as err:
        raise UnreadableFile(f"cannot read the stock file {p}: {err.strerror or err}") from None
    return read_stock_csv(data)


def write_stock_csv(out: io.TextIOBase, rows: Iterable[Mapping[str, str]]) -> int:
    """Write the header and one line per row (text cells keyed by column, each neutralised against
    spreadsheet formulas); returns the row count."""
    writer = csv.DictWriter(out, fieldnames=list(COLUMNS), lineterminator="\n")
    writer.writeheader()
    n = 0
    for row in rows:
        writer.writerow({c: neutralize_cell(row.get(c, "")) for c in COLUMNS})
        n += 1
    return n


def write_stock_file(path: str | Path, rows: Iterable[Mapping[str, str]]) -> int:
    """write_stock_csv to a file, written whole or not at all. UTF-8 with a byte-order mark: that
    is how spreadsheet programs recognise UTF-8 (Ω, µ) in a CSV; read_stock_csv accepts it."""
    p = Path(path)
    tmp = p.with_name(p.name + ".tmp")
    try:
        with open(tmp, "w", encoding="utf-8-sig", newline="") as fh:
            n = write_stock_csv(fh, rows)
        tmp.replace(p)
    except OSError as err:
        try:
            tmp.unlink()
        except OSError:
            pass
        raise UnreadableFile(f"cannot write {p}: {err.strerror or err}") from None
    return n
