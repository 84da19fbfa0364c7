"""Trimmer suggestions (core.trim) against a plain brute force written here.

The timing formulas below are the test's own, from the data sheets: monostable width = ln3·R·C
[S3, S5 in /work/shared/reference/facts.md], standard astable t_high = ln2·(RA+RB)·C and
t_low = ln2·RB·C [S2, S3], RC τ = R·C (definition). The chip's initial error and supply drift
multiply every time (the terms' bands are read from the circuit's limits: they are data, not
formulas). Series and parallel values are written here too. For every offered option the test
enumerates EVERY corner of the other parts, the chip terms, the fixed network's parts and the
trimmer's end-to-end tolerance, solves for the setting in closed form and checks the stated
margins: at least 10 % of travel left at each end, nominal setting within 20-80 % of travel
(decisions of the README, not a published rule). The discharge switch is ideal (RD = 0) in these
checks, so the data sheets' closed forms are the model.
"""

from __future__ import annotations

import dataclasses
import itertools
import math
import random

import numpy as np
import pytest

from selector.core import circuits, trim
from selector.core.circuits.base import Settings, Target
from selector.core.networks import build_index
from selector.core.search import search_timing
from selector.core.types import StockLine

LN2, LN3 = math.log(2.0), math.log(3.0)
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)


def _stock(rng: random.Random):
    rs = []
    for i in range(rng.randint(4, 8)):
        v = rng.choice(E12) * 10 ** rng.randint(2, 5)
        t = rng.choice((0.01, 0.05))
        rs.append(StockLine(1 + i, "resistor", v, t, t, rng.randint(1, 4), location=f"A{i}"))
    cs = []
    for i in range(rng.randint(1, 3)):
        v = rng.choice((1.0, 2.2, 4.7, 10.0, 22.0, 47.0)) * 1e-6
        t = rng.choice((0.1, 0.2))
        cs.append(StockLine(50 + i, "capacitor", v, t, t, 3, dielectric="film", rating=63.0))
    ts = []
    for i in range(rng.randint(1, 3)):
        v = rng.choice((1e3, 2e3, 5e3, 10e3, 20e3, 50e3, 100e3))
        t = rng.choice((0.1, 0.2, 0.3))
        ts.append(StockLine(80 + i, "trimmer", v, t, t, 2, location="T1", rating=0.5))
    return rs, cs, ts


def _combine(shape: str, values, capacitor: bool = False) -> float:
    """Our own series/parallel law for the 1-2 part shapes (capacitors: parallel adds)."""
    if shape == "single":
        return values[0]
    assert shape in ("series", "parallel")
    if (shape == "series") != capacitor:
        return sum(values)
    return 1.0 / sum(1.0 / v for v in values)


def _bands(net):
    return [(p.value * (1 - p.tol_minus), p.value * (1 + p.tol_plus)) for p in net.physical]


def _need(mode: str, role: str, target: Target, c: float, other_r: float, k: float, rd: float = 0.0) -> float:
    """The total resistance in ``role`` that puts the main output on target (closed forms; with a
    discharge switch of RD > 0 the monostable starts from VCC·RD/(R+RD), so its width is
    R·C·ln(3R/(R+RD)) — derived, as in tests/reference/test_discharge_reference.py — solved here by
    plain bisection: the width grows with R)."""
    if mode == "monostable" and rd > 0:
        lo, hi = rd, 1e12
        for _ in range(200):
            mid = math.sqrt(lo * hi)
            if mid * c * math.log(3 * mid / (mid + rd)) * k < target.width:
                lo = mid
            else:
                hi = mid
        return math.sqrt(lo * hi)
    if mode == "monostable":
        return target.width / (LN3 * c * k)
    if mode == "rc":
        return target.tau / c
    period = 1.0 / target.frequency / k  # ln2·(RA + 2RB)·C·k = period
    if role == "RB":
        return (period / (LN2 * c) - other_r) / 2.0
    return period / (LN2 * c) - 2.0 * other_r


def _check_option(o, mode: str, target: Target, limits, accept: float, rd: float = 0.0) -> None:
    kind = circuits.get(o.connection)
    c_net = o.networks["C"]
    fixed = o.networks[o.role]
    other_role = {"RA": "RB", "RB": "RA"}.get(o.role)
    other = o.networks.get(other_role) if other_role else None
    chip = [(1 - u.tol_minus, 1 + u.tol_plus) for u in kind.uncertain(limits)]
    t_band = (o.trimmer.value * (1 - o.trimmer.tol_minus), o.trimmer.value * (1 + o.trimmer.tol_plus))
    axes = (_bands(c_net) + (_bands(other) if other else []) + chip + _bands(fixed) + [t_band])
    nc, no, nk, nf = len(c_net.physical), len(other.physical) if other else 0, len(chip), len(fixed.physical)
    fractions, duties = [], []
    for corner in itertools.product(*axes):
        i = 0
        c = _combine(c_net.shape, corner[i:i + nc], True); i += nc
        r_other = _combine(other.shape, corner[i:i + no]) if other else 0.0; i += no
        k = math.prod(corner[i:i + nk]); i += nk
        f = _combine(fixed.shape, corner[i:i + nf]); i += nf
        t_end = corner[i]
        need = _need(mode, o.role, target, c, r_other, k, rd)
        fractions.append((need - f) / t_end)
        if mode == "astable":
            ra, rb = (need, r_other) if o.role == "RA" else (r_other, need)
            duties.append((ra + rb) / (ra + 2 * rb))
    assert min(fractions) >= trim.TRAVEL_MARGIN - 1e-9, (o, min(fractions))
    assert max(fractions) <= 1 - trim.TRAVEL_MARGIN + 1e-9, (o, max(fractions))
    # the nominal build: its setting as stated, and near mid-travel
    c0 = _combine(c_net.shape, [p.value for p in c_net.physical], True)
    r0 = _combine(other.shape, [p.value for p in other.physical]) if other else 0.0
    f0 = _combine(fixed.shape, [p.value for p in fixed.physical])
    s0 = _need(mode, o.role, target, c0, r0, 1.0, rd) - f0
    assert o.setting == pytest.approx(s0, rel=1e-9)
    assert trim.NOMINAL_BAND[0] - 1e-9 <= s0 / o.trimmer.value <= trim.NOMINAL_BAND[1] + 1e-9
    # the stated worst-corner margin is the brute force's
    assert o.margin == pytest.approx(min(min(fractions), 1 - max(fractions)), rel=1e-6, abs=1e-9)
    if mode == "astable" and target.duty_given:
        assert all(abs(d / target.duty - 1) <= accept + 1e-9 for d in duties)


def _run(mode: str, target: Target, rs, cs, ts, accept=0.05, rd: float = 0.0):
    key = {"astable": "standard"}.get(mode, mode)
    kind = circuits.get(key)
    # the 555's discharge switch is ideal here (RD = 0) so the closed forms above are the model; the
    # trimmer pass solves with the circuit's own model, whatever RD it holds (its law has its own
    # checks in tests/reference/test_discharge_reference.py)
    lim = {key: dataclasses.replace(kind.limits(Settings()), discharge_ohms=rd)}
    try:
        res = search_timing(rs, cs, target, (key,), lim, max_parts=2, pool=10)
    except Exception:  # nothing feasible on this stock
        return None, lim, []
    idx = build_index(rs, max_parts=2, kind="resistor")
    return res, lim, trim.suggest(res.options, target, lim, ts, idx, accept)


def _cases(seed: int):
    rng = random.Random(seed)
    rs, cs, ts = _stock(rng)
    cases = [("monostable", Target("monostable", width=rng.uniform(0.01, 2.0))),
             ("rc", Target("rc", tau=rng.uniform(1e-3, 1.0))),
             ("astable", Target.astable(rng.uniform(1.0, 200.0), rng.uniform(0.55, 0.9)))]
    return rs, cs, ts, cases


@pytest.mark.parametrize("seed", range(12))
def test_offered_trimmer_range_covers_the_target_at_every_corner(seed):
    """Random small stocks and targets: every option offered passes the brute-force corner check."""
    rs, cs, ts, cases = _cases(seed)
    for mode, target in cases:
        _res, lim, opts = _run(mode, target, rs, cs, ts)
        for o in opts:
            _check_option(o, mode, target, next(iter(lim.values())), 0.05)
        assert len(opts) <= trim.MAX_OPTIONS


def test_monostable_trimmer_range_with_the_discharge_switch():
    """The same brute force with a 300 Ω discharge switch (a deliberately large RD, so the start
    level matters): the trimmer pass follows the circuit's own model, RD included."""
    checked = 0
    for seed in range(6):
        rs, cs, ts, cases = _cases(seed)
        mode, target = cases[0]
        _res, lim, opts = _run(mode, target, rs, cs, ts, rd=300.0)
        for o in opts:
            _check_option(o, mode, target, lim["monostable"], 0.05, rd=300.0)
            checked += 1
    assert checked >= 3  # not vacuous


def test_the_sweep_offers_options_in_every_mode():
    """The seeds above are not vacuous: each mode gets trimmer options on some stocks."""
    count = {"monostable": 0, "rc": 0, "astable": 0}
    for seed in range(12):
        rs, cs, ts, cases = _cases(seed)
        for mode, target in cases:
            count[mode] += len(_run(mode, target, rs, cs, ts)[2])
    assert all(n >= 3 for n in count.values()), count


@pytest.mark.parametrize("seed", range(8))
def test_none_missed_over_the_same_capacitor_networks(seed):
    """Completeness against brute force: over the search's capacitor networks, every 1-2 part fixed
    network and every trimmer, a valid option exists exactly when suggest offers one, and the
    best offered margin step equals the brute force's best (monostable, closed form)."""
    rng = random.Random(100 + seed)
    rs, cs, ts = _stock(rng)
    target = Target("monostable", width=rng.uniform(0.05, 1.5))
    res, lim, opts = _run("monostable", target, rs, cs, ts)
    if res is None:
        return
    limits = lim["monostable"]
    chip = [(1 - u.tol_minus, 1 + u.tol_plus) for u in circuits.get("monostable").uncertain(limits)]
    k_lo, k_hi = math.prod(b[0] for b in chip), math.prod(b[1] for b in chip)
    idx = build_index(rs, max_parts=2, kind="resistor")
    best = None
    for base in res.options:
        c_net = base.networks["C"]
        cb = _bands(c_net)
        c_lo = _combine(c_net.shape, [b[0] for b in cb], True)
        c_hi = _combine(c_net.shape, [b[1] for b in cb], True)
        c0 = c_net.value
        need_lo, need_hi = target.width / (LN3 * c_hi * k_hi), target.width / (LN3 * c_lo * k_lo)
        need0 = target.width / (LN3 * c0)
        for fid in range(len(idx)):
            f = idx.network(fid)
            fb = _bands(f)
            f_lo, f_hi = _combine(f.shape, [b[0] for b in fb]), _combine(f.shape, [b[1] for b in fb])
            use = {}
            for net in (c_net, f):
                for ln, n in net.parts:
                    use[ln.id] = use.get(ln.id, 0) + n
            if any(n > ln.quantity for net in (c_net, f) for ln, _ in net.parts for n in [use[ln.id]]):
                continue
            if f_lo < limits.min_r_ohm:
                continue
            for t in ts:
                t_lo, t_hi = t.value * (1 - t.tol_minus), t.value * (1 + t.tol_plus)
                if f_hi + t_hi > limits.max_total_r_ohm:
                    continue
                if limits.r_power_volts and (limits.r_power_volts ** 2 / (4 * f_lo) > 0.5 * t.rating or any(
                        p.rating is not None and limits.r_power_volts ** 2 / f_lo > 0.5 * p.rating
                        for p in f.physical)):
                    continue
                nominal = (need0 - f.value) / t.value
                if not (trim.NOMINAL_BAND[0] - 1e-12 <= nominal <= trim.NOMINAL_BAND[1] + 1e-12):
                    continue
                m = min((need_lo - f_hi) / t_hi, 1 - (need_hi - f_lo) / t_lo)
                if m >= trim.TRAVEL_MARGIN - 1e-12:
                    best = m if best is None else max(best, m)
    assert (best is not None) == bool(opts)
    if opts:
        step = trim.MARGIN_STEP
        assert math.floor(opts[0].margin / step + 1e-9) == math.floor(best / step + 1e-9)


def test_solve_r_inverts_the_model_exactly():
    """The bisection on the circuit's own model returns ln3·R·C = W to float precision [S3, S5]."""
    kind = circuits.get("monostable")
    lim = dataclasses.replace(kind.limits(Settings()), discharge_ohms=0.0)  # ideal switch: ln3·R·C

    def fn(r, inputs):
        return kind.model({"R": r, "C": inputs[0]}, lim, {})

    c = np.array([[1e-6, 10e-6, 0.47e-6]])
    r = trim.solve_r(fn, c, 0, 1.0)
    assert np.allclose(LN3 * r * c[0], 1.0, rtol=1e-12)


def test_travel_margin_is_the_nearer_end_at_the_worst_corner():
    # need 4..6 kΩ, fixed 1 kΩ exactly, trimmer 10 kΩ ±10 % → s 3..5 kΩ; low end 3/11, high end 1 − 5/9
    m = trim.travel_margin(4e3, 6e3, 1e3, 1e3, 9e3, 11e3)
    assert float(m) == pytest.approx(min(3 / 11, 1 - 5 / 9))


def test_wanted_follows_the_threshold_and_the_flag():
    assert trim.wanted(0.89, False) and not trim.wanted(0.90, False) and trim.wanted(0.99, True)
    assert trim.wanted(None, False)


def test_trimmer_power_is_checked_against_half_its_rating():
    """A 1 kΩ fixed part at 9 V lets a trimmer dissipate up to 9²/(4·1k) = 20 mW: refused for a
    trimmer rated 30 mW (50 % derating, common practice), accepted at 50 mW."""
    from types import SimpleNamespace

    lim = circuits.get("monostable").limits(Settings())
    fixed = SimpleNamespace(vmin=1e3, physical=())
    weak = StockLine(1, "trimmer", 10e3, 0.2, 0.2, 1, rating=0.03)
    ok = StockLine(2, "trimmer", 10e3, 0.2, 0.2, 1, rating=0.05)
    assert not trim._power_ok(fixed, weak, lim)
    assert trim._power_ok(fixed, ok, lim)
