"""Timing physics of the 555 connections and of plain RC parts (pure numpy).

Everything here rests on ONE primitive, the first-order RC law (facts.md §0, derived): a capacitor
charging or discharging through R toward an asymptote ``v_inf`` goes from ``v0`` to ``v1`` in

    t = R·C·ln((v_inf − v0) / (v_inf − v1)).

The 555 comparators switch at VCC/3 (trigger) and 2·VCC/3 (threshold) [S4, S5 data sheets]. Every
function accepts floats or numpy arrays, broadcasts them, and returns float arrays (0-d for scalar
input). Units are SI: ohms, farads, volts, seconds, hertz. Resistances and capacitances are
assumed positive; callers validate parts at their public boundary.

Duty everywhere in this module means the fraction of the period the output is HIGH (one CMOS data
sheet [S4] defines it as the fraction LOW; we do not).
"""

from __future__ import annotations

import numpy as np

from selector.core.errors import OutOfRange

LN2 = float(np.log(2.0))
LN3 = float(np.log(3.0))

from selector.core.parts import DIODE_VF_DEFAULT  # noqa: E402,F401  (the one default, re-exported)

# Comparator levels on a supply normalised to 3 units (VCC/3 = 1, 2·VCC/3 = 2). Using whole
# numbers makes the ratios exact in floating point, so ln 2 and ln 3 come out bit-exact.
_V_FULL, _V_UP, _V_LOW = 3.0, 2.0, 1.0


def _f(x) -> np.ndarray:
    return np.asarray(x, dtype=float)


# ln of the standard astable's charging ratio (3 − 1)/(3 − 2), as ``crossing_time`` computes it
# (a 0-d array): the factor of t_high = (RA + RB)·C·ln 2, worked out once
_LN2_UP = np.log((_f(_V_FULL) - _f(_V_LOW)) / (_f(_V_FULL) - _f(_V_UP)))


def crossing_time(r, c, v_inf, v0, v1) -> np.ndarray:
    """Time for an RC node to move from ``v0`` to ``v1`` while relaxing toward ``v_inf``.

    ``t = r·c·ln((v_inf − v0)/(v_inf − v1))``. Where ``v1`` is not between ``v0`` (inclusive) and
    ``v_inf`` (exclusive) the level is never reached and the result is ``inf``; this is how
    "no oscillation" (e.g. an output that cannot rise above the threshold) shows up.
    """
    r, c, v_inf, v0, v1 = (_f(a) for a in (r, c, v_inf, v0, v1))
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = (v_inf - v0) / (v_inf - v1)
        t = r * c * np.log(ratio)
    reached = np.isfinite(ratio) & (ratio >= 1.0)
    return np.where(reached, t, np.inf)


# --------------------------------------------------------------------------- standard astable
def standard_times(ra, rb, c, rd=0.0) -> tuple[np.ndarray, np.ndarray]:
    """Standard two-resistor astable (RA: VCC→DIS, RB: DIS→THR/TRIG, C: THR→GND).

    t_high = ln2·(RA+RB)·C (C charges through RA+RB from VCC/3 to 2VCC/3) [S2, S3 bipolar 555
    data sheet]; t_low with the discharge switch's on-resistance ``rd`` is :func:`discharge_low`
    (rd = 0: the data sheets' ln2·RB·C). Duty is always above 50 % because t_high − t_low ≥
    ln2·RA·C − (RA∥RD-term) > 0 for RA > 2·RD.
    """
    ra, rb = _f(ra), _f(rb)
    c = _f(c)
    if ra.ndim == 1 and ra.shape == rb.shape == c.shape:
        # the search's case (equal 1-D arrays): crossing_time's arithmetic without its checks:
        # ln((3 − 1)/(3 − 2)) is the 0-d ln 2 it computes (_LN2_UP), always reached, so
        # (RA + RB)·C·ln 2 in the same order gives the same bits; both results are new arrays
        t_high = (ra + rb) * c * _LN2_UP
        t_low = discharge_low(ra, rb, c, rd)
        if t_low.shape == t_high.shape:
            return t_high, t_low
    t_high = crossing_time(ra + rb, c, _V_FULL, _V_LOW, _V_UP)
    t_low = discharge_low(ra, rb, c, rd)
    t_high, t_low = np.broadcast_arrays(t_high, t_low)
    return np.array(t_high, dtype=float), np.array(t_low, dtype=float)


# --------------------------------------------------------------------------- the discharge half
# While the output is LOW the discharge switch (on-resistance RD) ties DIS to ground. RA still
# feeds DIS from VCC, so seen from DIS (the RB node) the pair VCC–RA–RD is a source of
#     d = VCC·RD/(RA+RD)   behind   RA∥RD = RA·RD/(RA+RD)      (Thevenin; derived)
# and C discharges through RB + RA∥RD toward d, from 2VCC/3 to VCC/3 (facts §0 law):
#     t_low = (RB + RA∥RD)·C·ln((2VCC/3 − d)/(VCC/3 − d)),   with δ = d/VCC = RD/(RA+RD):
#           = (RB + RA∥RD)·C·ln((2 − 3δ)/(1 − 3δ)).
# VCC cancels. It needs d < VCC/3 (RA > 2·RD), else C never falls to the trigger level (inf).
# RD = 0 gives ln2·RB·C [S2, S3]; RA → ∞ gives ln2·(RB+RD)·C, the data sheet's t_L =
# 0.693(R_B+R_D)C [S2]. Putting RD only in series with RB (that form) runs short: RA's current
# through RD also lifts the floor C discharges toward (ngspice: 1.4 % at a CMOS part, 5 V, 40 kHz).
# The diode-steered astable discharges the same way: its diode is reverse biased (DIS sits below
# the capacitor while C discharges), so the same law holds there.
#
# Monotonicity (used by the exact search; derived): t_low is linear and increasing in RB; in RA
# it is strictly DECREASING for RD > 0. Write g = (RB + RD(1 − δ))·L(δ), L = ln((2−3δ)/(1−3δ)),
# δ falling with RA. dg/dδ = (RB + RD(1−δ))·L'(δ) − RD·L(δ) ≥ RD·h(δ), h = (1−δ)L' − L;
# h(0) = 3/2 − ln2 > 0 and, with u = 1 − 3δ, h'(δ) = (1/u − 1/(u+1))·(3(2+u)(1/u + 1/(u+1)) − 6)
# > 0 on 0 ≤ δ < 1/3, so h > 0 and g grows with δ, i.e. falls as RA grows.


def _discharge_terms(ra, rd):
    """(RA∥RD, L) of the discharge law: t_low = (RB + RA∥RD)·C·L; L = ln((2−3δ)/(1−3δ)),
    δ = RD/(RA+RD); L = inf where RA ≤ 2·RD. RA = inf gives (RD, ln 2); RD = 0 gives (0, ln 2)."""
    ra = _f(ra)
    if np.ndim(rd) == 0 and float(rd) > 0 and ra.ndim >= 1:
        fast = _discharge_terms_finite(ra, float(rd))
        if fast is not None:
            return fast
    ra, rd = np.broadcast_arrays(ra, _f(rd))
    with np.errstate(divide="ignore", invalid="ignore"):
        finite = np.isfinite(ra)
        rs = np.where(finite, ra, 1.0)
        on = rd > 0
        delta = np.where(on & finite, rd / (rs + rd), 0.0)
        par = np.where(on, np.where(finite, rs * rd / (rs + rd), rd), 0.0)
        # (2 − 3δ)/(1 − 3δ) on the 3-unit supply, so δ = 0 gives ln 2 bit-exact
        big_l = crossing_time(1.0, 1.0, 3.0 * delta, _V_UP, _V_LOW)
    return par, np.where(delta < 1.0 / 3.0, big_l, np.inf)


def _discharge_terms_finite(ra: np.ndarray, rd: float):
    """``_discharge_terms`` for one RD > 0 and an array of RA that are all finite (None
    otherwise): the general form's arithmetic on the same operands in the same order, without
    the branches that only matter for RA = inf or nan or RD = 0, so the same bits. With every RA
    finite and RD > 0 the general form's δ is RD/(RA+RD) and RA∥RD is RA·RD/(RA+RD); its L is
    crossing_time(1, 1, 3δ, 2, 1) = 1·1·ln(ratio), ratio = (3δ − 2)/(3δ − 1), kept where ratio
    is finite and >= 1, else inf; then inf where δ >= 1/3. Here: ln(ratio) where δ < 1/3 and
    ratio >= 1, else inf — the same, since ratio = +inf gives ln = inf either way and nan or
    −inf fail ``>= 1`` (multiplying by 1.0 is exact)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        if not np.isfinite(ra).all():
            return None
        s = ra + rd
        delta = rd / s
        par = ra * rd / s
        d3 = 3.0 * delta
        ratio = (d3 - _V_UP) / (d3 - _V_LOW)
        big_l = np.where((delta < 1.0 / 3.0) & (ratio >= 1.0), np.log(ratio), np.inf)
    return par, big_l


def discharge_low(ra, rb, c, rd=0.0) -> np.ndarray:
    """t_low of the standard and diode-steered astables with the discharge switch's on-resistance
    ``rd`` (see the law above): (RB + RA∥RD)·C·ln((2 − 3δ)/(1 − 3δ)), δ = RD/(RA+RD); inf where
    RA ≤ 2·RD (the capacitor never falls to VCC/3). RA may be inf (then ln2·(RB+RD)·C)."""
    par, big_l = _discharge_terms(ra, rd)
    return (_f(rb) + par) * _f(c) * big_l


def discharge_rb_for_low(t_low, ra, c, rd=0.0) -> np.ndarray:
    """RB giving exactly ``t_low`` with this RA, C and RD (:func:`discharge_low` is linear in RB):
    t_low/(C·L) − RA∥RD. May be ≤ 0 (no positive RB); −RA∥RD where RA ≤ 2·RD (L = inf)."""
    par, big_l = _discharge_terms(ra, rd)
    return _f(t_low) / (_f(c) * big_l) - par


def standard_ideal(t_high, t_low, c) -> tuple[np.ndarray, np.ndarray]:
    """Exact inverse of :func:`standard_times` for a given C: ``(ra, rb)``.

    rb = t_low/(ln2·c); ra = t_high/(ln2·c) − rb. Where t_high ≤ t_low (duty ≤ 50 %) no positive
    RA exists and ``ra`` is nan.
    """
    k = LN2 * _f(c)
    rb = _f(t_low) / k
    ra = _f(t_high) / k - rb
    return np.where(ra > 0, ra, np.nan), rb


# --------------------------------------------------------------------------- diode-steered astable
def _check_supply_and_drop(vcc, vf) -> tuple[np.ndarray, np.ndarray]:
    vcc, vf = _f(vcc), _f(vf)
    if vcc.ndim == 0 and vf.ndim == 0 and float(vcc) > 0 and 0 <= float(vf) < float(vcc) / 3.0:
        return vcc, vf   # the usual case, a supply and a drop: no array tests (the same checks)
    if np.any(~(vcc > 0)):
        bad = vcc[~(vcc > 0)] if vcc.ndim else vcc
        raise OutOfRange(f"VCC {float(np.ravel(bad)[0]):g} V is not a positive supply voltage")
    if np.any(~(vf >= 0)) or np.any(~(vf < vcc / 3.0)):
        vfb, vccb = np.broadcast_arrays(vf, vcc)
        bad = ~((vfb >= 0) & (vfb < vccb / 3.0))
        i = np.flatnonzero(bad)[0]
        raise OutOfRange(
            f"diode forward drop {np.ravel(vfb)[i]:g} V must be at least 0 V and below VCC/3 "
            f"({np.ravel(vccb)[i] / 3.0:.4g} V at VCC {np.ravel(vccb)[i]:g} V) for the "
            "diode-steered astable"
        )
    return vcc, vf


def diode_off_level(ra, rb, vcc, vf) -> np.ndarray:
    """Capacitor voltage Vc* above which the steering diode stops conducting while charging.

    The diode conducts while RB·(VCC − Vc − Vf) ≥ RA·Vf, i.e. Vc ≤ VCC − Vf·(RA+RB)/RB
    (facts.md §2, derived).
    """
    ra, rb, vcc, vf = _f(ra), _f(rb), _f(vcc), _f(vf)
    return vcc - vf * (ra + rb) / rb


def _diode_high_unchecked(ra, rb, c, vcc, vf) -> np.ndarray:
    ra, rb, c, vcc, vf = np.broadcast_arrays(_f(ra), _f(rb), _f(c), _f(vcc), _f(vf))
    v_low, v_up = vcc / 3.0, 2.0 * vcc / 3.0
    v_star = vcc - vf * (ra + rb) / rb
    # Case 1: the diode conducts for the whole charge (Vc* ≥ 2VCC/3): C charges toward VCC − Vf
    # through RA alone [S8 "shorter duty cycle" formula; facts §2].
    simple = crossing_time(ra, c, vcc - vf, v_low, v_up)
    # Case 2: piecewise. Diode path up to Vc*, then RA+RB toward VCC (facts §2, derived).
    vs = np.clip(v_star, v_low, v_up)
    first = crossing_time(ra, c, vcc - vf, v_low, vs)
    second = crossing_time(ra + rb, c, vcc, vs, v_up)
    piecewise = first + second
    # Case 3 (Vc* ≤ VCC/3) is the piecewise formula with an empty first segment: ln2·(RA+RB)·C.
    return np.where(v_star >= v_up, simple, piecewise)


def diode_times(ra, rb, c, vcc, vf) -> tuple[np.ndarray, np.ndarray]:
    """Diode-steered astable (diode across RB, anode at DIS): charge via RA, discharge via RB.

    Constant-Vf diode model, piecewise-exact (facts.md §2, checked there by numerical
    integration): while the diode conducts, C charges toward VCC − Vf through RA; if RB is small
    against RA the diode turns off at Vc* = VCC − Vf·(RA+RB)/RB and the rest of the charge runs
    through RA+RB toward VCC. t_low = ln2·RB·C (the diode is reverse-biased; DIS saturation
    voltage ignored).

    ``vcc`` must be positive and ``0 ≤ vf < vcc/3``; otherwise :class:`OutOfRange` is raised
    (with vf ≥ VCC/3 the diode path alone could never reach the threshold and the circuit no
    longer behaves as a diode-steered astable). Vf = 0 gives the ideal ln2·RA·C.
    """
    vcc, vf = _check_supply_and_drop(vcc, vf)
    t_high = _diode_high_unchecked(ra, rb, c, vcc, vf)
    t_low = crossing_time(rb, c, 0.0, _V_UP, _V_LOW)
    t_high, t_low = np.broadcast_arrays(t_high, t_low)
    return np.array(t_high, dtype=float), np.array(t_low, dtype=float)


def diode_ideal_ra(t_high, rb, c, vcc, vf) -> np.ndarray:
    """RA that makes ``diode_times(ra, rb, c, vcc, vf)[0] == t_high`` (vectorised, exact).

    t_high grows strictly with RA for fixed RB and C (each segment is slower and the diode turns
    off earlier), so the root is unique. Closed forms cover the region where the diode conducts
    for the whole charge (RA ≤ RB·(VCC/3 − Vf)/Vf) and the region where it never conducts
    (RA ≥ RB·(2VCC/(3Vf) − 1)); between them Newton's method on the concave t_high(RA) runs
    to full float precision.
    Where t_high is not positive the result is nan.
    """
    vcc, vf = _check_supply_and_drop(vcc, vf)
    t_high, rb, c, vcc, vf = np.broadcast_arrays(_f(t_high), _f(rb), _f(c), vcc, vf)
    out = np.full(t_high.shape, np.nan)
    ok = t_high > 0
    k_simple = crossing_time(1.0, 1.0, vcc - vf, vcc / 3.0, 2.0 * vcc / 3.0)   # t = k·RA·C
    with np.errstate(divide="ignore", invalid="ignore"):
        ra_on = rb * (vcc / 3.0 - vf) / vf          # largest RA with the diode on throughout
        ra_off = rb * (2.0 * vcc / (3.0 * vf) - 1.0)  # smallest RA with the diode never on
        ra_simple = t_high / (k_simple * c)
        ra_plain = t_high / (LN2 * c) - rb
    in_simple = ok & (ra_simple <= ra_on)            # vf = 0 → ra_on = inf: always here
    out[in_simple] = ra_simple[in_simple]
    in_plain = ok & ~in_simple & (ra_plain >= ra_off)
    out[in_plain] = ra_plain[in_plain]
    mid = ok & ~in_simple & ~in_plain
    if np.any(mid):
        out[mid] = _diode_ra_piecewise(t_high[mid], rb[mid], c[mid], vcc[mid], vf[mid],
                                       ra_on[mid], ra_off[mid])
    return out


def _diode_ra_piecewise(t_high, rb, c, vcc, vf, ra_on, ra_off) -> np.ndarray:
    """Newton's method for RA in the piecewise region, where (facts §2, derived)

        t_high/C = g(RA) = RA·ln((2VCC/3 − Vf)·RB/(Vf·RA)) + (RA+RB)·ln(3Vf·(RA+RB)/(VCC·RB)),
        g'(RA) = ln((2VCC − 3Vf)/VCC · (1 + RB/RA)) > 0,   g''(RA) = −RB/(RA·(RA+RB)) < 0.

    g is increasing and concave, so Newton started at the left end of the bracket (g ≤ t_high)
    stays left of the root and converges monotonically, quadratically near it (≤ 8 steps seen
    for Vf up to 0.997·VCC/3); the clip to [ra_on, ra_off] only absorbs rounding."""
    a = ra_on.copy()
    km = (2.0 * vcc - 3.0 * vf) / vcc
    active = np.ones(a.shape, dtype=bool)
    for _ in range(40):
        if not np.any(active):
            break
        i = np.flatnonzero(active)
        g = _diode_high_unchecked(a[i], rb[i], c[i], vcc[i], vf[i])
        slope = c[i] * np.log(km[i] * (1.0 + rb[i] / a[i]))
        new = np.clip(a[i] + (t_high[i] - g) / slope, ra_on[i], ra_off[i])
        active[i] = np.abs(new - a[i]) > 4e-15 * new
        a[i] = new
    return a


# --------------------------------------------------------------------------- Shockley steering diode
# The functions above hold the diode's drop constant (facts §2 [S8]); they stay as that closed
# form (its two limiting regions start the inverse below). The search, the tolerance spread and the
# yield use the Shockley diode: I_D = Is·(exp(V/(n·Vt)) − 1), Is from Vf at 1 mA and n
# (``parts.DIODE_VF_DEFAULT``), in parallel with RB and in series with RA.

# fixed 12-point Gauss–Legendre rule on [−1, 1]: the exact values of numpy's
# ``np.polynomial.legendre.leggauss(12)`` (tests/core/test_gauss_legendre.py checks them bit for bit),
# written out because importing numpy.polynomial costs every search ~3.5 ms of start-up
_GL_HALF_X = (0.1252334085114689, 0.3678314989981802, 0.5873179542866175, 0.7699026741943047,
              0.9041172563704748, 0.9815606342467192)
_GL_HALF_W = (0.2491470458134027, 0.2334925365383546, 0.20316742672306573, 0.16007832854334642,
              0.10693932599531907, 0.04717533638651141)
_GL_X = np.array([-x for x in reversed(_GL_HALF_X)] + list(_GL_HALF_X))
_GL_W = np.array(list(reversed(_GL_HALF_W)) + list(_GL_HALF_W))


def diode_saturation_current(vf, n) -> np.ndarray:
    """Is that makes the diode drop ``vf`` at 1 mA: Is = 1 mA / (exp(vf/(n·Vt)) − 1) (Shockley)."""
    from selector.core.parts import DIODE_VF_REF_A, THERMAL_V

    with np.errstate(divide="ignore", over="ignore"):
        return DIODE_VF_REF_A / np.expm1(_f(vf) / (_f(n) * THERMAL_V))


def log_wright_omega(z) -> np.ndarray:
    """ln ω(z), where the Wright omega function ω solves ω + ln ω = z (ω(z) = W0(e^z), Lambert W).

    Vectorised Halley iteration on y = ln ω: h(y) = y + e^y − z is increasing and convex, so the
    iteration converges from any start; the start (y = z for z ≤ 1, else ln(z − ln z), the
    asymptote) is already within a few percent, and the loop stops at full float precision
    (≤ 6 steps seen over z ∈ [−50, 1e4]).

    A 0-d or 1-D ``z`` is one problem: every element takes the same number of steps, until the
    last has converged. With two or more axes each vector along the LAST axis is its own problem
    and stops on its own, so ``z`` stacked from several 1-D problems gives, row by row, exactly
    what each row gives alone (the Monte Carlo evaluates many options in one call this way)."""
    z = _f(z)
    if z.ndim == 0:   # the in-place steps need an array
        return log_wright_omega(z.reshape(1))[0]
    with np.errstate(divide="ignore", invalid="ignore"):   # in place: y = ln(max(z − ln max(z, 1), 1e-300))
        y = np.maximum(z, 1.0)
        np.log(y, out=y)
        np.subtract(z, y, out=y)
        np.maximum(y, 1e-300, out=y)
        np.log(y, out=y)
    np.copyto(y, z, where=~(z > 1.0))
    work = [np.empty_like(y) for _ in range(4)] + [np.empty(y.shape, dtype=bool)]
    if z.ndim < 2:
        for _ in range(50):
            go = _halley_step(y, z, work)
            if not np.any(go):
                break
        return y
    shape = z.shape
    z2, y2 = z.reshape(-1, shape[-1]), np.array(y.reshape(-1, shape[-1]))
    work = [w.reshape(y2.shape) for w in work]
    rows = None   # every row still iterating
    for _ in range(50):
        if rows is None:
            go = np.any(_halley_step(y2, z2, work), axis=-1)
            if go.all():
                continue
            rows = np.flatnonzero(go)
        else:
            y_rows = y2[rows]
            go = np.any(_halley_step(y_rows, z2[rows]), axis=-1)
            y2[rows] = y_rows
            rows = rows[go]
        if rows.size == 0:
            break
    return y2.reshape(shape)


def _halley_step(y, z, work=None, tol=1e-15):
    """One Halley step of :func:`log_wright_omega`, IN PLACE on ``y``; returns where the step was
    above ``tol``·max(1, |y|) (the same operations as y − h/(d1 − h·e/(2·d1)), h = y + e^y − z,
    d1 = 1 + e^y). ``work``: four float arrays and one bool array shaped like ``y``, reused
    step after step (fresh memory costs page faults), else made here."""
    if work is None:
        work = [np.empty_like(y) for _ in range(4)] + [np.empty(y.shape, dtype=bool)]
    e, h, d1, t, go = work
    np.exp(y, out=e)
    np.add(y, e, out=h)
    h -= z
    np.add(e, 1.0, out=d1)
    np.multiply(h, 0.5, out=t)
    t *= e
    t /= d1
    np.subtract(d1, t, out=t)
    np.divide(h, t, out=h)               # the Halley step
    y -= h
    np.abs(h, out=h)
    np.abs(y, out=t)
    np.maximum(t, 1.0, out=t)
    t *= tol
    return np.greater(h, t, out=go)


def _drop_problem(ra, rb, a0, a1, isat, nvt) -> tuple:
    """(ln K, z) for the diode voltages V0, V1 when VCC − Vc = ``a0`` and ``a1`` across RA in
    series with (diode ∥ RB) (same-shape arrays of at least one axis): V_j = nVt·(ln ω(z[j]) − ln K).

    (a − V)/RA = Is·(e^{V/nVt} − 1) + V/RB. With Rp = RA∥RB, B = Rp·(a/RA + Is)/nVt and
    K = Rp·Is/nVt this is u + K·e^u = B for u = V/nVt, so K·e^u = ω(B + ln K) and
    u = ln ω(B + ln K) − ln K (closed form via the Wright omega function; derived). The two
    problems are stacked on a new leading axis, so one :func:`log_wright_omega` call solves each
    exactly as alone; written into preallocated arrays (a·b = b·a exactly in floating point, so
    the in-place order changes no bit). :func:`_shockley_high` and :func:`_shockley_ra_newton`
    both start here."""
    rp = ra * rb
    rp /= ra + rb
    lk = rp * isat
    lk /= nvt
    np.log(lk, out=lk)
    z = np.empty((2,) + rp.shape)
    for zj, a in zip(z, (a0, a1)):       # rp·(a/RA + Is)/nVt + ln K
        np.divide(a, ra, out=zj)
        zj += isat
        zj *= rp
        zj /= nvt
        zj += lk
    return lk, z


def _high_from_drops(v0, v1, ra, rb, c, a0, a1, isat, nvt) -> tuple:
    """(t_high, ln(I0/I1)) of :func:`diode_shockley_high` from the diode voltages V0, V1 (not
    changed); C·ln(I0/I1) is dt_high/dRA. Shared by the forward model and the RA inverse, so both
    compute t_high with the same operations on the same operands."""
    log_ratio = a0 - v0                 # ln(I0/I1), I0 = (a0 − V0)/RA, I1 = (a1 − V1)/RA
    log_ratio /= ra
    i1 = a1 - v1
    i1 /= ra
    log_ratio /= i1
    np.log(log_ratio, out=log_ratio)
    half = v0 - v1
    half *= 0.5
    mid = v0 + v1
    mid *= 0.5
    t = _charge_sum(half, mid, isat, nvt, rb)
    t *= half                           # the integral
    t += ra * log_ratio
    t *= c
    return t, log_ratio


def _charge_sum(half, mid, isat, nvt, rb) -> np.ndarray:
    """Σ_j w_j / f(mid + half·x_j) over the 12 Gauss–Legendre nodes (x_j, w_j): the charge integral
    of :func:`diode_shockley_high` divided by ``half`` (f the diode-plus-RB current)."""
    # the sum over the nodes is numpy's pairwise order for a trailing axis of 12 terms (8 paired,
    # then the last 4 in turn), so it is bit for bit np.sum(..., axis=-1) over the nodes. Large
    # inputs take the nodes one at a time, in place (each temporary the size of the input, not
    # 12 times it: 2-4x faster at 10 000 samples); small ones on a leading axis (fewer numpy calls)
    if mid.size >= 2048:
        xb = np.empty_like(mid)
        bufs = [np.empty_like(mid) for _ in range(4)]

        def q(j, out):
            np.multiply(half, _GL_X[j], out=xb)
            np.add(xb, mid, out=xb)
            np.divide(xb, nvt, out=out)
            np.expm1(out, out=out)
            out *= isat
            np.divide(xb, rb, out=xb)
            out += xb
            return np.divide(_GL_W[j], out, out=out)

        s0, s1, s2, s3 = bufs
        # ((q0 + q1) + (q2 + q3)) + ((q4 + q5) + (q6 + q7)), then + q8 ... + q11, in 5 buffers
        q(0, s0)
        s0 += q(1, s1)
        q(2, s1)
        s1 += q(3, s2)
        s0 += s1
        q(4, s1)
        s1 += q(5, s2)
        q(6, s2)
        s2 += q(7, s3)
        s1 += s2
        s0 += s1
        for j in range(8, _GL_X.size):
            s0 += q(j, s1)
        total = s0
    else:
        lead = (-1,) + (1,) * mid.ndim
        x = mid + half * _GL_X.reshape(lead)
        qs = _GL_W.reshape(lead) / (isat * np.expm1(x / nvt) + x / rb)
        total = ((qs[0] + qs[1]) + (qs[2] + qs[3])) + ((qs[4] + qs[5]) + (qs[6] + qs[7]))
        for j in range(8, _GL_X.size):
            total = total + qs[j]
    return total


def diode_shockley_high(ra, rb, c, vcc, vf, n) -> np.ndarray:
    """t_high of the diode-steered astable with a Shockley steering diode (vectorised).

    C·dVc/dt = I = (VCC − Vc − V)/RA, V the diode voltage (:func:`_drop_problem`). Written in V
    (a = VCC − Vc = RA·f(V) + V, f(V) = Is(e^{V/nVt} − 1) + V/RB the current, so dVc = −(RA·f'(V)
    + 1)·dV), the charge from VCC/3 to 2VCC/3 takes exactly (derived)

        t_high = C·[ RA·ln(I0/I1) + ∫_{V1}^{V0} dV / f(V) ]

    with I0, V0 at Vc = VCC/3 and I1, V1 at Vc = 2VCC/3; the integral is smooth and short (V moves
    by about n·Vt·ln(I0/I1)) and a fixed 12-point Gauss–Legendre rule evaluates it. The diode never
    switches off abruptly here: when RB is small against RA its current fades smoothly into RB's
    (the constant-drop model's piecewise case). dt_high/dRA = C·ln(I0/I1) > 0 (derived: the
    endpoint terms cancel), so t_high is strictly increasing in RA. Vf = 0 is an ideal diode
    (t_high = ln2·RA·C)."""
    ra, rb, c, vcc, vf, n = _f(ra), _f(rb), _f(c), _f(vcc), _f(vf), _f(n)
    shape = np.broadcast_shapes(ra.shape, rb.shape, c.shape, vcc.shape, vf.shape, n.shape)
    # every input at the full shape (the Wright omega rows follow it), except a 0-d supply or n:
    # those enter only elementwise operations, where a scalar operand gives the same values as
    # its broadcast copy, and the sample-sized arrays 2VCC/3, VCC/3 and n·Vt are not made
    ra, rb, c, vf = (a if a.shape == shape else np.broadcast_to(a, shape) for a in (ra, rb, c, vf))
    vcc, n = (a if a.shape == shape or a.ndim == 0 else np.broadcast_to(a, shape) for a in (vcc, n))
    return _shockley_high(ra, rb, c, vcc, vf, n)


def _shockley_high(ra, rb, c, vcc, vf, n) -> np.ndarray:
    """t_high of :func:`diode_shockley_high` for broadcast arrays (the Newton slope C·ln(I0/I1) of
    :func:`_shockley_ra_newton` comes from the same :func:`_high_from_drops`). Temporaries are reused in place
    (fewer allocations of sample-sized arrays); every value is the same operation on the same
    operands as the formulas in the docstrings, so the bits do not depend on the layout."""
    from selector.core.parts import THERMAL_V

    if np.ndim(ra) == 0:   # one element: the same values as a 1-element array (rows solve alone)
        return _shockley_high(*(np.reshape(a, 1) for a in (ra, rb, c, vcc, vf, n)))[0]
    ideal = ~(vf > 0)
    any_ideal = bool(ideal.any())
    nvt = n * THERMAL_V
    isat = diode_saturation_current(np.where(ideal, 0.65, vf) if any_ideal else vf, n)
    a0 = 2.0 * vcc / 3.0
    a1 = vcc / 3.0
    lk, z = _drop_problem(ra, rb, a0, a1, isat, nvt)
    u = log_wright_omega(z)
    v0, v1 = u[0], u[1]                 # in place: u is this call's own
    v0 -= lk
    v0 *= nvt
    v1 -= lk
    v1 *= nvt
    t, _log_ratio = _high_from_drops(v0, v1, ra, rb, c, a0, a1, isat, nvt)
    if any_ideal:
        t = np.where(ideal, LN2 * ra * c, t)
    return t


def diode_shockley_times(ra, rb, c, vcc, vf, n, rd=0.0) -> tuple[np.ndarray, np.ndarray]:
    """(t_high, t_low) of the diode-steered astable with a Shockley diode; t_low is
    :func:`discharge_low` with the discharge switch's on-resistance ``rd`` (the diode is reverse
    biased while C discharges; rd = 0: ln2·RB·C)."""
    vcc, vf = _check_supply_and_drop(vcc, vf)
    t_high = diode_shockley_high(ra, rb, c, vcc, vf, n)
    t_low = discharge_low(ra, rb, c, rd)
    t_high, t_low = np.broadcast_arrays(t_high, t_low)
    return np.array(t_high, dtype=float), np.array(t_low, dtype=float)


def diode_shockley_ideal_ra(t_high, rb, c, vcc, vf, n) -> np.ndarray:
    """RA with ``diode_shockley_times(ra, ...)[0] == t_high`` (vectorised, to float precision).

    Safeguarded Newton on the strictly increasing t_high(RA) with its exact slope C·ln(I0/I1)
    (:func:`_shockley_ra_newton`); nan where t_high ≤ 0. Vf = 0 (an ideal diode): t_high/(ln2·C)."""
    from selector.core.parts import THERMAL_V

    vcc, vf = _check_supply_and_drop(vcc, vf)
    t_high, rb, c, vcc, vf, n = np.broadcast_arrays(_f(t_high), _f(rb), _f(c), vcc, vf, _f(n))
    out = np.full(t_high.shape, np.nan)
    ok = t_high > 0
    if not ok.any():
        return out
    if not ok.all():
        t_high, rb, c, vcc, vf, n = (a[ok] for a in (t_high, rb, c, vcc, vf, n))
    x = t_high / (LN2 * c)             # the ideal diode's RA, and the root where Vf = 0
    real = vf > 0
    if real.any():
        if not real.all():
            t_high, rb, c, vcc, vf, n = (a[real] for a in (t_high, rb, c, vcc, vf, n))
        nvt = n * THERMAL_V
        x_real = _shockley_ra_newton(t_high, rb, c, 2.0 * vcc / 3.0, vcc / 3.0, vf,
                                     diode_saturation_current(vf, n), nvt)
        if real.all():
            x = x_real
        else:
            x[real] = x_real
    if ok.all():
        return np.array(x, dtype=float).reshape(out.shape)
    out[ok] = x
    return out


def _shockley_ra_newton(tg, rb, c, a0, a1, vf, isat, nvt) -> np.ndarray:
    """RA for t_high = ``tg`` (1-D arrays, Vf > 0; ``a0`` = 2VCC/3, ``a1`` = VCC/3 as in
    :func:`_drop_problem`).

    Newton on the strictly increasing t_high(RA) (:func:`_shockley_high`'s formulas), each
    step inside the bracket [lo, hi] known so far, else a geometric bisection of it. Started at
    max(t/(k·C), t/(ln2·C) − RB), k = ln((2VCC/3 − Vf)/(VCC/3 − Vf)): the constant-drop RA where
    its diode conducts throughout and where it never does (that model's RA is at least both: its
    charging current is never below either path's, facts §2); the Shockley RA is near it.
    Stops after a Newton step (not a bisection) of at most 1e-8·RA: the error left after it is
    κ·step² with κ = RA·|t''(RA)|/(2·t'(RA)) (quadratic convergence), measured below 0.4 over
    RA 10 Ω–10 MΩ, RB/RA 1e-3–1e3, VCC 2–18 V, Vf up to 0.999·VCC/3, n 1–2 (step k+1 / step k²),
    so at most ~4e-17·RA, below the rounding of t_high itself; the step that would only confirm
    it (a fourth evaluation of t_high for most inputs) is not taken.

    The two diode voltages (y = ln ω of :func:`log_wright_omega`) are carried from one Newton
    step to the next and refined by Halley steps until the last one was at most 1e-5: Halley's
    error constant for h = y + e^y − z is at most 1/6, so y is then within ~2e-16 of the root.
    After the first Newton step RA moves little, and one or two Halley steps suffice instead of
    the three or four of a cold start. Each element's value depends on its own inputs only.
    """
    tg, rb, c, a0, a1, vf, isat, nvt = (np.atleast_1d(a) for a in (tg, rb, c, a0, a1, vf, isat, nvt))
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.maximum(tg / (np.log((a0 - vf) / (a1 - vf)) * c), tg / (LN2 * c) - rb)
    x = np.where(np.isfinite(x) & (x > 0), x, tg / (LN2 * c))
    out = np.empty_like(x)
    where = None                      # positions in ``out`` of the rows still iterating
    lo = np.zeros_like(x)
    hi = np.full_like(x, np.inf)
    y = None
    work = None
    for _ in range(100):
        lk, z = _drop_problem(x, rb, a0, a1, isat, nvt)
        if y is None:
            y = np.log(np.maximum(z - np.log(np.maximum(z, 1.0)), 1e-300))
            np.copyto(y, z, where=~(z > 1.0))
        if work is None or work[0].shape != y.shape:
            work = [np.empty_like(y) for _ in range(4)] + [np.empty(y.shape, dtype=bool)]
        for _ in range(50):
            if not _halley_step(y, z, work, 1e-5).any():
                break
        v0 = nvt * (y[0] - lk)          # not in place: y carries on to the next step
        v1 = nvt * (y[1] - lk)
        t, log_ratio = _high_from_drops(v0, v1, x, rb, c, a0, a1, isat, nvt)
        g = t - tg
        np.maximum(lo, x, out=lo, where=g < 0)
        np.minimum(hi, x, out=hi, where=g > 0)
        new = x - g / (c * log_ratio)
        bad = ~((new > lo) & (new < hi))
        step = np.abs(new - x)
        if bad.any():
            fallback = np.where(np.isfinite(hi), np.sqrt(np.maximum(lo, 1e-300) * hi), 2.0 * x)
            fallback = np.where(lo > 0, fallback, np.where(np.isfinite(hi), 0.5 * hi, fallback))
            new = np.where(bad, fallback, new)
            step = np.where(bad, np.inf, step)
        done = (step <= 1e-8 * new) | (g == 0)
        x = np.where(g == 0, x, new)
        if done.all():
            break
        if done.any():
            if where is None:
                where = np.arange(x.size)
            out[where[done]] = x[done]
            keep = ~done
            where = where[keep]
            x, lo, hi, tg, rb, c, a0, a1, vf, isat, nvt = (
                a[keep] for a in (x, lo, hi, tg, rb, c, a0, a1, vf, isat, nvt))
            y = y[:, keep]
    if where is None:
        return x
    out[where] = x
    return out


def output_fed_factors(voh, vol, vcc) -> tuple[np.ndarray, np.ndarray]:
    """Factors k with t_high = k_high·R·C and t_low = k_low·R·C for the output-fed astable.

    One R from OUT to THR/TRIG and C; C charges toward VOH from VCC/3 to 2VCC/3 and discharges
    toward VOL from 2VCC/3 to VCC/3 (facts.md §3, derived; rail-to-rail output gives ln2 for
    both halves [S7]). If VOH ≤ 2VCC/3 or VOL ≥ VCC/3 the output cannot reach the comparator level
    and that factor is ``inf`` (no oscillation).
    """
    voh, vol, vcc = _f(voh), _f(vol), _f(vcc)
    k_high = crossing_time(1.0, 1.0, voh, vcc / 3.0, 2.0 * vcc / 3.0)
    k_low = crossing_time(1.0, 1.0, vol, 2.0 * vcc / 3.0, vcc / 3.0)
    return k_high, k_low


def output_fed_times(r, c, voh, vol, vcc) -> tuple[np.ndarray, np.ndarray]:
    """Output-fed astable times (see :func:`output_fed_factors`); ``inf`` where it cannot run."""
    k_high, k_low = output_fed_factors(voh, vol, vcc)
    rc = _f(r) * _f(c)
    return k_high * rc, k_low * rc


# --------------------------------------------------------------------------- monostable, RC
def monostable_width(r, c, rd=0.0) -> np.ndarray:
    """Monostable pulse width: C charges through R toward VCC up to 2VCC/3 [S3, S5]. Before the
    trigger the discharge switch (on-resistance ``rd``) holds C at v0 = VCC·RD/(R+RD), not at 0
    (R and RD divide VCC; derived), so the width is R·C·ln((VCC − v0)/(VCC/3)) =
    R·C·ln(3R/(R+RD)); rd = 0 gives ln3·R·C ≈ 1.1·R·C. inf where R ≤ RD/2 (C already sits at
    the threshold: no pulse)."""
    r, rd = _f(r), _f(rd)
    with np.errstate(divide="ignore", invalid="ignore"):
        v0 = np.where(rd > 0, _V_FULL * rd / (r + rd), 0.0)
    return crossing_time(r, c, _V_FULL, v0, _V_UP)


def monostable_ideal_r(width, c, rd=0.0) -> np.ndarray:
    """The exact inverse of :func:`monostable_width` in R. rd = 0: width/(ln3·C). Otherwise
    f(R) = R·ln(3R/(R+RD)) = width/C is solved by Newton's method: f is increasing
    (f' = ln(3R/(R+RD)) + RD/(R+RD) > 0 for R > RD/2) and convex (f'' = RD²/(R(R+RD)²) > 0),
    and f(R) ≥ R·ln3 − RD (ln(1+x) ≤ x), so R0 = (width/C + RD)/ln3 lies right of the root and
    Newton from there falls monotonically onto it (derived)."""
    w, c, rd = np.broadcast_arrays(_f(width) / _f(c), _f(c), _f(rd))
    w, rd = np.array(w, dtype=float), np.array(rd, dtype=float)
    x = (w + rd) / LN3
    on = rd > 0
    if np.any(on):
        for _ in range(60):
            with np.errstate(divide="ignore", invalid="ignore"):
                lg = np.log(3.0 * x / (x + rd))
                step = (x * lg - w) / (lg + rd / (x + rd))
            step = np.where(on & np.isfinite(step), step, 0.0)
            x = x - step
            if not np.any(np.abs(step) > 1e-15 * x):
                break
    return np.where(on, x, w / LN3)


def rc_tau(r, c) -> np.ndarray:
    """Time constant τ = R·C (time to charge to 1 − 1/e ≈ 63.2 %)."""
    return _f(r) * _f(c)


def rc_corner(r, c) -> np.ndarray:
    """Corner (−3 dB) frequency of a first-order RC low- or high-pass: f = 1/(2π·R·C)."""
    return 1.0 / (2.0 * np.pi * _f(r) * _f(c))


def frequency_duty(t_high, t_low) -> tuple[np.ndarray, np.ndarray]:
    """``(frequency, duty)`` with duty = t_high/(t_high + t_low) (fraction HIGH).

    Where either time is not finite (no oscillation) both results are nan.
    """
    t_high, t_low = np.broadcast_arrays(_f(t_high), _f(t_low))
    period = t_high + t_low
    good = np.isfinite(period) & (period > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        freq = np.where(good, 1.0 / period, np.nan)
        duty = np.where(good, t_high / period, np.nan)
    return freq, duty


# --------------------------------------------------------------------------- resistor power
def ra_power_w(vcc, ra) -> np.ndarray:
    """Power in RA while the discharge transistor is on (DIS ≈ 0 V): VCC²/RA (facts.md §7).

    Also the idle power of the monostable timing resistor. If the output may sit low for long,
    the resistor must take this continuously.
    """
    return _f(vcc) ** 2 / _f(ra)


def output_fed_power_w(r, voh, vol, vcc) -> np.ndarray:
    """Peak power in the output-fed resistor: max((VOH − VCC/3)², (2VCC/3 − VOL)²)/R (derived)."""
    vcc = _f(vcc)
    up = (_f(voh) - vcc / 3.0) ** 2
    down = (2.0 * vcc / 3.0 - _f(vol)) ** 2
    return np.maximum(up, down) / _f(r)
