"""The stock commands end to end (the command run in-process, see conftest.run_cli, and a file
database per test): output shapes, ledgered changes, and refusals with one clear line and no change."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import pytest
import sqlalchemy as sa

from conftest import plain_engine

REPO = Path(__file__).resolve().parents[2]
SAMPLE = REPO / "sample_stock.csv"

JSON_KEYS = {"line_id", "kind", "value", "tol_minus", "tol_plus", "quantity", "location", "package", "rating",
             "dielectric", "polarized", "note", "part", "turns", "rating_current", "reorder_at", "low"}


def _json(cli, db, *args):
    r = cli("stock", "list", "--json", *args, db=db)
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


def _dump(db_path) -> dict[str, list[tuple]]:
    """Every row of every table (either backend)."""
    from selector.store.models import Base

    engine = plain_engine(db_path)
    try:
        with engine.connect() as c:
            return {t.name: [tuple(r) for r in c.execute(sa.select(t).order_by(*t.primary_key.columns))]
                    for t in Base.metadata.sorted_tables}
    finally:
        engine.dispose()


def _rows(db_path, sql: str, *params) -> list[tuple]:
    engine = plain_engine(db_path)
    try:
        with engine.connect() as c:
            return [tuple(r) for r in c.exec_driver_sql(sql, tuple(params) if params else ()).all()]
    finally:
        engine.dispose()


def _import(cli, db, path=SAMPLE, *extra):
    r = cli("stock", "import", str(path), *extra, db=db)
    assert r.returncode == 0, r.stderr
    return r


def _sample_rows() -> int:
    """Data rows of the sample file, counted with the csv module (independent of our reader)."""
    with open(SAMPLE, newline="", encoding="utf-8-sig") as fh:
        return sum(1 for row in csv.DictReader(fh) if any(v.strip() for v in row.values()))


def test_help_lists_every_stock_command(cli_process):
    # A real process: typer reads TYPER_USE_RICH once, at import (this also runs `python -m selector`).
    r = cli_process("stock", "--help", env={"TYPER_USE_RICH": "0"})
    assert r.returncode == 0
    for name in ("import", "list", "export", "adjust", "set", "kit"):
        assert name in r.stdout


def test_import_sample_and_list_json_shape(cli, db_path):
    r = _import(cli, db_path)
    assert "Imported from sample_stock.csv" in r.stdout
    lines = _json(cli, db_path)
    assert len(lines) == _sample_rows()  # the sample has no exact duplicates, so one line per row
    for ln in lines:
        assert set(ln) == JSON_KEYS
        assert isinstance(ln["line_id"], int) and isinstance(ln["quantity"], int)
        assert ln["kind"] in ("resistor", "capacitor", "trimmer", "ic", "diode")
        if ln["kind"] in ("ic", "diode"):  # named by the part text, no value (README "Stock file")
            assert ln["value"] == 0 and ln["part"] and ln["tol_minus"] == ln["tol_plus"] == 0
        else:
            assert isinstance(ln["value"], float) and ln["value"] > 0
        assert 0 <= ln["tol_minus"] < 1 and ln["tol_plus"] >= 0
        assert (ln["turns"] is not None) == (ln["kind"] == "trimmer")
        assert ln["low"] == (ln["reorder_at"] is not None and ln["quantity"] <= ln["reorder_at"])
        assert ln["rating"] is None or isinstance(ln["rating"], float)
        assert ln["polarized"] == (ln["dielectric"] in ("electrolytic", "tantalum"))
    by_note = [ln for ln in lines if ln["note"] == "salvaged"]
    # sample row "capacitor,10u,20%,12,bin 3,radial,35V,electrolytic,salvaged"
    assert by_note == [{"line_id": by_note[0]["line_id"], "kind": "capacitor", "value": 1e-5, "tol_minus": 0.2,
                        "tol_plus": 0.2, "quantity": 12, "location": "bin 3", "package": "radial", "rating": 35.0,
                        "dielectric": "electrolytic", "polarized": True, "note": "salvaged", "part": "",
                        "turns": None, "rating_current": None, "reorder_at": None, "low": False}]


def test_list_table_and_polarity_caution(cli, db_path):
    _import(cli, db_path)
    r = cli("stock", "list", "--kind", "capacitor", "--location", "e1", db=db_path)
    assert r.returncode == 0, r.stderr
    assert "4.7 µF" in r.stdout and "electrolytic" in r.stdout
    assert "polarised" in r.stdout and "Caution" in r.stdout
    r = cli("stock", "list", "--kind", "resistor", "--location", "A1", db=db_path)
    assert "Caution" not in r.stdout


def test_list_filters(cli, db_path):
    _import(cli, db_path)
    caps = _json(cli, db_path, "--kind", "capacitor")
    assert caps and {ln["kind"] for ln in caps} == {"capacitor"}
    a1 = _json(cli, db_path, "--location", "a1")
    assert a1 and {ln["location"] for ln in a1} == {"A1"}
    band = _json(cli, db_path, "--kind", "resistor", "--min", "1k", "--max", "10k")
    assert band and all(1000 <= ln["value"] <= 10000 for ln in band)
    everything = _json(cli, db_path, "--kind", "resistor")
    assert len(band) == sum(1 for ln in everything if 1000 <= ln["value"] <= 10000)  # ends included
    tiny = _json(cli, db_path, "--max", "1n")  # "n" says capacitance without --kind
    assert tiny and all(ln["kind"] == "capacitor" and ln["value"] <= 1e-9 for ln in tiny)


def test_list_by_new_kind_and_low(cli, db_path):
    """--kind picks trimmers, ICs or diodes; --low the lines at or below their reorder level. The
    expected lines are the sample's own rows (invented demo data), read here by hand."""
    _import(cli, db_path)
    ics = _json(cli, db_path, "--kind", "ic")
    assert [(ln["part"], ln["quantity"], ln["reorder_at"], ln["low"]) for ln in ics] == [
        ("NE555P", 6, 2, False), ("555 CMOS", 4, 2, False), ("74HC14", 1, 2, True)]
    diodes = _json(cli, db_path, "--kind", "diode")
    assert [(ln["part"], ln["rating"], ln["rating_current"]) for ln in diodes] == [
        ("1N4148", 0.62, 1e-3), ("BAT85", 0.32, 1e-3)]
    trimmers = _json(cli, db_path, "--kind", "trimmer")
    assert [(ln["value"], ln["turns"], ln["tol_minus"]) for ln in trimmers] == [
        (1e3, 1, 0.2), (1e4, 1, 0.2), (1e5, 1, 0.2), (5e5, 1, 0.2), (1e6, 1, 0.2), (1e4, 25, 0.1)]
    low = _json(cli, db_path, "--low")
    assert [(ln["kind"], ln["part"] or ln["value"]) for ln in low] == [("trimmer", 1e6), ("ic", "74HC14")]
    everything = _json(cli, db_path)
    assert low == [ln for ln in everything if ln["reorder_at"] is not None and ln["quantity"] <= ln["reorder_at"]]
    r = cli("stock", "list", "--low", db=db_path)
    assert r.returncode == 0 and "74HC14" in r.stdout and "2 stock lines, 3 parts" in r.stdout


def test_list_value_bound_on_a_kind_without_values_is_one_line(cli, db_path):
    r = cli("stock", "list", "--kind", "ic", "--min", "1k", db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == "Error: --min 1k: an ic has no value to compare; list them with --kind ic"
    r = cli("stock", "list", "--kind", "diode", "--max", "1", db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == "Error: --max 1: a diode has no value to compare; list them with --kind diode"


def test_kit_refuses_the_new_kinds(cli, db_path):
    _import(cli, db_path)
    before = _dump(db_path)
    r = cli("stock", "kit", "E12", "--kind", "trimmer", "--from", "1k", "--to", "10k", "--qty", "1",
            "--location", "T1", db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == ("Error: --kind trimmer: a kit is an E-series assortment of resistors or capacitors; "
                                "add trimmer lines with `selector stock import FILE`")
    assert _dump(db_path) == before


def test_list_bad_bound_is_one_line(cli, db_path):
    r = cli("stock", "list", "--kind", "resistor", "--min", "4k7k", db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == 'Error: --min: cannot read "4k7k" as a resistance: expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'


def test_empty_stock_list(cli, db_path):
    r = cli("stock", "list", db=db_path)
    assert r.returncode == 0 and "No stock lines match" in r.stdout
    assert _json(cli, db_path) == []


def test_adjust_negative_and_positive(cli, db_path):
    _import(cli, db_path)
    first = _json(cli, db_path)[0]
    r = cli("stock", "adjust", str(first["line_id"]), "-3", db=db_path)
    assert r.returncode == 0, r.stderr
    assert f"{first['quantity']} → {first['quantity'] - 3} (-3)" in r.stdout
    r = cli("stock", "adjust", str(first["line_id"]), "+5", "--reference", "found more", db=db_path)
    assert r.returncode == 0, r.stderr
    assert _json(cli, db_path)[0]["quantity"] == first["quantity"] + 2
    rows = _rows(db_path, f"SELECT delta, reason, reference FROM movements WHERE line_id = {int(first['line_id'])}"
                          " ORDER BY id")
    assert rows[-2:] == [(-3, "adjust", ""), (5, "adjust", "found more")]


def test_adjust_below_zero_is_refused_and_changes_nothing(cli, db_path, tmp_path):
    _import(cli, db_path, _write_csv(tmp_path, "kind,value,quantity,location\nR,4k7,3,A3\n"))
    before = _dump(db_path)
    r = cli("stock", "adjust", "1", "-5", db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == "Error: stock line 1 (resistor 4.7 kΩ, A3) holds 3; a change of -5 would leave -2"
    assert "Traceback" not in r.stderr
    assert _dump(db_path) == before


def test_unknown_line_id(cli, db_path, tmp_path):
    _import(cli, db_path, _write_csv(tmp_path, "kind,value,quantity\nR,1k,1\n"))
    before = _dump(db_path)
    for args in (("adjust", "99", "2"), ("set", "99", "2")):
        r = cli("stock", *args, db=db_path)
        assert r.returncode == 1
        assert r.stderr.strip() == "Error: there is no stock line 99 (see `selector stock list`)"
    assert _dump(db_path) == before


def test_adjust_with_a_non_number_is_a_usage_error(cli, db_path):
    r = cli("stock", "adjust", "1", "three", db=db_path)
    assert r.returncode == 2
    assert r.stderr.strip() == 'Error: DELTA "three": expected a whole number from -1000000000 to 1000000000'


def test_set_is_ledgered_and_refuses_negative(cli, db_path, tmp_path):
    _import(cli, db_path, _write_csv(tmp_path, "kind,value,quantity\nC,100n,10\n"))
    r = cli("stock", "set", "1", "4", "--reference", "stocktake", db=db_path)
    assert r.returncode == 0, r.stderr
    assert "10 → 4 (-6)" in r.stdout
    assert _rows(db_path, "SELECT delta, reason, reference FROM movements ORDER BY id") == [
        (10, "import", "stock.csv"), (-6, "set", "stocktake")]
    before = _dump(db_path)
    r = cli("stock", "set", "1", "-1", db=db_path)
    assert r.returncode == 2  # typer's min=0: a usage error
    assert "Traceback" not in r.stderr
    assert _dump(db_path) == before


def test_import_errors_through_the_cli(cli, db_path, tmp_path):
    _import(cli, db_path, _write_csv(tmp_path, "kind,value,quantity\nR,1k,1\n", "ok.csv"))
    before = _dump(db_path)
    bad = _write_csv(tmp_path, "kind,value,quantity\nR,1k,1\ntransistor,BC547,2\nR,2k2,-1\n", "bad.csv")
    r = cli("stock", "import", str(bad), db=db_path)
    assert r.returncode == 1
    assert r.stderr.splitlines() == [
        "Error: 2 problems in the stock file; nothing was imported",
        '  row 3, column kind: "transistor": expected resistor, capacitor, trimmer, ic or diode (or R / C)',
        '  row 4, column quantity: "-1": expected a whole number of parts, 0 or more',
    ]
    assert _dump(db_path) == before
    r = cli("stock", "import", str(tmp_path / "missing.csv"), db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == f"Error: cannot read the stock file {tmp_path / 'missing.csv'}: No such file or directory"


def test_import_dry_run_and_replace(cli, db_path, tmp_path):
    d = tmp_path
    _import(cli, db_path, _write_csv(d, "kind,value,quantity,location\nR,1k,10,A1\nR,2k2,3,A1\n", "a.csv"))
    before = _dump(db_path)
    r = cli("stock", "import", str(_write_csv(d, "kind,value,quantity,location\nR,1k,4,A1\n", "b.csv")),
            "--replace", "--dry-run", db=db_path)
    assert r.returncode == 0, r.stderr
    assert "Dry run" in r.stdout and "Nothing was written" in r.stdout and "10 → 4" in r.stdout
    assert _dump(db_path) == before
    _import(cli, db_path, d / "b.csv", "--replace")
    assert [ln["quantity"] for ln in _json(cli, db_path)] == [4, 3]


def test_export_import_round_trip_gives_identical_list(cli, tmp_path):
    a, b = tmp_path / "a.db", tmp_path / "b.db"
    _import(cli, a)
    cli("stock", "adjust", "2", "-7", db=a)
    out = tmp_path / "out.csv"
    r = cli("stock", "export", str(out), db=a)
    assert r.returncode == 0, r.stderr
    _import(cli, b, out)
    assert _json(cli, b) == _json(cli, a)
    r = cli("stock", "export", "-", db=b)
    assert out.read_bytes().startswith(b"\xef\xbb\xbf")  # byte-order mark for spreadsheets
    assert r.stdout == out.read_text(encoding="utf-8-sig")


# IEC 60063 E12 decade (facts.md §9 [S9]): 1.0 1.2 1.5 1.8 2.2 2.7 3.3 3.9 4.7 5.6 6.8 8.2; written by hand.
E12_1K_TO_10K = [1000.0, 1200.0, 1500.0, 1800.0, 2200.0, 2700.0, 3300.0, 3900.0, 4700.0, 5600.0, 6800.0, 8200.0,
                 10000.0]


def test_kit_adds_one_line_per_series_value_and_merges_when_repeated(cli, db_path):
    args = ("stock", "kit", "E12", "--kind", "resistor", "--from", "1k", "--to", "10k", "--qty", "5",
            "--location", "kit box")
    r = cli(*args, db=db_path)
    assert r.returncode == 0, r.stderr
    lines = _json(cli, db_path)
    assert [ln["value"] for ln in lines] == E12_1K_TO_10K
    # E12 is the ±10 % series (IEC 60063; facts.md §9).
    assert {(ln["tol_minus"], ln["tol_plus"], ln["quantity"], ln["location"]) for ln in lines} == {
        (0.1, 0.1, 5, "kit box")}
    r = cli(*args, db=db_path)
    assert r.returncode == 0, r.stderr
    again = _json(cli, db_path)
    assert [ln["line_id"] for ln in again] == [ln["line_id"] for ln in lines]
    assert {ln["quantity"] for ln in again} == {10}
    assert _rows(db_path, "SELECT count(*), sum(delta) FROM movements WHERE reason = 'kit'") == [(26, 130)]


def test_kit_capacitors_with_dielectric_and_rating(cli, db_path):
    r = cli("stock", "kit", "E6", "--kind", "capacitor", "--from", "1n", "--to", "100n", "--qty", "10",
            "--location", "D9", "--dielectric", "C0G", "--rating", "50V", db=db_path)
    assert r.returncode == 0, r.stderr
    lines = _json(cli, db_path)
    # IEC 60063 E6 (1.0 1.5 2.2 3.3 4.7 6.8) from 1 nF to 100 nF; C0G default ±5 % (facts.md §8.1 [S12]).
    assert [ln["value"] for ln in lines] == [1e-9, 1.5e-9, 2.2e-9, 3.3e-9, 4.7e-9, 6.8e-9, 1e-8, 1.5e-8, 2.2e-8,
                                             3.3e-8, 4.7e-8, 6.8e-8, 1e-7]
    assert {(ln["dielectric"], ln["rating"], ln["tol_minus"]) for ln in lines} == {("C0G", 50.0, 0.05)}


def test_kit_errors_are_one_line(cli, db_path):
    r = cli("stock", "kit", "E7", "--kind", "resistor", "--from", "1k", "--to", "10k", "--qty", "1",
            "--location", "X", db=db_path)
    assert r.returncode == 1 and len(r.stderr.strip().splitlines()) == 1 and "E7" in r.stderr
    r = cli("stock", "kit", "E12", "--kind", "resistor", "--from", "10k", "--to", "1k", "--qty", "1",
            "--location", "X", db=db_path)
    assert r.returncode == 2 and r.stderr.strip() == "Error: --from 10k is above --to 1k"
    r = cli("stock", "kit", "E12", "--kind", "resistor", "--from", "1k", "--to", "10x", "--qty", "1",
            "--location", "X", db=db_path)
    assert r.returncode == 1 and r.stderr.strip().startswith('Error: --to: cannot read "10x"')
    assert _json(cli, db_path) == []


def _write_csv(folder: Path, text: str, name: str = "stock.csv") -> Path:
    p = folder / name
    p.write_text(text, encoding="utf-8")
    return p


def test_numbers_beyond_any_stock_are_refused_in_one_line(cli, db_path, tmp_path):
    _import(cli, db_path, _write_csv(tmp_path, "kind,value,quantity\nR,1k,1\n"))
    before = _dump(db_path)
    huge = "99999999999999999999999"
    # out of an argument's documented range (README "Accepted ranges"): a usage error, exit 2
    for args, message in (
        (("adjust", "1", huge), f'Error: DELTA "{huge}": expected a whole number from -1000000000 to 1000000000'),
        (("set", "1", huge), f'Error: QTY "{huge}": expected a whole number from 0 to 1000000000'),
        (("adjust", huge, "1"), f'Error: LINE_ID "{huge}": expected a whole number from 1 to 9223372036854775807'),
    ):
        r = cli("stock", *args, db=db_path)
        assert r.returncode == 2, r.stderr
        assert r.stderr.strip() == message
    assert _dump(db_path) == before


def test_export_to_an_impossible_place_is_one_line(cli, db_path, tmp_path):
    target = tmp_path / "no" / "such" / "dir" / "out.csv"
    r = cli("stock", "export", str(target), db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == f"Error: cannot write {target}: No such file or directory"
    assert not target.parent.exists()


def test_help_shows_no_type_label_beside_flags(cli_process):
    # typer 0.29's rich help printed "<bool>" beside every on/off flag, which reads as if the flag
    # took a value; our plain help (cli/_help.py) must not (a real process, as a technician runs it).
    r = cli_process("stock", "list", "--help", env={"COLUMNS": "80"})
    assert r.returncode == 0
    assert "--json" in r.stdout
    assert "<bool>" not in r.stdout
