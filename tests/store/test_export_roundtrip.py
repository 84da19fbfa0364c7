"""`stock export` is safe to open in a spreadsheet and still round-trips: hostile text cells are
neutralised with the single-quote text mark (selector/core/cells.py, the same code as the BOM CSV),
plain numbers stay numbers, and `stock import` removes the mark again, so export -> import gives
the identical stock. Formula starts per OWASP "CSV Injection" guidance (from memory)."""

from __future__ import annotations

import csv
import io
import sqlite3

from inprocess import invoke
from selector.core.cells import neutralize_cell

HOSTILE_NOTES = [
    "=cmd|' /C calc'!A0",
    '=HYPERLINK("http://example.invalid/x","open me")',
    "+SUM(A1:A9)",
    "@SUM(A1)",
    "-2+3 spares",
    "'=quoted on purpose",
    "'plain quote",
    "-5",
    "tab\tinside",
]


def _stock_csv() -> str:
    rows = ["kind,value,tolerance,quantity,location,package,note"]
    for i, note in enumerate(HOSTILE_NOTES):
        # the source file is itself spreadsheet-safe, so the notes stored are exactly HOSTILE_NOTES
        quoted_note = '"' + neutralize_cell(note).replace('"', '""') + '"'
        rows.append(f"R,{i + 1}k,5%,{i + 1},@drawer {i},=0805,{quoted_note}")
    rows.append('C,100n,-20/+80%,4,+shelf,-radial,"=1+1"')
    return "\n".join(rows) + "\n"


def _lines(db) -> list[tuple]:
    """Every stored column of every stock line except the creation/update times."""
    con = sqlite3.connect(db)
    try:
        return con.execute("SELECT id, kind, value, tol_minus, tol_plus, quantity, location, package, rating, "
                           "dielectric, polarized, note FROM stock_lines ORDER BY id").fetchall()
    finally:
        con.close()


def test_export_neutralises_and_import_restores_identically(tmp_path):
    first, second = tmp_path / "first.db", tmp_path / "second.db"
    src = tmp_path / "hostile.csv"
    src.write_text(_stock_csv(), encoding="utf-8")
    assert invoke("stock", "import", str(src), db=first).code == 0
    con = sqlite3.connect(first)
    stored = [r[0] for r in con.execute("SELECT note FROM stock_lines ORDER BY id")]
    con.close()
    assert stored == HOSTILE_NOTES + ["=1+1"]

    out = tmp_path / "export.csv"
    r = invoke("stock", "export", str(out), db=first)
    assert r.code == 0, r.stderr
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8-sig"))))
    notes = [row["note"] for row in rows]
    # every hostile cell carries the text mark; the plain number -5 is left a number
    assert notes[:5] == ["'" + n for n in HOSTILE_NOTES[:5]]
    assert notes[5] == "''=quoted on purpose" and notes[6] == "'plain quote" and notes[7] == "-5"
    assert {row["location"][:2] for row in rows} == {"'@", "'+"}
    assert {row["package"][:2] for row in rows} == {"'=", "'-"}
    assert rows[-1]["tolerance"].startswith("'-")  # -20/+80 % would be a formula
    for row in rows:
        for cell in row.values():
            assert not cell.startswith(("=", "+", "@", "\t", "\r")), cell
            assert not cell.startswith("-") or float(cell) == float(cell), cell

    assert invoke("stock", "import", str(out), db=second).code == 0
    again = tmp_path / "again.csv"
    assert invoke("stock", "export", str(again), db=second).code == 0
    assert again.read_bytes() == out.read_bytes()
    assert _lines(first) == _lines(second)
    assert len(_lines(second)) == len(HOSTILE_NOTES) + 1


def test_export_to_the_screen_is_neutralised_too(tmp_path):
    db = tmp_path / "s.db"
    src = tmp_path / "s.csv"
    src.write_text('kind,value,quantity,note\nR,1k,1,"=HYPERLINK(""x"")"\n', encoding="utf-8")
    assert invoke("stock", "import", str(src), db=db).code == 0
    r = invoke("stock", "export", "-", db=db)
    assert r.code == 0
    assert "'=HYPERLINK" in r.stdout and ",=HYPERLINK" not in r.stdout
