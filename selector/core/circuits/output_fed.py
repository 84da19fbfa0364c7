"""Output-fed 555 astable: one R from OUT to THR/TRIG, C to ground; C charges toward VOH and
discharges toward VOL between VCC/3 and 2VCC/3 (facts.md §3, derived; [S7]). Offered for chip
families with a rail-to-rail output, where the duty is about 50 %."""

from __future__ import annotations

import math

from selector.core.circuits.base import LazyModule, Limits, Settings, Target
from selector.core.circuits.modes import FixedRatioAstable, Timer555

sp = LazyModule("selector.core.netlist")


class OutputFed(Timer555, FixedRatioAstable):
    key = "output-fed"
    name = "output-fed"
    in_auto = True
    formula = ("output-fed: t_high = R·C·ln((VOH − VCC/3)/(VOH − 2·VCC/3)), "
               "t_low = R·C·ln((2·VCC/3 − VOL)/(VCC/3 − VOL))")
    wiring = ("Connections: R from OUT to THR and TRIG; timing capacitor from THR/TRIG to GND; DIS "
              "left unconnected.")
    help = "output-fed (CMOS, about 50 %)"

    def limits(self, settings: Settings) -> Limits:
        from selector.core import chips, timing

        lim = self.base_limits(settings, astable=True)
        fam, vcc = chips.family(settings.chip), settings.vcc
        voh, vol = float(fam.voh(vcc)), float(fam.vol(vcc))
        lim.update(voh=voh, vol=vol,
                   r_power_volts=math.sqrt(float(timing.output_fed_power_w(1.0, voh, vol, vcc))))
        r_out_min = fam.output_fed_min_r_ohm()  # output resistance ≤ TIMING_SHARE of each half
        if r_out_min > lim["min_r_ohm"]:
            lim["min_r_ohm"] = r_out_min
            lim["why"]["min_r_ohm"] = (f"the output's own resistance may lengthen each half by at most "
                                       f"{chips.TIMING_SHARE * 100:g} %")
        return Limits(**lim)

    def factors(self, limits: Limits) -> tuple[float, float]:
        from selector.core import timing

        kh, kl = timing.output_fed_factors(limits.voh, limits.vol, limits.vcc)
        return float(kh), float(kl)

    def auto_ok(self, target: Target, settings: Settings, accept: float) -> bool:
        from selector.core import chips

        if not chips.family(settings.chip).output_fed_ok:
            return False
        return self.best_error(target, self.limits(settings)) <= accept

    def check_available(self, target: Target, settings: Settings) -> None:
        from selector.core import chips
        from selector.core.errors import NothingFeasible

        fam = chips.family(settings.chip)
        if not fam.output_fed_ok:
            raise NothingFeasible(
                f"the output-fed connection is offered only for a chip with a rail-to-rail output "
                f"(--chip cmos); a {fam.label} output is not (facts: load- and VCC-dependent)")

    def why_unreachable(self, target: Target, settings: Settings, accept: float):
        """Also: its duty is fixed by the output levels, so a duty asked further from it than the
        acceptance (in points against accept x the target duty) cannot be reached."""
        why = super().why_unreachable(target, settings, accept)
        if why is not None or not target.duty_given:
            return why
        fixed = self.natural_duty(self.limits(settings))
        if fixed is not None and abs(fixed - target.duty) > accept * target.duty * (1 + 1e-12):
            return (f"the output-fed connection runs at a fixed duty of {fixed:.1%} with this chip at "
                    f"{settings.vcc:g} V; {target.duty:.1%} is {abs(fixed - target.duty) * 100:.1f} points "
                    f"away, more than the ±{accept:.0%} acceptance allows")
        return None

    def spice_body(self, c) -> list[str]:
        cn = sp._net(c, "C")
        L = sp.network_lines(sp._net(c, "R"), "out", "cap")
        L += sp.network_lines(cn, "cap", "0", ic=0.0)
        L.append("* DIS is not used in the output-fed connection")
        return L + self.spice_device(c, "0 cap out vcc ctl cap dis vcc")


CIRCUIT = OutputFed()
