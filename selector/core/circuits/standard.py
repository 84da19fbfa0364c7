"""Standard two-resistor 555 astable: RA from VCC to DIS, RB from DIS to THR/TRIG, C to ground.

t_high = ln2·(RA+RB)·C, t_low = ln2·RB·C [S2, S3 bipolar 555 data sheet] with the discharge switch's
on-resistance RD added the exact way (``timing.discharge_low``: RB + RA∥RD toward VCC·RD/(RA+RD));
duty always above 50 %.
"""

from __future__ import annotations

from selector.core.circuits.base import LazyModule, TWO_RESISTOR, Limits, Settings, Target
from selector.core.circuits.modes import AstableKind, Timer555

sp = LazyModule("selector.core.netlist")


class Standard(Timer555, AstableKind):
    key = "standard"
    name = "standard"
    roles = ("RA", "RB", "C")
    kernel = TWO_RESISTOR
    in_auto = True
    charging_roles = ("RA", "RB")
    duty_corners = True
    formula = ("standard: t_high = ln2·(RA+RB)·C, t_low = (RB+RA∥RD)·C·ln((2VCC/3−d)/(VCC/3−d)) "
               "≈ ln2·RB·C, d = VCC·RD/(RA+RD), RD the discharge switch")
    wiring = ("Connections: RA from VCC to DIS; RB from DIS to THR and TRIG; timing capacitor from "
              "THR/TRIG to GND.")
    help = "standard (duty above 50 %)"

    def limits(self, settings: Settings) -> Limits:
        return Limits(**self.base_limits(settings, astable=True))

    def auto_ok(self, target: Target, settings: Settings, accept: float) -> bool:
        return target.duty > 0.5

    def check_available(self, target: Target, settings: Settings) -> None:
        from selector.core.errors import NothingFeasible

        if not target.duty > 0.5:
            raise NothingFeasible(
                f"the standard connection cannot reach a duty of {target.duty:.1%}: its duty is always "
                "above 50 %; use --connection diode (or auto)")

    def times(self, v, limits: Limits, extra) -> tuple:
        from selector.core import timing

        return timing.standard_times(v["RA"], v["RB"], v["C"], limits.discharge_ohms)

    # ---- two-resistor kernel: t_high increasing in RA (and in RB); t_low the discharge law
    def t_low(self, ra, rb, c, limits: Limits):
        from selector.core import timing

        return timing.discharge_low(ra, rb, c, limits.discharge_ohms)

    def rb_for_low(self, t_low, ra, c, limits: Limits):
        from selector.core import timing

        return timing.discharge_rb_for_low(t_low, ra, c, limits.discharge_ohms)

    def rb_ideal(self, target: Target, c):
        """RB for t_low with an ideal discharge switch (RD = 0): the kernel's first guess."""
        from selector.core import timing

        return timing.standard_ideal(target.t_high, target.t_low, c)[1]

    def ra_for_high(self, t_high, rb, c, limits: Limits):
        """RA giving exactly ``t_high`` with this RB and C (may be <= 0 or nan: none)."""
        from selector.core import timing
        from selector.core.circuits.base import nan_to

        ra0, _rb0 = timing.standard_ideal(t_high, 0.0, c)  # rb0 = 0 → ra0 = t_high/(ln2 c) if > 0
        return nan_to(ra0, -float("inf")) - rb

    def times2(self, ra, rb, c, limits: Limits):
        from selector.core import timing

        return timing.standard_times(ra, rb, c, limits.discharge_ohms)

    # ---- SPICE
    def spice_body(self, c) -> list[str]:
        cn = sp._net(c, "C")
        L = sp.network_lines(sp._net(c, "RA"), "vcc", "dis")
        L += sp.network_lines(sp._net(c, "RB"), "dis", "cap")
        L += sp.network_lines(cn, "cap", "0", ic=0.0)
        return L + self.spice_device(c, "0 cap out vcc ctl cap dis vcc")


CIRCUIT = Standard()
