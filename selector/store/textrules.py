"""The rules for text written to the database, the same on every backend.

SQLite stores any text in any column; PostgreSQL refuses a string longer than its VARCHAR(n)
column and any NUL byte. So that a file imports the same way on both, every text the program
writes is checked first against these rules, and a breach is one line naming the field:

* a column declared ``String(n)`` in ``tables.py`` holds at most ``n`` characters (the length is
  read from the table, never repeated here);
* no control characters: C0 (U+0000-U+001F, NUL, ESC, CR, LF, ...), DEL and C1 (U+007F-U+009F).
  Tab is allowed: it is ordinary in a note and harmless on a terminal. Control characters would
  otherwise reach a technician's terminal (ESC sequences) or break a row of a table or CSV.
"""

from __future__ import annotations

import re
import unicodedata
from typing import Optional

import sqlalchemy as sa

_CONTROL = re.compile(r"[\x00-\x08\x0a-\x1f\x7f-\x9f]")


def column_length(column: sa.Column) -> Optional[int]:
    """The declared maximum length of a text column (``String(n)``), or None when it has none."""
    return getattr(column.type, "length", None)


def _describe(ch: str) -> str:
    name = {"\x00": "NUL", "\x1b": "ESC", "\r": "CR", "\n": "line break", "\x07": "BEL", "\x7f": "DEL"}.get(ch)
    if name is None:
        name = unicodedata.name(ch, "control character")
    return f"U+{ord(ch):04X} {name}"


def text_problem(text: str, column: sa.Column) -> Optional[str]:
    """What is wrong with ``text`` for ``column`` (a model column such as
    ``StockLineRow.__table__.c.location``), as the end of a message; None when it may be written."""
    m = _CONTROL.search(text)
    if m:
        return (f"contains a control character ({_describe(m.group())}) at character {m.start() + 1}; "
                "remove it")
    limit = column_length(column)
    if limit is not None and len(text) > limit:
        return f"{len(text)} characters; at most {limit} fit"
    return None


def check_text(text: str, column: sa.Column, field: str) -> None:
    """Raise UnparseableValue ``<field>: <problem>`` when ``text`` breaks a rule for ``column``."""
    from selector.core.errors import UnparseableValue

    problem = text_problem(text, column)
    if problem:
        raise UnparseableValue(f"{field}: {problem}")
