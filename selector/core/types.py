"""Plain records passed between the store and the pure core (no database or UI imports)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal, Optional

Kind = Literal["resistor", "capacitor"]
KINDS: tuple[str, ...] = ("resistor", "capacitor")


@dataclass(frozen=True)
class StockLine:
    """One row of stock as the core sees it. Values are SI floats (ohms, farads); tolerances are
    positive fractions below and above nominal (0.2, 0.8 for -20/+80 %); rating is watts for a
    resistor, volts for a capacitor, or None when unknown."""

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
