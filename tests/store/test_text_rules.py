"""Text is checked before it is written, with the same rules on every backend (PostgreSQL refuses
a string longer than its VARCHAR(n) and any NUL byte; SQLite would store both): the length limits
are read from the model columns, control characters are refused, and the message names the row,
the column and the limit."""

from __future__ import annotations

import pytest

from inprocess import invoke, snapshot
from selector.core.errors import InvalidStockFile, UnparseableValue
from selector.services import stock as svc
from selector.store.csvio import read_stock_csv
from selector.store.models import MovementRow, StockLineRow
from selector.store.textrules import column_length, text_problem

LINES = StockLineRow.__table__


def _problems(csv_text: str) -> list[str]:
    with pytest.raises(InvalidStockFile) as err:
        svc.validate_rows(read_stock_csv(csv_text.encode("utf-8")))
    return err.value.problems


def test_limits_come_from_the_model_columns():
    assert column_length(LINES.c.location) == LINES.c.location.type.length
    assert text_problem("x" * LINES.c.location.type.length, LINES.c.location) is None
    too_long = "x" * (LINES.c.location.type.length + 1)
    assert text_problem(too_long, LINES.c.location) == (
        f"{len(too_long)} characters; at most {LINES.c.location.type.length} fit")


def test_a_65_character_location_names_row_column_and_limit():
    assert LINES.c.location.type.length == 64  # models.py; the limit PostgreSQL enforces
    assert _problems("kind,value,quantity,location\nR,1k,5," + "L" * 65 + "\n") == [
        "row 2, column location: 65 characters; at most 64 fit"]


def test_a_65_character_package_is_refused_too():
    assert _problems("kind,value,quantity,package\nR,1k,5," + "P" * 65 + "\n") == [
        "row 2, column package: 65 characters; at most 64 fit"]


@pytest.mark.parametrize("char, name", [("\x00", "U+0000 NUL"), ("\x1b", "U+001B ESC"), ("\x07", "U+0007 BEL"),
                                        ("\x7f", "U+007F DEL"), ("\x9b", "U+009B"), ("\r", "U+000D CR")])
def test_control_characters_in_a_note_are_refused(char, name):
    (problem,) = _problems(f'kind,value,quantity,note\nR,1k,5,"ab{char}cd"\n')
    assert problem.startswith(f"row 2, column note: contains a control character ({name}")
    assert problem.endswith("at character 3; remove it")


def test_a_tab_in_a_note_is_kept():
    (row,) = svc.validate_rows(read_stock_csv(b'kind,value,quantity,note\nR,1k,5,"left\tright"\n'))
    assert row.spec.note == "left\tright"


def test_kit_options_and_references_follow_the_same_rules(memory_engine):
    with pytest.raises(UnparseableValue, match=r"^--location: 65 characters; at most 64 fit$"):
        svc.kit_rows("E12", "resistor", 1e3, 1e4, 1, "L" * 65)
    with pytest.raises(UnparseableValue, match=r"^--package: contains a control character \(U\+0000 NUL\)"):
        svc.kit_rows("E12", "resistor", 1e3, 1e4, 1, "A1", package="08\x0005")
    limit = MovementRow.__table__.c.reference.type.length
    with pytest.raises(UnparseableValue, match=rf"^--reference: {limit + 1} characters; at most {limit} fit$"):
        svc.adjust_line(memory_engine, 1, 1, "r" * (limit + 1))


def test_the_cli_refuses_in_one_line_and_writes_nothing(tmp_path):
    db = tmp_path / "stock.db"
    good = tmp_path / "good.csv"
    good.write_text("kind,value,quantity\nR,1k,5\n", encoding="utf-8")
    assert invoke("stock", "import", str(good), db=db).code == 0
    before = snapshot(db)
    bad = tmp_path / "bad.csv"
    bad.write_text("kind,value,quantity,location,note\nR,2k2,5," + "L" * 65 + ',"a\x00b"\n', encoding="utf-8")
    out = invoke("stock", "import", str(bad), db=db)
    assert out.code == 1 and not out.crashed
    assert out.error_lines() == [
        "Error: 2 problems in the stock file; nothing was imported",
        "  row 2, column location: 65 characters; at most 64 fit",
        "  row 2, column note: contains a control character (U+0000 NUL) at character 2; remove it",
    ]
    ref = invoke("stock", "adjust", "1", "2", "--reference", "counted\x1b[2J", db=db)
    assert ref.code == 1
    assert ref.error_lines() == [
        "Error: --reference: contains a control character (U+001B ESC) at character 8; remove it"]
    assert snapshot(db) == before
