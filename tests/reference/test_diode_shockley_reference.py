"""The diode-steered astable's t_high with a Shockley steering diode, against an independent
integration of the same circuit with scipy (``solve_ivp``, the diode voltage found by ``brentq`` at
every step; neither the Wright omega closed form nor the quadrature of the code under test).

Circuit (facts §2 topology [S8]): RA from VCC to DIS, the diode (anode DIS) in parallel with RB from
DIS to the capacitor; while the output is high C charges from VCC/3 to 2VCC/3 with
C·dVc/dt = (VCC − Vc − V)/RA, where (VCC − Vc − V)/RA = Is·(exp(V/(n·Vt)) − 1) + V/RB (Shockley).
Diode: Vf = 0.62 V at 1 mA, n = 1.9 (Is ≈ 3 nA; parts.DIODE_VF_DEFAULT, sources there) and a
Schottky at 0.32 V / n = 1.05. Grid of the issue: VCC 5/9/12/15 V, RB/RA 0.3/1/3, charge
currents 0.05–2 mA (the mean charging current VCC/(2·RA)). Target: ≤ 0.2 %.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

scipy_integrate = pytest.importorskip("scipy.integrate")
scipy_optimize = pytest.importorskip("scipy.optimize")

from selector.core import timing as T  # noqa: E402
from selector.core.parts import THERMAL_V  # noqa: E402

import reference_diode  # noqa: E402

C = 10e-9


def ode_t_high(ra, rb, vcc, vf, n):
    """t_high by scipy at this module's C (tests/reference_diode.py)."""
    return reference_diode.ode_t_high(ra, rb, vcc, vf, n, C)


GRID = [(vcc, ratio, i_ma) for vcc in (5.0, 9.0, 12.0, 15.0) for ratio in (0.3, 1.0, 3.0)
        for i_ma in (0.05, 0.2, 0.5, 2.0)]


@pytest.mark.parametrize("vf, n", [(0.62, 1.9), (0.32, 1.05)])
def test_shockley_t_high_matches_a_scipy_ode_over_the_grid(vf, n):
    worst = 0.0
    for vcc, ratio, i_ma in GRID:
        ra = vcc / 2.0 / (i_ma * 1e-3)
        rb = ratio * ra
        want = ode_t_high(ra, rb, vcc, vf, n)
        got = float(T.diode_shockley_times(ra, rb, C, vcc, vf, n)[0])
        worst = max(worst, abs(got / want - 1))
    assert worst <= 1e-6   # the issue asks for 0.2 %; measured 4e-11 (silicon) and 3e-11 (Schottky)


def test_shockley_inverse_and_monotone_in_ra():
    rng = np.random.default_rng(7)
    ra = 10 ** rng.uniform(2.5, 6.5, 400)
    rb = ra * 10 ** rng.uniform(-1.5, 1.5, 400)
    vcc = rng.choice([5.0, 9.0, 12.0, 15.0], 400)
    th = T.diode_shockley_times(ra, rb, C, vcc, 0.62, 1.9)[0]
    back = T.diode_shockley_ideal_ra(th, rb, C, vcc, 0.62, 1.9)
    assert np.max(np.abs(back / ra - 1)) < 1e-11
    up = T.diode_shockley_times(ra * (1 + 1e-9), rb, C, vcc, 0.62, 1.9)[0]
    assert np.all(up > th)



# The inverse (the RA the search needs for a wanted t_high) at the corners of its input range: RB/RA
# from 1e-3 to 1e3, VCC down to 2 V with Vf up to 0.99·VCC/3, n 1 and 2. The wanted time comes from
# the scipy ODE (tests/reference_diode.py), so the RA found is checked against the circuit itself,
# not against the code's own forward model; 1e-9 is the ODE's own accuracy with margin (measured
# 4e-11 above).
INVERSE_CORNERS = [  # (ra, rb, vcc, vf, n)
    (1e4, 1e1, 9.0, 0.62, 1.9), (1e4, 1e7, 9.0, 0.62, 1.9), (50.0, 5e4, 5.0, 0.65, 2.0),
    (2e6, 2e3, 15.0, 0.32, 1.05), (3e3, 3e3, 2.0, 0.66, 1.9), (3e4, 1e5, 3.0, 0.99, 1.0),
    (1e5, 1e4, 4.5, 0.7, 2.0),
]


@pytest.mark.parametrize("ra, rb, vcc, vf, n", INVERSE_CORNERS)
def test_shockley_inverse_recovers_ra_from_the_scipy_ode_time(ra, rb, vcc, vf, n):
    want = ode_t_high(ra, rb, vcc, vf, n)
    got = float(T.diode_shockley_ideal_ra(want, rb, C, vcc, vf, n))
    assert abs(got / ra - 1) <= 1e-9


def test_shockley_inverse_round_trip_to_float_precision_over_a_wide_range():
    """The inverse against the forward model (itself checked against scipy and ngspice above) over
    random inputs well beyond the search's: the inverse's stop rule (a Newton step of at most
    1e-8·RA, then no confirming step) leaves RA within a few ulp of the root everywhere."""
    rng = np.random.default_rng(11)
    m = 20000
    ra = 10 ** rng.uniform(1, 7, m)
    rb = ra * 10 ** rng.uniform(-3, 3, m)
    vcc = rng.choice([2.0, 3.0, 4.5, 5.0, 9.0, 12.0, 15.0, 18.0], m)
    vf = np.minimum(rng.choice([0.2, 0.32, 0.62, 0.65, 0.7], m),
                    vcc / 3 * rng.choice([0.5, 0.9, 0.99, 0.999], m))
    n = rng.choice([1.0, 1.05, 1.9, 2.0], m)
    c = 10 ** rng.uniform(-11, -4, m)
    th = T.diode_shockley_times(ra, rb, c, vcc, vf, n)[0]
    back = T.diode_shockley_ideal_ra(th, rb, c, vcc, vf, n)
    assert np.max(np.abs(back / ra - 1)) <= 1e-13   # measured 2.2e-15
    assert np.max(np.abs(T.diode_shockley_times(back, rb, c, vcc, vf, n)[0] / th - 1)) <= 1e-14

def test_ideal_diode_limit_and_wright_omega():
    # Vf = 0: an ideal steering diode, t_high = ln2·RA·C (facts §2, derived)
    assert float(T.diode_shockley_times(10e3, 10e3, C, 9.0, 0.0, 1.9)[0]) == pytest.approx(
        math.log(2) * 10e3 * C, rel=1e-12)
    special = pytest.importorskip("scipy.special")
    z = np.array([-40.0, -3.0, 0.0, 0.5, 3.0, 30.0, 800.0])
    assert np.allclose(T.log_wright_omega(z), np.log(special.wrightomega(z)), rtol=1e-13, atol=1e-14)


# ----------------------------------------------------------------------------- ngspice
# Our own netlist of the charge alone (written here, not selector's netlist code): a DC supply,
# RA from VCC to DIS, the steering diode (SPICE D, IS from Vf at 1 mA, N = n, no series resistance
# or capacitance) and RB in parallel from DIS to the capacitor, C from VCC/3 at t = 0; ngspice
# measures when the capacitor reaches 2VCC/3. ngspice is an outside general-purpose simulator.
NGSPICE_NETLIST = """* diode-steered charge, Shockley diode
VCC vcc 0 DC {vcc}
RA vcc dis {ra}
DSTEER dis cap SHOCK
RB dis cap {rb}
C1 cap 0 {c} IC={v0}
.model SHOCK D(IS={isat:.10g} N={n} RS=0 CJO=0)
.options reltol=1e-7 abstol=1e-15 vntol=1e-9
.tran {step} {stop} UIC
.meas tran tcross WHEN v(cap)={v1} RISE=1
.end
"""


def ngspice_t_high(tmp_path, ra, rb, vcc, vf, n):
    import subprocess

    isat = 1e-3 / math.expm1(vf / (n * THERMAL_V))
    guess = 1.5 * (ra + rb) * C
    text = NGSPICE_NETLIST.format(vcc=vcc, ra=ra, rb=rb, c=C, v0=vcc / 3, v1=2 * vcc / 3, isat=isat, n=n,
                                  step=guess / 20000, stop=guess)
    path = tmp_path / "charge.cir"
    path.write_text(text)
    out = subprocess.run(["ngspice", "-b", str(path)], capture_output=True, text=True, timeout=60).stdout
    line = next(ln for ln in out.splitlines() if ln.strip().lower().startswith("tcross"))
    return float(line.split("=")[1].split()[0])


NG_GRID = [(vcc, ratio, i_ma) for vcc in (5.0, 9.0, 12.0, 15.0) for ratio in (0.3, 1.0, 3.0)
           for i_ma in (0.05, 0.5, 2.0)]


@pytest.mark.skipif(__import__("shutil").which("ngspice") is None, reason="ngspice is not installed")
def test_shockley_t_high_matches_ngspice_over_the_grid(tmp_path):
    worst = 0.0
    for vcc, ratio, i_ma in NG_GRID:
        ra = vcc / 2.0 / (i_ma * 1e-3)
        rb = ratio * ra
        want = ngspice_t_high(tmp_path, ra, rb, vcc, 0.62, 1.9)
        got = float(T.diode_shockley_times(ra, rb, C, vcc, 0.62, 1.9)[0])
        worst = max(worst, abs(got / want - 1))
    assert worst <= 0.002   # the target 0.2 %
