"""Plain records passed between the store and the pure core (no database or UI imports)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal, Optional

Kind = Literal["resistor", "capacitor", "trimmer", "ic", "diode"]
KINDS: tuple[str, ...] = ("resistor", "capacitor", "trimmer", "ic", "diode")
"""Every kind of stock line (the database's kind CHECK lists the same words, migration 0004)."""

TRIMMER_KIND = "trimmer"
"""The kind of a trimmer line: offered in series with a fixed network (``core.trim``), never in one."""

NETWORK_KINDS: tuple[str, ...] = ("resistor", "capacitor")
"""The kinds a network is built from: every search reads only these, so trimmers, ICs and diodes
never enter a series/parallel network."""

VALUELESS_KINDS: tuple[str, ...] = ("ic", "diode")
"""Kinds named by their ``part`` text, not by a value: their stored value and tolerances are 0."""


@dataclass(frozen=True)
class StockLine:
    """One row of stock as the core sees it. Values are SI floats (ohms, farads); tolerances are
    positive fractions below and above nominal (0.2, 0.8 for -20/+80 %); rating is watts for a
    resistor or trimmer, volts for a capacitor, the forward drop in volts for a diode (stated at
    ``rating_current`` amperes), or None when unknown.

    Trimmer: ``value`` is the end-to-end resistance, ``turns`` the number of turns end to end.
    IC and diode: ``value`` and the tolerances are 0; ``part`` names the part ("NE555P",
    "555 CMOS", "74HC14", "1N4148"). ``reorder_at``: the line counts as low when its quantity is at
    or below this (None: no reorder level)."""

    id: int
    kind: str
    value: float
    tol_minus: float
    tol_plus: float
    quantity: int
    location: str = ""
    package: str = ""
    rating: Optional[float] = None
    dielectric: str = ""
    polarized: bool = False
    note: str = ""
    part: str = ""
    turns: Optional[int] = None
    rating_current: Optional[float] = None
    reorder_at: Optional[int] = None

    @property
    def low(self) -> bool:
        """At or below its reorder level (False when the line has none)."""
        return self.reorder_at is not None and self.quantity <= self.reorder_at
