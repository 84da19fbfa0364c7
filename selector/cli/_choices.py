"""What ``find astable`` offers on its command line, as plain data, so that building the command
tree (every ``selector ... --help``) does not import the circuit registry and the chip table.

The facts themselves live in the circuit modules (``core/circuits/*.py``: key, ``help``,
``options``) and in ``core/chips.py`` (``FAMILIES``); this is a copy for start-up speed only.
tests/cli/test_cli_choices.py checks that it equals what the registry and the family table say, so a
circuit kind or a chip family added there fails that test until it is added here too."""

from __future__ import annotations

ASTABLE_CONNECTIONS: tuple[tuple[str, str], ...] = (  # (key, help) of every astable kind, registry order
    ("standard", "standard (duty above 50 %)"),
    ("diode", "diode (diode across RB, any duty)"),
    ("output-fed", "output-fed (CMOS, about 50 %)"),
    ("schmitt-inverter", "schmitt-inverter (a Schmitt-trigger inverter IC, --logic)"),
)

CHIP_FAMILIES: tuple[str, ...] = ("bipolar", "cmos", "cmos-2v", "cmos-3v")  # core.chips.FAMILIES, in order

# (family, datasheet_discharge_ohms) of core.chips.FAMILIES, in order: simulate --discharge-ohms help
DISCHARGE_OHMS: tuple[tuple[str, float], ...] = (
    ("bipolar", 12.0), ("cmos", 40.0), ("cmos-2v", 40.0), ("cmos-3v", 40.0),
)

ASTABLE_OPTIONS: tuple[tuple[str, str, str, tuple[str, ...]], ...] = (
    # (name, help, metavar, choices) of every circuit option (CliOption) of the astable kinds,
    # first declaration of each name, registry order
    ("logic", "Schmitt inverter family for --connection schmitt-inverter.", "X", ("hc", "4000")),
    ("vt-plus", "Upper input threshold VT+ of your inverter, e.g. 2.9V (replaces the family's typical one; "
     "taken as exact).", "V", ()),
    ("vt-minus", "Lower input threshold VT- of your inverter, e.g. 1.9V (replaces the family's typical one; "
     "taken as exact).", "V", ()),
)
