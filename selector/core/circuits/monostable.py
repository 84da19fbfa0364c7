"""555 monostable: R from VCC to DIS/THR, C to ground; a trigger pulse on TRIG starts a pulse of
width ln3·R·C ≈ 1.1·R·C [S3, S5] (C charges toward VCC up to 2VCC/3). It starts from the level the
discharge switch (on-resistance RD) holds C at, VCC·RD/(R+RD), so the width is R·C·ln(3R/(R+RD))
(``timing.monostable_width``, derived)."""

from __future__ import annotations

import math

from selector.core.circuits.base import LazyModule, ONE_RESISTOR, Limits, Settings, Target
from selector.core.circuits.modes import MonostableKind, Timer555, plain_r_bounds

sp = LazyModule("selector.core.netlist")


class Monostable(Timer555, MonostableKind):
    key = "monostable"
    name = "monostable"
    roles = ("R", "C")
    kernel = ONE_RESISTOR
    formula = "monostable: width = R·C·ln(3R/(R+RD)) ≈ ln3·R·C ≈ 1.1·R·C, RD the discharge switch"
    wiring = ("Connections: R from VCC to DIS and THR; timing capacitor from THR to GND; the trigger "
              "pulse goes to TRIG (take it close to 0 V and keep it shorter than the pulse width).")

    def limits(self, settings: Settings) -> Limits:
        return Limits(**self.base_limits(settings, astable=False))

    def why_unreachable(self, target: Target, settings: Settings, accept: float):
        """Also: the shortest pulse the limits allow is ln3 x the smallest R x the smallest timing
        C; a width below it by more than the acceptance cannot be reached."""
        why = super().why_unreachable(target, settings, accept)
        if why is not None:
            return why
        from selector.core import timing
        from selector.core.notation import format_value

        lim = self.limits(settings)
        shortest = float(timing.monostable_width(lim.min_r_ohm, lim.min_c_f, lim.discharge_ohms))
        if target.width * (1.0 + accept) < shortest:
            return (f"a {format_value(target.width, 's')} pulse is below the shortest the limits allow, "
                    f"{format_value(shortest, 's')} (R ≥ {format_value(lim.min_r_ohm, 'Ω')}, C ≥ "
                    f"{format_value(lim.min_c_f, 'F')}{self.limit_owner(settings)})")
        return None

    def model(self, v, limits: Limits, extra) -> tuple:
        from selector.core import timing

        from selector.core.circuits.modes import chip_factor

        w = timing.monostable_width(v["R"], v["C"], limits.discharge_ohms)
        k = chip_factor(extra)
        return (w if k is None else w * k,)

    # ---- one-resistor kernel
    def r_ideal(self, target: Target, c, limits: Limits):
        from selector.core import timing

        return timing.monostable_ideal_r(target.width, c, limits.discharge_ohms)

    def error1(self, r, c, target: Target, limits: Limits):
        import numpy as np

        from selector.core import timing

        nan = np.full(np.shape(r), np.nan)
        w = timing.monostable_width(r, c, limits.discharge_ohms)
        return w / target.width - 1, nan, nan, w

    def r_bounds1(self, c, limits: Limits):
        return plain_r_bounds(c, limits)

    # ---- SPICE: a trigger pulse, then the output's rise and fall
    def spice_netlist(self, c, L: list[str], cycles: int, waveform: bool):
        chip = c.chip
        vcc = chip.vcc
        L.append(f"VCC vcc 0 DC {sp._num(vcc)}")
        mid = sp._num((chip.voh + chip.vol) / 2.0)
        cn = sp._net(c, "C")
        tw = float(c.expected.get("width_s") or 0)
        if not (tw > 0 and math.isfinite(tw)):
            raise sp.SimulationFailed("the monostable option has no predicted width_s to size the run")
        # the trigger comes once C has settled where the closed discharge switch holds it,
        # VCC·RD/(R+RD): 30 time constants (R∥RD)·C <= 30·RD·C after the start (derived)
        c_val = sp.tree_value(sp.shape_tree(cn.shape, len(cn.parts)), [p.value for p in cn.parts], "C")
        td, pw, edge = tw / 10.0 + 30.0 * chip.discharge_ohms * c_val, tw / 10.0, tw / 1e4
        L += sp.network_lines(sp._net(c, "R"), "vcc", "cap")
        L += sp.network_lines(cn, "cap", "0", ic=0.0)
        L += [f"* trigger: TRIG rests at VCC, pulled to 0 V for {sp._eng(pw, 's')} (shorter than the width)",
              f"VTRIG trig 0 PULSE({sp._num(vcc)} 0 {sp._num(td)} {sp._num(edge)} {sp._num(edge)} "
              f"{sp._num(pw)} {sp._num(1e3 * tw)})"]
        L += self.spice_device(c, "0 trig out vcc ctl cap cap vcc")
        L += [".save v(cap) v(out) v(trig)", sp._tran(tw / sp.STEPS_PER_PULSE, td + 3.0 * tw)]
        meas = []
        for name, edge_kind in (("m_r1", "RISE=1"), ("m_f1", "FALL=1")):
            meas.append(name)
            L.append(f".meas tran {name} WHEN v(out)={mid} {edge_kind}")
        if waveform:
            L += sp._wave_block("v(cap) v(out) v(trig)")
        L.append(".end")
        return sp.Netlist("\n".join(L) + "\n", tuple(meas), 1)


CIRCUIT = Monostable()
