"""Every caution text the program shows, in one table (pure data; rule 5: where it applies, show
the usual cautions and defer to local codes and qualified practice). Keys are what the core
returns for an option (e.g. ``ranking.cautions``) and what commands print; the texts are ours."""

from __future__ import annotations

CAUTIONS: dict[str, str] = {
    "charged_capacitor": (
        "Capacitors can hold a charge after power is removed: discharge electrolytics through a "
        "resistor before handling them."
    ),
    "mains": (
        "Mains-powered equipment under repair can kill: follow local codes and qualified practice, "
        "work unpowered where you can, and use an isolating transformer."
    ),
    "electrolytic_leakage": (
        "Electrolytic timing capacitor: its leakage (up to 0.01·C·V µA or 3 µA) makes long timings "
        "drift; keep the charging current VCC/(3R) at least 10× the leakage, or use a film "
        "capacitor with a larger R on a CMOS 555."
    ),
    "high_frequency": (
        "Above about 100 kHz propagation delays and the discharge switch resistance make the real "
        "frequency lower than the formula."
    ),
    "bipolar_output_fed": (
        "The output-fed connection depends on the output levels; a bipolar 555 output is not "
        "rail-to-rail, so the duty is well above 50 % and it may not oscillate at 5 V."
    ),
    "class2": (
        "Class-2 ceramic (X7R, X5R, Y5V, Z5U) in the timing position: its value moves with "
        "voltage, temperature and age; prefer C0G or film for timing."
    ),
    "cap_rating_unknown": (
        "A timing capacitor has no voltage rating in stock: check it is rated well above VCC "
        "before fitting it."
    ),
    "decoupling": (
        "Decouple VCC close to a bipolar 555 (10–100 µF): its output draws current spikes at "
        "every transition."
    ),
    # Whole lines as printed by the BOM, simulate, find value and stock list (their wording is
    # part of those commands' output and kept as it is).
    "bom_charged_capacitor": (
        "Caution: capacitors can hold a charge after power is removed; discharge electrolytics "
        "through a resistor before handling them."
    ),
    "bom_mains": (
        "Caution: when the circuit goes into mains-powered equipment under repair, follow your local "
        "electrical codes and qualified practice; isolate and discharge the equipment first."
    ),
    "simulate": (
        "Caution: a built timer's capacitors can stay charged after power is off; discharge large ones "
        "through a resistor, and on mains-powered equipment follow local codes and qualified practice."
    ),
    "find_value_capacitor": (
        "Caution: a capacitor can hold a dangerous charge; discharge it through a suitable resistor "
        "before handling, and when repairing mains-powered equipment follow local codes and "
        "qualified practice."
    ),
    "polarity": (
        "Caution: electrolytic and tantalum capacitors are polarised; fit them the right way round and "
        "within their voltage rating (a reversed or over-volted one can overheat, vent or burst)."
    ),
}

SHORT: dict[str, str] = {
    # The same cautions in a few words, for the footer of a search at 80 columns (the full texts
    # above are in `selector show N` and `--explain`).
    "electrolytic_leakage": "Electrolytic timing capacitor: its leakage makes long times drift.",
    "high_frequency": "Above ~100 kHz the real frequency runs below the formula.",
    "bipolar_output_fed": "Output-fed on a bipolar 555: duty well above 50 %, may not start at 5 V.",
    "class2": "X7R/X5R timing capacitors drift: use C0G or film.",
    "cap_rating_unknown": "A timing capacitor has no rating in stock: check it exceeds VCC.",
    "decoupling": "Decouple VCC close to a bipolar 555.",
    "charged_and_mains": "discharge electrolytics; mains: local codes and qualified practice.",
}
