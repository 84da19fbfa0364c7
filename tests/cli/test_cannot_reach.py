"""Honest "cannot reach" (issue 11 item 5): a target the circuit or the chip cannot reach in
principle is refused with exit 1 and one line naming the limit and what would reach it; a target
the STOCK cannot reach is still answered, under a line saying so, with parts to buy.

Figures by hand: standard astable duty = (RA+RB)/(RA+2RB) > 50 % always, f = 1/(ln2·(RA+2RB)·C)
(555 data sheets, e.g. TI NE555 SLFS022 "astable operation"); the 100 kHz astable limit of both
families is the project's chip table (core/chips.py, facts.md); the output-fed connection of a
rail-to-rail CMOS 555 runs at 50 % (its charge and discharge factors are equal with VOH = VCC and
VOL = 0: ln2 each, facts.md §3)."""

from __future__ import annotations

import json
import math

import pytest

from reference_discharge import t_low_rd
from selector.core.types import StockLine
from selector.services.find_timing import TimingRequest, plan_timing


def _refused(cli, db, *args):
    r = cli("find", "astable", *args, db=db)
    assert r.returncode == 1, (r.stdout, r.stderr)
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("Error: ") and "Traceback" not in r.stderr
    return lines[0]


def test_standard_below_half_duty(cli, stocked):
    line = _refused(cli, stocked, "--freq", "1k", "--duty", "35%", "--connection", "standard")
    assert "above 50 %" in line and "--connection diode" in line


def test_output_fed_far_from_its_fixed_duty(cli, stocked):
    line = _refused(cli, stocked, "--freq", "1k", "--duty", "35%", "--connection", "output-fed",
                    "--chip", "cmos")
    assert "fixed duty of 50.0%" in line and "15.0 points" in line and "±5%" in line
    assert "--connection diode" in line


def test_output_fed_near_its_duty_is_searched(cli, stocked):
    """48 % is 2 points from 50 %: within ±5 % of 48 % (2.4 points), so it is searched."""
    r = cli("find", "astable", "--freq", "1k", "--duty", "48%", "--connection", "output-fed",
            "--chip", "cmos", "--json", db=stocked)
    assert r.returncode == 0, r.stderr


@pytest.mark.parametrize("chip,freq", [("cmos", "150k"), ("bipolar", "200k")])
def test_frequency_above_the_family_limit(cli, stocked, chip, freq):
    line = _refused(cli, stocked, "--freq", freq, "--duty", "60%", "--chip", chip)
    assert f"{freq[:-1]} kHz is above the 100 kHz limit" in line
    assert ("CMOS 555" if chip == "cmos" else "bipolar 555") in line
    assert "capacitor" not in line  # the limit that excluded it, not the parts


def test_just_above_the_limit_within_the_acceptance_is_searched(cli, stocked):
    """Options are offered up to 20 % of the family's 100 kHz (the propagation delay is not
    modelled, chips.DELAY_FREE_FRACTION): 21 kHz x (1 - 5 %) = 19.95 kHz <= 20 kHz, so an option at
    that limit is within the acceptance."""
    r = cli("find", "astable", "--freq", "21k", "--duty", "60%", "--json", db=stocked)
    assert r.returncode == 0, r.stderr


@pytest.mark.parametrize("chip", ["bipolar", "cmos"])
def test_between_the_offered_share_and_the_family_limit_names_the_delay(cli, stocked, chip):
    """50 kHz x (1 - 5 %) = 47.5 kHz: below the family's 100 kHz, above the 20 kHz offered."""
    line = _refused(cli, stocked, "--freq", "50k", "--duty", "60%", "--chip", chip)
    assert "50 kHz is above the 20 kHz limit" in line and "propagation delay" in line


def test_monostable_shorter_than_the_limits_allow(cli, stocked):
    """Shortest pulse = 1 kΩ x 100 pF x ln(3R/(R+RD)) = 108.7 ns with the discharge switch's
    12 Ω (DIS 180 mV at 15 mA [S1]; ln3·R·C = 109.9 ns without it) (bipolar 555 table: R >= 1 kΩ,
    C >= 100 pF); 100 ns x 1.05 = 105 ns is below it."""
    r = cli("find", "monostable", "--width", "100ns", db=stocked)
    assert r.returncode == 1
    line = r.stderr.strip()
    assert line == ("Error: a 100 ns pulse is below the shortest the limits allow, 109 ns (R ≥ 1 kΩ, "
                    "C ≥ 100 pF with a bipolar 555 at 9 V); no chip family here reaches it")


def test_stock_cannot_reach_shows_the_closest_and_what_to_buy():
    """Only 10 kΩ (x5) and 100 nF: RA = RB = 10 kΩ gives f = 1/(ln2·30 kΩ·100 nF) = 480.9 Hz,
    duty 2/3, by the data-sheet formulas [S2, S3]; with the discharge switch's 12 Ω (DIS 180 mV
    at 15 mA [S1]) t_low = (RB + RA∥RD)·C·ln((2/3 − d)/(1/3 − d)), d = RD/(RA+RD) (derived), so
    480.3 Hz and duty 66.58 %. Target 400 Hz, duty 2/3: +20.1 % off, nothing within ±5 %. One
    new capacitor C ≈ 120 nF (E12) gives 400.2 Hz (+0.06 %)."""
    r = [StockLine(1, "resistor", 10e3, 0.01, 0.01, 5, location="A1", rating=0.25)]
    c = [StockLine(2, "capacitor", 100e-9, 0.05, 0.05, 2, location="C1", rating=50.0,
                   dielectric="film-PET")]
    rep = plan_timing(r, c, TimingRequest(mode="astable", freq_hz=400.0, duty=2 / 3,
                                          connection="standard", max_parts=1))
    doc = rep.json
    assert doc["within_acceptance"] is False
    def freq(c, ra=10e3, rb=10e3):  # t_high = ln2·(RA+RB)·C [S2]; t_low with RD 12 Ω (reference_discharge)
        return 1 / (math.log(2) * (ra + rb) * c + t_low_rd(ra, rb, c))

    f0 = freq(100e-9)
    assert math.isclose(doc["options"][0]["errors"]["frequency"], f0 / 400 - 1, rel_tol=1e-9)
    first = doc["suggest_buy"][0]
    assert first["role"] == "C" and first["series"] == "E12"
    assert math.isclose(first["value"], 120e-9, rel_tol=1e-12)
    f1 = freq(120e-9)
    assert math.isclose(first["errors"]["frequency"], f1 / 400 - 1, rel_tol=1e-9)
    from selector.render.timing import reach_lines

    lines = reach_lines(rep)
    assert lines[0] == "Nothing in stock within ±5 %; closest f +20.1 % d -0.1 pt (option 1)."
    assert "C 120 nF (E12, instead of 100 nF): f +0.1 %" in lines[1]


def test_stock_reaches_on_the_sample(cli, stocked):
    r = cli("find", "astable", "--freq", "1.2k", "--duty", "65%", "--json", db=stocked)
    doc = json.loads(r.stdout)
    assert doc["within_acceptance"] is True and doc["suggest_buy"] == []
    assert doc["search"] == 1
