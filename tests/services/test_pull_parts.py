"""The timer IC, the steering diode and the Schmitt IC taken from ic / diode stock lines by the BOM
and the pull, a short IC line refusing the pull with nothing changed, and the lines a pull leaves
at or below their reorder level. Stock: bom_fixtures.BENCH_STOCK plus the invented lines below;
every expected quantity is worked out by hand (the diode option takes, per board, RA 10 k (1),
RB 4.7 k (2), C 100 nF PET (8), CV 10 nF (4), decoupling 100 nF X7R (5), reservoir 47 µF (6),
and now U1 and D1)."""

from __future__ import annotations

import pytest

from bom_fixtures import BENCH_STOCK, add_search, astable_diode, astable_standard, bench_db, dump, ledger_sums, quantities
from selector.core.errors import InsufficientStock
from selector.services.bom import build_bom
from selector.services.pull import low_after, pull_option
from selector.core.types import StockLine

# id: (kind, value, tol-, tol+, qty, location, package, rating, dielectric, note, part, rating_current, reorder_at)
PARTS = {
    9: ("ic", 0.0, 0.0, 0.0, 4, "U", "DIP-8", None, "", "", "NE555P", None, 2),
    10: ("ic", 0.0, 0.0, 0.0, 5, "U", "DIP-8", None, "", "", "TLC555CP", None, None),
    11: ("diode", 0.0, 0.0, 0.0, 10, "D", "DO-35", 0.65, "", "", "1N4148", 1e-3, 8),
    12: ("diode", 0.0, 0.0, 0.0, 10, "D", "DO-34", 0.32, "", "", "BAT85", 1e-3, None),
    13: ("ic", 0.0, 0.0, 0.0, 3, "U", "DIP-14", None, "", "", "74HC14", None, None),
}
DIODE_PER_BOARD = {1: 1, 2: 1, 8: 1, 4: 1, 5: 1, 6: 1}


def _engine(db_url, stock_extra=PARTS, **kw):
    return bench_db(db_url, [astable_standard(), astable_diode()], stock={**BENCH_STOCK, **stock_extra},
                    diode_vf=0.65, **kw)


def _refs(report) -> dict[str, tuple]:
    return {bl.ref: (bl.line_id, bl.part, bl.in_stock) for bl in report.bom.lines if bl.ref in ("U1", "D1")}


def test_bom_and_pull_take_the_ic_and_the_diode_from_stock(db_url):
    engine = _engine(db_url)
    try:
        report = build_bom(engine, 2, boards=3)
        assert _refs(report) == {"U1": (9, "NE555P", True), "D1": (11, "1N4148", True)}
        result = pull_option(engine, 2, boards=3)
        expected = {**{i: 3 * n for i, n in DIODE_PER_BOARD.items()}, 9: 3, 11: 3}
        assert dict(result.taken) == expected
        q = quantities(engine)
        assert (q[9], q[10], q[11], q[12]) == (1, 5, 7, 10)
        assert ledger_sums(engine)[9] == 1 and ledger_sums(engine)[11] == 7
        # NE555P: 1 left, reorder at 2 -> low; 1N4148: 7 left, reorder at 8 -> low; the rest have no level
        assert result.to_json()["low"] == [
            {"line_id": 9, "kind": "ic", "value": 0.0, "part": "NE555P", "location": "U", "quantity": 1, "reorder_at": 2},
            {"line_id": 11, "kind": "diode", "value": 0.0, "part": "1N4148", "location": "D", "quantity": 7,
             "reorder_at": 8}]
    finally:
        engine.dispose()


def test_a_short_ic_line_refuses_the_pull_and_changes_nothing(db_url):
    engine = _engine(db_url)
    try:
        before = dump(engine)
        report = build_bom(engine, 2, boards=5)  # NE555P holds 4: the only bipolar 555, so it is short
        assert _refs(report)["U1"] == (9, "NE555P", False)
        with pytest.raises(InsufficientStock) as info:
            pull_option(engine, 2, boards=5)
        assert "stock line 9 (ic NE555P, U) holds 4, needs 5 (1 missing)" in str(info.value)
        assert str(info.value).startswith("not enough stock for option 2 of search 1 for 5 boards: ")
        assert dump(engine) == before
    finally:
        engine.dispose()


def test_the_cmos_family_takes_the_cmos_line(db_url):
    engine = _engine(db_url, chip="cmos")
    try:
        assert _refs(build_bom(engine, 2, boards=1))["U1"] == (10, "TLC555CP", True)
    finally:
        engine.dispose()


def test_a_schottky_search_takes_the_schottky_and_no_match_keeps_the_old_wording(db_url):
    engine = _engine(db_url, {k: v for k, v in PARTS.items() if k != 9})
    try:
        add_search(engine, "astable", [astable_diode()], diode_vf=0.32)
        report = build_bom(engine, 1, search_id=2, boards=1)
        u1 = next(bl for bl in report.bom.lines if bl.ref == "U1")
        assert _refs(report)["D1"] == (12, "BAT85", True)
        assert (u1.line_id, u1.in_stock, u1.description) == (None, False, "555 timer, bipolar")
    finally:
        engine.dispose()


def test_a_diode_with_another_drop_gets_a_note(db_url):
    engine = _engine(db_url)
    try:
        add_search(engine, "astable", [astable_diode()], diode_vf=0.72)
        report = build_bom(engine, 1, search_id=2, boards=1)
        assert _refs(report)["D1"] == (11, "1N4148", True)
        assert ("D1: stock line 11 (1N4148) drops 0.65 V at 1 mA; the search assumed 0.72 V. Search again with "
                "--diode-vf 0.65 for the timing this diode gives.") in report.bom.notes
    finally:
        engine.dispose()


def test_low_after_is_the_plain_rule():
    stock = [StockLine(1, "resistor", 1e3, 0.05, 0.05, 5, reorder_at=3), StockLine(2, "ic", 0.0, 0.0, 0.0, 5, part="X"),
             StockLine(3, "resistor", 2e3, 0.05, 0.05, 4, reorder_at=0)]
    assert [(ln.id, ln.quantity) for ln in low_after(stock, ((1, 2), (2, 5), (3, 3)))] == [(1, 3)]
    assert [(ln.id, ln.quantity) for ln in low_after(stock, ((1, 1), (3, 4)))] == [(3, 0)]


def test_cli_pull_on_the_sample_stock_takes_the_74hc14_and_lists_it_low(cli, db_path):
    """sample_stock.csv (invented demo data) holds one 74HC14 with reorder level 2: a Schmitt-
    inverter oscillator's BOM takes it, `pull 1` leaves 0 and lists it low; after that the BOM
    lists the IC to obtain (an empty line supplies nothing) and says the line is empty."""
    import json

    from conftest import SAMPLE

    assert cli("stock", "import", str(SAMPLE), db=db_path).returncode == 0
    r = cli("find", "astable", "--freq", "1kHz", "--vcc", "5", "--connection", "schmitt-inverter", db=db_path)
    assert r.returncode == 0, r.stderr
    hc14 = next(x for x in json.loads(cli("stock", "list", "--kind", "ic", "--json", db=db_path).stdout)
                if x["part"] == "74HC14")
    bom = json.loads(cli("bom", "1", "--format", "json", db=db_path).stdout)
    u1 = next(x for x in bom["lines"] if x["ref"] == "U1")
    assert (u1["line_id"], u1["part"], u1["in_stock"]) == (hc14["line_id"], "74HC14", True)
    r = cli("pull", "1", "--json", db=db_path)
    assert r.returncode == 0, r.stderr
    low = json.loads(r.stdout)["low"]
    assert [(x["line_id"], x["part"], x["quantity"], x["reorder_at"]) for x in low] == [
        (hc14["line_id"], "74HC14", 0, 2)]
    listed = json.loads(cli("stock", "list", "--low", "--json", db=db_path).stdout)
    assert hc14["line_id"] in [x["line_id"] for x in listed]
    r = cli("bom", "1", db=db_path)
    assert r.returncode == 0, r.stderr
    text = " ".join(r.stdout.split())
    assert "Not in stock (obtain before building): U1 inverter IC: hex Schmitt-trigger inverter, 74HC14 type" in text
    assert f"U1: stock line {hc14['line_id']} (74HC14) would supply it but has none left for it; restock or obtain the part." in text
