"""Schmitt-trigger inverter RC oscillator: one resistor R from the output of a Schmitt-trigger
inverter back to its input, the timing capacitor C from the input to ground.

Derivation (the RC law, ``timing.crossing_time``; facts.md §0): the output swings between the
rails (0 and VDD at light load, CMOS output). While it is HIGH, C charges through R toward VDD
from the lower threshold VT− up to the upper one VT+; while it is LOW, C discharges toward 0 V
from VT+ down to VT−:

    t_high = R·C·ln((VDD − VT−)/(VDD − VT+)),      t_low = R·C·ln(VT+/VT−).

With thresholds as fractions of VDD both factors depend on the fractions only, so the duty is
fixed by the thresholds, not by R or C: a duty target is optional and, when given, reported
against. The thresholds' part-to-part spread (data-sheet min/max, far wider than a 1 % resistor)
enters the worst case and the yield as two more uncertain inputs: VT− and the hysteresis
ΔVT = VT+ − VT− (every time above is monotonic in each of them, so corners stay exact; drawing
ΔVT rather than VT+ keeps VT+ above VT−, as the data sheets guarantee a minimum hysteresis).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

from selector.core.circuits.base import (
    CERAMIC, FILM, POLARIZED, CliOption, ExtraCap, LazyModule, Limits, Obtain, Settings, Uncertain, is_value,
)
from selector.core.circuits.modes import FixedRatioAstable

sp = LazyModule("selector.core.netlist")
records = LazyModule("selector.core.bom_records")


@dataclass(frozen=True)
class LogicFamily:
    """Typical Schmitt thresholds of one logic family as fractions of VDD, with their data-sheet
    min/max band, and the figures that set the limits. Every number: see ``source``."""

    key: str
    label: str
    part: str
    vdd_min: float
    vdd_max: float
    vt_minus: tuple[float, float, float]      # (min, typ, max) as fractions of VDD
    hysteresis: tuple[float, float, float]    # ΔVT = VT+ − VT− (min, typ, max), fractions of VDD
    input_current_a: float                    # input leakage, max at 25 °C
    output_ohms: float                        # output resistance at light load (from VOH at IOH)
    delay_s: float                            # propagation delay, typ
    source: str


#: Our table of Schmitt-trigger inverter families. The fractions are the data sheets' volt figures
#: divided by the supply they are given at.
LOGIC_FAMILIES: dict[str, LogicFamily] = {f.key: f for f in (
    LogicFamily(
        key="hc", label="74HC-type Schmitt inverter", part="hex Schmitt-trigger inverter, 74HC14 type",
        vdd_min=2.0, vdd_max=6.0,
        # at VCC 4.5 V: VT− 0.9 / 1.6 / 2.45 V, ΔVT 0.4 / 0.9 / 1.4 V
        vt_minus=(0.200, 0.356, 0.544), hysteresis=(0.089, 0.200, 0.311),
        input_current_a=0.1e-6,      # ±0.1 µA at 25 °C, 6 V
        output_ohms=80.0,            # VOH ≥ 4.18 V at −4 mA, 4.5 V → ≤ 80 Ω
        delay_s=13e-9,               # about 13 ns typ at 4.5 V
        source="74HC14 data sheets (TI SN74HC14, NXP 74HC14), from memory, not confirmed",
    ),
    LogicFamily(
        key="4000", label="4000-series Schmitt inverter", part="hex Schmitt-trigger inverter, 40106 type",
        vdd_min=3.0, vdd_max=18.0,
        # at VDD 5 V: VT− 0.9 / 1.9 / 2.8 V, ΔVT 0.3 / 1.0 / 1.6 V
        vt_minus=(0.18, 0.38, 0.56), hysteresis=(0.06, 0.20, 0.32),
        input_current_a=0.1e-6,      # ±0.1 µA at 25 °C, 18 V
        output_ohms=780.0,           # VOH 4.6 V at −0.51 mA, 5 V → about 780 Ω
        delay_s=140e-9,              # about 140 ns typ at 5 V
        source="CD40106B / MC14584B data sheets, from memory, not confirmed",
    ),
)}

R_OVER_OUTPUT = 100.0
"""Common practice: R at least 100× the output's own resistance, so it adds under 1 %."""
CHARGE_OVER_LEAKAGE = 10.0
"""Common practice (as for the 555, facts §6): charging current at a threshold ≥ 10× input leakage."""
PERIOD_OVER_DELAY = 200.0
"""Common practice: the two switching delays stay under 1 % of the period."""
MIN_TIMING_C_F = 100e-12
"""Common practice (as [S25] for the 555): C ≥ 100 pF, well above input and stray capacitance."""
MAX_R_OHM = 20e6
"""Common practice (as for the CMOS 555, facts §6): board and capacitor leakage limit R."""


def logic_family(key: str) -> LogicFamily:
    from selector.core.errors import OutOfRange

    try:
        return LOGIC_FAMILIES[str(key).strip().lower()]
    except KeyError:
        raise OutOfRange(f"--logic must be one of {', '.join(LOGIC_FAMILIES)}, not {key!r}") from None


def thresholds(settings: Settings) -> tuple[LogicFamily, float, float, bool]:
    """(family, VT− fraction, ΔVT fraction, overridden) for the request's supply and options."""
    fam = logic_family(settings.options.get("logic") or "hc")
    vtp, vtm = settings.options.get("vt_plus"), settings.options.get("vt_minus")
    if vtp is None and vtm is None:
        return fam, fam.vt_minus[1], fam.hysteresis[1], False
    vdd = settings.vcc
    lo = vtm / vdd if vtm is not None else fam.vt_minus[1]
    hi = vtp / vdd if vtp is not None else fam.vt_minus[1] + fam.hysteresis[1]
    return fam, lo, hi - lo, True


def factors_of(vt_minus, hysteresis) -> tuple:
    """(k_high, k_low) with t = k·R·C, for thresholds as fractions of VDD (arrays broadcast)."""
    from selector.core import timing

    vtp = vt_minus + hysteresis
    k_high = timing.crossing_time(1.0, 1.0, 1.0, vt_minus, vtp)
    k_low = timing.crossing_time(1.0, 1.0, 0.0, vtp, vt_minus)
    return k_high, k_low


class SchmittInverter(FixedRatioAstable):
    key = "schmitt-inverter"
    name = "Schmitt inverter"
    in_auto = False     # it needs a logic IC, not a 555: searched only when named
    formula = ("Schmitt inverter: t_high = R·C·ln((VDD − VT−)/(VDD − VT+)), "
               "t_low = R·C·ln(VT+/VT−) (RC law between the thresholds)")
    wiring = ("Connections: R from the inverter's output to its input; timing capacitor from the input "
              "to GND; take the signal from the output.")
    help = "schmitt-inverter (a Schmitt-trigger inverter IC, --logic)"
    options = (
        CliOption("logic", "Schmitt inverter family for --connection schmitt-inverter.",
                  choices=tuple(LOGIC_FAMILIES)),
        CliOption("vt-plus", "Upper input threshold VT+ of your inverter, e.g. 2.9V (replaces the "
                  "family's typical one; taken as exact).", metavar="V", unit="V"),
        CliOption("vt-minus", "Lower input threshold VT- of your inverter, e.g. 1.9V (replaces the "
                  "family's typical one; taken as exact).", metavar="V", unit="V"),
    )
    model_note = ("ngspice runs selector's own behavioural Schmitt inverter (two comparators at VT+ "
                  "and VT-, an SR latch, a rail-to-rail output); figures are taken after the first cycle.")

    # ---- target, options and limits
    def check_options(self, settings: Settings) -> None:
        from selector.core.errors import OutOfRange

        fam, lo, hyst, _ = thresholds(settings)
        if not (fam.vdd_min <= settings.vcc <= fam.vdd_max):
            raise OutOfRange(f"VCC {settings.vcc:g} V is outside the {fam.label} range "
                             f"{fam.vdd_min:g}–{fam.vdd_max:g} V")
        if not (0.0 < lo and hyst > 0.0 and lo + hyst < 1.0):
            raise OutOfRange(f"the thresholds must satisfy 0 < VT- < VT+ < VCC; got VT- "
                             f"{lo * settings.vcc:g} V, VT+ {(lo + hyst) * settings.vcc:g} V at "
                             f"VCC {settings.vcc:g} V")

    def limits(self, settings: Settings) -> Limits:
        from selector.core import parts

        self.check_options(settings)
        fam, lo, hyst, overridden = thresholds(settings)
        vdd = settings.vcc
        hi = lo + hyst
        r_max = min(lo, 1.0 - hi) * vdd / (CHARGE_OVER_LEAKAGE * fam.input_current_a)
        extra = {"logic": fam.key, "vt_minus": lo, "hysteresis": hyst, "overridden": overridden}
        return Limits(vcc=vdd, min_r_ohm=R_OVER_OUTPUT * fam.output_ohms,
                      max_total_r_ohm=min(r_max, MAX_R_OHM), min_c_f=MIN_TIMING_C_F,
                      max_freq_hz=1.0 / (PERIOD_OVER_DELAY * fam.delay_s),
                      r_power_volts=max(1.0 - lo, hi) * vdd,
                      r_power_derating=parts.RESISTOR_POWER_DERATING, cap_volts=vdd,
                      cap_derating=parts.voltage_derating, diode_vf=settings.diode_vf,
                      voh=vdd, vol=0.0, extra=extra)

    def factors(self, limits: Limits) -> tuple[float, float]:
        kh, kl = factors_of(limits.extra["vt_minus"], limits.extra["hysteresis"])
        return float(kh), float(kl)

    def factors_of(self, limits: Limits, extra) -> tuple:
        return factors_of(extra.get("vt_minus", limits.extra["vt_minus"]),
                          extra.get("hysteresis", limits.extra["hysteresis"]))

    def uncertain(self, limits: Limits) -> tuple[Uncertain, ...]:
        if limits.extra.get("overridden"):
            return ()
        fam = LOGIC_FAMILIES[limits.extra["logic"]]
        out = []
        for name, label, (lo, typ, hi) in (("vt_minus", "VT-", fam.vt_minus),
                                           ("hysteresis", "the hysteresis", fam.hysteresis)):
            out.append(Uncertain(name, typ, (typ - lo) / typ, (hi - typ) / typ, label))
        return tuple(out)

    def chip_label(self, settings: Settings) -> str:
        return logic_family(settings.options.get("logic") or "hc").label

    def chip_error(self, settings: Settings) -> Optional[str]:
        fam, lo, hyst, overridden = thresholds(settings)
        if overridden:
            return f"thresholds VT- {lo * settings.vcc:.3g} V, VT+ {(lo + hyst) * settings.vcc:.3g} V as given, no spread"
        return (f"thresholds typ VT- {lo:.2f}·VDD, VT+ {lo + hyst:.2f}·VDD; their data-sheet spread is in "
                f"the worst case and the yield ({fam.source})")

    # ---- BOM: the inverter IC, its decoupling, the unused inputs
    def bom_obtain(self, settings: Settings):
        fam = logic_family(settings.options.get("logic") or "hc")
        return (Obtain("U1", "inverter IC", "ic", fam.part, "one of its six inverters", f"schmitt:{fam.key}"),)

    def bom_extra_caps(self, settings: Settings):
        return (ExtraCap(records.ROLE_DECOUPLE, 100e-9, is_value(100e-9), CERAMIC + FILM, POLARIZED,
                         "VDD to ground, close to the IC"),)

    def bom_notes(self, settings: Settings) -> list[str]:
        return [self.wiring, "Tie the inputs of the unused inverters to GND or VDD: a floating CMOS "
                "input draws current and can oscillate."]

    # ---- SPICE: our own behavioural Schmitt inverter
    def spice_chip(self, settings: Settings, discharge_ohms: Optional[float]):
        fam = logic_family(settings.options.get("logic") or "hc")
        return sp.ChipModel(fam.key, float(settings.vcc), float(settings.vcc), 0.0, math.nan,
                            sp.DISCHARGE_OHMS if discharge_ohms is None else float(discharge_ohms))

    def spice_header(self, c) -> str:
        return f"* {c.connection} connection, behavioural Schmitt inverter, VDD {c.chip.vcc:g} V"

    def spice_body(self, c) -> list[str]:
        vdd = c.chip.vcc
        vtm = c.extra["vt_minus"] * vdd
        vtp = (c.extra["vt_minus"] + c.extra["hysteresis"]) * vdd
        n = sp._num
        L = sp.network_lines(sp._net(c, "R"), "out", "cap")
        L += sp.network_lines(sp._net(c, "C"), "cap", "0", ic=0.0)
        dr, dc = n(sp.LATCH_DELAY_R), n(sp.LATCH_DELAY_C)
        return L + [
            "XINV cap out vcc SELSCHMITT",
            f"* Behavioural Schmitt-trigger inverter (selector's own model): VT+ {vtp:.4g} V, VT- {vtm:.4g} V.",
            ".subckt SELSCHMITT in out vdd",
            f"Bup up 0 V = v(in) > {n(vtp)} ? 1 : 0",
            f"Bdn dn 0 V = v(in) < {n(vtm)} ? 1 : 0",
            "* SR latch (set by the upper threshold, reset by the lower), 1 ns per gate",
            "Bnor1 q0 0 V = (v(dn) > 0.5 || v(qb) > 0.5) ? 0 : 1",
            f"Rdly1 q0 q {dr}",
            f"Cdly1 q 0 {dc} IC=0",
            "Bnor2 qb0 0 V = (v(up) > 0.5 || v(q) > 0.5) ? 0 : 1",
            f"Rdly2 qb0 qb {dr}",
            f"Cdly2 qb 0 {dc} IC=1",
            "* rail-to-rail output, inverted: LOW while the latch is set",
            "Bout out 0 V = v(q) > 0.5 ? 0 : v(vdd)",
            ".ends SELSCHMITT",
        ]

    def spice_waveform(self, c):
        vdd = c.chip.vcc
        lo = c.extra["vt_minus"] * vdd
        return (("v(C)", "v(OUT)"), (("VT-", lo), ("VT+", lo + c.extra["hysteresis"] * vdd)))

    def spice_warnings(self, c) -> list[str]:
        return []

    def spice_device_name(self, c) -> str:
        return LOGIC_FAMILIES[c.chip.family].label


CIRCUIT = SchmittInverter()
