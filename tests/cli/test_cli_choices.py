"""selector/cli/_choices.py is a start-up copy of what the registry and the chip table declare
(the command line is built from it so that `selector --help` imports neither). These tests are
what keeps the copy honest: a circuit kind, a circuit option or a chip family added in core fails
here until _choices says the same."""

import subprocess
import sys

from selector.cli import _choices
from selector.core import chips, circuits


def test_connections_equal_the_registry():
    assert _choices.ASTABLE_CONNECTIONS == tuple((k.key, k.help) for k in circuits.for_mode("astable"))


def test_chip_families_equal_the_chip_table():
    assert _choices.CHIP_FAMILIES == tuple(chips.FAMILIES)


def test_discharge_resistances_equal_the_chip_table():
    assert _choices.DISCHARGE_OHMS == tuple((f.key, f.datasheet_discharge_ohms) for f in chips.FAMILIES.values())


def test_circuit_options_equal_the_registry():
    seen, expected = set(), []
    for kind in circuits.for_mode("astable"):
        for opt in kind.options:
            if opt.name not in seen:
                seen.add(opt.name)
                expected.append((opt.name, opt.help, opt.metavar, tuple(opt.choices)))
    assert _choices.ASTABLE_OPTIONS == tuple(expected)


def test_building_the_command_line_imports_no_registry_and_no_rich():
    """What every `selector ... --help` pays for: the command tree is built from _choices and
    printed by click's plain formatter (cli/_help.py), so neither the registry, the chip table
    nor rich is imported (checked in a fresh interpreter)."""
    code = ("import sys, selector.cli.app as a, typer.main; typer.main.get_command(a.app); "
            "print(sorted(m for m in ('selector.core.circuits', 'selector.core.chips', 'rich', 'numpy') "
            "if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
