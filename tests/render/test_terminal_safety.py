"""User text never drives the terminal: control characters (ESC, BEL, CR, C1) are stripped from
every table cell and error line (selector/render/safe.py), and brackets are shown as written,
never read as rich markup. New text with control characters is refused at import
(tests/store/test_text_rules.py); these rows are written straight into the database, the way an
older version or another program could have left them."""

from __future__ import annotations

import sqlite3

import pytest

from inprocess import invoke
from selector.render.safe import cell, printable

ESCAPES = ["\x1b[2J", "\x1b]0;owned\x07", "\x9b31m", "\x07", "\r"]
HOSTILE = "a\x1b[31mred\x1b[0m\x1b]0;title\x07 b\x9b2J c\rd\x7f"


def test_printable_removes_every_control_character():
    assert printable(HOSTILE) == "a[31mred[0m]0;title b2J cd"
    assert printable("tab\there") == "tab here"
    assert cell("[bold]x[/bold]").plain == "[bold]x[/bold]"


@pytest.fixture
def poisoned(tmp_path):
    db = tmp_path / "s.db"
    src = tmp_path / "s.csv"
    src.write_text("kind,value,quantity,location\nR,1k,5,A1\n", encoding="utf-8")
    assert invoke("stock", "import", str(src), db=db).code == 0
    assert invoke("stock", "adjust", "1", "1", db=db).code == 0
    con = sqlite3.connect(db)
    con.execute("UPDATE stock_lines SET note = ?, location = ?, package = ?", (HOSTILE, "B\x1b[8m2", "[/oops]"))
    con.execute("UPDATE movements SET reference = ?", ("ref\x1b[2Jx",))
    con.commit()
    con.close()
    return db


@pytest.mark.parametrize("args", [("stock", "list"), ("ledger",), ("find", "value", "1k"),
                                  ("stock", "adjust", "1", "1")])
def test_no_escape_reaches_the_terminal(poisoned, args):
    out = invoke(*args, db=poisoned)
    assert out.code == 0, out.stderr
    for text in (out.stdout, out.stderr):
        assert not any(ch in text for ch in "\x1b\x07\x9b\r\x7f"), repr(text)


def test_the_note_is_still_shown_readably(poisoned):
    out = invoke("stock", "list", db=poisoned)
    flat = "".join(out.stdout.split())
    assert "B[8m2" in flat and "[/oops]" in flat and "a[31mred" in flat


def test_an_error_line_quoting_user_text_carries_no_escape(tmp_path):
    out = invoke("find", "value", "\x1b[2J4k7\x07", db=tmp_path / "s.db")
    assert out.code == 1
    assert "\x1b" not in out.stderr and "\x07" not in out.stderr
    assert out.error_lines() == [
        'Error: VALUE: cannot read "\\x1b[2J4k7\\x07" as a resistance: expected e.g. 4700, 4.7k, 4k7, 4.7 kΩ']


def test_bom_pick_list_and_pull_carry_no_escape(poisoned):
    assert invoke("find", "value", "1k", db=poisoned).code == 0
    for args in (("bom", "1"), ("bom", "1", "--format", "markdown"), ("pull", "1", "--dry-run"), ("pull", "1")):
        out = invoke(*args, db=poisoned)
        assert out.code == 0, (args, out.stderr)
        assert not any(ch in out.stdout + out.stderr for ch in "\x1b\x07\x9b\x7f"), (args, repr(out.stdout))
