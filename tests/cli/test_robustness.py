"""Robustness of the program (the CLI in-process; real processes where they are the point):
damaged, foreign, misplaced and busy databases, a process killed in the middle of an import, and
bad command-line input for every command.
The quality bar (notes): bad input gives one line ``Error: …`` (or typer's usage error, exit 2),
never a traceback, never "database is locked", and the database is left unchanged."""

from __future__ import annotations

import csv
import os
import random
import signal
import sqlite3
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from conftest import REPO, SAMPLE, plain_engine, sqlite_only


def _snapshot(path) -> dict:
    """Everything a user action could change, read without selector's own code (either backend:
    ``path`` is a file Path or a URL)."""
    engine = plain_engine(path)
    try:
        with engine.connect() as con:
            def rows(sql):
                return [tuple(r) for r in con.exec_driver_sql(sql).all()]

            return {
                "lines": rows("SELECT id, kind, value, tol_minus, tol_plus, quantity, location FROM stock_lines"
                              " ORDER BY id"),
                "movements": rows("SELECT id, line_id, delta, reason FROM movements ORDER BY id"),
                "searches": rows("SELECT count(*) FROM searches")[0][0],
                "options": rows("SELECT count(*) FROM search_options")[0][0],
                "pulls": rows("SELECT id, undone_at FROM pulls ORDER BY id"),
            }
    finally:
        engine.dispose()


def _assert_one_error_line(result: subprocess.CompletedProcess) -> str:
    assert result.returncode == 1, (result.returncode, result.stdout, result.stderr)
    assert "Traceback" not in result.stderr
    assert "database is locked" not in result.stderr.lower()
    lines = [ln for ln in result.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("Error: "), result.stderr
    return lines[0]


# --------------------------------------------------------------------------- unusable database paths

@pytest.mark.parametrize("args", [("stock", "list"), ("find", "value", "10k"), ("ledger",),
                                  ("stock", "import", str(SAMPLE))])
def test_damaged_file_is_one_line_and_left_alone(cli, tmp_path, args):
    db = tmp_path / "stock.db"
    data = random.Random(7).randbytes(8192)
    db.write_bytes(data)
    line = _assert_one_error_line(cli(*args, db=db))
    assert str(db) in line and "damaged" in line
    assert db.read_bytes() == data


def test_foreign_sqlite_database_is_refused_and_untouched(cli, tmp_path):
    db = tmp_path / "other.db"
    con = sqlite3.connect(db)
    con.execute("CREATE TABLE customers (id INTEGER PRIMARY KEY, name TEXT)")
    con.execute("INSERT INTO customers (name) VALUES ('a shop customer')")
    con.commit()
    con.close()
    before = db.read_bytes()
    for args in (("stock", "list"), ("stock", "import", str(SAMPLE))):
        line = _assert_one_error_line(cli(*args, db=db))
        assert str(db) in line and "not a selector stock database" in line and "customers" in line
    assert db.read_bytes() == before
    con = sqlite3.connect(db)
    tables = {r[0] for r in con.execute("SELECT name FROM sqlite_master WHERE type='table'")}
    con.close()
    assert tables == {"customers"}  # no alembic_version, no stock tables were added


def test_directory_as_database(cli, tmp_path):
    folder = tmp_path / "drawer"
    folder.mkdir()
    line = _assert_one_error_line(cli("stock", "list", db=folder))
    assert str(folder) in line and "directory" in line
    assert list(folder.iterdir()) == []


def test_path_below_a_regular_file(cli, tmp_path):
    # Tests run as root, so chmod 000 would not stop us; a path through a regular file does.
    blocker = tmp_path / "notes.txt"
    blocker.write_text("not a folder\n")
    db = blocker / "stock.db"
    line = _assert_one_error_line(cli("stock", "import", str(SAMPLE), db=db))
    assert str(db) in line
    assert blocker.read_text() == "not a folder\n"


def test_a_missing_parent_folder_is_refused_for_an_import(cli, tmp_path):
    # Only the default data folder is created automatically: a --db path in a folder that does not
    # exist is most likely mistyped, and a new empty stock there would hide the real one.
    db = tmp_path / "new" / "shop" / "stock.db"
    result = cli("stock", "import", str(SAMPLE), db=db)
    line = _assert_one_error_line(result)
    assert line == (f"Error: the folder {db.parent} does not exist (for the stock database {db}); "
                    "create it first or check the path")
    assert not (tmp_path / "new").exists()
    db.parent.mkdir(parents=True)
    result = cli("stock", "import", str(SAMPLE), db=db)
    assert result.returncode == 0, result.stderr
    # sample_stock.csv has 111 data rows, each a distinct stock line (read from the file itself)
    with SAMPLE.open(newline="", encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    snap = _snapshot(db)
    assert len(snap["lines"]) == len(rows) == 111
    assert sum(r[5] for r in snap["lines"]) == sum(int(r["Quantity"]) for r in rows)


# --------------------------------------------------------------------------- a busy database

_HOLDER = textwrap.dedent(
    """
    import sqlite3, sys, time
    con = sqlite3.connect(sys.argv[1], isolation_level=None, timeout=30)
    con.execute("BEGIN IMMEDIATE")
    print("holding", flush=True)
    time.sleep(float(sys.argv[2]))
    con.execute("COMMIT")
    con.close()
    """
)


def _hold(db: Path, seconds: float) -> subprocess.Popen:
    proc = subprocess.Popen([sys.executable, "-c", _HOLDER, str(db), str(seconds)],
                            stdout=subprocess.PIPE, text=True)
    assert proc.stdout.readline().strip() == "holding"
    return proc


@sqlite_only
def test_busy_for_two_seconds_waits_then_succeeds(cli, stocked):
    before = dict((r[0], r[5]) for r in _snapshot(stocked)["lines"])
    holder = _hold(stocked, 2.0)
    try:
        result = cli("stock", "adjust", "1", "5", "--reference", "counted", db=stocked)
    finally:
        holder.wait(timeout=60)
    assert result.returncode == 0, result.stderr
    assert "locked" not in (result.stderr + result.stdout).lower()
    after = dict((r[0], r[5]) for r in _snapshot(stocked)["lines"])
    assert after[1] == before[1] + 5
    assert all(after[k] == before[k] for k in before if k != 1)


@sqlite_only
def test_busy_beyond_the_wait_limit_gives_one_clear_error(stocked, monkeypatch):
    # The CLI waits up to $SELECTOR_BUSY_WAIT (default 300 s); here the limit is 1 s so the test
    # stays short, through the same replay-then-give-up path (run_in_transaction) the commands use.
    monkeypatch.setenv("SELECTOR_BUSY_WAIT", "1")
    from selector.core.errors import DatabaseProblem
    from selector.store.db import apply_movement, open_engine, run_in_transaction

    engine = open_engine(f"sqlite:///{stocked}", busy_timeout_ms=50)
    before = _snapshot(stocked)
    holder = _hold(stocked, 8.0)
    try:
        with pytest.raises(DatabaseProblem) as info:
            run_in_transaction(engine, lambda s: apply_movement(s, 1, 5, "adjust"), on_wait=None)
    finally:
        holder.kill()
        holder.wait(timeout=60)
        engine.dispose()
    msg = str(info.value)
    assert "\n" not in msg and "busy" in msg and str(stocked) in msg
    assert "database is locked" not in msg.lower()
    assert _snapshot(stocked) == before


# --------------------------------------------------------------------------- killed during an import

@sqlite_only  # watches the WAL file grow; test_import.py has the same check on both backends
def test_sigkill_during_a_large_import_leaves_old_or_new_stock(cli, stocked, tmp_path):
    n_rows, qty = 20000, 3
    big = tmp_path / "big.csv"
    with big.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(["Kind", "Value", "Tolerance", "Quantity", "Location"])
        for i in range(n_rows):  # distinct values: every row is a new stock line
            w.writerow(["resistor", str(100_000 + i), "1%", qty, f"K{i % 97}"])
    old = _snapshot(stocked)
    wal = Path(str(stocked) + "-wal")
    wal_start = wal.stat().st_size if wal.exists() else 0
    env = dict(os.environ)
    env.pop("SELECTOR_DB", None)
    proc = subprocess.Popen([sys.executable, "-m", "selector", "--db", str(stocked), "stock", "import", str(big)],
                            cwd=REPO, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        # Wait until the import is writing (its uncommitted pages spill into the WAL), then kill.
        for _ in range(6000):
            if proc.poll() is not None:
                break
            if wal.exists() and wal.stat().st_size > wal_start + 256 * 1024:
                break
            time.sleep(0.01)
        proc.send_signal(signal.SIGKILL)
    finally:
        proc.wait(timeout=120)
    killed = proc.returncode == -signal.SIGKILL
    con = sqlite3.connect(stocked)
    assert con.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    con.close()
    new = _snapshot(stocked)
    if new == old:
        assert killed  # nothing was committed: the kill came before the end
    else:
        # exactly the old stock plus every row of the file, each ledgered once
        assert new["lines"][: len(old["lines"])] == old["lines"]
        added = new["lines"][len(old["lines"]):]
        assert len(added) == n_rows and all(r[5] == qty for r in added)
        assert sorted(r[2] for r in added) == [float(100_000 + i) for i in range(n_rows)]
        assert len(new["movements"]) == len(old["movements"]) + n_rows
    # the database still works for the next command
    assert cli("stock", "list", "--kind", "capacitor", db=stocked).returncode == 0


# --------------------------------------------------------------------------- bad input, every command

@pytest.fixture
def worked(cli, stocked):
    """A database with a saved timing search and one pull (so every command has something)."""
    for args in (("find", "astable", "--freq", "1.2k", "--duty", "65%", "--top", "3"),
                 ("pull", "1"),):
        r = cli(*args, db=stocked)
        assert r.returncode == 0, r.stderr
    return stocked


BAD = [
    # find value
    ("find", "value", "abc"), ("find", "value", "0"), ("find", "value", "--", "-10k"),
    ("find", "value", "10k", "--top", "0"), ("find", "value", "10k", "--max-parts", "4"),
    ("find", "value", "10k", "--boards", "0"), ("find", "value", "10k", "--boards", "-2"),
    ("find", "value", "10nF", "--kind", "resistor"), ("find", "value", "10k", "--kind", "inductor"),
    ("find", "value", "nan"), ("find", "value", "1e400"), ("find", "value", ""),
    # find astable / monostable / rc
    ("find", "astable", "--freq", "0", "--duty", "60%"), ("find", "astable", "--freq", "-5", "--duty", "60%"),
    ("find", "astable", "--freq", "1k", "--duty", "150%"), ("find", "astable", "--freq", "1k", "--duty", "0"),
    ("find", "astable", "--freq", "1k", "--duty", "abc"), ("find", "astable", "--freq", "1kF", "--duty", "60%"),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--top", "0"),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--boards", "-3"),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--max-parts", "9"),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--vcc", "100V"),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--chip", "nmos"),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--samples", "5"),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--diode-vf", "20"),
    ("find", "astable", "--freq", "1k", "--duty", "40%", "--connection", "standard"),
    ("find", "astable", "--freq", "1M", "--duty", "60%"),
    ("find", "monostable", "--width", "0"), ("find", "monostable", "--width", "-1s"),
    ("find", "monostable", "--width", "1ns"),
    ("find", "rc"), ("find", "rc", "--tau", "1ms", "--corner", "1k"), ("find", "rc", "--tau", "abc"),
    ("find", "rc", "--corner", "0"), ("find", "rc", "--tau", "1ms", "--top", "0"),
    # bom / pull / undo / ledger
    ("bom", "0"), ("bom", "abc"), ("bom", "99"), ("bom", "1", "--search", "999"), ("bom", "1", "--boards", "0"),
    ("bom", "1", "--format", "xml"),
    ("pull", "0"), ("pull", "99"), ("pull", "1", "--search", "999"), ("pull", "1", "--boards", "-2"),
    ("pull", "1", "--boards", "100000"), ("pull", "abc"),
    ("undo", "0"), ("undo", "999"), ("undo", "abc"), ("undo", "1", "extra"),
    ("ledger", "--limit", "0"), ("ledger", "--limit", "abc"),
    # netlist / simulate
    ("netlist", "0"), ("netlist", "99"), ("netlist", "1", "--search", "999"),
    ("simulate", "99"), ("simulate", "1", "--search", "999"), ("simulate", "1", "--cycles", "0"),
    ("simulate", "1", "--discharge-ohms", "-1"),
    # stock
    ("stock", "list", "--kind", "foo"), ("stock", "list", "--min", "abc"),
    ("stock", "adjust", "0", "5"), ("stock", "adjust", "abc", "5"), ("stock", "adjust", "99999", "5"),
    ("stock", "adjust", "1", "abc"), ("stock", "adjust", "1", "1.5"), ("stock", "adjust", "1", "--", "-99999"),
    ("stock", "adjust", "1", "99999999999999999999"),
    ("stock", "set", "1", "-5"), ("stock", "set", "99999", "5"), ("stock", "set", "1", "abc"),
    ("stock", "import", "/nonexistent/stock.csv"),
    ("stock", "kit", "E7", "--kind", "resistor", "--from", "1k", "--to", "10k", "--qty", "5", "--location", "Z"),
    ("stock", "kit", "E12", "--kind", "resistor", "--from", "10k", "--to", "1k", "--qty", "5", "--location", "Z"),
    ("stock", "kit", "E12", "--kind", "capacitor", "--from", "1k", "--to", "10k", "--qty", "5", "--location", "Z"),
    ("nosuchcommand",),
]


def test_bad_input_for_every_command_is_one_line_and_changes_nothing(cli, worked):
    before = _snapshot(worked)
    failures = []
    for args in BAD:
        r = cli(*args, db=worked)
        err = r.stderr
        ok = r.returncode in (1, 2) and "Traceback" not in err and "database is locked" not in err.lower()
        if ok and r.returncode == 1:
            lines = [ln for ln in err.splitlines() if ln.strip()]
            ok = len(lines) == 1 and lines[0].startswith("Error: ")
        if ok and r.returncode == 2:  # our own usage line, or typer's usage error box
            ok = err.startswith("Error: ") or "Usage:" in err
        if not ok:
            failures.append((args, r.returncode, err[-400:]))
    assert not failures, failures
    assert _snapshot(worked) == before


def test_undo_twice_and_unknown_pull_name_the_pull(cli, worked):
    first = cli("undo", "1", db=worked)
    assert first.returncode == 0, first.stderr
    after_undo = _snapshot(worked)
    again = _assert_one_error_line(cli("undo", "1", db=worked))
    assert "pull 1" in again and "already undone" in again
    unknown = _assert_one_error_line(cli("undo", "42", db=worked))
    assert "42" in unknown
    assert _snapshot(worked) == after_undo
