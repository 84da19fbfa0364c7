"""Chip-family table: every number cited, limits as the sources state them.

Sources as in facts.md: [S1] bipolar 555 data sheet, [S5]/[S6] CMOS 555 data sheets B/C,
[S15] electrolytic leakage rating, [S25] CMOS-555 circuit page.
"""

from __future__ import annotations

import dataclasses
import re
from pathlib import Path

import numpy as np
import pytest

from selector.core import chips
from selector.core.errors import OutOfRange, UnknownChipFamily

CITATION = re.compile(r"\[S\d+\]|common practice|from memory")
NUMERIC = [f.name for f in dataclasses.fields(chips.ChipFamily) if f.type in ("float", float)]


@pytest.mark.parametrize("key", sorted(chips.FAMILIES))
def test_every_number_has_a_source(key):
    fam = chips.FAMILIES[key]
    assert len(NUMERIC) >= 10
    for name in NUMERIC:
        assert CITATION.search(fam.sources.get(name, "")), f"{key}.{name} has no source"


def test_every_number_in_the_table_carries_a_source_comment():
    text = Path(chips.__file__).read_text(encoding="utf-8")
    lines = [ln for ln in text.splitlines() if re.match(r"\s+\w+=[-+0-9.e]+,", ln)]
    assert len(lines) >= 2 * len(NUMERIC)
    for ln in lines:
        assert "#" in ln and CITATION.search(ln.split("#", 1)[1]), ln


def test_bipolar_max_timing_resistance_from_threshold_current():
    # [S1] note: R ≤ VCC/(3·I_th) = 20 MΩ at 15 V and 6.7 MΩ at 5 V (0.25 µA max).
    b = chips.family("bipolar")
    assert b.max_timing_r_ohm(15.0) == pytest.approx(20e6, rel=1e-12)
    assert b.max_timing_r_ohm(5.0) == pytest.approx(6.7e6, rel=0.005)
    np.testing.assert_allclose(b.max_timing_r_ohm(np.array([5.0, 15.0])), [5 / 0.75e-6, 20e6])


def test_cmos_max_timing_resistance_is_the_practical_cap():
    # CMOS input currents are pA [S6]; the cap (common practice) decides.
    c = chips.family("cmos")
    assert c.max_timing_r_ohm(5.0) == 20e6


def test_supply_ranges_and_message():
    chips.family("bipolar").check_vcc(4.5)       # [S1] 4.5–16 V, ends included
    chips.family("bipolar").check_vcc(16.0)
    chips.family("cmos-2v").check_vcc(2.0)       # [S5] data sheet B: 2–15 V
    chips.family("cmos-3v").check_vcc(16.0)      # [S6] data sheet C: 3–16 V
    chips.family("cmos").check_vcc(3.0)          # generic: the common range, 3–15 V
    chips.family("cmos").check_vcc(15.0)
    with pytest.raises(OutOfRange) as e:
        chips.family("bipolar").check_vcc(20)
    assert str(e.value) == "VCC 20 V is outside the bipolar 555 range 4.5–16 V"
    with pytest.raises(OutOfRange) as e:
        chips.family("cmos").check_vcc(2.5)
    assert str(e.value) == "VCC 2.5 V is outside the CMOS 555 range 3–15 V; --chip cmos-2v takes it"
    with pytest.raises(OutOfRange) as e:
        chips.family("cmos-2v").check_vcc(1.5)
    assert str(e.value) == "VCC 1.5 V is outside the CMOS 555 (2–15 V part) range 2–15 V"
    with pytest.raises(OutOfRange):
        chips.family("cmos-2v").check_vcc(16.0)
    with pytest.raises(OutOfRange):
        chips.family("cmos-3v").check_vcc(2.5)


def test_cmos_families_differ_only_where_their_data_sheets_do():
    # [S5] data sheet B 2–15 V, [S6] data sheet C 3–16 V; the generic key keeps the narrowest
    # common range (3–15 V) so any CMOS 555 fits; each named family's BOM text says its range
    g, b, c = (chips.family(k) for k in ("cmos", "cmos-2v", "cmos-3v"))
    assert (b.vcc_min, b.vcc_max, c.vcc_min, c.vcc_max) == (2.0, 15.0, 3.0, 16.0)
    assert (g.vcc_min, g.vcc_max) == (max(b.vcc_min, c.vcc_min), min(b.vcc_max, c.vcc_max))
    assert "2–15 V" in b.part_text and "3–16 V" in c.part_text
    assert "[S5]" in b.sources["vcc_min"] and "[S6]" in c.sources["vcc_min"]


def test_family_lookup():
    assert chips.family(" CMOS ").key == "cmos"
    with pytest.raises(UnknownChipFamily) as e:
        chips.family("nmos")
    assert str(e.value) == "unknown chip family 'nmos'; expected one of: bipolar, cmos, cmos-2v, cmos-3v"
    assert e.value.exit_code == 2


def test_output_levels_and_output_fed_permission():
    b, c = chips.family("bipolar"), chips.family("cmos")
    # facts §3: bipolar output is not rail-to-rail, so the output-fed connection is CMOS only.
    assert not b.output_fed_ok and c.output_fed_ok
    assert c.voh(5.0) == 5.0 and c.vol(5.0) == 0.0          # [S7] rail-to-rail, light load
    assert b.voh(15.0) == pytest.approx(13.6)               # from memory: VCC − 1.4 V light load
    # light-load VOH sits above the [S1] 100 mA typical 13.3 V and below the rail
    assert 13.3 < b.voh(15.0) < 15.0
    assert 0.0 < b.vol(15.0) <= 0.25                        # [S1] 0.25 V max at 10 mA


def test_design_rules():
    for fam in chips.FAMILIES.values():
        assert fam.min_ra_ohm == 1e3                         # [S25], [S1] (facts §6)
        assert fam.min_timing_c_f == 100e-12                 # [S25]
        assert fam.max_astable_hz == 100e3                   # [S5] ≤ 100 kHz; common practice
        assert fam.vcc_min < fam.vcc_max
    # chips are hashable/frozen (the sources dict is excluded from hash and equality)
    assert hash(chips.family("bipolar")) != hash(chips.family("cmos"))
    with pytest.raises(dataclasses.FrozenInstanceError):
        chips.family("bipolar").vcc_max = 18.0


def test_electrolytic_leakage_rating():
    # [S15]: I_L ≤ 0.01·C[µF]·V_R[V] µA or 3 µA, whichever is greater; 2200 µF / 35 V → 770 µA.
    assert chips.electrolytic_leakage_a(2200e-6, 35.0) == pytest.approx(770e-6, rel=1e-12)
    assert chips.electrolytic_leakage_a(100e-6, 25.0) == pytest.approx(25e-6, rel=1e-12)
    assert chips.electrolytic_leakage_a(1e-6, 16.0) == pytest.approx(3e-6, rel=1e-12)  # floor


def test_leakage_rule_worked_example():
    # facts §6 worked example (derived): 100 µF / 25 V allows 25 µA; at VCC = 12 V the 10× rule
    # (common practice) needs R ≤ 16 kΩ.
    assert chips.leakage_margin(16e3, 100e-6, 12.0, 25.0) == pytest.approx(10.0, rel=1e-12)
    assert chips.leakage_ok(15.9e3, 100e-6, 12.0, 25.0)
    assert not chips.leakage_ok(16.1e3, 100e-6, 12.0, 25.0)


def test_cautions_cover_the_usual_hazards():
    text = " ".join(chips.CAUTIONS.values()).lower()
    for word in ("discharge", "mains", "local codes", "leakage"):
        assert word in text


def test_high_frequency_limit_example_is_outside_every_family():
    # [S5] CMOS 555 data sheet B fmax test: RA = 470 Ω, RB = 200 Ω, CT = 200 pF measures
    # 2.1 MHz typ (1.2 MHz min) while the ideal formula says 8.29 MHz (facts §11.1 row 11).
    from selector.core import timing as T

    f, _ = T.frequency_duty(*T.standard_times(470.0, 200.0, 200e-12))
    assert float(f) == pytest.approx(8.29e6, abs=0.005e6)
    for fam in chips.FAMILIES.values():
        assert float(f) > fam.max_astable_hz
        assert 1.2e6 > fam.max_astable_hz      # even the measured minimum is beyond our limit
