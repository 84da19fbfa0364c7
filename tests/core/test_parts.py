"""Per-kind part defaults (core/parts.py) against the published tables they come from.
Sources are the keys of /work/shared/reference/facts.md; shop rules are marked common practice."""

from __future__ import annotations

import pytest

from selector.core.errors import UnparseableValue
from selector.core.parts import (
    DIELECTRICS,
    RESISTOR_POWER_DERATING,
    default_tolerance,
    is_class2_ceramic,
    is_polarized,
    normalize_dielectric,
    voltage_derating,
)


@pytest.mark.parametrize("text, canonical", [
    # EIA class-1 code C0G; "NP0" is the older name of the same class (facts §8.1/§8.6 [S12]).
    ("C0G", "C0G"), ("c0g", "C0G"), ("COG", "C0G"), ("NP0", "C0G"), ("npo", "C0G"),
    ("X7R", "X7R"), ("x5r", "X5R"), ("Y5V", "Y5V"), ("z5u", "Z5U"),
    # MKP = metallised polypropylene, MKT = metallised polyester (facts §8.1 [S13]).
    ("MKP", "film-PP"), ("pp", "film-PP"), ("film-PP", "film-PP"), ("film pp", "film-PP"),
    ("MKT", "film-PET"), ("PET", "film-PET"), ("polyester", "film-PET"), ("film", "film"),
    ("elko", "electrolytic"), ("Alu", "electrolytic"), ("electrolytic", "electrolytic"),
    ("tant", "tantalum"), ("Tantalum", "tantalum"),
    ("", ""), ("  ", ""), ("none", ""),
])
def test_normalize_dielectric(text, canonical):
    assert normalize_dielectric(text) == canonical


def test_every_canonical_name_is_its_own_normal_form():
    assert [normalize_dielectric(d) for d in DIELECTRICS] == list(DIELECTRICS)


def test_unknown_dielectric_lists_the_accepted_ones():
    with pytest.raises(UnparseableValue) as info:
        normalize_dielectric("paper")
    msg = str(info.value)
    assert msg.startswith('unknown dielectric "paper": expected one of C0G, X7R')
    assert all(d in msg for d in DIELECTRICS)


def test_polarity_and_class():
    assert [d for d in DIELECTRICS if is_polarized(d)] == ["electrolytic", "tantalum"]
    assert [d for d in DIELECTRICS if is_class2_ceramic(d)] == ["X7R", "X5R", "Y5V", "Z5U"]


@pytest.mark.parametrize("dielectric, expected", [
    ("C0G", (0.05, 0.05)),       # ±5 % (J) usual for C0G [S12, S13], facts §8.1
    ("X7R", (0.10, 0.10)),       # ±10 % (K) [S12, S13]
    ("X5R", (0.10, 0.10)),       # ±10 % [S12]
    ("Y5V", (0.20, 0.80)),       # +80/-20 % (Z) [S12]
    ("Z5U", (0.20, 0.80)),       # +80/-20 % [S12]
    ("film-PP", (0.05, 0.05)),   # PP ±1/2.5/5/10 %: 5 % is the common grade [S13]
    ("film-PET", (0.10, 0.10)),  # PET ±5/10/20 %: we assume the middle grade [S13]
    ("electrolytic", (0.20, 0.20)),  # ±20 % (M) standard (facts §8.1, from memory there)
    ("tantalum", (0.10, 0.10)),  # ±10 % [S13]
])
def test_capacitor_default_tolerances(dielectric, expected):
    assert default_tolerance("capacitor", dielectric) == expected


def test_resistor_default_tolerance_is_five_percent():
    # ±5 % carbon film is the usual untagged resistor (common practice).
    assert default_tolerance("resistor") == (0.05, 0.05)
    with pytest.raises(UnparseableValue):
        default_tolerance("inductor")


def test_voltage_derating():
    assert voltage_derating("tantalum") == 0.5  # >= 50 % derating, maker consensus [S18], facts §8.5
    assert voltage_derating("X7R") == voltage_derating("Y5V") == 0.5  # V_R >= 2x working (common practice)
    assert voltage_derating("electrolytic") == 0.8  # <= 80 % of V_R (common practice), facts §8.5
    assert voltage_derating("C0G") == voltage_derating("film-PP") == 0.8  # common practice


def test_resistor_power_derating():
    assert RESISTOR_POWER_DERATING == 0.5  # run at <= 50 % of rating (common practice), facts §7
