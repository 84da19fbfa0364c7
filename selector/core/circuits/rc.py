"""A plain RC: one R and one C for a time constant τ = R·C or a corner 1/(2π·R·C). No chip: only
the parts' ratings apply, with the full VCC across R and C (a step input)."""

from __future__ import annotations

import math
from typing import Optional

from selector.core.circuits.base import LazyModule, ONE_RESISTOR, Limits, Settings, Target
from selector.core.circuits.modes import RCKind, plain_r_bounds

sp = LazyModule("selector.core.netlist")


class RC(RCKind):
    key = "rc"
    name = "RC"
    roles = ("R", "C")
    kernel = ONE_RESISTOR
    formula = "RC: τ = R·C, corner = 1/(2π·R·C)"
    wiring = ""

    def limits(self, settings: Settings) -> Limits:
        from selector.core import parts

        vcc = settings.vcc
        return Limits(r_power_volts=vcc, vcc=vcc, r_power_derating=parts.RESISTOR_POWER_DERATING,
                      cap_volts=vcc, cap_derating=parts.voltage_derating, diode_vf=settings.diode_vf)

    def model(self, v, limits: Limits, extra) -> tuple:
        from selector.core import timing

        return timing.rc_tau(v["R"], v["C"]), timing.rc_corner(v["R"], v["C"])

    def bom_notes(self, settings: Settings) -> list[str]:
        return []

    # ---- one-resistor kernel
    def r_ideal(self, target: Target, c, limits: Limits):
        from selector.core import timing

        if not math.isnan(target.corner_hz):
            return timing.rc_corner(1.0, c) / target.corner_hz
        return target.tau / timing.rc_tau(1.0, c)

    def error1(self, r, c, target: Target, limits: Limits):
        import numpy as np

        from selector.core import timing

        nan = np.full(np.shape(r), np.nan)
        tau = timing.rc_tau(r, c)
        if not math.isnan(target.corner_hz):
            return timing.rc_corner(r, c) / target.corner_hz - 1, nan, nan, tau
        return tau / target.tau - 1, nan, nan, tau

    def r_bounds1(self, c, limits: Limits):
        return plain_r_bounds(c, limits)

    # ---- SPICE: a step for τ and an AC sweep for the corner
    def spice_chip(self, settings: Settings, discharge_ohms: Optional[float]):
        from selector.core import chips

        fam = chips.family(settings.chip)
        return sp.chip_model(fam.key, settings.vcc, fam.voh(settings.vcc), fam.vol(settings.vcc),
                             discharge_ohms)

    def spice_netlist(self, c, L: list[str], cycles: int, waveform: bool):
        tau = float(c.expected.get("tau_s") or 0)
        if not (tau > 0 and math.isfinite(tau)):
            raise sp.SimulationFailed("the RC option has no predicted tau_s to size the run")
        v = c.chip.vcc
        td, edge = tau / 10.0, tau / 1e4
        fc = 1.0 / (2.0 * math.pi * tau)
        n = sp._num
        L += [f"* step of {v:g} V at {sp._eng(td, 's')} (edge {sp._eng(edge, 's')}), AC 1 V for the corner",
              f"VIN in 0 DC 0 AC 1 PULSE(0 {n(v)} {n(td)} {n(edge)} {n(edge)} {n(100 * tau)} {n(1e3 * tau)})"]
        L += sp.network_lines(sp._net(c, "R"), "in", "cap")
        L += sp.network_lines(sp._net(c, "C"), "cap", "0", ic=0.0)
        # ngspice runs one analysis per .meas set in batch mode, so the two run from a control block
        tmax = max(tau / sp.STEPS_PER_PULSE, (td + 3.0 * tau) / sp.MAX_STEPS)
        L += [".control",
              f"tran {n(tmax)} {n(td + 3.0 * tau)} 0 {n(tmax)} UIC",
              f"meas tran m_t63 WHEN v(cap)={n(sp.RC_FRACTION * v)} RISE=1",
              *(["set wr_singlescale", f"wrdata {sp.WAVE_FILE} v(in) v(cap)"] if waveform else []),
              f"ac dec 200 {n(fc / 100)} {n(fc * 100)}",
              f"meas ac m_fc WHEN vdb(cap)={sp.MINUS_3DB:.8f} FALL=1",
              "quit",
              ".endc",
              ".end"]
        return sp.Netlist("\n".join(L) + "\n", ("m_t63", "m_fc"), cycles)

    def spice_reduce(self, c, found, cycles):
        t63 = sp._need(found, "m_t63", "the 63.2 % time")
        tau = t63 - (float(c.expected["tau_s"]) / 10.0 + float(c.expected["tau_s"]) / 2e4)
        return {"tau_s": tau, "corner_hz": sp._need(found, "m_fc", "the -3 dB corner")}


CIRCUIT = RC()
