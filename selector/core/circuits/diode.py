"""Diode-steered 555 astable: a diode across RB (anode at DIS) so C charges through RA alone and
discharges through RB; any duty. The steering diode is a Shockley diode (Vf at 1 mA and the
ideality n, ``parts.DIODE_VF_DEFAULT``) in parallel with RB and in series with RA; t_high is the
exact charge integral (``timing.diode_shockley_times``; topology facts.md §2 [S8]); t_low has the
discharge switch's on-resistance RD (``timing.discharge_low``, as in the standard connection: the
diode is reverse biased while C discharges). Its Vf spread
enters the worst case and the yield as an uncertain input."""

from __future__ import annotations

from selector.core.circuits.base import LazyModule, TWO_RESISTOR, Limits, Obtain, Settings, Target
from selector.core.circuits.modes import AstableKind, Timer555

sp = LazyModule("selector.core.netlist")
records = LazyModule("selector.core.bom_records")


class Diode(Timer555, AstableKind):
    key = "diode"
    name = "diode-steered"
    roles = ("RA", "RB", "C")
    kernel = TWO_RESISTOR
    in_auto = True
    charging_roles = ("RA",)
    duty_corners = True
    uses_diode = True
    formula = ("diode-steered: t_high = C·∫dVc/I, I through RA and the Shockley diode (Vf at 1 mA, "
               "ideality n) in parallel with RB; t_low = (RB+RA∥RD)·C·ln((2VCC/3−d)/(VCC/3−d)) "
               "≈ ln2·RB·C, d = VCC·RD/(RA+RD), RD the discharge switch")
    wiring = ("Connections: RA from VCC to DIS; RB from DIS to THR and TRIG with the steering diode across "
              "it (anode at DIS, cathode at THR/TRIG); timing capacitor from THR/TRIG to GND.")
    help = "diode (diode across RB, any duty)"

    def limits(self, settings: Settings) -> Limits:
        from selector.core.parts import DIODE_N_DEFAULT

        n = settings.options.get("diode_n")
        lim = self.base_limits(settings, astable=True)
        lim["why"]["max_ra_ohm"] = "threshold current through RA alone"
        ra_reach, ra_acc = self.max_ra(settings), self.max_ra_accuracy(settings)
        if ra_acc < ra_reach:
            from selector.core import chips

            lim["why"]["max_ra_ohm"] += f", at most {chips.TIMING_SHARE * 100:g} % of t_high"
        return Limits(**lim, max_ra_ohm=min(ra_reach, ra_acc),
                      extra={"diode_n": float(DIODE_N_DEFAULT if n is None else n)})

    def max_ra_accuracy(self, settings: Settings) -> float:
        """Largest RA whose threshold current moves t_high by at most ``chips.TIMING_SHARE``:
        with the diode conducting, C charges through RA toward VCC − Vf, so the sink ceiling of
        ``chips.sink_ceiling_ohm`` applies with the spans 2VCC/3 − Vf and VCC/3 − Vf (constant-drop
        model with Vf at 1 mA; at the µA currents near this ceiling the real drop is smaller, the
        spans larger and the shift smaller, so the bound is safe - checked against a scipy ODE with
        the Shockley diode in tests/reference/test_threshold_current_ceiling.py)."""
        from selector.core import chips

        vf, v3 = settings.diode_vf or 0.0, settings.vcc / 3.0
        if not v3 - vf > 0:
            return 0.0
        return chips.family(settings.chip).accuracy_max_r_ohm(2.0 * v3 - vf, v3 - vf)

    def max_ra(self, settings: Settings) -> float:
        """Largest RA that still reaches the upper threshold: at that point the DIS node sits at
        2VCC/3 + Vf, so RA alone has VCC/3 − Vf across it and must still pass the family's
        threshold current: RA ≤ (VCC/3 − Vf)/I_th (derived as in facts.md §6's R ≤ VCC/(3·I_th),
        [S1] 0.25 µA max bipolar; Vf taken at 1 mA, the --diode-vf figure, which over-states the
        drop at this tiny current and so errs on the safe side)."""
        from selector.core import chips

        fam = chips.family(settings.chip)
        vf = settings.diode_vf or 0.0
        head = settings.vcc / 3.0 - vf
        return head / fam.threshold_current_a if head > 0 else 0.0

    def uncertain(self, limits: Limits):
        from selector.core.circuits.base import Uncertain
        from selector.core.parts import DIODE_VF_SPREAD

        vf = limits.diode_vf
        if not vf or vf <= DIODE_VF_SPREAD:
            return tuple(limits.chip_terms)
        band = DIODE_VF_SPREAD / vf
        return tuple(limits.chip_terms) + (
            Uncertain("diode_vf", vf, band, band, f"diode Vf ±{DIODE_VF_SPREAD * 1e3:g} mV",
                      in_parts_only=False),)

    def auto_ok(self, target: Target, settings: Settings, accept: float) -> bool:
        return 3.0 * settings.diode_vf < settings.vcc

    def check_available(self, target: Target, settings: Settings) -> None:
        from selector.core.errors import NothingFeasible

        if not 3.0 * settings.diode_vf < settings.vcc:
            raise NothingFeasible(
                f"the diode-steered connection needs VCC above 3 × Vf ({3 * settings.diode_vf:g} V); "
                f"VCC is {settings.vcc:g} V")

    def times(self, v, limits: Limits, extra) -> tuple:
        from selector.core import timing

        return timing.diode_shockley_times(v["RA"], v["RB"], v["C"], limits.vcc,
                                           (extra or {}).get("diode_vf", limits.diode_vf), _n(limits),
                                           limits.discharge_ohms)

    # ---- two-resistor kernel: t_high increasing in RA and in RB (a larger RB leaves more of the
    # current to the diode, whose drop then rises, so C charges more slowly at every level)
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
        from selector.core import timing

        return timing.diode_shockley_ideal_ra(t_high, rb, c, limits.vcc, limits.diode_vf, _n(limits))

    def times2(self, ra, rb, c, limits: Limits):
        from selector.core import timing

        return timing.diode_shockley_times(ra, rb, c, limits.vcc, limits.diode_vf, _n(limits),
                                           limits.discharge_ohms)

    # ---- BOM
    def bom_obtain(self, settings: Settings):
        from selector.core.stock_match import SCHOTTKY_BELOW_V

        vf_v = settings.diode_vf
        schottky = vf_v is not None and vf_v < SCHOTTKY_BELOW_V
        what = "small-signal Schottky diode" if schottky else "small-signal silicon diode, 1N4148 class"
        vf = f"; Vf about {vf_v:g} V as searched" if vf_v is not None else ""
        return super().bom_obtain(settings) + (Obtain(
            "D1", records.ROLE_DIODE, "diode", what, f"across RB, anode at DIS, cathode at THR/TRIG{vf}",
            "diode:schottky" if schottky else "diode:silicon"),)

    # ---- SPICE
    def spice_body(self, c) -> list[str]:
        cn = sp._net(c, "C")
        ra, rb = sp._net(c, "RA"), sp._net(c, "RB")
        L = sp.network_lines(ra, "vcc", "dis")
        L += sp.network_lines(rb, "dis", "cap")
        from selector.core import timing
        from selector.core.parts import DIODE_N_DEFAULT

        n = float(c.extra.get("diode_n", DIODE_N_DEFAULT))
        isat = float(timing.diode_saturation_current(c.diode_vf, n)) if c.diode_vf > 0 else 1e-3
        L += [f"* steering diode across RB (anode DIS, cathode C): the prediction's Shockley law, "
              f"{c.diode_vf:g} V at 1 mA, n = {n:g}",
              "DSTEER dis cap SELDIODE",
              f".model SELDIODE D(IS={isat:.6g} N={sp._num(n)} RS=0 CJO=0)"]
        L += sp.network_lines(cn, "cap", "0", ic=0.0)
        return L + self.spice_device(c, "0 cap out vcc ctl cap dis vcc")


def _n(limits: Limits) -> float:
    from selector.core.parts import DIODE_N_DEFAULT

    return float(limits.extra.get("diode_n", DIODE_N_DEFAULT))


CIRCUIT = Diode()
