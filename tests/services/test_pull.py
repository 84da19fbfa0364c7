"""Pull, undo and ledger: one transaction each, all-or-nothing, and the ledger always sums to the
stock. Expected quantities are worked out by hand from bom_fixtures.BENCH_STOCK and the option
JSON (e.g. the standard astable takes, per board: RA 4.7 k ×1, RB 10 k + 1 k, C 10 nF, plus the
10 nF CV bypass, the 100 nF decoupling and the 47 µF reservoir)."""

from __future__ import annotations

import json
import re

import pytest

from bom_fixtures import (
    BENCH_STOCK, add_search, astable_diode, astable_standard, bench_db, dump, ledger_sums, monostable_parallel,
    part, quantities,
)
from selector.core.errors import AlreadyUndone, InsufficientStock, UnknownPull, UnknownSearch
from selector.services.pull import list_movements, pull_option, undo_pull
from selector.store.db import apply_movement, open_engine, transaction

START = {i: spec[4] for i, spec in BENCH_STOCK.items()}
# per board, standard astable (option 1): line: parts
STANDARD_PER_BOARD = {1: 1, 2: 1, 3: 1, 4: 2, 5: 1, 6: 1}


@pytest.fixture
def engine(db_url):
    eng = bench_db(db_url, [astable_standard(), astable_diode()], boards=3, diode_vf=0.65)
    try:
        yield eng
    finally:
        eng.dispose()


def after(taken: dict[int, int]) -> dict[int, int]:
    return {i: q - taken.get(i, 0) for i, q in START.items()}


def test_pull_takes_the_whole_in_stock_bom_in_one_go(engine):
    result = pull_option(engine, 1, boards=2)
    expected = {i: 2 * n for i, n in STANDARD_PER_BOARD.items()}
    assert result.pull_id == 1
    assert dict(result.taken) == expected
    assert result.to_json() == {"pull_id": 1, "lines": [{"line_id": i, "taken": n} for i, n in sorted(expected.items())],
                                "low": []}
    assert quantities(engine) == after(expected)
    assert ledger_sums(engine) == {i: q for i, q in after(expected).items()}
    pulls = [m for m in list_movements(engine, limit=100) if m.reason == "pull"]
    assert sorted((m.line_id, m.delta, m.pull_id) for m in pulls) == sorted((i, -n, 1) for i, n in expected.items())
    assert {m.reference for m in pulls} == {"search 1 option 1 x2"}


def test_pull_defaults_to_the_boards_the_search_was_run_for(engine):
    result = pull_option(engine, 2)  # diode option, search saved with boards=3
    # RA 10 k, RB 4.7 k, C 100 nF PET, CV 10 nF, decoupling 100 nF X7R, reservoir 47 µF: ×3 each
    assert dict(result.taken) == {1: 3, 2: 3, 8: 3, 4: 3, 5: 3, 6: 3}
    assert result.boards == 3


def test_shortage_takes_nothing_and_names_every_short_line(engine):
    before = dump(engine)
    with pytest.raises(InsufficientStock) as err:
        pull_option(engine, 1, boards=60)
    assert str(err.value) == (
        "not enough stock for option 1 of search 1 for 60 boards: "
        "stock line 2 (resistor 4.7 kΩ, A10) holds 50, needs 60 (10 missing); "
        "stock line 3 (resistor 1 kΩ, A2) holds 20, needs 60 (40 missing); "
        "stock line 4 (capacitor 10 nF, B1) holds 40, needs 60 (20 missing); nothing was taken"
    )
    assert dump(engine) == before


def test_stock_that_changed_since_the_search_is_rechecked(engine):
    with transaction(engine) as s:
        apply_movement(s, 3, -19, "adjust", "test: parts used elsewhere")
    before = dump(engine)
    with pytest.raises(InsufficientStock) as err:
        pull_option(engine, 1, boards=2)
    assert "stock line 3 (resistor 1 kΩ, A2) holds 1, needs 2 (1 missing)" in str(err.value)
    assert dump(engine) == before
    ok = pull_option(engine, 1, boards=1)
    assert dict(ok.taken)[3] == 1 and quantities(engine)[3] == 0


def test_extras_not_in_stock_do_not_block_a_pull(db_url):
    # Only the timing parts are on hand: the pull takes them; the IC and capacitors stay listed.
    stock = {1: BENCH_STOCK[1], 6: BENCH_STOCK[6]}
    eng = bench_db(db_url, [monostable_parallel()], mode="monostable", stock=stock, chip="cmos")
    try:
        result = pull_option(eng, 1)
        assert dict(result.taken) == {1: 2, 6: 1}
        missing = [(bl.ref, bl.role) for bl in result.report.bom.lines if bl.line_id is None]
        assert missing == [("U1", "timer IC"), ("C2", "supply decoupling capacitor")]
    finally:
        eng.dispose()


def test_dry_run_writes_nothing(engine):
    before = dump(engine)
    result = pull_option(engine, 1, boards=2, dry_run=True)
    assert result.pull_id is None and dict(result.taken) == {i: 2 * n for i, n in STANDARD_PER_BOARD.items()}
    assert dump(engine) == before


def test_undo_restores_exactly_and_only_once(engine):
    first = pull_option(engine, 1, boards=2)
    second = pull_option(engine, 2, boards=1)
    undone = undo_pull(engine, first.pull_id)
    assert dict(undone.restored) == {i: 2 * n for i, n in STANDARD_PER_BOARD.items()}
    assert quantities(engine) == after(dict(second.taken))
    assert ledger_sums(engine) == quantities(engine)
    before = dump(engine)
    with pytest.raises(AlreadyUndone) as err:
        undo_pull(engine, first.pull_id)
    assert re.fullmatch(r"pull 1 was already undone at \d{4}-\d\d-\d\dT\d\d:\d\d:\d\d UTC; nothing was changed",
                        str(err.value))
    assert dump(engine) == before
    with pytest.raises(UnknownPull) as err:
        undo_pull(engine, 99)
    assert str(err.value) == "there is no pull 99 (see `selector ledger`)"
    undo_rows = [m for m in list_movements(engine) if m.reason == "undo"]
    assert sorted((m.line_id, m.delta, m.pull_id) for m in undo_rows) == sorted(
        (i, 2 * n, 1) for i, n in STANDARD_PER_BOARD.items())


def test_ledger_is_newest_first_and_filters(engine):
    pull_option(engine, 1, boards=1)
    entries = list_movements(engine, limit=1000)
    ids = [e.movement_id for e in entries]
    assert ids == sorted(ids, reverse=True)
    # one import row per fixture line (every line holds stock) + 6 pull rows
    assert len(entries) == len(START) + len(STANDARD_PER_BOARD)
    assert [e.reason for e in list_movements(engine, limit=3)] == ["pull"] * 3
    assert {e.line_id for e in list_movements(engine, line_id=4)} == {4}
    assert {e.pull_id for e in list_movements(engine, pull_id=1)} == {1}


def test_value_option_pulls_its_single_network(db_url):
    eng = open_engine(db_url)
    try:
        from bom_fixtures import add_stock

        add_stock(eng, BENCH_STOCK)
        value_opt = {"rank": 1, "value": 14.7e3, "error": 0.0, "min": 0, "max": 0, "shape": "series",
                     "parts": [part(1, 10e3, 1, "A1"), part(2, 4.7e3, 1, "A10")]}
        add_search(eng, "value", [value_opt])
        result = pull_option(eng, 1, boards=4)
        assert dict(result.taken) == {1: 4, 2: 4}
    finally:
        eng.dispose()


def test_unknown_option_and_search(engine):
    with pytest.raises(UnknownSearch) as err:
        pull_option(engine, 3)
    assert str(err.value) == "search 1 has no option 3 (it has options 1-2)"


# --------------------------------------------------------------------------- end to end


def test_cli_pull_undo_round_trip_restores_an_identical_export(cli, engine, db_path, tmp_path):
    before, after_undo = tmp_path / "before.csv", tmp_path / "after.csv"
    assert cli("stock", "export", str(before), db=db_path).returncode == 0

    r = cli("pull", "1", "--boards", "2", "--json", db=db_path)
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert out == {"pull_id": 1, "lines": [{"line_id": i, "taken": 2 * n} for i, n in sorted(STANDARD_PER_BOARD.items())],
                   "low": []}

    listed = json.loads(cli("stock", "list", "--json", db=db_path).stdout)
    assert {x["line_id"]: x["quantity"] for x in listed} == after({i: 2 * n for i, n in STANDARD_PER_BOARD.items()})

    r = cli("undo", "1", db=db_path)
    assert r.returncode == 0 and "Undid pull 1: 14 parts put back" in r.stdout, r.stderr
    assert cli("stock", "export", str(after_undo), db=db_path).returncode == 0
    assert after_undo.read_bytes() == before.read_bytes()

    r = cli("undo", "1", db=db_path)
    assert r.returncode == 1
    assert re.fullmatch(r"Error: pull 1 was already undone at \S+ UTC; nothing was changed\n", r.stderr)
    assert ledger_sums(engine) == quantities(engine) == START


def test_cli_pull_shortage_is_one_line_and_changes_nothing(cli, engine, db_path):
    before = dump(engine)
    r = cli("pull", "1", "--boards", "25", db=db_path)
    assert r.returncode == 1
    assert r.stderr == ("Error: not enough stock for option 1 of search 1 for 25 boards: stock line 3 "
                        "(resistor 1 kΩ, A2) holds 20, needs 25 (5 missing); nothing was taken\n")
    assert dump(engine) == before


def test_cli_pull_table_and_ledger(cli, engine, db_path):
    r = cli("pull", "2", "--boards", "1", db=db_path)
    assert r.returncode == 0, r.stderr
    assert "Pull 1: option 2 of search 1, 1 board" in r.stdout
    assert "Not taken (not in stock): U1 timer IC, D1 steering diode" in r.stdout
    assert "selector undo 1" in r.stdout
    r = cli("ledger", "--limit", "2", "--json", db=db_path)
    rows = json.loads(r.stdout)
    assert len(rows) == 2 and {x["reason"] for x in rows} == {"pull"} and {x["pull_id"] for x in rows} == {1}
    assert set(rows[0]) == {"movement_id", "at", "line_id", "kind", "value", "location", "delta", "reason",
                            "reference", "pull_id", "part"}
    r = cli("ledger", db=db_path)
    assert r.returncode == 0 and "Ledger (newest first)" in r.stdout
    r = cli("undo", "7", db=db_path)
    assert (r.returncode, r.stderr) == (1, "Error: there is no pull 7 (see `selector ledger`)\n")


def test_cli_search_bom_pull_undo_on_the_sample_stock(cli, db_path, tmp_path):
    """The README's flow: import the sample stock, search, `bom 1`, `pull 1 --boards 2`, see the
    stock go down, `undo` it. Expected reductions come from the search's own JSON (the timing
    parts, written by the search code) plus the extras the BOM lists from stock."""
    from conftest import SAMPLE

    assert cli("stock", "import", str(SAMPLE), db=db_path).returncode == 0
    r = cli("find", "astable", "--freq", "1.2k", "--duty", "65%", "--boards", "2", "--json", db=db_path)
    assert r.returncode == 0, r.stderr
    option = json.loads(r.stdout)["options"][0]
    timing: dict[int, int] = {}
    for network in option["networks"].values():
        for p in network["parts"]:
            timing[p["line_id"]] = timing.get(p["line_id"], 0) + p["count"]

    r = cli("bom", "1", "--format", "json", db=db_path)
    assert r.returncode == 0, r.stderr
    bom = json.loads(r.stdout)
    roles = [x["role"] for x in bom["lines"]]
    assert "timer IC" in roles and "supply decoupling capacitor" in roles
    per_board = dict(timing)
    for x in bom["lines"]:
        if x["role"] not in ("RA", "RB", "R", "timing capacitor") and x["line_id"] is not None:
            per_board[x["line_id"]] = per_board.get(x["line_id"], 0) + x["per_board"]
    assert cli("bom", "1", db=db_path).returncode == 0

    before = {x["line_id"]: x["quantity"] for x in json.loads(cli("stock", "list", "--json", db=db_path).stdout)}
    r = cli("pull", "1", "--boards", "2", "--json", db=db_path)
    assert r.returncode == 0, r.stderr
    pulled = json.loads(r.stdout)
    assert {x["line_id"]: x["taken"] for x in pulled["lines"]} == {i: 2 * n for i, n in per_board.items()}
    now = {x["line_id"]: x["quantity"] for x in json.loads(cli("stock", "list", "--json", db=db_path).stdout)}
    assert now == {i: q - 2 * per_board.get(i, 0) for i, q in before.items()}

    r = cli("undo", str(pulled["pull_id"]), db=db_path)
    assert r.returncode == 0, r.stderr
    restored = {x["line_id"]: x["quantity"] for x in json.loads(cli("stock", "list", "--json", db=db_path).stdout)}
    assert restored == before
