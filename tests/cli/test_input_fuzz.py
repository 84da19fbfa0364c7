"""No input crashes the tool or stores a non-finite or out-of-range number (README "Accepted
ranges"). Every crash found by probing the program is a test here that now gets one line, exit 1
(2 for an option outside its documented range), and leaves the database unchanged; a hypothesis
fuzz then drives every command's numeric options and every CSV column with extreme text.

All CLI runs are in-process (typer's CliRunner, tests/inprocess.py), so the fuzz stays fast."""

from __future__ import annotations

import csv
import io
import json
import sqlite3

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from conftest import SAMPLE
from inprocess import invoke, snapshot

HUGE = "99999999999999999999"  # 20 digits: past the 64-bit integers SQLite stores
THOUSANDS = "9" * 5000         # past Python's 4300-digit int conversion limit
MAX_ID = "9223372036854775807"


@pytest.fixture(scope="module")
def worked(tmp_path_factory):
    """The sample stock with one saved timing search and one pull (every command has something)."""
    db = tmp_path_factory.mktemp("fuzz") / "stock.db"
    for args in (("stock", "import", str(SAMPLE)),
                 ("find", "astable", "--freq", "1.2k", "--duty", "65%", "--top", "3"),
                 ("pull", "1")):
        r = invoke(*args, db=db)
        assert r.code == 0, r.stderr
    return db


def _one_line(out, code: int) -> str:
    assert not out.crashed, out.exception
    assert out.code == code, (out.code, out.stderr)
    lines = out.error_lines()
    assert len(lines) == 1 and lines[0].startswith("Error: "), out.stderr
    return lines[0]


RESISTANCE = "expected 1 mΩ to 1 TΩ (1e-3 to 1e12 Ω)"

CRASHES = [  # (arguments, exit code, the one line a technician reads)
    (("find", "value", "1e999999k"), 1, f'Error: VALUE: "1e999999k" is out of range for a resistance: {RESISTANCE}'),
    (("find", "astable", "--freq", "1e999999k", "--duty", "60%"), 1,
     'Error: --freq: "1e999999k" is out of range for a frequency: expected 1e-15 to 1e12 Hz'),
    (("find", "astable", "--freq", "1k", "--duty", "60%", "--vcc", "1e999999k"), 1,
     'Error: --vcc: "1e999999k" is out of range for a voltage: expected 1e-15 to 1e12 V'),
    (("find", "monostable", "--width", "1e999999k"), 1,
     'Error: --width: "1e999999k" is out of range for a time: expected 1e-15 to 1e12 s'),
    (("stock", "list", "--min", "1e999999k"), 1,
     f'Error: --min: "1e999999k" is out of range for a resistance: {RESISTANCE}'),
    (("stock", "kit", "E12", "--kind", "resistor", "--from", "1e999999k", "--to", "10k", "--qty", "1",
      "--location", "Z"), 1, f'Error: --from: "1e999999k" is out of range for a resistance: {RESISTANCE}'),
    (("find", "value", "1e308"), 1, f'Error: VALUE: "1e308" is out of range for a resistance: {RESISTANCE}'),
    (("ledger", "--limit", HUGE), 2, f'Error: --limit "{HUGE}": expected a whole number from 1 to {MAX_ID}'),
    (("undo", HUGE), 2, f'Error: PULL_ID "{HUGE}": expected a whole number from 1 to {MAX_ID}'),
    (("bom", HUGE), 2, f'Error: OPTION "{HUGE}": expected a whole number from 1 to {MAX_ID}'),
    (("pull", HUGE), 2, f'Error: OPTION "{HUGE}": expected a whole number from 1 to {MAX_ID}'),
    (("bom", "1", "--search", HUGE), 2, f'Error: --search "{HUGE}": expected a whole number from 1 to {MAX_ID}'),
    (("stock", "kit", "E12", "--kind", "resistor", "--from", "1k", "--to", "10k", "--qty", HUGE, "--location", "Z"),
     2, f'Error: --qty "{HUGE}": expected a whole number from 0 to 1000000000'),
    (("find", "value", "10k", "--boards", HUGE), 2,
     f'Error: --boards "{HUGE}": expected a whole number from 1 to 1000000'),
    (("pull", "1", "--boards", HUGE), 2, f'Error: --boards "{HUGE}": expected a whole number from 1 to 1000000'),
    (("ledger", "--limit", THOUSANDS), 2,
     f'Error: --limit "{"9" * 32}…" (5000 characters): expected a whole number from 1 to {MAX_ID}'),
    (("find", "astable", "--freq", "1k", "--duty", "60%", "--seed", "-1"), 2,
     f'Error: --seed "-1": expected a whole number from 0 to {MAX_ID}'),
    (("netlist", "1", "--discharge-ohms", "inf"), 1,
     'Error: --discharge-ohms: cannot read "inf" as a resistance: expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
]


@pytest.mark.parametrize("args, code, line", CRASHES, ids=[" ".join(a)[:50] for a, _, _ in CRASHES])
def test_each_former_crash_is_one_line(worked, args, code, line):
    before = snapshot(worked)
    assert _one_line(invoke(*args, db=worked), code) == line
    assert snapshot(worked) == before


def _import_text(tmp_path, db, text: str):
    p = tmp_path / "in.csv"
    p.write_text(text, encoding="utf-8")
    return invoke("stock", "import", str(p), db=db)


@pytest.mark.parametrize("row, problem", [
    ("R,1e999999k,5", f'row 2, column value: "1e999999k" is out of range for a resistance: {RESISTANCE}'),
    ("R,1e308,5", f'row 2, column value: "1e308" is out of range for a resistance: {RESISTANCE}'),
    (f"R,1k,{THOUSANDS}", f'row 2, column quantity: "{"9" * 32}…" (5000 characters): '
                          "expected at most 1000000000 parts on one line"),
    ("R,1k,5," + "1" * 60 + "/1W", f'row 2, column rating: "{"1" * 32}…" (63 characters) is out of range '
                                    "for a resistor power rating: expected 1e-15 to 1e12 W"),
    ("R,1k,١٠", 'row 2, column quantity: "١٠": expected a whole number of parts, 0 or more'),
])
def test_bad_csv_numbers_are_one_line_each(tmp_path, row, problem):
    db = tmp_path / "s.db"
    kind_value_qty = row.split(",")
    header = "kind,value,quantity" + (",rating" if len(kind_value_qty) > 3 else "")
    out = _import_text(tmp_path, db, f"{header}\n{row}\n")
    assert not out.crashed and out.code == 1
    assert out.error_lines() == ["Error: 1 problem in the stock file; nothing was imported", f"  {problem}"]
    assert invoke("stock", "list", "--json", db=db).stdout.strip() == "[]"


# --------------------------------------------------------------------------- quantities <= 10^9

def test_merged_rows_may_not_exceed_the_quantity_limit(tmp_path):
    db = tmp_path / "s.db"
    out = _import_text(tmp_path, db, "kind,value,quantity\nR,1k,600000000\nR,1k,600000000\n")
    assert _one_line(out, 1) == ("Error: the new line for resistor 1 kΩ (rows 2, 3) would hold 1200000000; "
                                 "at most 1000000000 parts fit on one stock line; nothing was changed")
    assert _import_text(tmp_path, db, "kind,value,quantity\nR,1k,999999999\n").code == 0
    before = snapshot(db)
    out = _import_text(tmp_path, db, "kind,value,quantity\nR,1k,2\n")
    assert _one_line(out, 1) == ("Error: stock line 1 holds 999999999; adding (row 2) would make 1000000001; "
                                 "at most 1000000000 parts fit on one stock line; nothing was changed")
    assert snapshot(db) == before


def test_repeated_adjustments_may_not_exceed_the_quantity_limit(tmp_path):
    db = tmp_path / "s.db"
    assert _import_text(tmp_path, db, "kind,value,quantity\nR,1k,999999990\n").code == 0
    assert invoke("stock", "adjust", "1", "10", db=db).code == 0  # exactly the limit is fine
    before = snapshot(db)
    out = invoke("stock", "adjust", "1", "1", db=db)
    assert _one_line(out, 1) == ("Error: stock line 1 would hold 1000000001 parts after a change of +1; "
                                 "at most 1000000000 fit on one stock line; nothing was changed")
    assert snapshot(db) == before


def test_an_undo_may_not_push_a_line_past_the_limit(worked, tmp_path):
    db = tmp_path / "copy.db"
    src = sqlite3.connect(worked)
    dst = sqlite3.connect(db)
    src.backup(dst)
    src.close()
    dst.close()
    taken = json.loads(invoke("ledger", "--pull", "1", "--json", db=db).stdout)
    line_id = taken[0]["line_id"]
    held = next(x["quantity"] for x in json.loads(invoke("stock", "list", "--json", db=db).stdout)
                if x["line_id"] == line_id)
    assert invoke("stock", "set", str(line_id), "1000000000", db=db).code == 0
    before = snapshot(db)
    out = invoke("undo", "1", db=db)
    line = _one_line(out, 1)
    assert line.startswith(f"Error: stock line {line_id} would hold 10000000") and "at most 1000000000" in line
    assert snapshot(db) == before
    assert held >= 0


# --------------------------------------------------------------------------- stored by an older version

def test_a_stored_infinite_rating_gives_valid_json_and_a_one_line_export_refusal(tmp_path):
    db = tmp_path / "s.db"
    assert _import_text(tmp_path, db, "kind,value,quantity,rating\nR,1k,5,1/4W\n").code == 0
    con = sqlite3.connect(db)
    con.execute("UPDATE stock_lines SET rating = 9e999")  # what an older version stored for 111…1/1W
    con.commit()
    con.close()
    listed = invoke("stock", "list", "--json", db=db)
    assert listed.code == 0 and "Infinity" not in listed.stdout
    assert json.loads(listed.stdout, parse_constant=lambda c: pytest.fail(f"not JSON: {c}"))[0]["rating"] is None
    out = invoke("stock", "export", str(tmp_path / "out.csv"), db=db)
    assert _one_line(out, 1).startswith("Error: stock line 1 cannot be exported (no lossless text for inf")
    assert not (tmp_path / "out.csv").exists()


# --------------------------------------------------------------------------- -0

def test_minus_zero_reads_as_zero(worked):
    before = snapshot(worked)
    assert "VALUE: \"-0\" is not a positive resistor value" in _one_line(invoke("find", "value", "--", "-0", db=worked), 1)
    assert _one_line(invoke("find", "astable", "--freq", "-0", "--duty", "60%", db=worked), 1) == (
        "Error: --freq must be a positive finite value, not 0.0")
    assert _one_line(invoke("ledger", "--limit", "-0", db=worked), 2).startswith('Error: --limit "-0": expected')
    assert invoke("stock", "list", "--min", "-0", "--json", db=worked).stdout == \
        invoke("stock", "list", "--min", "0", "--json", db=worked).stdout
    assert snapshot(worked) == before


# --------------------------------------------------------------------------- the fuzz

_SUFFIX = st.sampled_from(["", "k", "M", "G", "n", "p", "u", "m", "Hz", "V", "W", "F", "s", "%", "R"])
EXTREME = st.one_of(
    st.builds(lambda e, s: f"1e{e}{s}", st.integers(40, 10**12), _SUFFIX),           # huge exponents
    st.builds(lambda e, s: f"1e-{e}{s}", st.integers(40, 10**12), _SUFFIX),          # tiny exponents
    # thousands of digits; at least 30, so that even with the smallest suffix ("p", 1e-12) the
    # value is past every documented range (20 nines with "n" are 1e11: a valid rating)
    st.builds(lambda n, s: "9" * n + s, st.integers(30, 6000), _SUFFIX),
    st.builds(lambda n: "-" + "9" * n, st.integers(20, 6000)),
    st.sampled_from(["inf", "-inf", "+inf", "nan", "NaN", "Infinity", "1e999999", "-1e999999", "1e999999k",
                     "١٠٠", "１００", "𝟏𝟎", "٣%", "४k7", "1/0", "1e999999/1W", "1" * 400 + "/1W", "0x10",
                     "1_000", "--", "\x1b[31m5", "5\x00", ""]),
)
CONTROL_TEXT = st.sampled_from(["a\x00b", "\x1b[2J", "bell\x07", "c1\x9b31m", "del\x7f", "two\nlines", "cr\rx"])

F = "{}"  # where the fuzzed text goes
FIELDS = [
    ("find", "value", "--", F), ("find", "value", "10k", "--top", F), ("find", "value", "10k", "--boards", F),
    ("find", "value", "10k", "--max-parts", F),
    ("find", "astable", "--freq", F, "--duty", "60%"), ("find", "astable", "--freq", "1k", "--duty", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--vcc", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--diode-vf", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--accept", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--top", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--boards", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--max-parts", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--seed", F),
    ("find", "astable", "--freq", "1k", "--duty", "60%", "--samples", F),
    ("find", "monostable", "--width", F), ("find", "monostable", "--width", "1s", "--vcc", F),
    ("find", "rc", "--tau", F), ("find", "rc", "--corner", F), ("find", "rc", "--tau", "1ms", "--vcc", F),
    ("bom", F), ("bom", "1", "--search", F), ("bom", "1", "--boards", F),
    ("pull", F), ("pull", "1", "--search", F), ("pull", "1", "--boards", F),
    ("ledger", "--limit", F), ("ledger", "--line", F), ("ledger", "--pull", F), ("undo", F),
    ("netlist", F), ("netlist", "1", "--search", F), ("netlist", "1", "--cycles", F),
    ("netlist", "1", "--discharge-ohms", F),
    ("simulate", F), ("simulate", "1", "--search", F), ("simulate", "1", "--cycles", F),
    ("simulate", "1", "--discharge-ohms", F),
    ("stock", "list", "--min", F), ("stock", "list", "--max", F),
    ("stock", "adjust", F, "1"), ("stock", "adjust", "1", "--", F), ("stock", "set", F, "1"),
    ("stock", "set", "1", "--", F),
    *[("stock", "kit", "E12", "--kind", kind, "--from", lo, "--to", hi, "--qty", "1", "--location", "Z", *extra)
      for kind, lo, hi in (("resistor", "1k", "10k"), ("capacitor", "1n", "10n"))
      for extra in (("--from", F), ("--to", F), ("--qty", F), ("--tolerance", F), ("--rating", F))],
]


def _fill(template, text: str) -> list[str]:
    return [text if part == F else part for part in template]


def _assert_refused(out, db, before) -> None:
    assert not out.crashed, out.exception
    assert out.code in (1, 2), (out.code, out.stdout[-300:], out.stderr[-300:])
    assert "Traceback" not in out.stderr
    if out.code == 1:
        assert out.error_lines()[0].startswith("Error: ")
    assert snapshot(db) == before


@pytest.mark.parametrize("template", FIELDS, ids=[" ".join(t)[:60] for t in FIELDS])
@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(text=EXTREME)
def test_every_numeric_option_refuses_extreme_text(worked, template, text):
    if text == "" and template[-2] in ("--tolerance", "--rating"):
        text = "inf"  # an empty --tolerance/--rating means "not given": the default applies
    before = snapshot(worked)
    _assert_refused(invoke(*_fill(template, text), db=worked), worked, before)


BASE_ROWS = {
    "resistor": {"kind": "R", "value": "1k", "tolerance": "5%", "quantity": "5", "location": "A1",
                 "package": "0805", "rating": "1/4W", "dielectric": "", "note": "ok"},
    "capacitor": {"kind": "C", "value": "100n", "tolerance": "10%", "quantity": "5", "location": "A1",
                  "package": "0805", "rating": "50V", "dielectric": "X7R", "note": "ok"},
}
NUMERIC_COLUMNS = ["kind", "value", "tolerance", "quantity", "rating", "dielectric"]
TEXT_COLUMNS = ["location", "package", "note"]


def _csv(row: dict) -> str:
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=list(row), lineterminator="\r\n")  # so a cell with CR is quoted
    w.writeheader()
    w.writerow(row)
    return buf.getvalue()


@pytest.mark.parametrize("kind", list(BASE_ROWS))
@pytest.mark.parametrize("column", NUMERIC_COLUMNS + TEXT_COLUMNS)
@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_every_csv_column_refuses_extreme_text(worked, tmp_path, kind, column, data):
    text = data.draw(CONTROL_TEXT if column in TEXT_COLUMNS else EXTREME)
    if column == "dielectric" and text.strip(" -_") == "":
        text = "\x1b[2J"  # empty (also "--": dashes are ignored) is a valid dielectric: none given
    if column in ("tolerance", "rating") and text == "":
        text = "inf"  # empty means "the default" for these
    row = dict(BASE_ROWS[kind], **{column: text})
    p = tmp_path / "fuzz.csv"
    p.write_text(_csv(row), encoding="utf-8")
    before = snapshot(worked)
    out = invoke("stock", "import", str(p), db=worked)
    _assert_refused(out, worked, before)
    assert out.error_lines()[1].startswith(f"  row 2, column {column}: "), out.stderr


def test_many_lines_over_the_limit_are_named_in_one_short_line(tmp_path):
    db = tmp_path / "s.db"
    rows = "".join(f"R,{v}k,600000000\nR,{v}k,600000000\n" for v in (1, 2, 3, 4, 5))
    line = _one_line(_import_text(tmp_path, db, "kind,value,quantity\n" + rows), 1)
    assert line.count("would hold") == 3 and "; and 2 more lines; at most 1000000000 parts" in line


def test_a_file_name_with_control_characters_is_ledgered_without_them(tmp_path):
    db = tmp_path / "s.db"
    p = tmp_path / "drawer\x1b[2J.csv"
    p.write_text("kind,value,quantity\nR,1k,5\n", encoding="utf-8")
    assert invoke("stock", "import", str(p), db=db).code == 0
    (entry,) = json.loads(invoke("ledger", "--json", db=db).stdout)
    assert entry["reference"] == "drawer[2J.csv"
