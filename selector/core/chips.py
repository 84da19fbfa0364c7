"""Chip families: our own table of 555 limits, each number with its source (facts.md §3, §6).

Source tags follow /work/shared/reference/facts.md: [S1] bipolar 555 data sheet (typical second
source), [S5] CMOS 555 data sheet B, [S6] CMOS 555 data sheet C, [S7] application report on the
50 % output-fed connection, [S15] electrolytic leakage rating, [S25] CMOS-555 circuit page.
"common practice" marks a shop rule of thumb; "from memory" a value not confirmed in a stored copy.
The ``sources`` mapping of each family repeats the citation per field, so the CLI can show it and
a test can insist that no number goes uncited.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Optional

if TYPE_CHECKING:  # numpy is imported inside the functions: the CLI reads FAMILIES at start-up
    import numpy as np

from selector.core.errors import OutOfRange, UnknownChipFamily


def _plain(x: np.ndarray):
    """A Python float for scalar input, the array otherwise."""
    import numpy as np

    return float(x) if np.ndim(x) == 0 else x


@dataclass(frozen=True)
class ChipFamily:
    """Limits and levels of one 555 family. SI units (volts, amperes, hertz, ohms, farads)."""

    key: str
    label: str
    vcc_min: float
    vcc_max: float
    threshold_current_a: float
    trigger_current_a: float
    max_astable_hz: float            # practical maximum for formula-accurate work
    min_ra_ohm: float                # discharge-current rule
    min_timing_c_f: float            # stray-capacitance rule
    voh_drop_v: float                # light-load VOH = VCC − voh_drop_v
    vol_v: float                     # light-load VOL
    max_r_cap_ohm: float             # practical cap on the total timing resistance
    output_fed_ok: bool              # offer the output-fed astable
    astable_initial_error: float     # chip-only timing error, typical, fraction
    monostable_initial_error: float
    astable_supply_per_v: float      # timing drift per volt of supply change, fraction/V (typ)
    monostable_supply_per_v: float
    part_text: str                   # how the BOM names the IC: "555 timer, <part_text>"
    spice_divider_ohms: float        # each of the three divider resistors in the SPICE model
    datasheet_discharge_ohms: float  # DIS saturation as a resistance (--discharge-ohms)
    dis_sink_a: float                # largest DIS current the data sheet specifies (astable peak)
    control_pin_cap_f: Optional[float]   # CV (pin 5) capacitor fitted by the BOM; None: left open
    reservoir_f: Optional[tuple]     # (lo, hi) supply reservoir range; None: not listed
    bom_notes: tuple = ()            # notes the BOM adds for this family
    output_source_ohms: Optional[float] = None  # OUT high-side resistance (output-fed R minimum)
    output_sink_ohms: Optional[float] = None    # OUT low-side resistance
    sources: dict = field(default_factory=dict, compare=False, hash=False, repr=False)

    def voh(self, vcc) -> float:
        """Output HIGH level at light load."""
        import numpy as np

        return _plain(np.asarray(vcc, dtype=float) - self.voh_drop_v)

    def vol(self, vcc) -> float:
        """Output LOW level at light load (independent of VCC in this model)."""
        import numpy as np

        return _plain(np.zeros_like(np.asarray(vcc, dtype=float)) + self.vol_v)

    def max_timing_r_ohm(self, vcc) -> float:
        """Largest total timing resistance (RA+RB, or R) at supply ``vcc``.

        At the threshold point the resistor still has VCC/3 across it and must deliver the
        threshold input current: R ≤ VCC/(3·I_th) [S1 note: 20 MΩ at 15 V]. The result is also
        capped at ``max_r_cap_ohm`` (leakage of boards and capacitors dominates for CMOS parts).
        """
        import numpy as np

        vcc = np.asarray(vcc, dtype=float)
        return _plain(np.minimum(vcc / (3.0 * self.threshold_current_a), self.max_r_cap_ohm))

    def accuracy_max_r_ohm(self, span_start_v: float, span_end_v: float) -> float:
        """Largest charging resistance whose threshold input current moves the charge time by at
        most :data:`TIMING_SHARE` (see :func:`sink_ceiling_ohm`; ``span_start_v`` = V∞ − V0,
        ``span_end_v`` = V∞ − V1 of the charge, e.g. 2VCC/3 and VCC/3 for an astable)."""
        return sink_ceiling_ohm(span_start_v, span_end_v, self.threshold_current_a)

    def output_fed_min_r_ohm(self) -> float:
        """Smallest output-fed R: the output's own resistance (source or sink, the larger) in
        series with R lengthens a half-period by R_out/R (the half charges through R + R_out
        toward the rail: the RC law with R + R_out, derived), so R ≥ R_out/:data:`TIMING_SHARE`
        keeps each half within that share and the duty within a quarter of it (in points).
        0 when the family gives no output resistance (the connection is then not offered)."""
        worst = max(self.output_source_ohms or 0.0, self.output_sink_ohms or 0.0)
        return worst / TIMING_SHARE

    def check_vcc(self, vcc: float) -> None:
        """Raise :class:`OutOfRange` when ``vcc`` is outside the family's supply range."""
        if not (self.vcc_min <= float(vcc) <= self.vcc_max):
            other = [k for k, f in FAMILIES.items() if f.vcc_min <= float(vcc) <= f.vcc_max]
            hint = ("; --chip " + " or --chip ".join(other) + (" takes it" if len(other) == 1 else " take it")
                    if other else "")
            raise OutOfRange(
                f"VCC {float(vcc):g} V is outside the {self.label} range "
                f"{self.vcc_min:g}–{self.vcc_max:g} V{hint}"
            )


BIPOLAR = ChipFamily(
    key="bipolar",
    label="bipolar 555",
    vcc_min=4.5,                      # [S1] bipolar 555 data sheet: supply 4.5–16 V
    vcc_max=16.0,                     # [S1]
    threshold_current_a=0.25e-6,      # [S1] 0.10 µA typ / 0.25 µA max; the max sets the R limit
    trigger_current_a=2.0e-6,         # [S1] 0.5 µA typ / 2.0 µA max at V_TR = 0 V
    max_astable_hz=100e3,             # common practice: ~100 kHz for formula-accurate work
                                      # (stored secondary pages, not a data-sheet limit)
    min_ra_ohm=1e3,                   # common practice: VCC/RA ≤ 15 mA at 15 V, the DIS test
                                      # current of [S1]; accuracy specified for RA 1–100 kΩ [S1]
    min_timing_c_f=100e-12,           # [S25] C ≥ 100 pF; strays of a few pF (common practice)
    voh_drop_v=1.4,                   # from memory, not confirmed: VCC − 1.4 V at light load;
                                      # [S1] 13.3 V typ at 15 V / 100 mA (VCC − 1.7 V)
    vol_v=0.1,                        # [S1] 0.05–0.06 V typ at 5–10 mA sink, rounded up to 0.1 V
    max_r_cap_ohm=20e6,               # [S1] note: 20 MΩ at 15 V (VCC/(3·I_th) gives the same)
    output_fed_ok=False,              # facts §3: bipolar VOH depends on load and VCC (derived)
    astable_initial_error=0.0225,     # [S1] astable 2.25 % typ (RA, RB 1–100 kΩ, C 0.1 µF)
    monostable_initial_error=0.01,    # [S1] monostable 1 % typ / 3 % max
    astable_supply_per_v=0.003,       # [S1] astable 0.3 %/V
    monostable_supply_per_v=0.001,    # [S1] monostable 0.1 %/V typ / 0.5 %/V max
    part_text="bipolar",
    spice_divider_ohms=5e3,           # [S12] bipolar 555 model netlists show 3 × 5 kΩ; [S14]
    datasheet_discharge_ohms=12.0,    # [S1] DIS saturation 180 mV typ at 15 mA (VCC 15 V) → 12 Ω
    dis_sink_a=15e-3,                 # [S1] DIS saturation is specified at 15 mA (15 V); the data
                                      # sheet gives no other DIS maximum than the package
                                      # dissipation, so the tested current is the limit (common practice)
    control_pin_cap_f=10e-9,          # [S14] bypass CV with 10 nF when it is not used (facts §5)
    reservoir_f=(10e-6, 100e-6),      # [S3] 10–100 µF close to the IC: output current spikes
    sources={
        "vcc_min": "[S1] bipolar 555 data sheet, supply 4.5–16 V",
        "vcc_max": "[S1] bipolar 555 data sheet, supply 4.5–16 V",
        "threshold_current_a": "[S1] bipolar 555 data sheet, threshold current 0.25 µA max",
        "trigger_current_a": "[S1] bipolar 555 data sheet, trigger current 2.0 µA max at 0 V",
        "max_astable_hz": "common practice: about 100 kHz for formula-accurate work",
        "min_ra_ohm": "common practice (1 kΩ keeps DIS current at the [S1] 15 mA test level)",
        "min_timing_c_f": "[S25] C ≥ 100 pF against strays (common practice)",
        "voh_drop_v": "from memory, not confirmed (VCC − 1.4 V light load; [S1] VCC − 1.7 V at 100 mA)",
        "vol_v": "[S1] bipolar 555 data sheet, 0.05–0.06 V typ at 5–10 mA, rounded up",
        "max_r_cap_ohm": "[S1] bipolar 555 data sheet note, 20 MΩ at 15 V",
        "astable_initial_error": "[S1] bipolar 555 data sheet, astable 2.25 % typ",
        "monostable_initial_error": "[S1] bipolar 555 data sheet, monostable 1 % typ",
        "astable_supply_per_v": "[S1] bipolar 555 data sheet, astable drift with supply 0.3 %/V",
        "monostable_supply_per_v": "[S1] bipolar 555 data sheet, monostable 0.1 %/V typ",
        "spice_divider_ohms": "[S12] bipolar 555 model netlists, 3 × 5 kΩ; [S14] tutorial",
        "datasheet_discharge_ohms": "[S1] bipolar 555 data sheet, DIS 180 mV typ at 15 mA",
        "dis_sink_a": "[S1] bipolar 555 data sheet, DIS specified at 15 mA (no other DIS maximum; "
                      "common practice to stay at the tested current)",
        "control_pin_cap_f": "[S14] bypass CV with 10 nF when it is not used",
    },
)

CMOS = ChipFamily(
    key="cmos",
    label="CMOS 555",
    # generic "cmos": the narrowest range common to data sheets B [S5] 2–15 V and C [S6] 3–16 V,
    # so any CMOS 555 works; the families "cmos-2v" and "cmos-3v" below are those two parts
    vcc_min=3.0,                      # [S6] CMOS 555 data sheet C: 3 V minimum (B [S5]: 2 V)
    vcc_max=15.0,                     # [S5] CMOS 555 data sheet B: 15 V maximum (C [S6]: 16 V)
    threshold_current_a=20e-12,       # [S6] CMOS 555 data sheet C: 20 pA typ
    trigger_current_a=20e-12,         # [S6] 20 pA typ
    max_astable_hz=100e3,             # [S5] the astable equations hold for f ≤ 100 kHz
    min_ra_ohm=1e3,                   # [S25] R ≥ 1 kΩ
    min_timing_c_f=100e-12,           # [S25] C ≥ 100 pF
    voh_drop_v=0.0,                   # [S7] rail-to-rail at light load (t = RC·ln2 per half)
    vol_v=0.0,                        # [S7]
    max_r_cap_ohm=20e6,               # common practice: board and capacitor leakage, not the
                                      # chip, limit R (facts §6); 20 MΩ still gives 83 nA at 5 V
    output_fed_ok=True,               # [S4], [S7] 50 % output-fed connection for CMOS parts
    astable_initial_error=0.01,       # [S6] about 1 % typ astable (stored table garbled)
    monostable_initial_error=0.01,    # from memory, not confirmed (about 1 % like the bipolar)
    astable_supply_per_v=0.001,       # [S5] CMOS 555 data sheet B: 0.1 %/V typ (0.5 max)
    monostable_supply_per_v=0.001,    # [S5] same figure (the data sheet gives one)
    part_text="CMOS",
    spice_divider_ohms=100e3,         # from memory, not confirmed: "near 100 kΩ each" (facts §5)
    datasheet_discharge_ohms=40.0,    # [S6] DIS ≤ 0.4 V at 10 mA, 5 V → at most 40 Ω
    dis_sink_a=10e-3,                 # [S6] DIS specified at 10 mA (stored table garbled, verify)
    control_pin_cap_f=None,           # [S6] CV "need not be decoupled"
    reservoir_f=None,                 # [S6] "no crowbarring": no reservoir listed
    output_source_ohms=1000.0,        # [S6] VOH ≥ 4.0 V at −1 mA, 5 V: at most 1 V/1 mA (table
                                      # garbled, verify); the 5 V figure is used at every supply
    output_sink_ohms=125.0,           # [S6] VOL ≤ 0.4 V at 3.2 mA sink, 5 V: at most 125 Ω
    bom_notes=("CMOS timer: the control pin is left open (one CMOS 555 data sheet says it need not be "
               "decoupled); fit 10 nF to ground if your part's data sheet asks for it.",),
    sources={
        "vcc_min": "[S5] 2–15 V and [S6] 3–16 V: the narrowest common range, 3–15 V",
        "vcc_max": "[S5] 2–15 V and [S6] 3–16 V: the narrowest common range, 3–15 V",
        "threshold_current_a": "[S6] CMOS 555 data sheet C, 20 pA typ",
        "trigger_current_a": "[S6] CMOS 555 data sheet C, 20 pA typ",
        "max_astable_hz": "[S5] CMOS 555 data sheet B, equations hold for f ≤ 100 kHz",
        "min_ra_ohm": "[S25] CMOS-555 circuit page, R ≥ 1 kΩ",
        "min_timing_c_f": "[S25] CMOS-555 circuit page, C ≥ 100 pF",
        "voh_drop_v": "[S7] application report, rail-to-rail output at light load",
        "vol_v": "[S7] application report, rail-to-rail output at light load",
        "max_r_cap_ohm": "common practice (leakage of boards and capacitors limits R)",
        "astable_initial_error": "[S6] CMOS 555 data sheet C, about 1 % typ",
        "monostable_initial_error": "from memory, not confirmed (about 1 %)",
        "astable_supply_per_v": "[S5] CMOS 555 data sheet B, 0.1 %/V typ",
        "monostable_supply_per_v": "[S5] CMOS 555 data sheet B, 0.1 %/V typ",
        "spice_divider_ohms": "from memory, not confirmed (near 100 kΩ each, differs by maker)",
        "datasheet_discharge_ohms": "[S6] CMOS 555 data sheet C, DIS at most 0.4 V at 10 mA",
        "dis_sink_a": "[S6] CMOS 555 data sheet C, DIS specified at 10 mA",
        "control_pin_cap_f": "[S6] CMOS 555 data sheet C, CV need not be decoupled",
        "output_source_ohms": "[S6] CMOS 555 data sheet C, VOH ≥ 4.0 V at −1 mA, 5 V (garbled, verify)",
        "output_sink_ohms": "[S6] CMOS 555 data sheet C, VOL ≤ 0.4 V at 3.2 mA, 5 V",
    },
)

CMOS_2V = dataclasses.replace(
    CMOS,
    key="cmos-2v",
    label="CMOS 555 (2–15 V part)",
    vcc_min=2.0,                      # [S5] CMOS 555 data sheet B: 2–15 V
    vcc_max=15.0,                     # [S5]
    part_text="CMOS 2–15 V",
    sources={**CMOS.sources,
             "vcc_min": "[S5] CMOS 555 data sheet B, 2–15 V",
             "vcc_max": "[S5] CMOS 555 data sheet B, 2–15 V",
             "other": "figures data sheet B does not give in our sources are data sheet C's [S6]"},
)

CMOS_3V = dataclasses.replace(
    CMOS,
    key="cmos-3v",
    label="CMOS 555 (3–16 V part)",
    vcc_min=3.0,                      # [S6] CMOS 555 data sheet C: 3–16 V guaranteed
    vcc_max=16.0,                     # [S6] (abs max 18 V)
    astable_supply_per_v=0.001,       # [S5] data sheet B's 0.1 %/V (C's figure is not in our sources)
    part_text="CMOS 3–16 V",
    sources={**CMOS.sources,
             "vcc_min": "[S6] CMOS 555 data sheet C, 3–16 V guaranteed",
             "vcc_max": "[S6] CMOS 555 data sheet C, 3–16 V guaranteed (abs max 18 V)",
             "astable_supply_per_v": "[S5] CMOS 555 data sheet B, 0.1 %/V typ (data sheet C's not "
                                     "in our sources)",
             "max_astable_hz": "[S5] equations hold for f ≤ 100 kHz (data sheet C's 500 kHz [S6] is "
                               "the operating maximum, not the formula's accuracy)"},
)

FAMILIES: dict[str, ChipFamily] = {f.key: f for f in (BIPOLAR, CMOS, CMOS_2V, CMOS_3V)}

TIMING_SHARE = 0.01
"""The share of a timing that a chip effect the prediction leaves out may move it: the threshold
input current (``sink_ceiling_ohm``), the output resistance (``ChipFamily.output_fed_min_r_ohm``).
Our own choice: 1 %, small against the 2.25 % typ initial error of a bipolar astable [S1] and the
5 % default acceptance."""

DELAY_FREE_FRACTION = 0.2
"""Share of the family's ``max_astable_hz`` up to which an astable is offered. Above it the
comparator and latch delays lengthen the period noticeably and our sources give no delay figure
to correct the prediction with, so the tool refuses instead. Derived from the one test point we
have, CMOS data sheet B's fmax test (RA 470 Ω, RB 200 Ω, 200 pF: 2.1 MHz typ / 1.2 MHz min
against 8.29 MHz ideal [S5]): the period is 0.36 µs typ / 0.71 µs worst longer than the formula,
about 0.7 % typ / 1.4 % worst of the period at 20 % of 100 kHz (20 kHz). Bipolar parts: no figure
in our sources; the same fraction is used (their 100 ns rise/fall [S1] is of the same order)."""


def sink_ceiling_ohm(span_start_v, span_end_v, sink_a, share: float = TIMING_SHARE) -> float:
    """Largest R for which a constant current ``sink_a`` drawn from the capacitor node moves a
    charge's time by at most ``share`` (derived).

    Derivation. C charges through R toward V∞ from V0 to V1; a constant sink I at the node gives
    C·dV/dt = (V∞ − V)/R − I = (V∞ − R·I − V)/R: the same RC law with the asymptote lowered by
    d = R·I, so t(d) = R·C·ln((a − d)/(b − d)) with a = V∞ − V0, b = V∞ − V1 (a > b > 0). The
    time grows with d; t(d)/t(0) = 1 + share where (a − d)/(b − d) = q = (a/b)^(1+share), i.e.
    d = (q·b − a)/(q − 1), and R_max = d/I. Standard astable (a = 2VCC/3, b = VCC/3): d ≈
    0.01372·VCC/3 for 1 %, i.e. ε ≈ R·I/(2·ln2·VCC/3) to first order. The constant sink at the
    data-sheet maximum is the worst case: a comparator input draws its bias current mostly near
    its switching point (from memory, not confirmed), so the real shift is smaller. Checked
    against a scipy ODE with the sink in tests/reference/test_threshold_current_ceiling.py."""
    a, b = float(span_start_v), float(span_end_v)
    if not (a > b > 0) or not (sink_a > 0):
        return INF_OHM if b > 0 else 0.0
    q = (a / b) ** (1.0 + share)
    return (q * b - a) / ((q - 1.0) * sink_a)


INF_OHM = float("inf")

VCC_TOL_DEFAULT = 0.05
"""Supply tolerance the yield assumes unless ``--vcc-tol`` says otherwise: a regulated supply
within ±5 % (common practice, no source)."""


def timing_terms(fam: ChipFamily, astable: bool, vcc: float, vcc_tol: Optional[float]) -> tuple:
    """The chip's own contributions to the spread of a timing, as (name, band, label) with a
    symmetric fractional band around a factor of 1 on every time: the initial timing error
    (data-sheet typical, per family and mode; its source in ``sources``) and the drift across the
    supply tolerance, sensitivity × VCC × tol (the data sheets' %/V figure, linear)."""
    tol = VCC_TOL_DEFAULT if vcc_tol is None else float(vcc_tol)
    init = fam.astable_initial_error if astable else fam.monostable_initial_error
    per_v = fam.astable_supply_per_v if astable else fam.monostable_supply_per_v
    drift = per_v * float(vcc) * tol
    out = [("chip_initial", init, f"chip initial error ±{init * 100:g} %")]
    if drift > 0:
        out.append(("supply_drift", drift,
                    f"supply ±{tol * 100:g} % (±{drift * 100:.2g} % on the timing)"))
    return tuple(out)


def family(key: str) -> ChipFamily:
    """The chip family for ``key`` ("bipolar" or "cmos", any case)."""
    try:
        return FAMILIES[str(key).strip().lower()]
    except KeyError:
        known = ", ".join(FAMILIES)
        raise UnknownChipFamily(f"unknown chip family {key!r}; expected one of: {known}") from None


# --------------------------------------------------------------------------- electrolytic leakage
LEAKAGE_MARGIN_MIN = 10.0   # common practice: charging current at threshold ≥ 10× leakage


def electrolytic_leakage_a(c_farad, v_rated) -> np.ndarray:
    """Rated leakage limit of an aluminium electrolytic: I_L ≤ 0.01·C[µF]·V_R[V] µA or 3 µA,
    whichever is greater, 1–5 min after rated voltage at 20 °C [S15]. Returned in amperes.

    Leakage rises with temperature [S15]; this is the room-temperature rating.
    """
    import numpy as np

    c_uf = np.asarray(c_farad, dtype=float) * 1e6
    i_ua = np.maximum(0.01 * c_uf * np.asarray(v_rated, dtype=float), 3.0)
    return i_ua * 1e-6


def leakage_margin(r, c_farad, vcc, v_rated) -> np.ndarray:
    """Charging current at the threshold point, VCC/(3R), divided by the rated leakage.

    Below :data:`LEAKAGE_MARGIN_MIN` the timing is unreliable (common practice, facts §6). When
    the capacitor's rating is unknown, pass ``vcc``: the part must be rated at least that.
    """
    import numpy as np

    i_charge = np.asarray(vcc, dtype=float) / (3.0 * np.asarray(r, dtype=float))
    return i_charge / electrolytic_leakage_a(c_farad, v_rated)


def leakage_ok(r, c_farad, vcc, v_rated) -> np.ndarray:
    """True where :func:`leakage_margin` is at least :data:`LEAKAGE_MARGIN_MIN`."""
    return leakage_margin(r, c_farad, vcc, v_rated) >= LEAKAGE_MARGIN_MIN


# --------------------------------------------------------------------------- cautions
# The caution texts live in one table, selector.core.cautions; re-exported here (older name).
from selector.core.cautions import CAUTIONS  # noqa: E402,F401
