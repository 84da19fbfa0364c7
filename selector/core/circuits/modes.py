"""What every circuit of one mode shares: its outputs, the yield rule, the SPICE run and the
reading of its measurements (astable, monostable, RC). A circuit module subclasses one of these."""

from __future__ import annotations

import math
from typing import Mapping, Optional, Sequence

from selector.core.circuits.base import LazyModule, ModeBase, Settings, Target, check_positive

sp = LazyModule("selector.core.netlist")
records = LazyModule("selector.core.bom_records")


def chip_factor(extra):
    """The product of the drawn chip terms (initial error, supply drift) on every time, or None
    outside the Monte Carlo / for a circuit without them. Both halves of an astable move together
    (a divider or comparator offset scales both thresholds' crossing times; derived, first order)."""
    k = None
    for name in ("chip_initial", "supply_drift"):
        if extra and name in extra:
            k = extra[name] if k is None else k * extra[name]
    return k


class AstableKind(ModeBase):
    """Free-running circuits: outputs frequency, duty, t_high, t_low."""

    mode = "astable"
    outputs = ("frequency_hz", "duty", "t_high_s", "t_low_s")
    model_note = ("ngspice runs selector's own behavioural 555 (3-resistor divider, two comparators, SR "
                  "latch, discharge switch, output at the chip family's levels); figures are taken after "
                  "the first cycle.")

    def main_output(self, target: Target) -> str:
        return "frequency_hz"

    def in_spec(self, outs: Sequence, target: Target, accept: float):
        import numpy as np

        ok = np.abs(outs[0] / target.frequency - 1) <= accept
        if target.duty_given:
            ok = ok & (np.abs(outs[1] / target.duty - 1) <= accept)
        return ok

    def errors(self, predicted: Mapping[str, float], target: Target) -> dict:
        """Errors in the asker's terms: frequency (relative) and, when a duty was asked, the duty
        in points (predicted - target duty, as a fraction); signed."""
        out = {"frequency": predicted["frequency_hz"] / target.frequency - 1.0}
        if target.duty_given:
            out["duty_points"] = predicted["duty"] - target.duty
        return out

    def asked_error(self, errors: Mapping[str, float], target: Target) -> float:
        """One figure comparable with --accept: the largest of |frequency error| and |duty points|
        judged against accept x the target duty (so duty points / target duty)."""
        out = abs(errors["frequency"])
        if "duty_points" in errors:
            out = max(out, abs(errors["duty_points"]) / target.duty)
        return out

    def check_target(self, req, duty_optional: bool = False) -> None:
        """A frequency and, unless every circuit searched fixes its own duty, a duty."""
        from selector.core.errors import OutOfRange

        check_positive("--freq", req.freq_hz)
        if not (req.duty is None and duty_optional) and (req.duty is None or not (0.0 < req.duty < 1.0)):
            raise OutOfRange(f"--duty must be between 0 and 100 % (exclusive), not {req.duty!r}")

    def make_target(self, req, settings: Settings) -> Target:
        from selector.core.errors import OutOfRange

        if req.duty is None:  # a circuit whose duty the thresholds or levels fix: that duty
            duty = self.natural_duty(self.limits(settings))
            if duty is None:
                raise OutOfRange(f"the {self.name} connection cannot oscillate with these levels")
            return Target.astable(req.freq_hz, duty, duty_given=False)
        return Target.astable(req.freq_hz, req.duty)

    def target_json(self, req, target: Target) -> dict:
        return {"mode": "astable", "frequency_hz": req.freq_hz, "duty": req.duty,
                "t_high_s": target.t_high, "t_low_s": target.t_low}

    def times(self, v, limits, extra) -> tuple:
        """(t_high, t_low) arrays from role values (circuit)."""
        raise NotImplementedError

    def model(self, v, limits, extra) -> tuple:
        from selector.core import timing

        th, tl = self.times(v, limits, extra)
        k = chip_factor(extra)
        if k is not None:
            th, tl = th * k, tl * k
        f, d = timing.frequency_duty(th, tl)
        return f, d, th, tl

    # ---- SPICE: a supply, the circuit's body, then the output's edges measured
    def spice_body(self, c) -> list[str]:
        """Element lines after the supply: networks, device instance and its model (circuit)."""
        raise NotImplementedError

    def spice_header(self, c) -> str:
        return f"* {c.connection} connection, {c.chip.family} 555 model, VCC {c.chip.vcc:g} V"

    def spice_netlist(self, c, L: list[str], cycles: int, waveform: bool):
        chip = c.chip
        L.append(f"VCC vcc 0 DC {sp._num(chip.vcc)}")
        mid = sp._num((chip.voh + chip.vol) / 2.0)
        L += self.spice_body(c)
        th, tl = _times(c)
        period = th + tl
        # the first high lasts longer (C starts at 0 V); 3× the expected span leaves room for a
        # prediction that is off, so the measurement says so instead of running out of time.
        tstop = 1.5 * (2.0 * th + (cycles + 1) * period)
        L += [".save v(cap) v(out)", sp._tran(min(th, tl) / sp.STEPS_PER_SEGMENT, tstop)]
        meas: list[str] = []
        for k in range(1, cycles + 2):
            meas.append(f"m_f{k}")
            L.append(f".meas tran m_f{k} WHEN v(out)={mid} FALL={k}")
        for k in range(1, cycles + 3):
            meas.append(f"m_r{k}")
            L.append(f".meas tran m_r{k} WHEN v(out)={mid} RISE={k}")
        if waveform:
            L += sp._wave_block("v(cap) v(out)")
        L.append(".end")
        return sp.Netlist("\n".join(L) + "\n", tuple(meas), cycles)

    def spice_reduce(self, c, found: Mapping[str, float], cycles: int) -> dict[str, float]:
        falls = [sp._need(found, f"m_f{k}", f"output fall {k}") for k in range(1, cycles + 2)]
        rises = sorted(v for k, v in found.items() if k.startswith("m_r") and v > falls[0])
        if len(rises) < cycles or any(not (falls[k] < rises[k] < falls[k + 1]) for k in range(cycles)):
            raise sp.SimulationFailed(f"ngspice could not measure {cycles} whole cycles after the first: "
                                      "the output did not switch as an astable should")
        highs = [falls[k + 1] - rises[k] for k in range(cycles)]
        lows = [rises[k] - falls[k] for k in range(cycles)]
        t_high, t_low = sum(highs) / cycles, sum(lows) / cycles
        period = (falls[cycles] - falls[0]) / cycles
        return {"frequency_hz": 1.0 / period, "duty": t_high / period, "t_high_s": t_high, "t_low_s": t_low}

    def spice_waveform(self, c):
        return (("v(C)", "v(OUT)", "v(TRIG)"),
                (("1/3 VCC", c.chip.vcc / 3.0), ("2/3 VCC", 2.0 * c.chip.vcc / 3.0)))

    def spice_warnings(self, c) -> list[str]:
        if c.expected.get("frequency_hz", 0) > 100e3:
            return ["above about 100 kHz a real 555 runs slower than both figures: the model has no "
                    "propagation delay [S5]"]
        return []


def chip_limits(fam, vcc: float, astable: bool) -> dict:
    """The chip family's limits on the timing parts at ``vcc`` as ``Limits`` fields, each with
    what sets it in ``why`` (the figures and their sources live in ``core.chips``):
    - total timing R: the smaller of the oscillation ceiling VCC/(3·I_th) [S1] (capped in
      practice) and the accuracy ceiling, where the threshold current moves the charge time by at
      most ``chips.TIMING_SHARE`` (astable: charge from VCC/3 to 2VCC/3 toward VCC; monostable:
      from 0 to 2VCC/3; ``chips.sink_ceiling_ohm``);
    - astable: RB's peak power at 2VCC/3 across it (the start of the discharge; facts §7, derived),
      the DIS pin current, and the frequency: offered up to ``chips.DELAY_FREE_FRACTION`` of the
      family's maximum (propagation delay, not modelled), refused above the maximum itself."""
    from selector.core import chips
    from selector.core.notation import format_value

    osc = float(fam.max_timing_r_ohm(vcc))
    acc = fam.accuracy_max_r_ohm(2.0 * vcc / 3.0 if astable else vcc, vcc / 3.0)
    share = f"{chips.TIMING_SHARE * 100:g} %"
    why = {}
    if acc < osc:
        why["max_total_r_ohm"] = (f"threshold current {format_value(fam.threshold_current_a, 'A')} may move "
                                  f"the timing by at most {share}")
    else:
        why["max_total_r_ohm"] = fam.sources.get("max_r_cap_ohm", "")
    out = dict(max_total_r_ohm=min(osc, acc), why=why)
    if astable:
        frac = chips.DELAY_FREE_FRACTION
        out.update(max_freq_hz=frac * fam.max_astable_hz, freq_ceiling_hz=fam.max_astable_hz,
                   dis_sink_a=fam.dis_sink_a, rb_power_volts=2.0 * vcc / 3.0)
        why["max_freq_hz"] = (f"{frac * 100:g} % of the {fam.label}'s {format_value(fam.max_astable_hz, 'Hz')}: "
                              "above it the propagation delay lengthens the period and is not modelled")
        why["freq_ceiling_hz"] = fam.sources.get("max_astable_hz", "")
    return out


class Timer555:
    """Mixin for the 555 circuits: the chip family's limits, BOM parts and SPICE device."""

    has_discharge_switch = True

    def charge_r_ideal(self, target: Target, c, limits):
        """The charging resistance the target needs with capacitance ``c`` by the ideal formula
        (monostable width/(ln3·C) [S3, S5]; astable t_high/(ln2·C) [S2, S3]), for the leakage
        limit (``search.lookup._leakage_ok``)."""
        if target.mode == "monostable":
            return target.width / (math.log(3.0) * c)
        return target.t_high / (math.log(2.0) * c)

    def spice_device_name(self, c) -> str:
        return f"{c.chip.family} 555"

    def check_supply(self, settings: Settings) -> None:
        from selector.core import chips

        chips.family(settings.chip).check_vcc(settings.vcc)

    def limit_owner(self, settings: Settings) -> str:
        from selector.core import chips

        return f" with a {chips.family(settings.chip).label} at {settings.vcc:g} V"

    def base_limits(self, settings: Settings, astable: bool) -> dict:
        from selector.core import chips, parts

        fam = chips.family(settings.chip)
        fam.check_vcc(settings.vcc)
        vcc = settings.vcc
        lim = dict(vcc=vcc, r_power_derating=parts.RESISTOR_POWER_DERATING, cap_volts=vcc,
                   cap_derating=parts.voltage_derating, diode_vf=settings.diode_vf,
                   min_r_ohm=fam.min_ra_ohm, min_c_f=fam.min_timing_c_f, r_power_volts=vcc,
                   discharge_ohms=fam.datasheet_discharge_ohms)  # RD in t_low and the one-shot's start
        lim.update(chip_limits(fam, vcc, astable))
        from selector.core.circuits.base import Uncertain

        lim["chip_terms"] = tuple(Uncertain(name, 1.0, band, band, label, in_parts_only=False)
                                  for name, band, label in chips.timing_terms(
                                      fam, astable, vcc, settings.options.get("vcc_tol")))
        return lim

    def chip_error(self, settings: Settings) -> Optional[str]:
        from selector.core import chips

        fam = chips.family(settings.chip)
        return (f"chip's own timing error, {fam.astable_initial_error * 100:g} % typ astable, "
                f"{fam.monostable_initial_error * 100:g} % monostable, and supply drift in the yield")

    def chip_label(self, settings: Settings) -> str:
        from selector.core import chips

        return chips.family(settings.chip).label

    def bom_obtain(self, settings: Settings):
        from selector.core import chips
        from selector.core.circuits.base import Obtain

        fam = chips.family(settings.chip)
        return (Obtain("U1", records.ROLE_IC, "ic", f"555 timer, {fam.part_text}", want=f"555:{fam.key}"),)

    def bom_extra_caps(self, settings: Settings):
        """Control-pin capacitor and reservoir as the family's data say, decoupling always
        (100 nF close to the IC: common practice, no source)."""
        from selector.core import chips
        from selector.core.circuits.base import CERAMIC, FILM, POLARIZED, ExtraCap, is_value, within

        fam = chips.family(settings.chip)
        out = []
        if fam.control_pin_cap_f is not None:
            out.append(ExtraCap(records.ROLE_CV, fam.control_pin_cap_f, is_value(fam.control_pin_cap_f),
                                CERAMIC + FILM, POLARIZED, "CV (pin 5) to ground"))
        out.append(ExtraCap(records.ROLE_DECOUPLE, 100e-9, is_value(100e-9), CERAMIC + FILM,
                            POLARIZED, "VCC to ground, close to the IC"))
        if fam.reservoir_f is not None:
            lo, hi = fam.reservoir_f
            out.append(ExtraCap(records.ROLE_RESERVOIR, lo, within(lo, hi), POLARIZED + CERAMIC, (),
                                "VCC to ground, close to the IC; 10-100 µF", "electrolytic"))
        return tuple(out)

    def bom_notes(self, settings: Settings) -> list[str]:
        return [self.wiring, "Tie RESET to VCC when it is not used."]

    def bom_chip_notes(self, settings: Settings) -> list[str]:
        from selector.core import chips

        return list(chips.family(settings.chip).bom_notes)

    def spice_chip(self, settings: Settings, discharge_ohms: Optional[float]):
        """The behavioural 555; its discharge switch has the family's data-sheet on-resistance
        unless ``discharge_ohms`` says otherwise (the prediction uses the same RD)."""
        from selector.core import chips

        fam = chips.family(settings.chip)
        rd = fam.datasheet_discharge_ohms if discharge_ohms is None else discharge_ohms
        return sp.chip_model(fam.key, settings.vcc, fam.voh(settings.vcc), fam.vol(settings.vcc), rd)

    def spice_device(self, c, pins: str) -> list[str]:
        """The 555 instance (pins in data-sheet order after X555) and its subcircuit."""
        return [f"X555 {pins} " + sp.subckt_name(c.chip.family)] + sp.subckt_555(c.chip)


class MonostableKind(ModeBase):
    """One-shot circuits: output the pulse width."""

    mode = "monostable"
    outputs = ("width_s",)
    model_note = AstableKind.model_note

    def main_output(self, target: Target) -> str:
        return "width_s"

    def check_target(self, req, duty_optional: bool = False) -> None:
        check_positive("--width", req.width_s)

    def make_target(self, req, settings: Settings) -> Target:
        return Target("monostable", width=req.width_s)

    def target_json(self, req, target: Target) -> dict:
        return {"mode": "monostable", "width_s": req.width_s}

    def in_spec(self, outs, target: Target, accept: float):
        import numpy as np

        return np.abs(outs[0] / target.width - 1) <= accept

    def errors(self, predicted: Mapping[str, float], target: Target) -> dict:
        """The width error (relative, signed)."""
        return {"width": predicted["width_s"] / target.width - 1.0}

    def spice_reduce(self, c, found, cycles):
        r1 = sp._need(found, "m_r1", "the output rising at the trigger")
        f1 = sp._need(found, "m_f1", "the output falling at the end of the pulse")
        return {"width_s": f1 - r1}

    def spice_header(self, c) -> str:
        return f"* {c.connection} connection, {c.chip.family} 555 model, VCC {c.chip.vcc:g} V"

    def spice_waveform(self, c):
        return AstableKind.spice_waveform(self, c)

    def spice_warnings(self, c) -> list[str]:
        return []


class RCKind(ModeBase):
    """A plain R and C: outputs τ and the corner frequency."""

    mode = "rc"
    outputs = ("tau_s", "corner_hz")
    model_note = AstableKind.model_note

    def main_output(self, target: Target) -> str:
        return "tau_s" if math.isnan(target.corner_hz) else "corner_hz"

    def check_target(self, req, duty_optional: bool = False) -> None:
        from selector.core.errors import OutOfRange

        if (req.tau_s is None) == (req.corner_hz is None):
            raise OutOfRange("give exactly one of --tau or --corner")
        check_positive("--tau" if req.tau_s is not None else "--corner",
                       req.tau_s if req.tau_s is not None else req.corner_hz)

    def make_target(self, req, settings: Settings) -> Target:
        if req.tau_s is not None:
            return Target("rc", tau=req.tau_s)
        return Target("rc", tau=1.0 / (2.0 * math.pi * req.corner_hz), corner_hz=req.corner_hz)

    def target_json(self, req, target: Target) -> dict:
        if req.corner_hz is not None:
            return {"mode": "rc", "corner_hz": req.corner_hz, "tau_s": target.tau}
        return {"mode": "rc", "tau_s": req.tau_s}

    def in_spec(self, outs, target: Target, accept: float):
        import numpy as np

        if not math.isnan(target.corner_hz):
            return np.abs(outs[1] / target.corner_hz - 1) <= accept
        return np.abs(outs[0] / target.tau - 1) <= accept

    def errors(self, predicted: Mapping[str, float], target: Target) -> dict:
        """The corner error when a corner was asked, else the time-constant error (relative, signed)."""
        if not math.isnan(target.corner_hz):
            return {"corner": predicted["corner_hz"] / target.corner_hz - 1.0}
        return {"tau": predicted["tau_s"] / target.tau - 1.0}

    def spice_header(self, c) -> str:
        return f"* RC low-pass, step of {c.chip.vcc:g} V"

    def spice_waveform(self, c):
        return ("input step", "v(C)"), (("63.2 %", sp.RC_FRACTION * c.chip.vcc),)

    def spice_warnings(self, c) -> list[str]:
        return []


def _times(c) -> tuple[float, float]:
    e = c.expected
    th, tl = e.get("t_high_s"), e.get("t_low_s")
    if th and tl and math.isfinite(th) and math.isfinite(tl):
        return float(th), float(tl)
    f, d = e.get("frequency_hz"), e.get("duty")
    if f and d and 0 < d < 1:
        return d / f, (1 - d) / f
    raise sp.SimulationFailed("the option has no predicted t_high/t_low or frequency/duty to size the run")


class FixedRatioAstable(AstableKind):
    """One-resistor astables whose halves are fixed multiples of R·C: t_high = k_high·R·C,
    t_low = k_low·R·C (the factors come from levels, not parts), so the duty is fixed too."""

    kernel = "one-resistor"
    roles = ("R", "C")
    duty_fixed = True

    def factors(self, limits) -> tuple[float, float]:
        """(k_high, k_low) as floats; inf where the circuit cannot run (circuit)."""
        raise NotImplementedError

    def natural_duty(self, limits) -> Optional[float]:
        kh, kl = self.factors(limits)
        if not (math.isfinite(kh) and math.isfinite(kl)):
            return None
        return kh / (kh + kl)

    def best_error(self, target: Target, limits) -> float:
        """The smallest error a perfect R reaches: the duty mismatch alone costs this much."""
        kh, kl = self.factors(limits)
        if not (math.isfinite(kh) and math.isfinite(kl)):
            return math.inf
        a, b = kh * target.t_low, kl * target.t_high
        return abs(a - b) / (a + b)

    def times(self, v, limits, extra) -> tuple:
        kh, kl = self.factors_of(limits, extra)
        rc = v["R"] * v["C"]
        return kh * rc, kl * rc

    def factors_of(self, limits, extra) -> tuple:
        """Factors for drawn uncertain inputs (default: the fixed ones)."""
        return self.factors(limits)

    # ---- one-resistor kernel: the error is V-shaped in R, smallest at R* = 2/(a_high + a_low)
    def r_ideal(self, target: Target, c, limits):
        kh, kl = self.factors(limits)
        a_h = kh * c / target.t_high
        a_l = kl * c / target.t_low
        return 2.0 / (a_h + a_l)

    def error1(self, r, c, target: Target, limits):
        import numpy as np

        from selector.core.circuits.base import signed_max

        kh, kl = self.factors(limits)
        rc = np.asarray(r, dtype=float) * np.asarray(c, dtype=float)
        th, tl = kh * rc, kl * rc
        nan = np.full(np.shape(r), np.nan)
        return signed_max(th / target.t_high - 1, tl / target.t_low - 1), th, tl, nan

    def r_bounds1(self, c, limits):
        import numpy as np

        lo = np.full(np.shape(c), limits.min_r_ohm, dtype=float)
        if math.isfinite(limits.max_freq_hz):
            kh, kl = self.factors(limits)
            lo = np.maximum(lo, (1.0 / limits.max_freq_hz) / ((kh + kl) * c))
        hi = np.full(np.shape(c), limits.max_total_r_ohm, dtype=float)
        return lo, hi


def plain_r_bounds(c, limits):
    """R between the minimum and the maximum total timing resistance (monostable, RC)."""
    import numpy as np

    lo = np.full(np.shape(c), limits.min_r_ohm, dtype=float)
    hi = np.full(np.shape(c), limits.max_total_r_ohm, dtype=float)
    return lo, hi
