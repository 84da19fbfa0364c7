"""The protocol every circuit kind follows, and the records it works with (pure core).

A circuit kind is one module in this package that defines one subclass of a mode base
(:class:`AstableKind`, :class:`MonostableKind`, :class:`RCKind`) and fills in every attribute
and method marked "circuit" below. ``tests/core/circuits/test_registry.py`` walks the registry and
fails when one is missing. The search, ranking, render, BOM, SPICE and simulate code only ever
call these, never compare circuit names.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Callable, Mapping, Optional, Sequence

from selector.core.parts import DIODE_VF_DEFAULT

INF = float("inf")

ONE_RESISTOR = "one-resistor"
"""Kernel for circuits with one timing resistor R and a capacitor C (``search.kernels``)."""
TWO_RESISTOR = "two-resistor"
"""Kernel for circuits with RA, RB and C: t_high increasing in RA and non-decreasing in RB, t_low
the discharge law (increasing in RB, non-increasing in RA; ``search.kernels``)."""
KERNELS = (ONE_RESISTOR, TWO_RESISTOR)

# Dielectric groups the BOM prefers or avoids for extra capacitors (names as in core.parts).
CERAMIC = ("C0G", "X7R", "X5R", "Y5V", "Z5U")
FILM = ("film-PP", "film-PET", "film")
POLARIZED = ("electrolytic", "tantalum")


class LazyModule:
    """A module imported on its first attribute use. The SPICE netlist pieces and the BOM records
    are needed by ``netlist``/``simulate``/``bom``, never by a search, so the circuit modules reach
    them through this and a ``find`` does not pay for importing them (start-up, issue 12)."""

    def __init__(self, name: str):
        self._name = name

    def __getattr__(self, attr: str):
        import importlib

        return getattr(importlib.import_module(self._name), attr)


def is_value(value: float) -> Callable[[float], bool]:
    """A stock value equal to ``value`` (within float noise)."""
    return lambda v: math.isclose(v, value, rel_tol=1e-6)


def within(lo: float, hi: float) -> Callable[[float], bool]:
    """A stock value inside [lo, hi] (within float noise)."""
    return lambda v: lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)


@dataclass(frozen=True)
class Target:
    """What the user asked for, in SI units. Astable: t_high, t_low (from frequency and duty;
    ``duty_given`` False when the circuit's own duty stood in for a duty the user left out).
    Monostable: width. RC: tau (also when a corner was asked; ``corner_hz`` then set)."""

    mode: str  # "astable" | "monostable" | "rc"
    t_high: float = math.nan
    t_low: float = math.nan
    width: float = math.nan
    tau: float = math.nan
    corner_hz: float = math.nan
    duty_given: bool = True

    @staticmethod
    def astable(freq_hz: float, duty: float, duty_given: bool = True) -> "Target":
        period = 1.0 / freq_hz
        return Target("astable", t_high=duty * period, t_low=(1.0 - duty) * period,
                      duty_given=duty_given)

    @property
    def frequency(self) -> float:
        return 1.0 / (self.t_high + self.t_low)

    @property
    def duty(self) -> float:
        return self.t_high / (self.t_high + self.t_low)


@dataclass(frozen=True)
class Limits:
    """The numeric limits one search applies (resolved by the circuit's ``limits``; inf / 0 mean
    "no limit"). ``extra`` holds a circuit's own figures (e.g. a Schmitt inverter's thresholds)."""

    vcc: float
    min_r_ohm: float = 0.0  # RA (astable), R (monostable, output-fed)
    max_total_r_ohm: float = INF  # RA + RB, or R
    max_ra_ohm: float = INF  # RA alone (diode-steered: RA alone carries the threshold current)
    dis_sink_a: float = INF  # astable: peak DIS current (2VCC/3)/RB + VCC/RA at most this
    discharge_ohms: float = 0.0  # 555 discharge switch on-resistance RD (t_low; monostable start level)
    min_c_f: float = 0.0
    max_freq_hz: float = INF
    freq_ceiling_hz: float = INF  # the family's own maximum (max_freq_hz is offered, this refused)
    r_power_volts: float = 0.0  # volts across RA / R when it dissipates most (0: no power check)
    r_power_derating: float = 0.5  # allowed fraction of the rated power
    rb_power_volts: float = 0.0  # volts across RB at its peak, 2VCC/3 at the start of the discharge
    cap_volts: float = 0.0  # working voltage across the timing capacitor (0: no rating check)
    cap_derating: Callable[[str], float] = field(default=lambda dielectric: 1.0)
    diode_vf: float = DIODE_VF_DEFAULT
    voh: float = math.nan  # output levels for the output-fed connection
    vol: float = math.nan
    chip_terms: tuple = ()  # the chip's own timing error and supply drift (``Uncertain``; 555 circuits)
    extra: Mapping[str, Any] = field(default_factory=dict, compare=False, hash=False)
    why: Mapping[str, str] = field(default_factory=dict, compare=False, hash=False)
    """What sets a limit, by field name (e.g. ``max_total_r_ohm``: "threshold current"), so the
    "nothing feasible" message names the limit that excluded what."""

    def reason(self, name: str) -> str:
        """`` (what sets it)`` for the limit ``name``, or "" when nothing is recorded."""
        text = self.why.get(name, "")
        return f" ({text})" if text else ""


@dataclass(frozen=True)
class Settings:
    """What a circuit needs from the request to resolve its limits: chip family key, supply,
    steering-diode drop and the circuit's own options (``options``, e.g. a logic family)."""

    chip: str = "bipolar"
    vcc: float = 9.0
    diode_vf: Optional[float] = DIODE_VF_DEFAULT
    options: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Uncertain:
    """A model input besides the parts that has its own spread (e.g. a threshold level): nominal
    value and fractional band, drawn like a part in the worst case and the yield."""

    name: str
    nominal: float
    tol_minus: float
    tol_plus: float
    label: str = ""      # how the footer names it, e.g. "VT-"
    in_parts_only: bool = True   # also drawn for ``yield_parts_only`` (False: chip, supply, diode Vf)


@dataclass(frozen=True)
class Obtain:
    """A part the BOM needs besides the networks (an IC, a diode): taken from a stock line that
    matches ``want`` when there is one, else listed to obtain."""

    ref: str
    role: str
    kind: str  # "ic" | "diode"
    description: str
    note: str = ""
    want: str = ""  # what a stock line must be to supply it (selector/core/stock_match.py); "" never

@dataclass(frozen=True)
class ExtraCap:
    """A capacitor the BOM takes from stock when a line fits (decoupling, control pin, ...)."""

    role: str
    nominal: float
    fits: Callable[[float], bool]
    prefer: Sequence[str]
    exclude: Sequence[str]
    where: str
    dielectric_for_rating: str = "X7R"


@dataclass(frozen=True)
class CliOption:
    """An option a circuit adds to its ``find`` command: ``--name`` with a metavar and help;
    ``choices`` for a fixed list; ``unit`` for a value parsed by notation (e.g. "V")."""

    name: str
    help: str
    metavar: str = "X"
    choices: tuple[str, ...] = ()
    unit: str = ""

    @property
    def field(self) -> str:
        return self.name.replace("-", "_")


class CircuitKind:
    """Everything about one circuit kind. Class attributes marked "circuit" must be set by the
    circuit module; mode bases provide the rest."""

    # ---- identity (circuit)
    key: str = ""                    # the connection key in JSON and --connection
    name: str = ""                   # human name in tables
    mode: str = ""                   # "astable" | "monostable" | "rc" (mode base)
    roles: tuple[str, ...] = ()      # e.g. ("RA", "RB", "C")
    kernel: str = ""                 # ONE_RESISTOR | TWO_RESISTOR
    in_auto: bool = False            # searched by --connection auto
    formula: str = ""                # one line for the footer
    wiring: str = ""                 # "Connections: ..." for the BOM
    charging_roles: tuple[str, ...] = ("R",)  # resistors that charge C (leakage check)
    duty_corners: bool = False       # SPICE corners also push the duty both ways
    options: tuple[CliOption, ...] = ()
    duty_fixed: bool = False         # the duty is set by levels, not parts: --duty optional
    uses_diode: bool = False         # a steering diode with the --diode-vf drop
    has_discharge_switch: bool = False  # the SPICE device has a 555 discharge switch
    cautions: tuple[str, ...] = ()   # keys of chips.CAUTIONS shown with this circuit's options

    # ---- modes: outputs and targets (mode base)
    outputs: tuple[str, ...] = ()

    @property
    def resistor_roles(self) -> tuple[str, ...]:
        return tuple(r for r in self.roles if r != "C")

    # ---- target and choice
    def check_target(self, req, duty_optional: bool = False) -> None:
        """Raise OutOfRange (naming the option) for a bad target in a request (mode base)."""
        raise NotImplementedError

    def make_target(self, req, settings: Settings) -> Target:
        """The request's target in SI units (mode base)."""
        raise NotImplementedError

    def target_json(self, req, target: Target) -> dict:
        """The target exactly as ``--json`` prints it (mode base)."""
        raise NotImplementedError

    def check_supply(self, settings: Settings) -> None:
        """Raise OutOfRange for a supply or option the device does not take (default: the
        circuit's own options)."""
        self.check_options(settings)

    def check_options(self, settings: Settings) -> None:
        """Raise OutOfRange for a bad circuit option (default: none to check)."""

    def check_available(self, target: Target, settings: Settings) -> None:
        """Raise NothingFeasible when this circuit cannot reach ``target`` at all (default: it can)."""

    def why_unreachable(self, target: Target, settings: Settings, accept: float) -> Optional[str]:
        """Why no parts at all could bring this circuit within ``accept`` of ``target`` (one line
        naming the limit), or None when it can (default: ``check_available`` and the frequency
        limit: a target whose frequency is above ``max_freq_hz`` by more than the acceptance)."""
        from selector.core.errors import NothingFeasible, OutOfRange
        from selector.core.notation import format_value

        try:
            self.check_available(target, settings)
            lim = self.limits(settings)
        except (NothingFeasible, OutOfRange) as e:
            return str(e)
        if target.mode == "astable" and target.frequency * (1.0 - accept) > lim.max_freq_hz:
            # above the family's own maximum that maximum is to blame, else the offered share of it
            top = "freq_ceiling_hz" if target.frequency * (1.0 - accept) > lim.freq_ceiling_hz else "max_freq_hz"
            return (f"{format_value(target.frequency, 'Hz')} is above the {format_value(getattr(lim, top), 'Hz')} "
                    f"limit of the {self.name} connection{self.limit_owner(settings)}{lim.reason(top)}")
        return None

    def limit_owner(self, settings: Settings) -> str:
        """Words naming whose limit it is, after the connection's name (default: none)."""
        return ""

    def auto_ok(self, target: Target, settings: Settings, accept: float) -> bool:
        """Whether ``--connection auto`` searches this circuit for ``target``."""
        return self.in_auto

    def natural_duty(self, limits: Limits) -> Optional[float]:
        """The duty the circuit runs at whatever its parts (None: set by the parts)."""
        return None

    # ---- limits and model (circuit)
    def limits(self, settings: Settings) -> Limits:
        raise NotImplementedError

    def model(self, v: Mapping[str, Any], limits: Limits, extra: Mapping[str, Any]) -> tuple:
        """Role values (arrays) → the ``outputs`` (arrays), vectorised. ``extra`` holds the
        values drawn for :meth:`uncertain` inputs (their nominal outside the Monte Carlo)."""
        raise NotImplementedError

    def uncertain(self, limits: Limits) -> tuple[Uncertain, ...]:
        """Inputs with their own spread (default: the chip's terms in ``limits.chip_terms``, empty
        for a circuit without a 555)."""
        return tuple(limits.chip_terms)

    def chip_error(self, settings: Settings) -> Optional[str]:
        """The footer's "Chip:" line (None: no chip, ratings only)."""
        return None

    # ---- BOM (circuit)
    def bom_obtain(self, settings: Settings) -> tuple[Obtain, ...]:
        return ()

    def bom_extra_caps(self, settings: Settings) -> tuple[ExtraCap, ...]:
        return ()

    def bom_notes(self, settings: Settings) -> list[str]:
        """How the networks are wired (first notes of the BOM)."""
        return [self.wiring] if self.wiring else []

    def bom_chip_notes(self, settings: Settings) -> list[str]:
        """Notes about the device that follow the parts' notes (default: none)."""
        return []

    # ---- SPICE (circuit)
    def spice_netlist(self, c, header: list[str], cycles: int, waveform: bool):
        raise NotImplementedError

    def spice_reduce(self, c, found: Mapping[str, float], cycles: int) -> dict[str, float]:
        raise NotImplementedError

    def spice_header(self, c) -> str:
        raise NotImplementedError

    def spice_waveform(self, c) -> tuple[tuple[str, ...], tuple[tuple[str, float], ...]]:
        """Names of the written waveform columns and the guide levels to draw."""
        raise NotImplementedError

    model_note: str = ""             # the simulate footer's model line

    def spice_device_name(self, c) -> str:
        """The simulated device for titles, e.g. "bipolar 555" ("" for no device)."""
        return ""


class ModeBase(CircuitKind):
    """Shared by every circuit of one mode: which output is the main one, the yield rule."""

    def main_output(self, target: Target) -> str:
        raise NotImplementedError

    def in_spec(self, outs: Sequence, target: Target, accept: float):
        raise NotImplementedError

    def errors(self, predicted: Mapping[str, float], target: Target) -> dict:
        """The nominal errors in the asker's terms (signed fractions), keyed as in the JSON."""
        raise NotImplementedError

    def asked_error(self, errors: Mapping[str, float], target: Target) -> float:
        """One figure comparable with --accept (default: the largest |error|)."""
        return max(abs(v) for v in errors.values())


def check_positive(name: str, v) -> None:
    """Raise OutOfRange naming the option unless ``v`` is a positive finite number."""
    from selector.core.errors import OutOfRange

    if v is None or not (v > 0) or not math.isfinite(v):
        raise OutOfRange(f"{name} must be a positive finite value, not {v!r}")


def signed_max(e1, e2):
    """The larger of two signed errors by magnitude, sign kept (the astable error)."""
    import numpy as np

    return np.where(np.abs(e1) >= np.abs(e2), e1, e2)


def nan_to(x, nan: float):
    """``numpy.nan_to_num(x, nan=nan)`` for float input, in four array operations instead of
    its dozen (the search calls it on every pass): nan becomes ``nan``, +inf and -inf the largest
    finite float of either sign, everything else is kept (-0.0 included). ``maximum`` and
    ``minimum`` pass nan through, and ``x != x`` finds it."""
    import numpy as np

    big = _FLOAT_MAX
    return np.where(x != x, nan, np.minimum(np.maximum(x, -big), big))


_FLOAT_MAX = 1.7976931348623157e308  # numpy.finfo(float).max, the bound nan_to_num uses
