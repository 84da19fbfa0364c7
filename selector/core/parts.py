"""Per-kind part facts in one place: dielectric names, polarity, the tolerance assumed when a stock
line does not state one, and the derating factors the limits use. Pure (stdlib only).

Sources (keys as in /work/shared/reference/facts.md): §8.1 typical tolerances by type [S12, S13,
S15, S11], §8.5 voltage derating [S18 for tantalum; the rest common practice], §7 resistor power
derating (common practice).
"""

from __future__ import annotations

from selector.core.errors import UnparseableValue

# The steering diode is a Shockley diode, I = Is·(exp(V/(n·Vt)) − 1), described the way a bench
# technician reads a data sheet: its forward drop at 1 mA (``--diode-vf``) and its ideality
# factor n (``--diode-n``); Is follows (``diode_saturation_current``).
# Silicon small-signal (1N4148/1N4448 class): 0.62 V at 1 mA with n = 1.9. Sources: 1N4448
# 0.62 V min … 0.72 V max at 5 mA [S16 diode data sheets] (0.62 V at 1 mA with n = 1.9 gives
# 0.70 V at 5 mA, inside that band, derived); 1N4148 about 0.6–0.65 V typ at 1 mA and n 1.7–2
# (from memory, not confirmed); it is the Is ≈ 3 nA, n ≈ 1.9 diode the ngspice checks used.
# Schottky small-signal: 0.32 V at 1 mA (BAT54 class, from memory, not confirmed; BAS70 class is
# ≤ 0.41 V at 1 mA [S16]) with n = 1.05 (from memory, not confirmed).
# The one default: timing, the search limits, SPICE and the CLI read it from here.
DIODE_VF_DEFAULT = 0.62
DIODE_N_DEFAULT = 1.9
DIODE_VF_REF_A = 1e-3
"""The current at which ``--diode-vf`` is stated (1 mA)."""
DIODE_TYPES: dict[str, tuple[float, float]] = {"silicon": (0.62, 1.9), "schottky": (0.32, 1.05)}
"""``--diode`` choice -> (Vf at 1 mA, ideality n); sources in the comment above."""
DIODE_VF_SPREAD = 0.03
"""Part-to-part spread of Vf at 1 mA, ± volts (uniform), drawn by the yield: 1N4448 0.62–0.72 V
at 5 mA is a 0.10 V band [S16]; we take ±0.03 V around the typical as the lot spread (from
memory, not confirmed; the data-sheet band holds min to max over all lots)."""
THERMAL_V = 1.380649e-23 * 300.15 / 1.602176634e-19
"""kT/q at 27 °C (ngspice's default TEMP/TNOM), 25.865 mV (derived from the SI constants)."""

# Canonical dielectric names, in the order messages list them. "" means "not stated / none"
# (the only sensible value for a resistor).
DIELECTRICS: tuple[str, ...] = (
    "C0G", "X7R", "X5R", "Y5V", "Z5U", "film-PP", "film-PET", "film", "electrolytic", "tantalum",
)

# Spellings seen on parts, reels and shop spreadsheets -> canonical name. Keys are compared after
# lower-casing and removing spaces, "-" and "_".
_ALIASES: dict[str, str] = {
    # class 1 ceramic (EIA code C0G; "NP0" is the older name for the same class, facts §8.1/§8.6)
    "c0g": "C0G", "cog": "C0G", "np0": "C0G", "npo": "C0G",
    # class 2 ceramics (EIA codes, facts §8.6)
    "x7r": "X7R", "x5r": "X5R", "y5v": "Y5V", "z5u": "Z5U",
    # film (MKP = metallised polypropylene, MKT = metallised polyester: trade names, facts §8.1)
    "filmpp": "film-PP", "pp": "film-PP", "mkp": "film-PP", "polypropylene": "film-PP",
    "filmpet": "film-PET", "pet": "film-PET", "mkt": "film-PET", "polyester": "film-PET", "mylar": "film-PET",
    "film": "film",
    # aluminium electrolytic ("elko" is common shop German/Dutch usage)
    "electrolytic": "electrolytic", "elko": "electrolytic", "elco": "electrolytic", "alu": "electrolytic",
    "aluminium": "electrolytic", "aluminum": "electrolytic", "elyt": "electrolytic", "elec": "electrolytic",
    # tantalum
    "tantalum": "tantalum", "tant": "tantalum", "tantal": "tantalum", "ta": "tantalum",
    # none
    "": "", "none": "",
}

TIMING_DIELECTRIC_ORDER: tuple[str, ...] = (
    "C0G", "film-PP", "film-PET", "film", "X7R", "X5R", "tantalum", "electrolytic", "Y5V", "Z5U", "",
)
"""Dielectrics from the most to the least stable timing capacitor (drift with temperature,
voltage and age; common practice): which variant of one build is shown first."""

_POLARIZED = frozenset({"electrolytic", "tantalum"})
_CLASS2 = frozenset({"X7R", "X5R", "Y5V", "Z5U"})

RESISTOR_POWER_DERATING = 0.5
"""Run a resistor at no more than this fraction of its power rating (common practice, facts §7)."""

def normalize_dielectric(text: str) -> str:
    """The canonical dielectric name for ``text`` (case, spaces and dashes ignored); "" for none.
    Raises UnparseableValue listing the accepted names for anything else."""
    from selector.core.notation import quoted

    key = (text or "").strip().lower().replace(" ", "").replace("-", "").replace("_", "")
    try:
        return _ALIASES[key]
    except KeyError:
        raise UnparseableValue(
            f'unknown dielectric {quoted(text.strip())}: expected one of {", ".join(DIELECTRICS)} '
            "(also NP0, MKP/PP, MKT/PET/polyester, elko/alu, tant) or empty"
        ) from None


def is_polarized(dielectric: str) -> bool:
    """True for the polarised capacitor types (aluminium electrolytic, tantalum)."""
    return dielectric in _POLARIZED


def is_class2_ceramic(dielectric: str) -> bool:
    """True for class-2 ceramics (X7R, X5R, Y5V, Z5U): large DC-bias and aging drift (facts §8.5)."""
    return dielectric in _CLASS2


def default_tolerance(kind: str, dielectric: str = "", note: str = "") -> tuple[float, float]:
    """(minus, plus) fractions assumed when a stock line gives no tolerance. ``note`` is accepted
    but deliberately not read: we never guess a tolerance from free text.

    - resistor: ±5 % — the usual carbon-film grade (common practice); a metal-film line should state
      its 1 % explicitly, we do not guess it from package or note.
    - C0G ±5 % (J), X7R/X5R ±10 % (K), Y5V/Z5U -20/+80 % (Z) [facts §8.1: S12, S13];
    - film-PP ±5 %, film-PET ±10 %, film (type unknown) ±10 % — the wider of the usual grades
      [facts §8.1: S13];
    - aluminium electrolytic ±20 % (M) (facts §8.1, from memory there);
    - tantalum ±10 % [facts §8.1: S13];
    - capacitor of unknown dielectric ±20 % (the widest common symmetric grade; our choice).
    """
    if kind == "resistor":
        return (0.05, 0.05)
    if kind != "capacitor":
        raise UnparseableValue(f'unknown kind "{kind}": expected resistor or capacitor')
    table = {
        "C0G": (0.05, 0.05),
        "X7R": (0.10, 0.10),
        "X5R": (0.10, 0.10),
        "Y5V": (0.20, 0.80),
        "Z5U": (0.20, 0.80),
        "film-PP": (0.05, 0.05),
        "film-PET": (0.10, 0.10),
        "film": (0.10, 0.10),
        "electrolytic": (0.20, 0.20),
        "tantalum": (0.10, 0.10),
        "": (0.20, 0.20),
    }
    return table[normalize_dielectric(dielectric)]


def voltage_derating(dielectric: str) -> float:
    """Fraction of a capacitor's rated voltage allowed as working voltage:
    tantalum 0.5 [facts §8.5: S18]; class-2 ceramic 0.5 (rate at >= 2x working voltage) and
    aluminium electrolytic 0.8 (common practice, facts §8.5); everything else 0.8 (common practice)."""
    d = normalize_dielectric(dielectric)
    if d == "tantalum" or d in _CLASS2:
        return 0.5
    return 0.8
