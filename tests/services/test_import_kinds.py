"""Stock CSV import of the kinds beyond resistors and capacitors (trimmer, ic, diode) and of the
reorder level: exact lines for a good file, each bad cell refused with one line naming row, column,
value and what was expected (nothing written), levels set by a later file, and export → import
giving back the identical lines.

Expected values are written by hand. The ±20 % default of a trimmer is common practice (the usual
cermet grade, from memory); the 1N4148's 0.62 V at 1 mA and the BAT85's 0.32 V at 10 mA are
invented data in the neighbourhood of their data sheets (from memory), only for the parser."""

from __future__ import annotations

from pathlib import Path

import pytest

from selector.core.types import StockLine
from selector.services import stock as svc
from test_import import _dump, _movements, _problems, _stock, _write

HEADER = "kind,value,tolerance,quantity,location,package,rating,dielectric,note,part,turns,Reorder At\n"

GOOD = HEADER + (
    "trimmer,10k,,4,T1,3296W,0.5W,,,,25,1\n"      # no tolerance: ±20 % (common practice); 25 turns
    "pot,1k,±10%,2,T1,,,,,,,\n"                     # no turns: a single-turn trimmer
    "ic,555 CMOS,,3,B3,DIP-8,,,,,,1\n"             # part text in the value column
    "IC,,,5,B3,DIP-8,,,,NE555P,,2\n"                # ... or in the part column
    "ic,NE555P,,1,B3,DIP-8,,,,NE555P,,\n"           # both, agreeing: merges with the row above
    "diode,1N4148,,20,B4,DO-35,0.62V@1mA,,,,,5\n"
    "diode,,,10,B4,,320mV @ 10 mA,,Schottky,BAT85,,\n"
    "R,4k7,5%,10,A1,,,,,,,3\n"
)


def test_new_kinds_are_imported_exactly(memory_engine, tmp_path):
    plan = svc.import_stock(memory_engine, _write(tmp_path, GOOD))
    assert len(plan.new_lines) == 7 and plan.parts_added == 55
    assert _stock(memory_engine) == [
        StockLine(1, "trimmer", 10e3, 0.2, 0.2, 4, "T1", "3296W", 0.5, "", False, "", "", 25, None, 1),
        StockLine(2, "trimmer", 1e3, 0.1, 0.1, 2, "T1", "", None, "", False, "", "", 1, None, None),
        StockLine(3, "ic", 0.0, 0.0, 0.0, 3, "B3", "DIP-8", None, "", False, "", "555 CMOS", None, None, 1),
        StockLine(4, "ic", 0.0, 0.0, 0.0, 6, "B3", "DIP-8", None, "", False, "", "NE555P", None, None, 2),
        StockLine(5, "diode", 0.0, 0.0, 0.0, 20, "B4", "DO-35", 0.62, "", False, "", "1N4148", None, 1e-3, 5),
        StockLine(6, "diode", 0.0, 0.0, 0.0, 10, "B4", "", 0.32, "", False, "Schottky", "BAT85", None, 1e-2, None),
        StockLine(7, "resistor", 4700.0, 0.05, 0.05, 10, "A1", "", None, "", False, "", "", None, None, 3),
    ]
    assert [m[:3] for m in _movements(memory_engine)] == [
        (1, 4, "import"), (2, 2, "import"), (3, 3, "import"), (4, 6, "import"), (5, 20, "import"),
        (6, 10, "import"), (7, 10, "import")]


def test_a_later_file_sets_reorder_levels_and_an_empty_cell_keeps_them(memory_engine, tmp_path):
    svc.import_stock(memory_engine, _write(tmp_path, GOOD))
    later = "kind,part,quantity,location,package,reorder_at\nic,NE555P,0,B3,DIP-8,4\nic,555 CMOS,1,B3,DIP-8,\n"
    plan = svc.import_stock(memory_engine, _write(tmp_path, later, "later.csv"))
    assert [(rc.line.id, rc.reorder_at) for rc in plan.reorders] == [(4, 4)]
    lines = {ln.id: ln for ln in _stock(memory_engine)}
    assert (lines[4].reorder_at, lines[4].quantity) == (4, 6)
    assert (lines[3].reorder_at, lines[3].quantity) == (1, 4)
    # a level is a setting, not a quantity: the ledger got one row (the +1), none for the level
    assert [m[:3] for m in _movements(memory_engine)][7:] == [(3, 1, "import")]


def _bad(memory_engine, tmp_path, row: str) -> list[str]:
    return _problems(memory_engine, _write(tmp_path, HEADER + row))


@pytest.mark.parametrize("row, problem", [
    ("ic,555 CMOS,5%,1,B3,,,,,,,\n", 'row 2, column tolerance: "5%": an ic has no value tolerance; leave it empty'),
    ("ic,,,1,B3,,,,,,,\n", "row 2, column part: empty: an ic needs its part text (e.g. \"NE555P\", \"555 CMOS\" or "
                           "\"74HC14\") in the part or the value column"),
    ("ic,NE555P,,1,B3,,,,,LM555,,\n", 'row 2, column value: "NE555P": the part column already names this ic '
                                      '("LM555"); give the part text in one of the two'),
    ("ic,74HC14,,1,B3,,5V,,,,,\n", 'row 2, column rating: "5V": an ic has no rating here; put its limits in the note; '
                                   'leave it empty'),
    ("ic,74HC14,,1,B3,,,,,,25,\n", 'row 2, column turns: "25": turns are for trimmers; leave it empty'),
    ("trimmer,10k,,1,T1,,,,,,0,\n", 'row 2, column turns: "0": expected a whole number of turns end to end, 1 to 100'),
    ("trimmer,10k,,1,T1,,,X7R,,,,\n", 'row 2, column dielectric: "X7R": a dielectric is for capacitors, not a trimmer; '
                                      'leave it empty'),
    ("trimmer,10n,,1,T1,,,,,,,\n", 'row 2, column value: cannot read "10n" as a resistance: the prefix "n" belongs '
                                   'to a capacitance; expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ'),
    ("diode,1N4148,,1,B4,,0.62V@1m,,,,,\n", 'row 2, column rating: "0.62V@1m": after @ expected a current from 1 nA '
                                            'to 10 A with its unit, e.g. "1mA" or "10 mA"'),
    ("diode,1N4148,,1,B4,,12V@1mA,,,,,\n", 'row 2, column rating: "12V@1mA": the drop must be above 0 V and below '
                                           '10 V; expected a forward drop in volts, optionally at a current, e.g. '
                                           '"0.62V@1mA" or "0.3V"'),
    ("diode,1N4148,,1,B4,,fast,,,,,\n", 'row 2, column rating: "fast": expected a forward drop in volts, optionally '
                                        'at a current, e.g. "0.62V@1mA" or "0.3V"'),
    ("R,1k,,1,A1,,,,,CF,,\n", 'row 2, column part: "CF": a resistor is named by its value; put other text in the '
                              'note; leave it empty'),
    ("R,1k,,1,A1,,,,,,,-2\n", 'row 2, column reorder_at: "-2": expected a whole number of parts (the reorder level), '
                              '0 to 1000000000'),
])
def test_bad_cells_of_the_new_kinds(memory_engine, tmp_path, row, problem):
    problems = _bad(memory_engine, tmp_path, row)
    assert problems == [problem]


def test_two_rows_for_one_line_must_agree_on_the_reorder_level(memory_engine, tmp_path):
    assert _bad(memory_engine, tmp_path, "ic,NE555P,,1,B3,,,,,,,2\nic,NE555P,,1,B3,,,,,,,3\n") == [
        "row 3, column reorder_at: 3 for the same part as row 2, which gives 2; give one reorder level per stock line"]


def test_export_reads_back_to_the_identical_new_kind_lines(memory_engine, tmp_path):
    from selector.store.db import open_engine

    svc.import_stock(memory_engine, _write(tmp_path, GOOD))
    text = svc.export_text(memory_engine)
    assert text.splitlines()[0] == "kind,value,tolerance,quantity,location,package,rating,dielectric,note,part,turns,reorder_at"
    assert "diode,,,20,B4,DO-35,620mV@1mA,,,1N4148,,5" in text.splitlines()
    other = open_engine("sqlite://")
    try:
        svc.import_stock(other, _write(tmp_path, text, "export.csv"))
        assert _stock(other) == _stock(memory_engine)
    finally:
        other.dispose()
