"""Schema migrations: a new database is created at head, an older one is upgraded with its data
intact and every foreign key checked, the models match the migrated schema, and databases that are
not ours (or are damaged) are refused with one clear line."""

from __future__ import annotations

import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest
import sqlalchemy as sa

from selector.core.errors import DatabaseProblem
from selector.store import db
from selector.store.models import Base

REPO = Path(__file__).resolve().parent.parent


def _alembic_config(conn):
    from alembic.config import Config

    cfg = Config()
    cfg.set_main_option("script_location", str(db.migrations_dir()))
    cfg.attributes["connection"] = conn
    return cfg


def _migrate_raw(db_path: Path, revision: str, direction: str = "upgrade") -> None:
    """Run alembic directly (not through open_engine) on an engine with foreign keys OFF."""
    from alembic import command

    engine = db.make_engine(sa.engine.make_url(f"sqlite:///{db_path}"), foreign_keys=False, pooled=False)
    try:
        with engine.connect() as conn:
            getattr(command, direction)(_alembic_config(conn), revision)
            conn.commit()
    finally:
        engine.dispose()


def _tables(db_path: Path) -> set[str]:
    with sqlite3.connect(db_path) as c:
        return {r[0] for r in c.execute("SELECT name FROM sqlite_master WHERE type='table'")}


def test_schema_head_constant_matches_the_scripts():
    from alembic.config import Config
    from alembic.script import ScriptDirectory

    cfg = Config()
    cfg.set_main_option("script_location", str(db.migrations_dir()))
    script = ScriptDirectory.from_config(cfg)
    assert script.get_current_head() == db.SCHEMA_HEAD
    chain = [rev.revision for rev in script.walk_revisions()][::-1]  # base first
    assert tuple(chain) == db.KNOWN_REVISIONS


def test_empty_database_upgrades_to_head(db_url, db_path):
    engine = db.open_engine(db_url)
    engine.dispose()
    assert _tables(db_path) == {"alembic_version", "stock_lines", "movements", "searches", "search_options",
                                "pulls"}
    with sqlite3.connect(db_path) as c:
        assert c.execute("SELECT version_num FROM alembic_version").fetchall() == [(db.SCHEMA_HEAD,)]


def test_database_at_0001_with_data_upgrades_with_data_intact(db_url, db_path):
    _migrate_raw(db_path, "0001")
    assert "pulls" not in _tables(db_path)
    with sqlite3.connect(db_path) as c:
        c.execute("PRAGMA foreign_keys=ON")
        c.executemany(
            "INSERT INTO stock_lines (id, kind, value, tol_minus, tol_plus, quantity, location, package, rating,"
            " dielectric, polarized, note, created_at, updated_at) VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?)",
            [(1, "resistor", 4700.0, 0.05, 0.05, 7, "A1", "axial", 0.25, "", 0, "cf", "2026-01-02 03:04:05",
              "2026-01-02 03:04:05"),
             (2, "capacitor", 1e-7, 0.1, 0.1, 20, "D2", "", None, "X7R", 0, "", "2026-01-02 03:04:05",
              "2026-01-02 03:04:05")],
        )
        c.executemany(
            "INSERT INTO movements (id, line_id, delta, reason, reference, created_at) VALUES (?,?,?,?,?,?)",
            [(1, 1, 10, "import", "a.csv", "2026-01-02 03:04:05"), (2, 1, -3, "adjust", "", "2026-01-03 00:00:00"),
             (3, 2, 20, "import", "a.csv", "2026-01-02 03:04:05")],
        )
        before_lines = c.execute("SELECT * FROM stock_lines ORDER BY id").fetchall()
        before_moves = c.execute("SELECT id, line_id, delta, reason, reference, created_at FROM movements"
                                 " ORDER BY id").fetchall()

    engine = db.open_engine(db_url)
    engine.dispose()

    with sqlite3.connect(db_path) as c:
        assert c.execute("SELECT version_num FROM alembic_version").fetchall() == [("0002",)]
        assert c.execute("SELECT * FROM stock_lines ORDER BY id").fetchall() == before_lines
        assert c.execute("SELECT id, line_id, delta, reason, reference, created_at FROM movements"
                         " ORDER BY id").fetchall() == before_moves
        assert c.execute("SELECT pull_id FROM movements").fetchall() == [(None,)] * 3
        assert c.execute("PRAGMA foreign_key_check").fetchall() == []
        # The rebuilt movements table still enforces both of its foreign keys.
        c.execute("PRAGMA foreign_keys=ON")
        with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
            c.execute("INSERT INTO movements (line_id, delta, reason, reference, created_at, pull_id)"
                      " VALUES (1, 1, 'pull', '', '2026-01-04', 99)")
        with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
            c.execute("INSERT INTO movements (line_id, delta, reason, reference, created_at)"
                      " VALUES (77, 1, 'adjust', '', '2026-01-04')")


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


def test_downgrade_to_0001_and_back(db_url, db_path):
    db.open_engine(db_url).dispose()
    _migrate_raw(db_path, "0001", "downgrade")
    assert "pulls" not in _tables(db_path)
    with sqlite3.connect(db_path) as c:
        cols = [r[1] for r in c.execute("PRAGMA table_info(movements)")]
    assert "pull_id" not in cols
    db.open_engine(db_url).dispose()
    assert "pulls" in _tables(db_path)


def test_models_match_the_migrated_schema(db_url):
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


def test_damaged_file_is_refused_with_one_line(cli, db_path):
    db_path.write_bytes(bytes(range(256)) * 16)  # 4 KiB that are not an SQLite file
    before = db_path.read_bytes()
    line = _one_error_line(cli("stock", "list", db=db_path))
    assert line == f"Error: {db_path} is damaged or is not an SQLite database (file is not a database)"
    assert db_path.read_bytes() == before


def test_foreign_sqlite_database_is_refused_with_one_line(cli, db_path):
    with sqlite3.connect(db_path) as c:
        c.execute("CREATE TABLE invoices (id INTEGER PRIMARY KEY, total REAL)")
    line = _one_error_line(cli("stock", "list", db=db_path))
    assert line == (f"Error: {db_path} is not a selector stock database: it holds tables (invoices) "
                    "but no selector schema")
    assert _tables(db_path) == {"invoices"}


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


def test_unwritable_location_is_refused(cli, tmp_path):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    line = _one_error_line(cli("stock", "list", db=blocker / "sub" / "stock.db"))
    assert line.startswith(f"Error: cannot create the folder for the stock database {blocker / 'sub' / 'stock.db'}")
