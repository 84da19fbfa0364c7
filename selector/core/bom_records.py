"""The records of a BOM (pure; stdlib only): the circuit an option belongs to, one line per
physical part, the whole BOM, and the pick list's stops and shortages. Assembly is in
``selector.core.bom``; the CSV / Markdown / JSON forms in ``selector.core.bom_formats``."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping, Optional

# Roles of BOM lines (what each part is for); circuit kinds name their extra parts with these.
ROLE_TIMING_C = "timing capacitor"
ROLE_IC = "timer IC"
ROLE_DIODE = "steering diode"
ROLE_CV = "control-pin capacitor"
ROLE_DECOUPLE = "supply decoupling capacitor"
ROLE_RESERVOIR = "supply reservoir capacitor"
ROLE_NETWORK = "network"


@dataclass(frozen=True)
class CircuitSpec:
    """What the saved search says about the circuit the option belongs to."""

    mode: str  # "astable" | "monostable" | "rc" | "value"
    connection: str = ""  # "standard" | "diode" | "output-fed" | "monostable" | "rc" | ""
    chip: str = "bipolar"  # "bipolar" | "cmos"
    vcc: Optional[float] = None  # volts
    diode_vf: Optional[float] = None  # volts
    options: Mapping[str, Any] = field(default_factory=dict, compare=False, hash=False)  # circuit's own

    @property
    def uses_timer(self) -> bool:
        return self.mode in ("astable", "monostable")


@dataclass(frozen=True)
class BomLine:
    """One physical part of the BOM (SI values; ``value`` None for the IC and the diode)."""

    ref: str
    role: str
    kind: str  # "resistor" | "capacitor" | "ic" | "diode"
    value: Optional[float]  # None for an IC or a diode, in stock or not
    per_board: int
    total: int
    in_stock: bool
    line_id: Optional[int] = None
    tol_minus: Optional[float] = None
    tol_plus: Optional[float] = None
    location: str = ""
    package: str = ""
    rating: Optional[float] = None
    dielectric: str = ""
    note: str = ""
    network: str = ""  # e.g. "series, part 1 of 2"; "" for a single part or an extra
    description: str = ""  # what to obtain, for parts without a value
    part: str = ""  # the part text of the IC or diode line it comes from ("NE555P")
    setting: str = ""  # a trimmer's bench setting for the nominal build ("set to 4.49 kΩ ≈ 45 % ...")

    @property
    def tolerance(self) -> Optional[dict[str, float]]:
        if self.tol_minus is None or self.tol_plus is None:
            return None
        return {"minus": self.tol_minus, "plus": self.tol_plus}


@dataclass(frozen=True)
class Bom:
    """A whole BOM: every physical part, for ``boards`` boards."""

    search_id: int
    option: int
    boards: int
    spec: CircuitSpec
    lines: tuple[BomLine, ...]
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class PickItem:
    line_id: int
    kind: str
    value: float
    tol_minus: float
    tol_plus: float
    package: str
    quantity: int  # to take, all boards
    on_hand: int
    refs: tuple[str, ...]
    part: str = ""  # an IC's or diode's part text (its value is 0)

    @property
    def missing(self) -> int:
        return max(0, self.quantity - self.on_hand)


@dataclass(frozen=True)
class PickStop:
    """One drawer visited once, with everything to take from it."""

    location: str
    items: tuple[PickItem, ...]


@dataclass(frozen=True)
class Shortage:
    line_id: int
    kind: str
    value: float
    location: str
    needed: int
    on_hand: int

    @property
    def missing(self) -> int:
        return self.needed - self.on_hand
