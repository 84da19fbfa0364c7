"""Domain exceptions. Each carries the one-line message a user sees; the CLI prints it as
``Error: <message>`` and exits 1. Keep messages to one line naming the row, column or value and
what was expected."""

from __future__ import annotations


class SelectorError(Exception):
    """Base class: a problem the user can act on (never a programming error)."""

    exit_code = 1


class UnparseableValue(SelectorError):
    """A value, tolerance or rating text could not be read in any accepted notation."""


class InvalidStockFile(SelectorError):
    """A stock CSV has one or more bad rows; ``problems`` lists every one of them."""

    def __init__(self, problems: list[str]):
        self.problems = list(problems)
        n = len(self.problems)
        super().__init__(f"{n} problem{'s' if n != 1 else ''} in the stock file; nothing was imported")


class UnknownStockLine(SelectorError):
    """A stock line id given by the user does not exist."""


class InsufficientStock(SelectorError):
    """A pull or adjustment would take more parts than a stock line holds."""


class TooManyParts(SelectorError):
    """A merge, adjustment or undo would leave a stock line above the documented quantity limit."""


class NothingFeasible(SelectorError):
    """A search found no option inside the limits; the message says which limit excluded what."""


class DatabaseProblem(SelectorError):
    """The database file is missing, unreadable, damaged, foreign or too busy."""


class UnknownSearch(SelectorError):
    """A saved search or option number does not exist."""


class AlreadyUndone(SelectorError):
    """A pull was already undone and cannot be undone twice."""


class SimulatorMissing(SelectorError):
    """ngspice is not installed or not on PATH."""


class SimulationFailed(SelectorError):
    """ngspice ran but a measurement could not be made."""


class UnknownPull(SelectorError):
    """A pull id given by the user does not exist."""


class OptionOutdated(SelectorError):
    """A saved option uses a stock line that is gone or now holds a different value."""


class UnreadableFile(SelectorError):
    """A file named by the user (a stock CSV to import, an export target) cannot be read or written."""


class OutOfRange(SelectorError):
    """A circuit setting (supply voltage, diode drop, …) is outside what the chip or model allows."""


class UnknownChipFamily(SelectorError):
    """A chip family key is not in the table; the message lists the known keys."""

    exit_code = 2


class UnknownDistribution(SelectorError):
    """A tolerance distribution name is not one of the supported ones (uniform, normal)."""

    exit_code = 2
