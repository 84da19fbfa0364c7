"""Spreadsheet-safe text cells, both ways (pure, standard library only).

A spreadsheet program evaluates a CSV cell that begins with ``=``, ``+``, ``-`` or ``@`` as a
formula, and treats a leading tab, CR or LF as the start of one too; a note such as
``=HYPERLINK(…)`` would then run when the file is opened (OWASP "CSV Injection" guidance, from
memory). :func:`neutralize_cell` puts a single quote in front of such a cell, which spreadsheets
read as "this is text" and do not show. :func:`restore_cell` removes exactly that quote again, so
that the stock export read back by ``stock import`` gives the identical text:
``restore_cell(neutralize_cell(s)) == s`` for every string ``s``.

Plain numbers (``-5``, ``+3``, ``-0.25``, ``1e-7``) are left alone: a spreadsheet reads them as
the number they are, never as a formula. A cell that itself begins with a quote followed by one of
the characters above (or by a second quote) is quoted once more, so that restoring cannot mistake
it for a neutralised cell.
"""

from __future__ import annotations

import re

#: A spreadsheet treats a cell starting with one of these as a formula (or strips it into one).
FORMULA_START = ("=", "+", "-", "@", "\t", "\r", "\n")
#: The mark that tells a spreadsheet "text, not a formula" (not shown in the cell).
TEXT_MARK = "'"

_CONTROL = re.compile(r"[\x00-\x08\x0a-\x1f\x7f-\x9f]")  # C0 except tab, DEL, C1
_PLAIN_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_AFTER_MARK = FORMULA_START + (TEXT_MARK,)


def _marked(text: str) -> bool:
    """True when ``text`` looks like a neutralised cell: the mark, then a formula start or a mark."""
    return len(text) > 1 and text[0] == TEXT_MARK and text[1] in _AFTER_MARK


def neutralize_cell(text: str) -> str:
    """Make a text cell safe to open in a spreadsheet: a cell that begins with =, +, -, @, a tab,
    CR or LF (and is not a plain number) is prefixed with a single quote so it is shown as text,
    never evaluated; a cell that already looks neutralised is quoted once more (see module doc)."""
    if not text:
        return text
    if text.startswith(FORMULA_START) and not _PLAIN_NUMBER.fullmatch(text):
        return TEXT_MARK + text
    if _marked(text):
        return TEXT_MARK + text
    return text


def restore_cell(text: str) -> str:
    """The text a neutralised cell stands for: the leading quote removed when it is followed by
    =, +, -, @, a tab, CR, LF or another quote; any other text unchanged."""
    return text[1:] if _marked(text) else text


def without_controls(text: str) -> str:
    """``text`` with every control character removed (C0, DEL, C1; a tab becomes a space): what
    may be shown to a person. ESC sequences could recolour, retitle or clear a terminal."""
    return _CONTROL.sub("", text.replace("\t", " "))
