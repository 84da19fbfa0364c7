"""The rule that matches a BOM's timer IC, steering diode and Schmitt IC to stock lines
(selector/core/stock_match.py). The part numbers below are manufacturers' usual names, from
memory (NE555/SA555/SE555/LM555 bipolar; TLC555, LMC555, ICM7555, TS555 CMOS; 74HC14 and
CD40106 / MC14584 Schmitt inverters; 1N4148/1N914 silicon and BAT85/1N5711 Schottky diodes);
the rule is our own (README), so these cases state it rather than check an outside fact. The
0.45 V line between Schottky and silicon forward drops is common practice."""

from __future__ import annotations

import itertools

import pytest

from selector.core.stock_match import (
    SCHOTTKY_BELOW_V, WANTS, diode_type, matches, normalized, pick_line, schmitt_family, timer_family,
)
from selector.core.types import StockLine


def ic(part: str, qty: int = 5, line_id: int = 1, location: str = "U1") -> StockLine:
    return StockLine(line_id, "ic", 0.0, 0.0, 0.0, qty, location, "DIP-8", part=part)


def diode(part: str, rating=None, qty: int = 5, line_id: int = 1) -> StockLine:
    return StockLine(line_id, "diode", 0.0, 0.0, 0.0, qty, "D", "", rating, part=part)


@pytest.mark.parametrize("part, family", [
    ("NE555P", "bipolar"), ("ne 555-p", "bipolar"), ("LM555CN", "bipolar"), ("SA555D", "bipolar"),
    ("SE555", "bipolar"), ("555 bipolar", "bipolar"),
    ("TLC555CP", "cmos"), ("LMC555", "cmos"), ("ICM7555", "cmos"), ("TS555", "cmos"), ("555 CMOS", "cmos"),
    ("555", None),                 # no family named
    ("NE555 CMOS", None),          # both families named: ambiguous
    ("NE556", None),               # a dual timer is another part
    ("74HC14", None),
])
def test_timer_family(part, family):
    assert timer_family(part) == family


@pytest.mark.parametrize("part, family", [
    ("74HC14", "hc"), ("SN74HC14N", "hc"), ("MM74HC14", "hc"), ("Schmitt hex inverter HC", "hc"),
    ("74HCT14", None),             # TTL input levels, other thresholds
    ("CD40106BE", "4000"), ("HEF40106", "4000"), ("MC14584", "4000"), ("Schmitt 4000 series", "4000"),
    ("Schmitt hex inverter", None),  # family not named
    ("NE555P", None),
])
def test_schmitt_family(part, family):
    assert schmitt_family(part) == family


@pytest.mark.parametrize("part, rating, kind", [
    ("1N4148", None, "silicon"), ("1N914B", None, "silicon"), ("BAT85", None, "schottky"),
    ("1N5711", None, "schottky"), ("small Schottky", None, "schottky"),
    ("1N4007", None, None),        # not a small-signal type the rule knows, no stated drop
    ("1N4007", 0.6, "silicon"),    # a stated drop decides
    ("1N4148", 0.3, "schottky"),   # the stated drop wins over the text
    ("X", SCHOTTKY_BELOW_V, "silicon"), ("X", SCHOTTKY_BELOW_V - 0.01, "schottky"),
])
def test_diode_type(part, rating, kind):
    assert diode_type(diode(part, rating)) == kind


def test_normalized():
    assert normalized(" lm-555_cn ") == "LM555CN"


def test_a_want_only_matches_its_own_kind_of_line():
    as_diode = StockLine(1, "diode", 0.0, 0.0, 0.0, 5, "", "", part="NE555P")  # a 555's text on a diode line
    as_resistor = StockLine(2, "resistor", 1e3, 0.05, 0.05, 5, "", "", part="1N4148")
    as_ic = ic("1N4148 BAT85 NE555P")  # diode texts on an ic line match no diode want
    assert [w for w in WANTS if matches(w, as_diode)] == []
    assert [w for w in WANTS if matches(w, as_resistor)] == []
    assert [w for w in WANTS if matches(w, as_ic)] == ["555:bipolar"]
    assert matches("555:bipolar", ic("NE555P"))
    assert not matches("555:cmos", ic("NE555P"))
    assert not matches("transistor:npn", ic("NE555P"))


def _reference_pick(want, stock, taken, need, visited):
    """The rule written out plainly: matching lines holding something; of those holding enough,
    a visited drawer first, then the lowest id; else the one holding the most (lowest id on ties)."""
    usable = [ln for ln in stock if matches(want, ln) and ln.quantity - taken.get(ln.id, 0) > 0]
    enough = [ln for ln in usable if ln.quantity - taken.get(ln.id, 0) >= need]
    if enough:
        in_visited = [ln for ln in enough if ln.location in visited]
        return sorted(in_visited or enough, key=lambda ln: ln.id)[0]
    if usable:
        most = max(ln.quantity - taken.get(ln.id, 0) for ln in usable)
        return sorted((ln for ln in usable if ln.quantity - taken.get(ln.id, 0) == most), key=lambda ln: ln.id)[0]
    return None


def test_pick_line_against_the_plain_rule_on_every_small_stock():
    """Every stock of three 555 lines (bipolar or CMOS, 0-3 parts, two drawers), need 1-3, with
    and without parts already taken and a visited drawer: pick_line equals the plain rule."""
    parts = ("NE555P", "TLC555", "555")
    count = 0
    for texts in itertools.product(parts, repeat=3):
        for qtys in itertools.product(range(4), repeat=3):
            stock = [ic(t, q, i + 1, "U1" if i % 2 else "U2") for i, (t, q) in enumerate(zip(texts, qtys))]
            for need, taken, visited in itertools.product((1, 3), ({}, {1: 1}), ((), ("U1",))):
                for want in ("555:bipolar", "555:cmos"):
                    assert pick_line(want, stock, taken, need, visited) == _reference_pick(want, stock, taken, need,
                                                                                             set(visited))
                    count += 1
    assert count == 27 * 64 * 8 * 2


def test_an_empty_line_is_not_matched_and_a_short_one_is():
    assert pick_line("555:bipolar", [ic("NE555P", 0)], {}, 1) is None
    short = ic("NE555P", 1)
    assert pick_line("555:bipolar", [short], {}, 3) == short
