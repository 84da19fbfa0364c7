"""The Schmitt-trigger inverter oscillator against outside references:
- its closed form against scipy's ODE solver (solve_ivp, a general-purpose reference library)
  integrating the RC node between the two thresholds;
- its netlist run in ngspice (an outside simulator) against the prediction, within 0.3 %
  (margin: the run's timestep is 1/1000 of the shorter half-period and each latch gate has a
  1 ns delay, both far below 0.3 % at these frequencies);
- the laws the worst case relies on (every time monotonic in VT− and in the hysteresis);
- the logic-family table (cited "from memory": the bands must at least be ordered and inside
  the supply).
"""

from __future__ import annotations

import math
import shutil

import numpy as np
import pytest

from selector.core import circuits
from selector.core.circuits.base import Limits, Settings
from selector.core.circuits.schmitt import LOGIC_FAMILIES

KIND = circuits.get("schmitt-inverter")


def _times(r, c, vdd, vtm, vtp):
    lim = Limits(vcc=vdd, extra={"vt_minus": vtm / vdd, "hysteresis": (vtp - vtm) / vdd})
    _f, _d, th, tl = KIND.model({"R": np.array([r]), "C": np.array([c])}, lim, {})
    return float(th[0]), float(tl[0])


def _ode_times(r, c, vdd, vtm, vtp):
    """Integrate dv/dt = (v_out − v)/(R·C) with the output HIGH (VDD) from VT− until v reaches
    VT+, then LOW (0 V) from VT+ until v falls to VT−; the event times are the half-periods."""
    from scipy.integrate import solve_ivp

    def half(v_out, v0, level):
        def hit(_t, y):
            return y[0] - level
        hit.terminal = True
        sol = solve_ivp(lambda _t, y: [(v_out - y[0]) / (r * c)], (0.0, 50 * r * c), [v0],
                        events=hit, rtol=1e-12, atol=1e-15, method="DOP853")
        return float(sol.t_events[0][0])

    return half(vdd, vtm, vtp), half(0.0, vtp, vtm)


@pytest.mark.parametrize("r, c, vdd, vtm, vtp", [
    (10e3, 10e-9, 5.0, 1.6, 2.5),      # 74HC-type typicals at 5 V (from memory, see the module)
    (100e3, 1e-6, 12.0, 4.6, 7.0),     # 4000-type at 12 V
    (47e3, 2.2e-9, 3.3, 0.9, 2.2),     # wide hysteresis
    (1e6, 100e-12, 5.0, 2.45, 2.55),   # narrow hysteresis
])
def test_closed_form_matches_the_ode(r, c, vdd, vtm, vtp):
    th, tl = _times(r, c, vdd, vtm, vtp)
    th_ode, tl_ode = _ode_times(r, c, vdd, vtm, vtp)
    assert th == pytest.approx(th_ode, rel=1e-7)
    assert tl == pytest.approx(tl_ode, rel=1e-7)


def test_times_are_monotonic_in_each_threshold_input():
    """Corners give the exact worst case only if each time is monotonic in each uncertain input
    (tolerance.corners): t_high rises with VT− and with the hysteresis, t_low falls with VT− and
    rises with the hysteresis (derived; checked here on a grid)."""
    from selector.core.circuits.schmitt import factors_of

    vtm = np.linspace(0.1, 0.6, 51)[:, None]
    hyst = np.linspace(0.02, 0.35, 34)[None, :]
    kh, kl = factors_of(vtm, hyst)
    assert np.all(np.diff(kh, axis=0) > 0) and np.all(np.diff(kh, axis=1) > 0)
    assert np.all(np.diff(kl, axis=0) < 0) and np.all(np.diff(kl, axis=1) > 0)


def test_the_thresholds_spread_enters_the_worst_case_and_dominates_it():
    """A 1 % resistor and capacitor spread the frequency by about ±2 %; the 74HC-type threshold
    band (from memory) by far more. The ranking's worst case must show the wider range."""
    from selector.core.networks import build_index
    from selector.core.ranking import evaluate
    from selector.core.search import FoundOption, Target
    from selector.core.types import StockLine

    lim = KIND.limits(Settings(vcc=5.0, options={"logic": "hc"}))
    r = build_index([StockLine(1, "resistor", 12.1e3, 0.01, 0.01, 5)], 1, kind="resistor").network(0)
    c = build_index([StockLine(2, "capacitor", 10e-9, 0.01, 0.01, 5)], 1, kind="capacitor").network(0)
    target = Target.astable(1e4, KIND.natural_duty(lim), duty_given=False)
    opt = evaluate(FoundOption(KIND.key, {"R": r, "C": c}, 0.0), target, lim, 0.05)
    lo, hi = opt.range["frequency_hz"]
    f0 = opt.predicted["frequency_hz"]
    assert (hi - lo) / f0 > 0.5           # thresholds: tens of percent
    assert 0.0 < opt.yield_fraction < 0.5  # most builds miss ±5 % without trimming
    fixed = KIND.limits(Settings(vcc=5.0, options={"logic": "hc", "vt_plus": 2.78, "vt_minus": 1.78}))
    opt2 = evaluate(FoundOption(KIND.key, {"R": r, "C": c}, 0.0), target, fixed, 0.05)
    lo2, hi2 = opt2.range["frequency_hz"]
    assert (hi2 - lo2) / opt2.predicted["frequency_hz"] < 0.05  # parts only: about ±2 %


@pytest.mark.parametrize("key", sorted(LOGIC_FAMILIES))
def test_logic_family_table_is_ordered_and_cited(key):
    fam = LOGIC_FAMILIES[key]
    lo, typ, hi = fam.vt_minus
    h_lo, h_typ, h_hi = fam.hysteresis
    assert 0 < lo < typ < hi < 1 and 0 < h_lo < h_typ < h_hi
    assert hi + h_hi < 1.0                 # VT+ stays below VDD even at both maxima
    assert fam.vdd_min < fam.vdd_max and fam.input_current_a > 0 and fam.delay_s > 0
    assert "data sheet" in fam.source and "from memory" in fam.source


@pytest.mark.skipif(shutil.which("ngspice") is None, reason="ngspice is not installed")
@pytest.mark.parametrize("logic, vdd, r, c", [("hc", 5.0, 12.1e3, 10e-9), ("4000", 12.0, 220e3, 4.7e-9)])
def test_ngspice_agrees_with_the_prediction(logic, vdd, r, c):
    from selector.core import spice
    from selector.services.simulate import find_ngspice, simulate_circuit

    settings = Settings(vcc=vdd, options={"logic": logic})
    lim = KIND.limits(settings)
    f, d, th, tl = (float(x[0]) for x in KIND.model({"R": np.array([r]), "C": np.array([c])}, lim, {}))
    nets = {"R": spice.Network("R", "single", (spice.Part(r),), r),
            "C": spice.Network("C", "single", (spice.Part(c),), c)}
    circuit = spice.Circuit(KIND.key, nets, KIND.spice_chip(settings, None), 0.65,
                            {"frequency_hz": f, "duty": d, "t_high_s": th, "t_low_s": tl}, extra=dict(lim.extra))
    sim = simulate_circuit(circuit, find_ngspice(), 5)
    assert sim["frequency_hz"] == pytest.approx(f, rel=0.003)
    assert sim["t_high_s"] == pytest.approx(th, rel=0.003)
    assert sim["t_low_s"] == pytest.approx(tl, rel=0.003)
    assert math.isclose(sim["duty"], d, abs_tol=0.002)
