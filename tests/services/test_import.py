"""Stock CSV import: exact results for a good file, every bad file refused with row/column
messages and the database untouched, merge vs replace, dry run, encodings and delimiters, the
pure plan, export→import round trip, and a process killed mid-import.

Expected values are written by hand. Where a cell uses a trade notation the source of its meaning
is named beside it (IEC 60062 RKM code and tolerance letters: facts.md §8.2/§8.4 [S10, S11];
EIA three-digit capacitor code: facts.md §8.3 [S11]); default tolerances follow facts.md §8.1
(resistor ±5 % is common practice)."""

from __future__ import annotations

import csv
import json
import os
import signal
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import pytest
import sqlalchemy as sa

from selector.core.errors import InvalidStockFile, UnreadableFile
from selector.core.types import StockLine
from selector.services import stock as svc
from selector.store import db
from selector.store.csvio import read_stock_csv
from selector.store.models import Base, MovementRow

REPO = Path(__file__).resolve().parents[2]
HEADER = "kind,value,tolerance,quantity,location,package,rating,dielectric,note\n"


def _dump(engine) -> list:
    """Every row of every table (the whole database state), for before/after comparisons."""
    with engine.connect() as conn:
        out = []
        for table in Base.metadata.sorted_tables:
            out.append((table.name, conn.execute(sa.select(table).order_by(*table.primary_key.columns)).all()))
        out.append(("alembic_version", conn.exec_driver_sql("SELECT * FROM alembic_version").all()))
        conn.rollback()
    return out


def _stock(engine) -> list[StockLine]:
    with db.transaction(engine) as s:
        return db.load_stock(s)


def _movements(engine) -> list[tuple]:
    with db.transaction(engine) as s:
        return s.execute(sa.select(MovementRow.line_id, MovementRow.delta, MovementRow.reason, MovementRow.reference)
                         .order_by(MovementRow.id)).all()


def _write(tmp_path: Path, text: str | bytes, name: str = "stock.csv") -> Path:
    p = tmp_path / name
    if isinstance(text, str):
        p.write_text(text, encoding="utf-8")
    else:
        p.write_bytes(text)
    return p


def _problems(engine, path: Path) -> list[str]:
    before = _dump(engine)
    with pytest.raises(InvalidStockFile) as info:
        svc.import_stock(engine, path)
    assert _dump(engine) == before  # nothing written
    return info.value.problems


# --------------------------------------------------------------------------- a good file

GOOD = HEADER + (
    "R,4k7,5%,10,A1,axial,1/4W,,carbon film\n"         # RKM 4K7 = 4.7 kΩ [S10]
    "resistor,4.7k,±5%,5,A1,axial,0.25W,,same part\n"  # same part as row 2: merges into it
    "C,104,K,20,D2,,50V,X7R,\n"                        # 104 = 10·10^4 pF = 100 nF [S11]; K = ±10 % [S11]
    "capacitor,2.2µF,,3,E1,,16V,elko,\n"               # electrolytic default ±20 % (facts §8.1)
    "Capacitor,4n7,J,7,D1,,,NP0,\n"                    # RKM 4n7 = 4.7 nF [S10]; J = ±5 % [S11]; NP0 = C0G
    "r,1M5,,2,B3,,,,\n"                                # RKM 1M5 = 1.5 MΩ [S10]; default ±5 % (common practice)
    "capacitor,10u,-20/+80%,4,E2,,25V,Y5V,\n"          # asymmetric tolerance
)


def test_good_file_is_imported_exactly(memory_engine, tmp_path):
    plan = svc.import_stock(memory_engine, _write(tmp_path, GOOD))
    assert len(plan.new_lines) == 6 and plan.changes == () and plan.parts_added == 51
    assert _stock(memory_engine) == [
        StockLine(1, "resistor", 4700.0, 0.05, 0.05, 15, "A1", "axial", 0.25, "", False, "carbon film"),
        StockLine(2, "capacitor", 1e-7, 0.1, 0.1, 20, "D2", "", 50.0, "X7R", False, ""),
        StockLine(3, "capacitor", 2.2e-6, 0.2, 0.2, 3, "E1", "", 16.0, "electrolytic", True, ""),
        StockLine(4, "capacitor", 4.7e-9, 0.05, 0.05, 7, "D1", "", None, "C0G", False, ""),
        StockLine(5, "resistor", 1.5e6, 0.05, 0.05, 2, "B3", "", None, "", False, ""),
        StockLine(6, "capacitor", 1e-5, 0.2, 0.8, 4, "E2", "", 25.0, "Y5V", False, ""),
    ]
    # One ledger row per changed line, reason "import", reference = the file name.
    assert _movements(memory_engine) == [(1, 15, "import", "stock.csv"), (2, 20, "import", "stock.csv"),
                                         (3, 3, "import", "stock.csv"), (4, 7, "import", "stock.csv"),
                                         (5, 2, "import", "stock.csv"), (6, 4, "import", "stock.csv")]


def test_zero_quantity_line_is_created_without_a_ledger_row(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, "kind,value,quantity\nR,82k,0\n"))
    assert [(ln.value, ln.quantity) for ln in _stock(memory_engine)] == [(82000.0, 0)]
    assert _movements(memory_engine) == []


def test_headers_any_order_case_and_spaces(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, " Quantity ,VALUE, Kind \n3,10k,R\n"))
    assert [(ln.kind, ln.value, ln.quantity) for ln in _stock(memory_engine)] == [("resistor", 10000.0, 3)]


def test_bom_semicolons_crlf_and_blank_lines(memory_engine, tmp_path):
    data = "\ufeffkind;value;quantity;location\r\nR;2k2;4;A2\r\n\r\n;;;\r\nC;1n;6;D1\r\n".encode("utf-8")
    svc.import_stock(memory_engine, _write(tmp_path, data))
    assert [(ln.kind, ln.value, ln.quantity, ln.location) for ln in _stock(memory_engine)] == [
        ("resistor", 2200.0, 4, "A2"), ("capacitor", 1e-9, 6, "D1")]


def test_tab_delimited(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, "kind\tvalue\tquantity\nR\t330\t9\n"))
    assert [(ln.value, ln.quantity) for ln in _stock(memory_engine)] == [(330.0, 9)]


def test_quoted_cells_with_the_delimiter_inside(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, 'kind,value,quantity,note\nR,1k,2,"spare, from kit"\n'))
    assert _stock(memory_engine)[0].note == "spare, from kit"


# --------------------------------------------------------------------------- bad files

def test_unknown_kind(memory_engine, tmp_path):
    p = _write(tmp_path, "kind,value,quantity\ntransistor,BC547,3\n")
    assert _problems(memory_engine, p) == ['row 2, column kind: "transistor": expected resistor, capacitor, trimmer, '
                                           'ic or diode (or R / C)']


def test_negative_and_fractional_quantities(memory_engine, tmp_path):
    p = _write(tmp_path, "kind,value,quantity\nR,1k,-3\nR,2k,2.5\nR,3k,many\n")
    assert _problems(memory_engine, p) == [
        'row 2, column quantity: "-3": expected a whole number of parts, 0 or more',
        'row 3, column quantity: "2.5": expected a whole number of parts, 0 or more',
        'row 4, column quantity: "many": expected a whole number of parts, 0 or more',
    ]


def test_unparseable_value_tolerance_and_rating(memory_engine, tmp_path):
    p = _write(tmp_path, HEADER + "R,4k7k,5%,1,,,,,\nR,4k7,5x,1,,,,,\nR,4k7,5%,1,,,fast,,\nR,10n,,1,,,,,\n")
    assert _problems(memory_engine, p) == [
        'row 2, column value: cannot read "4k7k" as a resistance: expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ',
        'row 3, column tolerance: cannot read "5x" as a resistor tolerance: not a percentage, fraction or '
        'tolerance letter; expected e.g. 5%, ±5 %, 0.05, J, -20/+80%',
        'row 4, column rating: cannot read "fast" as a resistor power rating: expected e.g. 0.25, 1/4W, 0.25 W, '
        '250mW',
        'row 5, column value: cannot read "10n" as a resistance: the prefix "n" belongs to a capacitance; '
        'expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ',
    ]


def test_empty_required_cells_and_bad_dielectric(memory_engine, tmp_path):
    p = _write(tmp_path, HEADER + ",1k,,1,,,,,\nR,,,1,,,,,\nC,10n,,,,,,paper,\nR,1k,,1,,,,X7R,\n")
    assert _problems(memory_engine, p) == [
        "row 2, column kind: empty: the kind is required",
        "row 3, column value: empty: the value is required",
        'row 4, column dielectric: unknown dielectric "paper": expected one of C0G, X7R, X5R, Y5V, Z5U, '
        "film-PP, film-PET, film, electrolytic, tantalum (also NP0, MKP/PP, MKT/PET/polyester, elko/alu, tant) "
        "or empty",
        "row 4, column quantity: empty: the quantity is required",
        'row 5, column dielectric: "X7R": a resistor has no dielectric; leave it empty',
    ]


def test_missing_required_column(memory_engine, tmp_path):
    p = _write(tmp_path, "kind,value,location\nR,1k,A1\n")
    assert _problems(memory_engine, p) == [
        "row 1: missing required column quantity (the header must name at least kind, value, quantity)"]


def test_duplicate_and_unknown_headers(memory_engine, tmp_path):
    p = _write(tmp_path, "kind,value,quantity,Value,colour\nR,1k,1,2k,brown\n")
    assert _problems(memory_engine, p) == [
        'row 1, column D: "Value": duplicate column (already column B); keep one of them',
        'row 1, column E: "colour": unknown column; expected some of kind, value, tolerance, quantity, location, '
        'package, rating, dielectric, note, part, turns, reorder_at',
    ]


@pytest.mark.parametrize("content", [b"", b"\n\n  \n", b"\xef\xbb\xbf"])
def test_empty_file(memory_engine, tmp_path, content):
    p = _write(tmp_path, content)
    assert _problems(memory_engine, p) == [
        "row 1: the file is empty: expected a header row naming the columns, e.g. "
        "kind,value,tolerance,quantity,location,package,rating,dielectric,note,part,turns,reorder_at"]


def test_bytes_that_are_not_utf8(memory_engine, tmp_path):
    # 0xB5 is "µ" in Latin-1 / Windows-1252: a spreadsheet saved in a legacy encoding.
    p = _write(tmp_path, b"kind,value,quantity\nR,1k,1\nC,2.2\xb5F,3\n")
    assert _problems(memory_engine, p) == [
        "row 3: byte 0xB5 is not UTF-8: save the file as UTF-8 (CSV UTF-8) and import again"]


def test_row_with_too_many_cells(memory_engine, tmp_path):
    p = _write(tmp_path, "kind,value,quantity\nR,1k,1\nR,2k,2,A3\nR,3k,3,,\n")  # trailing empties are fine
    assert _problems(memory_engine, p) == [
        "row 3: 4 cells but the header (row 1) names 3 columns; remove the extra cells or add a header for them"]


def test_row_numbers_count_blank_rows_like_a_spreadsheet(memory_engine, tmp_path):
    p = _write(tmp_path, "kind,value,quantity\n\nR,1k,1\n\nR,2k,x\n")
    assert _problems(memory_engine, p) == ['row 5, column quantity: "x": expected a whole number of parts, 0 or more']


def test_every_problem_of_the_file_is_listed(memory_engine, tmp_path):
    rows = "".join(f"R,{v},-1\n" for v in ("1k", "2k", "3k", "4k", "5k"))
    p = _write(tmp_path, "kind,value,quantity\nR,1k,1\n" + rows)
    problems = _problems(memory_engine, p)
    assert [pr.split(",")[0] for pr in problems] == ["row 3", "row 4", "row 5", "row 6", "row 7"]


def test_missing_file(memory_engine, tmp_path):
    with pytest.raises(UnreadableFile, match=r"^cannot read the stock file .*nope\.csv: No such file or directory$"):
        svc.import_stock(memory_engine, tmp_path / "nope.csv")


def test_bad_file_leaves_existing_stock_untouched(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, GOOD, "first.csv"))
    before = _dump(memory_engine)
    bad = _write(tmp_path, "kind,value,quantity\nR,1k,5\nR,oops,1\n", "second.csv")
    with pytest.raises(InvalidStockFile):
        svc.import_stock(memory_engine, bad)
    assert _dump(memory_engine) == before


# --------------------------------------------------------------------------- merge / replace / dry run

FIRST = "kind,value,quantity,location\nR,1k,10,A1\nR,2k2,5,A1\nC,100n,8,D2\n"
SECOND = "kind,value,quantity,location\nR,1k,3,A1\nR,1k,2,A1\nR,2k2,5,A1\nR,1k,4,B1\n"


def test_merge_adds_quantities(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, FIRST, "first.csv"))
    plan = svc.import_stock(memory_engine, _write(tmp_path, SECOND, "second.csv"))
    assert [(c.line.id, c.delta, c.rows) for c in plan.changes] == [(1, 5, (2, 3)), (2, 5, (4,))]
    assert [(n.spec.location, n.quantity) for n in plan.new_lines] == [("B1", 4)]
    assert [(ln.id, ln.quantity) for ln in _stock(memory_engine)] == [(1, 15), (2, 10), (3, 8), (4, 4)]
    assert _movements(memory_engine)[3:] == [(4, 4, "import", "second.csv"), (1, 5, "import", "second.csv"),
                                             (2, 5, "import", "second.csv")]


def test_replace_sets_quantities_and_leaves_other_lines(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, FIRST, "first.csv"))
    plan = svc.import_stock(memory_engine, _write(tmp_path, SECOND, "second.csv"), replace=True)
    # 1k in A1: 3 + 2 = 5 (was 10); 2k2 in A1: 5 (was 5, unchanged); 100n: not in the file, left alone.
    assert [(c.line.id, c.new_quantity, c.delta) for c in plan.changes] == [(1, 5, -5)]
    assert [ln.id for ln in plan.unchanged] == [2]
    assert [(ln.id, ln.quantity) for ln in _stock(memory_engine)] == [(1, 5), (2, 5), (3, 8), (4, 4)]
    assert _movements(memory_engine)[3:] == [(4, 4, "import", "second.csv"), (1, -5, "import", "second.csv")]


def test_dry_run_writes_nothing_but_returns_the_plan(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, FIRST, "first.csv"))
    before = _dump(memory_engine)
    plan = svc.import_stock(memory_engine, _write(tmp_path, SECOND, "second.csv"), dry_run=True)
    assert _dump(memory_engine) == before
    assert [(c.line.id, c.delta) for c in plan.changes] == [(1, 5), (2, 5)]
    assert len(plan.new_lines) == 1


def test_different_attributes_make_different_lines(memory_engine, tmp_path):
    text = HEADER + ("R,1k,5%,1,A1,,,,\nR,1k,1%,1,A1,,,,\nR,1k,5%,1,A1,0805,,,\nR,1k,5%,1,A1,,1/2W,,\n"
                     "C,1u,,1,D1,,,X7R,\nC,1u,,1,D1,,,film-PET,\nR,1k,5%,1,A1,,,,other note\n")
    svc.import_stock(memory_engine, _write(tmp_path, text))
    # 6 distinct parts; the last row differs only in its note, so it merges into the first.
    assert [ln.quantity for ln in _stock(memory_engine)] == [2, 1, 1, 1, 1, 1]


# --------------------------------------------------------------------------- the pure plan

def _spec(value, qty=0, **kw):
    return svc.ImportRow(kw.pop("row", 2), svc.PartSpec("resistor", value, 0.05, 0.05, kw.pop("location", "A1")), qty)


def test_plan_is_a_pure_function_of_rows_and_stock():
    current = [StockLine(7, "resistor", 1000.0, 0.05, 0.05, 4, "A1"),
               StockLine(9, "resistor", 2200.0, 0.05, 0.05, 0, "A1"),
               StockLine(3, "resistor", 1000.0, 0.05, 0.05, 1, "A1")]  # a duplicate line: lowest id wins
    rows = [_spec(1000.0, 2, row=2), _spec(2200.0, 0, row=3), _spec(4700.0, 6, row=4), _spec(1000.0, 1, row=5)]
    merge = svc.plan_import(rows, current)
    assert [(c.line.id, c.new_quantity, c.rows) for c in merge.changes] == [(3, 4, (2, 5))]
    assert [ln.id for ln in merge.unchanged] == [9]
    assert [(n.spec.value, n.quantity, n.rows) for n in merge.new_lines] == [(4700.0, 6, (4,))]
    replace = svc.plan_import(rows, current, replace=True)
    assert [(c.line.id, c.new_quantity) for c in replace.changes] == [(3, 3)]
    assert [ln.id for ln in replace.unchanged] == [9]


def test_notation_float_noise_does_not_split_a_part():
    """4.7 * 1000 in binary is 4700.000000000001; such noise must not make a second line."""
    current = [StockLine(1, "resistor", 4.7 * 1000, 0.05, 0.05, 1, "A1")]
    plan = svc.plan_import([_spec(4700.0, 2)], current)
    assert [c.line.id for c in plan.changes] == [1] and plan.new_lines == ()


# --------------------------------------------------------------------------- export → import

def test_export_then_import_into_a_fresh_database_gives_identical_stock(tmp_path):
    a = db.open_engine("sqlite://")
    b = db.open_engine("sqlite://")
    try:
        svc.import_stock(a, REPO / "sample_stock.csv")
        # Lines whose numbers no notation writes exactly (full-precision floats, odd tolerances).
        odd = [svc.ImportRow(0, svc.PartSpec("resistor", 1234.56789012, 0.0123, 0.0456, "X", rating=0.3), 2),
               svc.ImportRow(0, svc.PartSpec("capacitor", 3.3e-12, 0.2, 0.8, "Y", dielectric="Y5V"), 1),
               svc.ImportRow(0, svc.PartSpec("capacitor", 4.7e-5, 0.1, 0.1, "Z", rating=6.3,
                                             dielectric="tantalum", note='a "quoted", note'), 5)]
        svc.add_kit(a, odd, "odd")
        out = tmp_path / "export.csv"
        n = svc.export_stock(a, out)
        assert n == len(_stock(a))
        svc.import_stock(b, out)
        assert svc.stock_json(_stock(b)) == svc.stock_json(_stock(a))
        # Exporting again gives the same file, byte for byte.
        out2 = tmp_path / "export2.csv"
        svc.export_stock(b, out2)
        assert out2.read_bytes() == out.read_bytes()
    finally:
        a.dispose()
        b.dispose()


def test_sample_stock_shape():
    """The demo file: 60-130 lines, every kind (resistors and capacitors the most), several drawers,
    some lines at 1 or 0, some with a reorder level and one of them low."""
    rows = read_stock_csv((REPO / "sample_stock.csv").read_bytes())
    lines = svc.validate_rows(rows)
    kinds = [r.spec.kind for r in lines]
    assert 60 <= len(lines) <= 130 and set(kinds) == {"resistor", "capacitor", "trimmer", "ic", "diode"}
    assert kinds.count("resistor") + kinds.count("capacitor") >= 60
    assert any(r.spec.reorder_at is not None and r.quantity <= r.spec.reorder_at for r in lines)
    assert len({r.spec.location for r in lines}) >= 8
    assert {0, 1} <= {r.quantity for r in lines}
    values = [r.spec.value for r in lines if r.spec.kind == "resistor"]
    caps = [r.spec.value for r in lines if r.spec.kind == "capacitor"]
    assert min(values) <= 100 and max(values) >= 2.2e6
    assert min(caps) <= 100e-12 and max(caps) >= 470e-6


# --------------------------------------------------------------------------- killed mid-import

class _WriterProbe:
    """Tells whether another process is inside its importing transaction: on SQLite it holds the
    write lock; on PostgreSQL it holds the stock-merge advisory lock (store/db.py)."""

    def __init__(self, backend: str, db_path, db_url: str):
        self.backend = backend
        if backend == "sqlite":
            self.conn = sqlite3.connect(db_path, timeout=0, isolation_level=None)
        else:
            self.engine = sa.create_engine(db_url, poolclass=sa.pool.NullPool, isolation_level="AUTOCOMMIT")
            self.conn = self.engine.connect()

    def writer_inside(self) -> bool:
        if self.backend == "sqlite":
            try:
                self.conn.execute("BEGIN IMMEDIATE")
                self.conn.execute("ROLLBACK")
                return False
            except sqlite3.OperationalError as err:  # "database is locked": the importer is writing
                assert "locked" in str(err)
                return True
        return bool(self.conn.execute(sa.text(
            "SELECT count(*) FROM pg_locks WHERE locktype = 'advisory' AND granted AND classid = 0"
            " AND objid = :k"), {"k": db._PG_STOCK_PLAN_LOCK}).scalar())

    def close(self) -> None:
        self.conn.close()
        if self.backend != "sqlite":
            self.engine.dispose()


def test_killed_import_leaves_old_or_new_stock(tmp_path, db_path, db_url, backend):
    """SIGKILL a large import while it is inside its transaction: the stock afterwards is exactly
    the old one. Should the import finish before we catch it, the stock must be exactly the new
    one; never a part of the file."""
    engine = db.open_engine(db_url)
    svc.import_stock(engine, _write(tmp_path, "kind,value,quantity\nR,1k,1\n", "seed.csv"))
    engine.dispose()
    n = 20000
    big = tmp_path / "big.csv"
    with open(big, "w", encoding="utf-8") as fh:
        fh.write("kind,value,quantity,location\n")
        for i in range(n):
            fh.write(f"R,{1000 + i},{i % 7 + 1},K{i % 40}\n")
    old = (1, 1, 1)
    new = (n + 1, n + 1, 1 + sum(i % 7 + 1 for i in range(n)))
    env = dict(os.environ, PYTHONPATH=str(REPO))
    proc = subprocess.Popen([sys.executable, "-m", "selector", "--db", str(db_path), "stock", "import", str(big)],
                            cwd=REPO, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    probe = _WriterProbe(backend, db_path, db_url)
    killed_inside = False
    deadline = time.monotonic() + 120
    try:
        while proc.poll() is None and time.monotonic() < deadline:
            if probe.writer_inside():
                time.sleep(0.05)
                if proc.poll() is None:
                    proc.send_signal(signal.SIGKILL)
                    killed_inside = True
                break
            time.sleep(0.002)
    finally:
        probe.close()
        if proc.poll() is None and not killed_inside:
            proc.kill()
        proc.wait(timeout=60)
    engine = db.open_engine(db_url)
    try:
        with engine.connect() as c:
            state = (c.execute(sa.text("SELECT count(*) FROM stock_lines")).scalar(),
                     c.execute(sa.text("SELECT count(*) FROM movements")).scalar(),
                     c.execute(sa.text("SELECT sum(quantity) FROM stock_lines")).scalar())
    finally:
        engine.dispose()
    if killed_inside and proc.returncode == -signal.SIGKILL:
        assert state == old
    else:
        assert state == new


def test_absurd_quantity_is_refused(memory_engine, tmp_path):
    p = _write(tmp_path, "kind,value,quantity\nR,1k,99999999999999999999999\n")
    assert _problems(memory_engine, p) == [
        'row 2, column quantity: "99999999999999999999999": expected at most 1000000000 parts on one line']


# --------------------------------------------------------------------------- lossless export, as a property

from hypothesis import given, settings, strategies as st  # noqa: E402

from selector.store.csvio import RawRow  # noqa: E402

_fractions = st.floats(min_value=0.0, max_value=0.95, allow_nan=False).map(svc.clean)


@settings(max_examples=300, deadline=None)
@given(kind=st.sampled_from(["resistor", "capacitor"]),
       mantissa=st.floats(min_value=1.0, max_value=9.999999, allow_nan=False),
       exponent=st.integers(min_value=-13, max_value=7),
       minus=_fractions, plus=_fractions,
       rating=st.none() | st.floats(min_value=0.01, max_value=1000.0).map(svc.clean),
       dielectric=st.sampled_from(["", "C0G", "X7R", "film-PP", "electrolytic"]))
def test_exported_cells_read_back_to_the_same_line(kind, mantissa, exponent, minus, plus, rating, dielectric):
    # inside the documented part ranges (README "Accepted ranges"): 1 mΩ-1 TΩ, 1 fF-10000 F
    exponent = exponent + 10 if kind == "resistor" and exponent < -3 else exponent
    exponent = exponent - 10 if kind == "capacitor" and exponent > 3 else exponent
    value = svc.clean(mantissa * 10.0 ** exponent)
    if kind == "resistor":
        dielectric = ""
    line = StockLine(1, kind, value, minus, plus, 3, "A1", "0805", rating, dielectric, False, "n")
    cells = svc.export_cells(line)
    (row,) = svc.validate_rows([RawRow(2, cells)])
    assert (row.spec.kind, row.spec.value, row.spec.tol_minus, row.spec.tol_plus, row.spec.rating,
            row.spec.dielectric, row.quantity) == (kind, value, minus, plus, rating, dielectric, 3)
