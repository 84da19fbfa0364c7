"""The search for the Schmitt-trigger inverter oscillator finds the same best error as a plain
exhaustive reference written here: every network of 1-3 parts listed with itertools, the
limits applied with plain formulas, and the times from the RC law between the thresholds
(t_high = R·C·ln((1 − vt−)/(1 − vt+)), t_low = R·C·ln(vt+/vt−), thresholds as fractions of VDD;
derived from the first-order RC law, facts.md §0). Nothing here is computed by the search."""

from __future__ import annotations

import itertools
import math
from collections import Counter

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from selector.core.errors import NothingFeasible
from selector.core.search import Limits, Target, search_timing
from selector.core.types import StockLine

E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]  # IEC 60063 E12 decade
KEY = "schmitt-inverter"


def plain_networks(lines, max_parts, boards):
    """(value, parts, power_fn) for every network of 1..max_parts parts the quantities allow.
    ``power_fn(V)`` is the power in each part with V across the network (plain circuit
    analysis), None for 3-part networks (those cases run without a power limit)."""
    usable = [ln for ln in lines if ln.quantity // boards >= 1]
    res = not usable or usable[0].kind == "resistor"

    def ser(*xs):
        return sum(xs) if res else 1.0 / sum(1.0 / x for x in xs)

    def par(*xs):
        return 1.0 / sum(1.0 / x for x in xs) if res else sum(xs)

    out = []
    for n in range(1, max_parts + 1):
        for combo in itertools.combinations_with_replacement(usable, n):
            cnt = Counter(ln.id for ln in combo)
            if any(c * boards > next(ln.quantity for ln in combo if ln.id == i) for i, c in cnt.items()):
                continue
            v = [ln.value for ln in combo]
            series_ok = res or not any(ln.polarized for ln in combo)
            if n == 1:
                out.append((v[0], combo, lambda V, v=v: [V * V / v[0]]))
            elif n == 2:
                a, b = v
                if series_ok:
                    out.append((ser(a, b), combo, lambda V, a=a, b=b: [(V / (a + b)) ** 2 * a,
                                                                      (V / (a + b)) ** 2 * b]))
                out.append((par(a, b), combo, lambda V, a=a, b=b: [V * V / a, V * V / b]))
            else:
                if series_ok:
                    out.append((ser(*v), combo, None))
                out.append((par(*v), combo, None))
                for k in range(3):
                    a, b = (v[i] for i in range(3) if i != k)
                    if series_ok:
                        out.append((ser(par(a, b), v[k]), combo, None))
                        out.append((par(ser(a, b), v[k]), combo, None))
    return out


def reference_best(r_lines, c_lines, target, lim, max_parts, boards):
    vtm = lim.extra["vt_minus"]
    vtp = vtm + lim.extra["hysteresis"]
    k_high = math.log((1 - vtm) / (1 - vtp))
    k_low = math.log(vtp / vtm)
    qty = {ln.id: ln.quantity for ln in r_lines + c_lines}
    best = None
    for r, r_parts, pfn in plain_networks(r_lines, max_parts, boards):
        if not (lim.min_r_ohm * (1 - 1e-9) <= r <= lim.max_total_r_ohm * (1 + 1e-9)):
            continue
        if lim.r_power_volts > 0 and pfn is not None and any(
                ln.rating is not None and p > lim.r_power_derating * ln.rating * (1 + 1e-9)
                for ln, p in zip(r_parts, pfn(lim.r_power_volts))):
            continue
        for c, c_parts, _p in plain_networks(c_lines, max_parts, boards):
            if c < lim.min_c_f * (1 - 1e-9):
                continue
            if lim.cap_volts > 0 and any(ln.rating is not None and ln.rating * lim.cap_derating(ln.dielectric)
                                         < lim.cap_volts for ln in c_parts):
                continue
            use = Counter(ln.id for ln in r_parts + c_parts)
            if any(n * boards > qty[i] for i, n in use.items()):
                continue
            th, tl = k_high * r * c, k_low * r * c
            if 1.0 / (th + tl) > lim.max_freq_hz * (1 + 1e-9):
                continue
            e = max(abs(th / target.t_high - 1), abs(tl / target.t_low - 1))
            if e <= 1.0 and (best is None or e < best):
                best = e
    return best


def _stock(draw, kind, n, start, decades):
    out = []
    for i in range(n):
        value = draw(st.sampled_from(E12)) * draw(st.sampled_from(decades))
        qty = draw(st.integers(1, 3))
        if kind == "resistor":
            out.append(StockLine(start + i, kind, value, 0.05, 0.05, qty,
                                 rating=draw(st.sampled_from([None, 0.125, 0.25]))))
        else:
            diel = draw(st.sampled_from(["film", "C0G", "electrolytic"]))
            out.append(StockLine(start + i, kind, value, 0.1, 0.1, qty, dielectric=diel,
                                 rating=draw(st.sampled_from([None, 6.3, 50.0])),
                                 polarized=diel == "electrolytic"))
    return out


@st.composite
def cases(draw):
    max_parts = draw(st.integers(1, 3))
    r_lines = _stock(draw, "resistor", draw(st.integers(1, 5 if max_parts < 3 else 3)), 1, [1e3, 1e4, 1e5])
    c_lines = _stock(draw, "capacitor", draw(st.integers(1, 4 if max_parts < 3 else 3)), 100,
                     [1e-10, 1e-9, 1e-8, 1e-7])
    boards = draw(st.integers(1, 2))
    vcc = draw(st.sampled_from([3.3, 5.0, 12.0]))
    vtm = draw(st.sampled_from([0.2, 0.33, 0.38, 0.5]))
    hyst = draw(st.sampled_from([0.06, 0.2, 0.3]))
    lim = Limits(vcc=vcc, min_r_ohm=draw(st.sampled_from([0.0, 8e3, 8e4])),
                 max_total_r_ohm=draw(st.sampled_from([math.inf, 1.7e6, 2e5])),
                 min_c_f=draw(st.sampled_from([0.0, 1e-10])),
                 max_freq_hz=draw(st.sampled_from([math.inf, 3.8e5, 3e3])),
                 r_power_volts=0.0 if max_parts == 3 else draw(st.sampled_from([0.0, vcc, 10 * vcc])),
                 cap_volts=draw(st.sampled_from([0.0, vcc])),
                 cap_derating=lambda d: {"electrolytic": 0.8}.get(d, 0.8), voh=vcc, vol=0.0,
                 extra={"vt_minus": vtm, "hysteresis": hyst, "logic": "hc", "overridden": True})
    rv = draw(st.sampled_from(r_lines)).value
    cv = draw(st.sampled_from(c_lines)).value
    period = (math.log((1 - vtm) / (1 - vtm - hyst)) + math.log((vtm + hyst) / vtm)) * rv * cv
    duty = draw(st.floats(0.3, 0.7))
    target = Target.astable(draw(st.floats(0.7, 1.4)) / period, duty)
    return r_lines, c_lines, target, lim, max_parts, boards, draw(st.integers(1, 6))


@settings(max_examples=80, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(cases())
def test_schmitt_search_matches_exhaustive(case):
    r_lines, c_lines, target, lim, max_parts, boards, pool = case
    expected = reference_best(r_lines, c_lines, target, lim, max_parts, boards)
    try:
        res = search_timing(r_lines, c_lines, target, (KEY,), {KEY: lim}, max_parts=max_parts,
                            boards=boards, pool=pool)
    except NothingFeasible:
        assert expected is None, f"search found nothing, the reference found {expected}"
        return
    assert expected is not None, f"search found {res.best_error}, the reference nothing"
    assert abs(abs(res.best_error) - expected) <= 1e-12 + 1e-9 * expected


def test_reference_enumerator_hand_checks():
    """Hand-checkable (derived): 10 k + 10 k = 20 k and 10 k ∥ 10 k = 5 k; three 1 k parts give
    3 k, 333 Ω, 1.5 k and 667 Ω (each mixed shape listed once per lone part)."""
    r = [StockLine(1, "resistor", 10e3, 0.01, 0.01, 2)]
    assert sorted(round(n[0], 6) for n in plain_networks(r, 2, 1)) == [5e3, 10e3, 20e3]
    r3 = [StockLine(1, "resistor", 1e3, 0.01, 0.01, 3)]
    got = sorted({round(n[0], 3) for n in plain_networks(r3, 3, 1) if len(n[1]) == 3})
    assert got == pytest.approx([333.333, 666.667, 1500.0, 3000.0])
