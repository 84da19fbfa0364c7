"""Several processes pulling the same last parts at once: exactly as many succeed as the stock
allows, the rest get the shortage message, stock never goes below zero, the ledger sums to the
stock, and nobody ever sees "database is locked". Real processes, each with its own engine."""

from __future__ import annotations

import multiprocessing as mp
import subprocess
import sys
from pathlib import Path

import pytest
import sqlalchemy as sa

from bom_fixtures import BENCH_STOCK, bench_db, ledger_sums, quantities, rc_series_pair
from selector.store.models import MovementRow, PullRow

PROCESSES = 8
PULLS_EACH = 50
LINE_QTY = 120
PER_PULL = 2  # the RC option takes two parts of line 1 (a series pair) and one capacitor of line 5


def _pull_worker(db_url: str, pulls: int, barrier, results) -> None:
    """Child process: a fresh engine, ``pulls`` attempts, report (successes, messages)."""
    from selector.core.errors import InsufficientStock, SelectorError
    from selector.services.pull import pull_option
    from selector.store.db import open_engine

    engine = open_engine(db_url)
    ok, short, other = 0, [], []
    try:
        barrier.wait(timeout=120)
        for _ in range(pulls):
            try:
                pull_option(engine, 1)
                ok += 1
            except InsufficientStock as exc:
                short.append(str(exc))
            except SelectorError as exc:  # e.g. a busy database that outlasted every retry
                other.append(f"{type(exc).__name__}: {exc}")
            except Exception as exc:  # anything else is a bug the test must show
                other.append(f"{type(exc).__name__}: {exc}")
    finally:
        engine.dispose()
        results.put((ok, short, other))


def _undo_worker(db_url: str, pull_id: int, barrier, results) -> None:
    from selector.core.errors import AlreadyUndone
    from selector.services.pull import undo_pull
    from selector.store.db import open_engine

    engine = open_engine(db_url)
    try:
        barrier.wait(timeout=120)
        try:
            undo_pull(engine, pull_id)
            results.put("undone")
        except AlreadyUndone as exc:
            results.put(f"already: {exc}")
        except Exception as exc:
            results.put(f"{type(exc).__name__}: {exc}")
    finally:
        engine.dispose()


def _stock(qty: int) -> dict[int, tuple]:
    return {1: BENCH_STOCK[1][:4] + (qty,) + BENCH_STOCK[1][5:], 5: BENCH_STOCK[5][:4] + (10_000,) + BENCH_STOCK[5][5:]}


def _run(target, args_per_proc, n_results):
    ctx = mp.get_context("spawn")  # no engine or SQLite handle is inherited from the parent
    barrier = ctx.Barrier(len(args_per_proc))
    results = ctx.Queue()
    procs = [ctx.Process(target=target, args=(*a, barrier, results)) for a in args_per_proc]
    for p in procs:
        p.start()
    out = [results.get(timeout=600) for _ in range(n_results)]
    for p in procs:
        p.join(timeout=120)
        assert p.exitcode == 0
    return out


@pytest.mark.slow
def test_many_processes_pulling_the_last_parts(db_url):
    engine = bench_db(db_url, [rc_series_pair()], mode="rc", stock=_stock(LINE_QTY))
    engine.dispose()

    out = _run(_pull_worker, [(db_url, PULLS_EACH)] * PROCESSES, PROCESSES)
    successes = sum(ok for ok, _, _ in out)
    shortages = [m for _, short, _ in out for m in short]
    others = [m for _, _, other in out for m in other]

    assert others == []  # in particular never "database is locked"
    assert successes == LINE_QTY // PER_PULL  # 60: every attempt with 2+ parts left succeeds
    assert len(shortages) == PROCESSES * PULLS_EACH - successes
    assert all("needs 2" in m and m.endswith("nothing was taken") for m in shortages)
    assert not any("locked" in m.lower() for m in shortages)

    from selector.store.db import open_engine

    engine = open_engine(db_url)
    try:
        q = quantities(engine)
        assert q[1] == LINE_QTY - successes * PER_PULL == 0
        assert q[5] == 10_000 - successes
        assert min(q.values()) >= 0
        assert ledger_sums(engine) == q  # every change is a ledger row
        with engine.connect() as conn:
            n_pulls = conn.execute(sa.select(sa.func.count()).select_from(PullRow)).scalar_one()
            per_pull = conn.execute(
                sa.select(MovementRow.pull_id, sa.func.count(), sa.func.sum(MovementRow.delta))
                .where(MovementRow.reason == "pull").group_by(MovementRow.pull_id)).all()
        assert n_pulls == successes
        assert all(count == 2 and total == -(PER_PULL + 1) for _, count, total in per_pull)
        assert len(per_pull) == successes
    finally:
        engine.dispose()


def test_concurrent_undos_of_one_pull_restore_once(db_url):
    engine = bench_db(db_url, [rc_series_pair()], mode="rc", stock=_stock(10))
    from selector.services.pull import pull_option

    pull_id = pull_option(engine, 1, boards=3).pull_id
    engine.dispose()
    out = _run(_undo_worker, [(db_url, pull_id)] * 4, 4)
    assert sorted(o.split(":")[0] for o in out) == ["already", "already", "already", "undone"], out

    from selector.store.db import open_engine

    engine = open_engine(db_url)
    try:
        assert quantities(engine) == {1: 10, 5: 10_000}
        assert ledger_sums(engine) == quantities(engine)
    finally:
        engine.dispose()


def test_concurrent_cli_pulls_share_the_last_parts(db_url, db_path: Path):
    # 6 real `selector pull` processes at once on a line that holds parts for exactly 2 pulls.
    engine = bench_db(db_url, [rc_series_pair()], mode="rc", stock=_stock(4))
    engine.dispose()
    from conftest import REPO

    cmd = [sys.executable, "-m", "selector", "--db", str(db_path), "pull", "1", "--json"]
    procs = [subprocess.Popen(cmd, cwd=REPO, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
             for _ in range(6)]
    done = [p.communicate(timeout=300) + (p.returncode,) for p in procs]
    ok = [d for d in done if d[2] == 0]
    refused = [d for d in done if d[2] != 0]
    assert len(ok) == 2 and len(refused) == 4
    for _, err, code in refused:
        assert code == 1
        # A pull that found the database busy says once that it waits (store.db.WAITING_NOTE) before
        # it retries; on a loaded machine that note can precede the refusal. Nothing else may.
        from selector.store.db import WAITING_NOTE

        lines = [ln for ln in err.splitlines() if ln != WAITING_NOTE]
        assert len(lines) == 1, err
        assert lines[0].startswith("Error: not enough stock for option 1 of search 1 for 1 board: stock line 1 ")
        assert "Traceback" not in err and "locked" not in err.lower()

    from selector.store.db import open_engine

    engine = open_engine(db_url)
    try:
        assert quantities(engine)[1] == 0
        assert ledger_sums(engine) == quantities(engine)
    finally:
        engine.dispose()
