"""Schema migrations: a new database is created at head, an older one is upgraded with its data
intact (from every known revision, on both backends) and every foreign key checked, the models
match the migrated schema, and databases that are not ours (or are damaged) are refused with one
clear line and left unchanged."""

from __future__ import annotations

import sqlite3
import subprocess
import sys
from contextlib import contextmanager
from pathlib import Path

import pytest
import sqlalchemy as sa

from conftest import sqlite_only
from selector.core.errors import DatabaseProblem
from selector.store import db
from selector.store.models import Base, StockLineRow

REPO = Path(__file__).resolve().parents[2]


def _alembic_config(conn):
    from alembic.config import Config

    cfg = Config()
    cfg.set_main_option("script_location", str(db.migrations_dir()))
    cfg.attributes["connection"] = conn
    return cfg


def _migrate_raw(url: str | Path, revision: str, direction: str = "upgrade") -> None:
    """Run alembic directly (not through open_engine) on an engine with foreign keys OFF."""
    from alembic import command

    if isinstance(url, Path):
        url = f"sqlite:///{url}"
    engine = db.make_engine(sa.engine.make_url(url), foreign_keys=False, pooled=False)
    try:
        with engine.connect() as conn:
            conn.begin()
            getattr(command, direction)(_alembic_config(conn), revision)
            conn.commit()
    finally:
        engine.dispose()


def _tables(db_path: Path) -> set[str]:
    with sqlite3.connect(db_path) as c:
        return {r[0] for r in c.execute("SELECT name FROM sqlite_master WHERE type='table'")}


def _plain_engine(url: str):
    """An engine without our hooks (no schema check, no BEGIN IMMEDIATE) to look at the raw data."""
    return sa.create_engine(url, poolclass=sa.pool.NullPool)


@contextmanager
def _plain(url: str):
    """``_plain_engine`` for one block, disposed of at its end (also when an assertion fails)."""
    engine = _plain_engine(url)
    try:
        yield engine
    finally:
        engine.dispose()


def _rows(conn, sql: str) -> list[tuple]:
    return [tuple(r) for r in conn.execute(sa.text(sql)).all()]


def test_schema_head_constant_matches_the_scripts():
    from alembic.config import Config
    from alembic.script import ScriptDirectory

    cfg = Config()
    cfg.set_main_option("script_location", str(db.migrations_dir()))
    script = ScriptDirectory.from_config(cfg)
    assert script.get_current_head() == db.SCHEMA_HEAD
    chain = [rev.revision for rev in script.walk_revisions()][::-1]  # base first
    assert tuple(chain) == db.KNOWN_REVISIONS
    assert set(db.TABLES_AT) == set(db.KNOWN_REVISIONS)


def test_empty_database_upgrades_to_head(db_url):
    db.open_engine(db_url).dispose()
    engine = _plain_engine(db_url)
    try:
        with engine.connect() as conn:
            assert set(sa.inspect(conn).get_table_names()) == {"alembic_version"} | db.TABLES_AT[db.SCHEMA_HEAD]
            assert _rows(conn, "SELECT version_num FROM alembic_version") == [(db.SCHEMA_HEAD,)]
    finally:
        engine.dispose()


_LINES = [
    (1, "resistor", 4700.0, 0.05, 0.05, 7, "A1", "axial", 0.25, "", False, "cf"),
    (2, "capacitor", 1e-7, 0.1, 0.1, 20, "D2", "", None, "X7R", False, ""),
    (3, "resistor", 1000.0, 0.01, 0.01, 4, "A2", "", None, "", False, ""),
]
_MOVES = [(1, 1, 10, "import", "a.csv"), (2, 1, -3, "adjust", ""), (3, 2, 20, "import", "a.csv"),
          (4, 3, 4, "import", "b.csv")]
_AT = "2026-01-02 03:04:05"


def _fill(conn, revision: str) -> None:
    """Stock lines and ledger rows with explicit ids, as a database left at ``revision`` holds them
    (at 0002 and later also a saved search and a pull that the ledger points to)."""
    conn.execute(sa.text(
        "INSERT INTO stock_lines (id, kind, value, tol_minus, tol_plus, quantity, location, package, rating,"
        " dielectric, polarized, note, created_at, updated_at) VALUES (:id, :kind, :value, :tm, :tp, :q, :loc,"
        " :pkg, :rating, :diel, :pol, :note, :at, :at)"),
        [dict(zip(("id", "kind", "value", "tm", "tp", "q", "loc", "pkg", "rating", "diel", "pol", "note"), r),
              at=_AT) for r in _LINES])
    conn.execute(sa.text("INSERT INTO movements (id, line_id, delta, reason, reference, created_at)"
                         " VALUES (:id, :line, :delta, :reason, :ref, :at)"),
                 [dict(zip(("id", "line", "delta", "reason", "ref"), m), at=_AT) for m in _MOVES])
    if revision >= "0002":
        conn.execute(sa.text("INSERT INTO searches (id, mode, target_json, params_json, created_at)"
                             " VALUES (1, 'rc', '{}', '{}', :at)"), {"at": _AT})
        conn.execute(sa.text("INSERT INTO pulls (id, search_id, option_rank, boards, created_at)"
                             " VALUES (1, 1, 1, 1, :at)"), {"at": _AT})
        conn.execute(sa.text("INSERT INTO movements (id, line_id, delta, reason, reference, created_at, pull_id)"
                         " VALUES (5, 3, -1, 'pull', 'search 1 option 1 x1', :at, 1)"), {"at": _AT})


def _snapshot(conn) -> dict[str, list[tuple]]:
    return {
        "lines": _rows(conn, "SELECT id, kind, value, tol_minus, tol_plus, quantity, location, package, rating,"
                             " dielectric, note FROM stock_lines ORDER BY id"),
        "moves": _rows(conn, "SELECT id, line_id, delta, reason, reference FROM movements ORDER BY id"),
    }


@pytest.mark.parametrize("revision", db.KNOWN_REVISIONS[:-1])
def test_database_at_an_older_revision_with_data_upgrades_with_data_intact(db_url, revision):
    """A database left at each older revision, holding stock, ledger (and pulls where the revision
    has them), upgrades to head with every row intact; afterwards new lines, ledger rows, searches
    and pulls get fresh ids (on PostgreSQL every sequence must be past the copied ids)."""
    _migrate_raw(db_url, revision)
    plain = _plain_engine(db_url)
    try:
        with plain.begin() as conn:
            _fill(conn, revision)
        with plain.connect() as conn:
            before = _snapshot(conn)
    finally:
        plain.dispose()

    engine = db.open_engine(db_url)
    try:
        with engine.connect() as conn:
            assert _rows(conn, "SELECT version_num FROM alembic_version") == [(db.SCHEMA_HEAD,)]
            assert _snapshot(conn) == before
            pulls = _rows(conn, "SELECT pull_id FROM movements ORDER BY id")
        assert pulls == [(None,)] * 4 + ([(1,)] if revision >= "0002" else [])
        # every table takes new rows after the copied ids
        from bom_fixtures import add_search, ledger_sums, quantities

        with db.transaction(engine) as s:
            new_line = StockLineRow(kind="resistor", value=22.0, tol_minus=0.05, tol_plus=0.05, quantity=0,
                                       location="Z9", package="", rating=None, dielectric="", polarized=False,
                                       note="")
            s.add(new_line)
            s.flush()
            assert new_line.id == 4
            db.apply_movement(s, new_line.id, 5, "import", "c.csv")
            db.apply_movement(s, 1, -1, "adjust")
        search_id = add_search(engine, "rc", [])
        assert search_id == (2 if revision >= "0002" else 1)
        assert quantities(engine) == {1: 6, 2: 20, 3: 4, 4: 5}
        expected_ledger = {1: 6, 2: 20, 3: 4 - (1 if revision >= "0002" else 0), 4: 5}
        assert ledger_sums(engine) == expected_ledger
    finally:
        engine.dispose()


@sqlite_only
def test_foreign_keys_still_hold_after_the_sqlite_table_rebuild(db_url, db_path):
    _migrate_raw(db_path, "0001")
    with sqlite3.connect(db_path) as c:
        c.execute("INSERT INTO stock_lines VALUES (1, 'resistor', 4700.0, 0.05, 0.05, 7, 'A1', '', 0.25, '', 0,"
                  " '', '2026-01-02', '2026-01-02')")
    db.open_engine(db_url).dispose()
    with sqlite3.connect(db_path) as c:
        assert c.execute("PRAGMA foreign_key_check").fetchall() == []
        c.execute("PRAGMA foreign_keys=ON")
        with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
            c.execute("INSERT INTO movements (line_id, delta, reason, reference, created_at, pull_id)"
                      " VALUES (1, 1, 'pull', '', '2026-01-04', 99)")
        with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
            c.execute("INSERT INTO movements (line_id, delta, reason, reference, created_at)"
                      " VALUES (77, 1, 'adjust', '', '2026-01-04')")


def test_revision_0003_repairs_a_sequence_left_behind_by_the_first_0002(db_url, backend):
    """The first version of 0002 rebuilt ``movements`` on PostgreSQL too, leaving its id sequence
    at 1 under rows that hold higher ids: the next ledger row failed on the primary key. Recreated
    here by resetting every sequence of a database at 0002 (on SQLite there is none: the test
    checks the same outcome without the reset)."""
    _migrate_raw(db_url, "0002")
    plain = _plain_engine(db_url)
    try:
        with plain.begin() as conn:
            _fill(conn, "0002")
            if backend == "postgresql":
                for table in db.TABLES_AT["0002"]:
                    conn.execute(sa.text(f"SELECT setval(pg_get_serial_sequence('{table}', 'id'), 1, false)"))
    finally:
        plain.dispose()
    engine = db.open_engine(db_url)
    try:
        with db.transaction(engine) as s:
            assert db.apply_movement(s, 2, -5, "adjust", "recount") == 15
        from bom_fixtures import ledger_sums, quantities

        assert ledger_sums(engine) == {1: 7, 2: 15, 3: 3}
        assert quantities(engine) == {1: 7, 2: 15, 3: 4}  # line 3's pull row came with the copy
    finally:
        engine.dispose()


def test_revision_0003_merges_lines_that_share_an_identity(db_url):
    """Before the identity index, concurrent imports on PostgreSQL could leave two lines for one
    part. 0003 keeps the lowest id, adds the others' quantities and moves their ledger rows, so
    the ledger still sums to the stock."""
    _migrate_raw(db_url, "0002")
    plain = _plain_engine(db_url)
    try:
        with plain.begin() as conn:
            _fill(conn, "0002")
            # lines 4 and 5 repeat line 2 (no rating: NULL) and line 1 (rating 0.25)
            conn.execute(sa.text(
                "INSERT INTO stock_lines (id, kind, value, tol_minus, tol_plus, quantity, location, package,"
                " rating, dielectric, polarized, note, created_at, updated_at) VALUES"
                " (4, 'capacitor', 1e-7, 0.1, 0.1, 6, 'D2', '', NULL, 'X7R', false, 'dup', :at, :at),"
                " (5, 'resistor', 4700.0, 0.05, 0.05, 2, 'A1', 'axial', 0.25, '', false, 'dup', :at, :at)"),
                {"at": _AT})
            conn.execute(sa.text(
                "INSERT INTO movements (id, line_id, delta, reason, reference, created_at) VALUES"
                " (6, 4, 6, 'import', 'a.csv', :at), (7, 5, 2, 'import', 'a.csv', :at)"), {"at": _AT})
    finally:
        plain.dispose()
    engine = db.open_engine(db_url)
    try:
        from bom_fixtures import ledger_sums, quantities

        assert quantities(engine) == {1: 9, 2: 26, 3: 4}
        assert ledger_sums(engine) == {1: 9, 2: 26, 3: 3}  # line 3: 4 imported, 1 pulled
        with engine.connect() as conn:
            assert _rows(conn, "SELECT id, line_id FROM movements WHERE id IN (6, 7) ORDER BY id") == [(6, 2), (7, 1)]
        # and the index now refuses a second line for the same part (NULL rating included)
        with pytest.raises(DatabaseProblem, match="refused the change"):
            with db.transaction(engine) as s:
                s.add(StockLineRow(kind="capacitor", value=1e-7, tol_minus=0.1, tol_plus=0.1, quantity=1,
                                      location="D2", package="", rating=None, dielectric="X7R", polarized=False,
                                      note=""))
    finally:
        engine.dispose()


@sqlite_only
def test_broken_references_stop_the_upgrade_and_leave_the_database_as_it_was(db_url, db_path):
    _migrate_raw(db_path, "0001")
    with sqlite3.connect(db_path) as c:  # foreign keys off (sqlite3 default): a dangling reference
        c.execute("INSERT INTO movements (line_id, delta, reason, reference, created_at)"
                  " VALUES (999, 1, 'import', '', '2026-01-02')")
    with pytest.raises(DatabaseProblem) as info:
        db.open_engine(db_url)
    assert str(info.value) == (f"upgrading {db_path} would break 1 reference(s) between tables "
                               "(first in table movements); the database was left as it was")
    with sqlite3.connect(db_path) as c:
        assert c.execute("SELECT version_num FROM alembic_version").fetchall() == [("0001",)]
    assert "pulls" not in _tables(db_path)


_NEW_KIND_INSERT = (
    "INSERT INTO stock_lines (kind, value, tol_minus, tol_plus, quantity, location, package, rating, dielectric,"
    " polarized, note, part, turns, rating_current, reorder_at, created_at, updated_at) VALUES (:kind, :value,"
    " :tm, :tp, :q, :loc, '', :rating, '', false, '', :part, :turns, :ic, :reorder, :at, :at)")


def _new_kind_line(kind: str, value: float = 0.0, part: str = "", *, tol: float = 0.0, loc: str = "B3",
                   rating=None, turns=None, rating_current=None, reorder=None) -> dict:
    return {"kind": kind, "value": value, "tm": tol, "tp": tol, "q": 2, "loc": loc, "rating": rating,
            "part": part, "turns": turns, "ic": rating_current, "reorder": reorder, "at": _AT}


@pytest.mark.parametrize("revision", db.KNOWN_REVISIONS[:-1])
def test_revision_0004_keeps_old_lines_and_takes_the_new_kinds(db_url, revision):
    """From every older revision: the old lines come through with empty new columns (part '',
    turns / rating_current / reorder_at NULL), and the upgraded table takes trimmer, IC and diode
    lines; the identity index tells two ICs apart by their part text (and a diode by the current
    its drop is stated at), and still refuses a second line for one identity."""
    _migrate_raw(db_url, revision)
    with _plain(db_url) as plain:
        with plain.begin() as conn:
            _fill(conn, revision)
    db.open_engine(db_url).dispose()
    with _plain(db_url) as plain:
        with plain.connect() as conn:
            assert _rows(conn, "SELECT id, part, turns, rating_current, reorder_at FROM stock_lines ORDER BY id") == [
                (1, "", None, None, None), (2, "", None, None, None), (3, "", None, None, None)]
        with plain.begin() as conn:
            conn.execute(sa.text(_NEW_KIND_INSERT), [
                _new_kind_line("ic", part="NE555P", reorder=1),
                _new_kind_line("ic", part="555 CMOS"),  # same drawer, other part: another line
                _new_kind_line("diode", part="1N4148", rating=0.62, rating_current=1e-3),
                _new_kind_line("diode", part="1N4148", rating=0.62, rating_current=1e-2),
                _new_kind_line("trimmer", 10e3, tol=0.2, rating=0.5, turns=25),
                _new_kind_line("trimmer", 10e3, tol=0.2, rating=0.5, turns=1),
            ])
        with plain.connect() as conn:
            assert _rows(conn, "SELECT kind, part, turns FROM stock_lines WHERE id > 3 ORDER BY id") == [
                ("ic", "NE555P", None), ("ic", "555 CMOS", None), ("diode", "1N4148", None),
                ("diode", "1N4148", None), ("trimmer", "", 25), ("trimmer", "", 1)]
        refused = [
            _new_kind_line("ic", part="NE555P"),  # the same identity as line 4
            _new_kind_line("transistor", part="BC547"),  # kind CHECK
            _new_kind_line("ic", 5.0, part="74HC14"),  # an IC has no value
            _new_kind_line("trimmer", 0.0),  # a trimmer has one
            _new_kind_line("trimmer", 1e3, turns=0),
            _new_kind_line("diode", part="BAT85", rating=0.3, rating_current=0.0),
            _new_kind_line("ic", part="40106", reorder=-1),
        ]
        for row in refused:
            with pytest.raises(sa.exc.IntegrityError):
                with plain.begin() as conn:
                    conn.execute(sa.text(_NEW_KIND_INSERT), row)


def test_downgrade_below_0004_is_refused_while_new_kinds_are_held(db_url):
    """The older schema cannot hold an IC line; the downgrade stops with a message naming what is
    held, and the database stays at 0004 with the line in it."""
    db.open_engine(db_url).dispose()
    with _plain(db_url) as plain:
        with plain.begin() as conn:
            conn.execute(sa.text(_NEW_KIND_INSERT), [_new_kind_line("ic", part="NE555P"),
                                                     _new_kind_line("ic", part="74HC14")])
    with pytest.raises(RuntimeError) as info:
        _migrate_raw(db_url, "0003", "downgrade")
    assert str(info.value) == ("cannot go below schema revision 0004: the stock holds 2 ic lines, which the older "
                               "schema cannot store; export and delete them first (nothing was changed)")
    with _plain(db_url) as plain:
        with plain.connect() as conn:
            assert _rows(conn, "SELECT version_num FROM alembic_version") == [("0004",)]
            assert _rows(conn, "SELECT kind, part FROM stock_lines ORDER BY id") == [("ic", "NE555P"), ("ic", "74HC14")]


def test_downgrade_to_0001_and_back(db_url):
    db.open_engine(db_url).dispose()
    _migrate_raw(db_url, "0001", "downgrade")
    with _plain(db_url) as plain:
        with plain.connect() as conn:
            insp = sa.inspect(conn)
            assert "pulls" not in insp.get_table_names()
            assert "pull_id" not in [c["name"] for c in insp.get_columns("movements")]
    db.open_engine(db_url).dispose()
    with _plain(db_url) as plain:
        with plain.connect() as conn:
            assert "pulls" in sa.inspect(conn).get_table_names()


@pytest.mark.filterwarnings("ignore:.*expression-based index")  # SQLite cannot reflect the identity index;
def test_models_match_the_migrated_schema(db_url):                  # its effect is tested by the 0003 tests
    """alembic's autogenerate comparison (what `alembic check` runs) finds nothing to change."""
    from alembic.autogenerate import compare_metadata
    from alembic.migration import MigrationContext

    engine = db.open_engine(db_url)
    try:
        with engine.connect() as conn:
            ctx = MigrationContext.configure(conn, opts={"compare_type": True})
            assert compare_metadata(ctx, Base.metadata) == []
    finally:
        engine.dispose()


def test_up_to_date_database_is_opened_without_importing_alembic(db_url):
    db.open_engine(db_url).dispose()
    code = (
        "import sys; from selector.store.db import open_engine; "
        f"open_engine({db_url!r}).dispose(); print('alembic' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "False"


def test_a_new_database_does_import_alembic(db_url):
    """The negative control for the test above: the check really sees alembic when it runs."""
    code = (
        "import sys; from selector.store.db import open_engine; "
        f"open_engine({db_url!r}).dispose(); print('alembic' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO, timeout=120)
    assert out.stdout.strip() == "True", out.stderr


# --------------------------------------------------------------------------- refusals through the CLI

def _one_error_line(result) -> str:
    assert result.returncode == 1, (result.stdout, result.stderr)
    assert "Traceback" not in result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("Error: ")
    return lines[0]


@sqlite_only
def test_damaged_file_is_refused_with_one_line(cli, db_path):
    db_path.write_bytes(bytes(range(256)) * 16)  # 4 KiB that are not an SQLite file
    before = db_path.read_bytes()
    line = _one_error_line(cli("stock", "list", db=db_path))
    assert line == f"Error: {db_path} is damaged or is not an SQLite database (file is not a database)"
    assert db_path.read_bytes() == before


@sqlite_only
def test_foreign_sqlite_database_is_refused_with_one_line(cli, db_path):
    with sqlite3.connect(db_path) as c:
        c.execute("CREATE TABLE invoices (id INTEGER PRIMARY KEY, total REAL)")
    line = _one_error_line(cli("stock", "list", db=db_path))
    assert line == (f"Error: {db_path} is not a selector stock database: it holds tables (invoices) "
                    "but no selector schema")
    assert _tables(db_path) == {"invoices"}


@sqlite_only
def test_newer_schema_revision_is_refused(cli, db_url, db_path):
    db.open_engine(db_url).dispose()
    with sqlite3.connect(db_path) as c:
        c.execute("UPDATE alembic_version SET version_num = '0099'")
    line = _one_error_line(cli("stock", "list", db=db_path))
    assert line == (f"Error: {db_path} has schema revision 0099, which this selector does not know "
                    f"(it expects {db.SCHEMA_HEAD}); it was probably written by a newer selector")


def test_directory_is_refused(cli, tmp_path):
    line = _one_error_line(cli("stock", "list", db=tmp_path))
    assert line == f"Error: {tmp_path} is a directory, not a stock database file"


def test_a_missing_folder_in_an_explicit_path_is_refused(cli, tmp_path):
    wanted = tmp_path / "benhc" / "stock.db"  # a typo for "bench"
    line = _one_error_line(cli("stock", "list", db=wanted))
    assert line == (f"Error: the folder {wanted.parent} does not exist (for the stock database {wanted}); "
                    "create it first or check the path")
    assert not wanted.parent.exists()
    env_line = _one_error_line(cli("stock", "list", env={"SELECTOR_DB": str(wanted)}))
    assert env_line == line


def _foreign_with_alembic(path: Path, revision: str) -> bytes:
    """Another program's SQLite file that also uses Alembic (rollback journal, its own tables)."""
    with sqlite3.connect(path) as c:
        c.execute("CREATE TABLE alembic_version (version_num VARCHAR(32) NOT NULL PRIMARY KEY)")
        c.execute("INSERT INTO alembic_version VALUES (?)", (revision,))
        c.execute("CREATE TABLE invoices (id INTEGER PRIMARY KEY, total REAL)")
        c.execute("CREATE TABLE stock_lines (id INTEGER PRIMARY KEY, sku TEXT)")
    return path.read_bytes()


@sqlite_only
@pytest.mark.parametrize("revision", ["0001", "0002", db.SCHEMA_HEAD, "0099", "3f2a9c1b7d4e"])
def test_another_programs_alembic_database_is_refused_unchanged(db_url, db_path, revision):
    """Whatever its Alembic revision (one of ours, a later-looking one, or its own), a file whose
    tables are not ours is refused with one line: not migrated, not called "newer", not switched
    to WAL (the file's bytes are untouched and no -wal file appears)."""
    before = _foreign_with_alembic(db_path, revision)
    with pytest.raises(DatabaseProblem) as info:
        db.open_engine(db_url)
    msg = str(info.value)
    assert msg.startswith(f"{db_path} is not a selector stock database: it holds tables (invoices, stock_lines)")
    assert "newer" not in msg and "\n" not in msg
    assert db_path.read_bytes() == before
    assert not Path(f"{db_path}-wal").exists()
    with sqlite3.connect(db_path) as c:
        assert c.execute("PRAGMA journal_mode").fetchone() == ("delete",)


def test_another_programs_alembic_database_is_refused_through_the_cli(cli, tmp_path):
    path = tmp_path / "books.db"
    before = _foreign_with_alembic(path, "3f2a9c1b7d4e")
    line = _one_error_line(cli("stock", "list", db=path))
    assert line == (f"Error: {path} is not a selector stock database: it holds tables (invoices, stock_lines) "
                    "of another program (schema revision 3f2a9c1b7d4e)")
    assert path.read_bytes() == before
