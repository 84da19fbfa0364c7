"""Several benches on one stock, on both backends (real processes, each with its own engine):
the same file imported by four benches at once merges into one line per part with exact totals;
undos racing pulls restore exactly once and the ledger still sums to the stock; while another
bench holds a long write transaction, reading commands answer at once and a pull waits for it
instead of failing. (Four concurrent first opens and eight processes pulling the last parts are
in test_store_db.py and test_pull_concurrency.py.)"""

from __future__ import annotations

import csv
import multiprocessing as mp
import subprocess
import sys
import textwrap
import time

import sqlalchemy as sa

from bom_fixtures import BENCH_STOCK, bench_db, ledger_sums, quantities, rc_series_pair
from conftest import REPO, SAMPLE, url_of
from selector.store import db
from selector.store.models import MovementRow, PullRow, StockLineRow


def _run(jobs):
    """Start one process per (target, args), all released at once by a barrier; their results."""
    ctx = mp.get_context("spawn")  # no engine or connection is inherited from the parent
    barrier = ctx.Barrier(len(jobs))
    results = ctx.Queue()
    procs = [ctx.Process(target=target, args=(*a, barrier, results)) for target, a in jobs]
    for p in procs:
        p.start()
    out = [results.get(timeout=600) for _ in procs]
    for p in procs:
        p.join(timeout=120)
        assert p.exitcode == 0
    return out


# --------------------------------------------------------------------------- four imports of one file

def _import_worker(url: str, path: str, barrier, results) -> None:
    from selector.services.stock import import_stock
    from selector.store.db import open_engine

    engine = open_engine(url)
    try:
        barrier.wait(timeout=120)
        plan = import_stock(engine, path)
        results.put(("ok", len(plan.new_lines), len(plan.changes)))
    except Exception as exc:  # anything at all is a failure the test must show
        results.put((f"{type(exc).__name__}: {exc}", 0, 0))
    finally:
        engine.dispose()


def _file_parts() -> dict[str, int]:
    """The sample file's quantity per row (each of its 111 rows is a distinct part; an IC or diode
    may be named in the Part column instead of Value)."""
    with SAMPLE.open(newline="", encoding="utf-8") as f:
        return {f"{r['Kind']}|{r['Value']}|{r['Part']}|{r['Location']}": int(r["Quantity"])
                for r in csv.DictReader(f)}


def _ledger_matches(engine, q: dict[int, int]) -> bool:
    """Every line's ledger sums to its quantity (a line still at 0 may have no ledger row)."""
    sums = ledger_sums(engine)
    return all(sums.get(line_id, 0) == n for line_id, n in q.items()) and set(sums) <= set(q)


def test_four_benches_importing_one_file_at_once_merge_exactly(db_url):
    db.open_engine(db_url).dispose()  # the schema exists: this test is about the merge, not the first open
    file_qty = _file_parts()
    assert len(file_qty) == 111
    out = _run([(_import_worker, (db_url, str(SAMPLE)))] * 4)
    assert [o[0] for o in out] == ["ok"] * 4, out
    # exactly one import created the lines; the three others merged into them (a part whose file
    # quantity is 0 leaves its line unchanged, so it is no change)
    counted = sum(1 for n in file_qty.values() if n)
    assert sorted((o[1], o[2]) for o in out) == [(0, counted)] * 3 + [(111, 0)]
    engine = db.open_engine(db_url)
    try:
        q = quantities(engine)
        assert len(q) == 111  # no duplicate stock lines
        assert sorted(q.values()) == sorted(4 * n for n in file_qty.values())
        assert _ledger_matches(engine, q)
        # and a later --replace sets each part to the file's own quantity, so the totals are exact
        from selector.services.stock import import_stock

        import_stock(engine, SAMPLE, replace=True)
        q = quantities(engine)
        assert sorted(q.values()) == sorted(file_qty.values())
        assert _ledger_matches(engine, q)
    finally:
        engine.dispose()


# --------------------------------------------------------------------------- undo racing pulls

def _pull_worker(url: str, pulls: int, barrier, results) -> None:
    from selector.core.errors import InsufficientStock
    from selector.services.pull import pull_option
    from selector.store.db import open_engine

    engine = open_engine(url)
    done = []
    try:
        barrier.wait(timeout=120)
        for _ in range(pulls):
            try:
                pull_option(engine, 1)
                done.append("pulled")
            except InsufficientStock as exc:
                done.append("short" if exc.args[0].endswith("nothing was taken") else f"odd: {exc}")
            except Exception as exc:
                done.append(f"{type(exc).__name__}: {exc}")
    finally:
        engine.dispose()
        results.put(done)


def _undo_worker(url: str, pull_ids: tuple[int, ...], barrier, results) -> None:
    from selector.core.errors import AlreadyUndone
    from selector.services.pull import undo_pull
    from selector.store.db import open_engine

    engine = open_engine(url)
    done = []
    try:
        barrier.wait(timeout=120)
        for pull_id in pull_ids:
            try:
                undo_pull(engine, pull_id)
                done.append("undone")
            except AlreadyUndone:
                done.append("already")
            except Exception as exc:
                done.append(f"{type(exc).__name__}: {exc}")
    finally:
        engine.dispose()
        results.put(done)


def test_undos_racing_pulls_restore_once_and_the_ledger_sums_to_the_stock(db_url):
    line_qty, per_pull = 12, 2  # the RC option takes 2 parts of line 1 and 1 capacitor of line 5
    stock = {1: BENCH_STOCK[1][:4] + (line_qty,) + BENCH_STOCK[1][5:],
             5: BENCH_STOCK[5][:4] + (1_000,) + BENCH_STOCK[5][5:]}
    engine = bench_db(db_url, [rc_series_pair()], mode="rc", stock=stock)
    from selector.services.pull import pull_option

    first = [pull_option(engine, 1).pull_id for _ in range(3)]  # 6 parts of line 1 taken
    engine.dispose()
    # 3 pullers x 3 attempts against 2 undoers that each try to undo all three first pulls
    out = _run([(_pull_worker, (db_url, 3))] * 3 + [(_undo_worker, (db_url, tuple(first)))] * 2)
    flat = [x for o in out for x in o]
    assert all(x in ("pulled", "short", "undone", "already") for x in flat), flat
    assert flat.count("undone") == 3 and flat.count("already") == 3  # each first pull undone exactly once

    engine = db.open_engine(db_url)
    try:
        with engine.connect() as conn:
            live = conn.execute(sa.select(sa.func.count()).select_from(PullRow)
                                .where(PullRow.undone_at.is_(None))).scalar_one()
            total = conn.execute(sa.select(sa.func.count()).select_from(PullRow)).scalar_one()
            undo_rows = conn.execute(sa.select(MovementRow.pull_id, sa.func.count())
                                     .where(MovementRow.reason == "undo").group_by(MovementRow.pull_id)).all()
        assert total == 3 + flat.count("pulled")
        assert sorted(undo_rows) == [(i, 2) for i in sorted(first)]  # two lines put back, once per pull
        q = quantities(engine)
        assert q[1] == line_qty - per_pull * live >= 0
        assert q[5] == 1_000 - live
        assert ledger_sums(engine) == q
    finally:
        engine.dispose()


# --------------------------------------------------------------------------- readers beside a long writer

_HOLD_SECONDS = 10.0

_HOLDER = textwrap.dedent(
    """
    import sys, time
    import sqlalchemy as sa
    url, seconds, plan_lock = sys.argv[1], float(sys.argv[2]), int(sys.argv[3])
    if url.startswith("sqlite"):
        import sqlite3
        con = sqlite3.connect(url[len("sqlite:///"):], isolation_level=None)
        con.execute("BEGIN IMMEDIATE")
        con.execute("UPDATE stock_lines SET note = 'recounting' WHERE id = 1")
        print("holding", flush=True)
        time.sleep(seconds)
        con.execute("COMMIT")
    else:
        engine = sa.create_engine(url, poolclass=sa.pool.NullPool)
        with engine.begin() as con:  # what a long import holds: the plan lock and changed rows
            con.execute(sa.text("SELECT pg_advisory_xact_lock(:k)"), {"k": plan_lock})
            con.execute(sa.text("UPDATE stock_lines SET note = 'recounting' WHERE id = 1"))
            print("holding", flush=True)
            time.sleep(seconds)
        engine.dispose()
    print("committed", flush=True)
    """
)


def test_reading_commands_answer_at_once_beside_a_long_writer_and_a_pull_waits_for_it(cli, db_url, db_path,
                                                                                         backend):
    engine = bench_db(db_url, [rc_series_pair()], mode="rc",
                      stock={1: BENCH_STOCK[1], 5: BENCH_STOCK[5], 3: BENCH_STOCK[3]})
    engine.dispose()
    holder = subprocess.Popen([sys.executable, "-c", _HOLDER, url_of(db_path), str(_HOLD_SECONDS),
                               str(db._PG_STOCK_PLAN_LOCK)], cwd=REPO, stdout=subprocess.PIPE, text=True)
    try:
        assert holder.stdout.readline().strip() == "holding"
        # Readers: each one finishes while the writer still holds its transaction open.
        for args in (("stock", "list", "--json"), ("bom", "1"), ("ledger",)):
            r = cli(*args, db=db_path)
            assert r.returncode == 0, (args, r.stderr)
            assert r.stderr == ""
            assert holder.poll() is None, f"{args} only finished after the writer committed"
        # A writer waits for the other bench instead of failing, then succeeds.
        r = cli("pull", "1", "--json", db=db_path)
        assert r.returncode == 0, r.stderr
        # The holder had committed by the time the pull got through. (It may still be exiting: an
        # in-process pull returns within milliseconds of the commit, so read its line, not poll().)
        assert holder.stdout.readline().strip() == "committed"
        assert "locked" not in r.stderr.lower()
        assert r.stderr.strip() == db.WAITING_NOTE  # one line, once (SQLite busy / PostgreSQL lock_timeout)
    finally:
        try:
            holder.wait(timeout=_HOLD_SECONDS + 30)  # it commits after the hold and then exits
        except subprocess.TimeoutExpired:
            holder.kill()
        assert holder.wait(timeout=60) == 0
    # find reads the stock like the readers above, then stores its search (a short write).
    r = cli("find", "value", "20k", "--top", "3", db=db_path)
    assert r.returncode == 0 and r.stderr == "", r.stderr
    engine = db.open_engine(db_url)
    try:
        q = quantities(engine)
        assert q[1] == BENCH_STOCK[1][4] - 2 and q[5] == BENCH_STOCK[5][4] - 1
        with engine.connect() as conn:
            assert conn.execute(sa.select(StockLineRow.note).where(StockLineRow.id == 1)).scalar_one() == "recounting"
        assert ledger_sums(engine) == q
    finally:
        engine.dispose()
