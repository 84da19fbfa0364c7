"""Spreadsheet neutralising and its inverse (selector/core/cells.py), shared by the BOM CSV and the
stock export. Which leading characters make a spreadsheet evaluate a cell: =, +, -, @, and tab/CR
(OWASP "CSV Injection" guidance, from memory)."""

from __future__ import annotations

import pytest
from hypothesis import example, given, settings, strategies as st

from selector.core.cells import FORMULA_START, neutralize_cell, restore_cell

HOSTILE = ["=cmd|' /C calc'!A0", '=HYPERLINK("http://example.invalid","click")', "+SUM(A1:A9)", "@SUM(A1)",
           "-2+3", "\tA1", "\rA1", "\nA1"]


@pytest.mark.parametrize("text", HOSTILE)
def test_hostile_cells_get_the_text_mark_and_come_back(text):
    safe = neutralize_cell(text)
    assert safe == "'" + text
    assert restore_cell(safe) == text


@pytest.mark.parametrize("number", ["-5", "+5", "-0.25", "-1e-7", "+3.", "-.5", "5", "1e6"])
def test_plain_numbers_stay_numbers(number):
    assert neutralize_cell(number) == number
    assert restore_cell(number) == number


@pytest.mark.parametrize("text, safe", [
    ("'=already marked", "''=already marked"),  # a real leading quote before a formula start
    ("''", "'''"),
    ("'plain", "'plain"),                      # a quote before ordinary text means nothing
    ("'", "'"),
    ("", ""),
    ("drawer =3", "drawer =3"),
    ("-20/+80 %", "'-20/+80 %"),               # an asymmetric tolerance is not a number
])
def test_text_that_already_looks_marked_is_marked_once_more(text, safe):
    assert neutralize_cell(text) == safe
    assert restore_cell(safe) == text


@settings(max_examples=500, deadline=None)
@given(st.text(alphabet=st.sampled_from(list("=+-@'\t\r\n 0123456789.eE aZ|!(")), max_size=8) | st.text(max_size=20))
@example("''=")
@example("'-5")
def test_restore_undoes_neutralize_for_every_text(text):
    safe = neutralize_cell(text)
    assert restore_cell(safe) == text
    # what reaches the spreadsheet never starts a formula, unless it is a plain number
    if safe.startswith(FORMULA_START):
        assert float(safe) == float(safe)
