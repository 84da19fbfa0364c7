"""The yield draws the chip's own terms: a Monte Carlo written here (plain numpy, its own seed)
with the same terms must agree with the tool's yield within 3 standard errors, and the parts-only
yield must be what a parts-only Monte Carlo of the same seed gives.

Terms and their sources: bipolar 555 initial timing error, astable 2.25 % typ, monostable 1 % typ;
supply drift astable 0.3 %/V, monostable 0.1 %/V typ [S1 bipolar 555 data sheet, facts §6];
supply tolerance ±5 % by default (common practice); each term drawn like a part (uniform in its
band, as --distribution uniform) as a factor on every time. Steering diode Vf ±30 mV at 1 mA
(from memory, not confirmed; parts.DIODE_VF_SPREAD). Timing laws: facts §1 (standard astable),
§4 (monostable), both [S2, S3]; the diode charge with a Shockley diode is the model checked against
scipy and ngspice in tests/reference/test_diode_shockley_reference.py; the diode test below integrates it
itself (diode_times), not with the code under test. The discharge switch's on-resistance (bipolar
12 Ω: DIS 180 mV at 15 mA [S1]) enters t_low and the monostable's start level, written out here
(t_low_rd, width_rd; derived, checked against scipy and ngspice in
tests/reference/test_discharge_reference.py).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from selector.core.types import StockLine
from selector.services.find_timing import TimingRequest, plan_timing

LN2, LN3 = math.log(2.0), math.log(3.0)
E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]  # IEC 60063 E12
N_MINE = 400_000


def stock(r_tol=0.02, c_tol=0.05):
    rl = [StockLine(i + 1, "resistor", m * d, r_tol, r_tol, 10, location=f"R{i}", rating=0.25)
          for i, (m, d) in enumerate((m, d) for d in (1e3, 1e4, 1e5) for m in E12)]
    cl = [StockLine(500 + i, "capacitor", m * d, c_tol, c_tol, 10, location=f"C{i}", rating=50.0,
                    dielectric="film-PP") for i, (m, d) in enumerate((m, d) for d in (1e-9, 1e-8, 1e-7)
                                                                       for m in E12)]
    return rl, cl


RD = 0.180 / 15e-3   # [S1] bipolar DIS saturation 180 mV typ at 15 mA → 12 Ω


def t_low_rd(ra, rb, c, rd=RD):
    """C falls from 2VCC/3 through RB + RA∥RD toward d = VCC·RD/(RA+RD) (the Thevenin of VCC–RA–RD
    at DIS), to VCC/3; in units of VCC."""
    d = rd / (ra + rd)
    return (rb + ra * rd / (ra + rd)) * c * np.log((2 / 3 - d) / (1 / 3 - d))


def width_rd(r, c, rd=RD):
    """C starts from VCC·RD/(R+RD) (R and the closed switch divide VCC), charges toward VCC to 2VCC/3."""
    return r * c * np.log((1 - rd / (r + rd)) / (1 / 3))


def uniform(rng, v, t, n):
    return v * (1 + rng.uniform(-t, t, n))


def within_3se(p_tool, n_tool, p_mine, n_mine):
    se = math.sqrt(max(p_tool * (1 - p_tool), 1e-12) / n_tool + max(p_mine * (1 - p_mine), 1e-12) / n_mine)
    return abs(p_tool - p_mine) <= 3 * se + 1e-12


def astable_ok(th, tl, target_f, target_d, accept):
    f, d = 1 / (th + tl), th / (th + tl)
    return (np.abs(f / target_f - 1) <= accept) & (np.abs(d / target_d - 1) <= accept)


def diode_times(ra, rb, c, vcc, vf, n):
    """(t_high, t_low) of the diode-steered astable, written here (not timing.diode_shockley_times):
    t_high = ∫ C dVc / I from VCC/3 to 2VCC/3 by 24-point Gauss-Legendre, I = (VCC − Vc − V)/RA
    with the diode voltage V found by bisection from (VCC − Vc − V)/RA = Is·(exp(V/nVt) − 1) + V/RB
    (Shockley, Is from Vf at 1 mA, Vt = kT/q at 300 K from the SI constants); t_low with the
    discharge switch (t_low_rd: the diode is reverse biased, RB discharges C, facts §2 [S8])."""
    nvt = n * 1.380649e-23 * 300.15 / 1.602176634e-19
    isat = 1e-3 / np.expm1(vf / nvt)
    x, w = np.polynomial.legendre.leggauss(24)
    th = np.zeros(np.broadcast(ra, rb, c, vf).shape)
    for xi, wi in zip(x, w):
        a = vcc - vcc / 2 - xi * vcc / 6           # VCC − Vc at the node, Vc in [VCC/3, 2VCC/3]
        lo, hi = np.zeros_like(th), np.full_like(th, a)
        for _ in range(52):                        # g(V) falls with V: bisection on [0, a]
            mid = (lo + hi) / 2
            up = (a - mid) / ra - isat * np.expm1(mid / nvt) - mid / rb > 0
            lo, hi = np.where(up, mid, lo), np.where(up, hi, mid)
        th = th + wi * (vcc / 6) * c * ra / (a - (lo + hi) / 2)
    return th, t_low_rd(ra, rb, c)


@pytest.mark.parametrize("vcc, vcc_tol", [(9.0, None), (15.0, 0.10)])
def test_standard_astable_yield_with_chip_terms_matches_our_own_monte_carlo(vcc, vcc_tol):
    rl, cl = stock()
    f, duty, accept = 1234.0, 0.62, 0.03
    opts = {"vcc_tol": vcc_tol} if vcc_tol is not None else {}
    req = TimingRequest(mode="astable", freq_hz=f, duty=duty, connection="standard", vcc=vcc, top=3,
                        max_parts=1, accept=accept, seed=5, samples=20_000, options=opts)
    rep = plan_timing(rl, cl, req)
    rng = np.random.default_rng(987)
    init = 0.0225                              # [S1] astable 2.25 % typ
    drift = 0.003 * vcc * (0.05 if vcc_tol is None else vcc_tol)   # [S1] 0.3 %/V × the supply band
    for o in rep.ranked:
        ra, rb, c = (o.found.networks[k].physical[0] for k in ("RA", "RB", "C"))
        RA, RB, C = (uniform(rng, p.value, p.tol_plus, N_MINE) for p in (ra, rb, c))
        k = uniform(rng, 1.0, init, N_MINE) * uniform(rng, 1.0, drift, N_MINE)
        th, tl = LN2 * (RA + RB) * C, t_low_rd(RA, RB, C)     # facts §1 [S2, S3], RD as above
        mine = float(np.mean(astable_ok(th * k, tl * k, f, duty, accept)))
        mine_parts = float(np.mean(astable_ok(th, tl, f, duty, accept)))
        assert within_3se(o.yield_fraction, 20_000, mine, N_MINE), (o.yield_fraction, mine)
        assert within_3se(o.yield_parts_only, 20_000, mine_parts, N_MINE), (o.yield_parts_only, mine_parts)
        assert o.yield_fraction <= o.yield_parts_only + 0.02   # more spread, not less


def test_parts_only_yield_is_the_parts_only_draw_of_the_same_seed():
    # The parts-only yield replays the draws a parts-only Monte Carlo makes with the same seed:
    # numpy's generator seeded with --seed, one uniform [0, 1) row per part in role order
    # (RA, RB, C), value·(1 − t + u·2t) (the tool's documented uniform model). Same seed, same
    # figure, so yields saved before the chip terms existed are reproduced.
    rl, cl = stock()
    f, duty, accept, seed, n = 987.0, 0.7, 0.02, 11, 10_000
    req = TimingRequest(mode="astable", freq_hz=f, duty=duty, connection="standard", vcc=9.0, top=3,
                        max_parts=1, accept=accept, seed=seed, samples=n)
    for o in plan_timing(rl, cl, req).ranked:
        parts = [o.found.networks[k].physical[0] for k in ("RA", "RB", "C")]
        u = np.random.default_rng(seed).random((3, n))
        RA, RB, C = (p.value * (1 - p.tol_minus + u[i] * (p.tol_minus + p.tol_plus)) for i, p in enumerate(parts))
        want = float(np.mean(astable_ok(LN2 * (RA + RB) * C, t_low_rd(RA, RB, C), f, duty, accept)))
        assert o.yield_parts_only == pytest.approx(want, abs=1e-12)


def test_monostable_yield_with_chip_terms():
    rl, cl = stock()
    w, accept = 0.0123, 0.03
    req = TimingRequest(mode="monostable", width_s=w, vcc=12.0, top=3, max_parts=1, accept=accept,
                        seed=2, samples=20_000)
    rep = plan_timing(rl, cl, req)
    rng = np.random.default_rng(55)
    for o in rep.ranked:
        r, c = (o.found.networks[k].physical[0] for k in ("R", "C"))
        R, C = (uniform(rng, p.value, p.tol_plus, N_MINE) for p in (r, c))
        k = uniform(rng, 1.0, 0.01, N_MINE) * uniform(rng, 1.0, 0.001 * 12.0 * 0.05, N_MINE)  # [S1]
        mine = float(np.mean(np.abs(width_rd(R, C) * k / w - 1) <= accept))     # facts §4 [S3, S5], RD
        assert within_3se(o.yield_fraction, 20_000, mine, N_MINE), (o.yield_fraction, mine)


def test_diode_steered_yield_draws_the_vf_spread():
    rl, cl = stock()
    f, duty, accept, vcc = 1500.0, 0.3, 0.03, 5.0
    req = TimingRequest(mode="astable", freq_hz=f, duty=duty, connection="diode", vcc=vcc, top=2,
                        max_parts=1, accept=accept, seed=4, samples=20_000)
    rep = plan_timing(rl, cl, req)
    rng = np.random.default_rng(77)
    n = 200_000
    for o in rep.ranked:
        ra, rb, c = (o.found.networks[k].physical[0] for k in ("RA", "RB", "C"))
        RA, RB, C = (uniform(rng, p.value, p.tol_plus, n) for p in (ra, rb, c))
        vf = 0.62 + rng.uniform(-0.03, 0.03, n)
        k = uniform(rng, 1.0, 0.0225, n) * uniform(rng, 1.0, 0.003 * vcc * 0.05, n)
        th, tl = diode_times(RA, RB, C, vcc, vf, 1.9)
        mine = float(np.mean(astable_ok(th * k, tl * k, f, duty, accept)))
        assert within_3se(o.yield_fraction, 20_000, mine, n), (o.yield_fraction, mine)
        # the worst-case range contains every one of our samples (the same corners)
        fr = 1 / ((th + tl) * k)
        lo, hi = o.range["frequency_hz"]
        assert lo <= fr.min() * (1 + 1e-9) and fr.max() <= hi * (1 + 1e-9)
