"""Kernels of the exact timing search: one search pass over one pair of network indexes for one
circuit kind — the two-resistor pass (``run2``, its correctness argument at the end of this
module) and the one-resistor pass (``run1``, argued in ``selector.core.search.engine``). The
circuit kind supplies the timing laws in the form the pass needs; the filters and look-ups are in
``lookup``."""

from __future__ import annotations

import math
from typing import Callable, NamedTuple, Optional

import numpy as np

INF = float("inf")
_SLACK = 1e-9  # relative widening of certified slices and intervals against rounding

PHASE1_SAMPLE = 400
"""Capacitor networks sampled for the provisional bound when 3-part resistor networks are searched
(see ``_Pass.run2``); tests lower it to exercise that path on small stocks."""

PAIRS_BOUND_C = 32768
"""``_Pass._pairs_bound`` looks up at most this many capacitor networks (evenly spread): the
bound it gives only has to be loose enough for the value sweep, and a few ten thousand pairs
make it about as tight as all of them."""

PHASE1_PICK = 128
"""With 1-2 part resistor networks, phase 1 of ``_Pass.run2`` first runs on this many capacitor
networks, those whose nearest RB is closest to the ideal one (``_Pass._closest_low``); all of them
only when these give fewer than the pool's options. Tests lower it to exercise that path."""

_BOX_ROUNDS = 8
"""Most rounds of narrowing the RA and RB ranges against each other in ``_Pass._box`` (each round
keeps them certified). The width shrinks geometrically (t_low moves with RA only to order RD/RA,
t_high with RB by at most 1:1), so a few rounds bring the RB range near the 2·B·RB the bound alone
allows; a capacitor network drops out of the rounds once its RB range is within 1.5× of that
(the diode's RA inverse is the costly step)."""

_BOX_ROUNDS_2 = 1
"""The same with 1-2 part resistor networks only, where no branch and bound reads the ranges: there
a slightly wider RB slice costs less than more rounds of the diode's RA inverse (measured on the
large benchmark stock)."""

_WINDOW_TOL = 1e-3
"""``_window1`` stops once the outer end of each side is within this share of its log-distance
from R* of the inner end, or within ``_WINDOW_ABS`` of it: the window is then at most that much
wider than the exact one (a superset either way)."""

_WINDOW_ABS = 1e-10
"""Log-distance below which ``_window1`` does not narrow a window further: ``values_within``
widens every interval by a relative 4e-9 anyway, and a window near the rounding of the error
itself (an exact hit makes the bound ~1e-15) would otherwise take every halving."""

MAX_ERROR = 1.0
"""Options more than 100 % off target (a factor of two on a time) are never offered; exactness is
over the options within this bound (the exhaustive reference in the tests applies it too)."""


from selector.core.search.lookup import (  # noqa: F401  (PowerCheck, capacitor_candidates re-exported)
    PowerCheck, SortedView, _fmt, _nan_to, _nearest_feasible, _signed_max, capacitor_candidates,
)


# --------------------------------------------------------------------------- the circuit, bound


class _Bound:
    """A circuit kind with the target and limits of one pass: the methods the kernels call,
    each the circuit's own (see ``selector.core.circuits``: two-resistor kinds supply t_low,
    rb_for_low, rb_ideal, ra_for_high, times2; one-resistor kinds r_ideal, error1, r_bounds1)."""

    def __init__(self, kind, target, limits):
        self.kind, self.target, self.limits = kind, target, limits

    def t_low(self, ra, rb, c):
        return self.kind.t_low(ra, rb, c, self.limits)

    def rb_for_low(self, t_low, ra, c):
        return self.kind.rb_for_low(t_low, ra, c, self.limits)

    def rb_ideal(self, c):
        """RB of the pair that meets both halves exactly, for phase 1's guess only (any value is
        correct there). With RD = 0 it is the circuit's closed form; otherwise t_low also
        depends on RA: one round of RA from t_high, then RB from t_low, settles it (t_low hardly
        moves with RA: the dependence is of order (RD/RA)²)."""
        tg = self.target
        rb = np.asarray(self.kind.rb_ideal(tg, c), dtype=float)
        if not self.limits.discharge_ohms > 0:
            return rb
        th, tl = np.full(rb.shape, tg.t_high), np.full(rb.shape, tg.t_low)
        # one round (already within (RD/RA)² of the fixed point), with the exact RA inverse, not
        # a cheaper approximation: an RB guess off by even 1e-4 makes the 3-part pass's first
        # bound too loose for its sweep (measured: 30x slower)
        ra = self.ra_for_high(th, rb, c)
        ra = np.where(np.isfinite(ra) & (ra > 0), ra, np.inf)
        new = self.rb_for_low(tl, ra, c)
        return np.where(np.isfinite(new) & (new > 0), new, rb)

    def ra_for_high(self, t_high, rb, c):
        return self.kind.ra_for_high(t_high, rb, c, self.limits)

    def times2(self, ra, rb, c):
        return self.kind.times2(ra, rb, c, self.limits)

    def r_ideal(self, c):
        return self.kind.r_ideal(self.target, c, self.limits)

    def error1(self, r, c):
        """(signed error, t_high, t_low, time) for one-resistor circuits."""
        return self.kind.error1(r, c, self.target, self.limits)

    def r_bounds1(self, c):
        return self.kind.r_bounds1(c, self.limits)


class Hit(NamedTuple):
    """One pair-option a kernel found: capacitor network id, resistor network ids in the
    circuit's role order, signed error and the predicted times (nan where not defined)."""

    c_id: int
    r_ids: tuple
    error: float
    t_high: float
    t_low: float
    time: float


# --------------------------------------------------------------------------- the searches


def _both_ends(inverse, t1, t2, r1, r2, c):
    """``inverse(t1, r1, c), inverse(t2, r2, c)`` in one call on the joined arrays: the circuit
    inverses work element by element (the diode's iterates each element on its own), so the
    values are the same, and a costly inverse pays its fixed cost per call once, not twice."""
    n = np.size(c)
    if np.shape(t1) != (n,):
        t1 = np.broadcast_to(t1, (n,))
    if np.shape(t2) != (n,):
        t2 = np.broadcast_to(t2, (n,))
    out = inverse(np.concatenate([t1, t2]), np.concatenate([r1, r2]), np.concatenate([c, c]))
    return out[:n], out[n:]


WINDOW_CAP = 1_000_000
"""At most this many (pair, RA) candidates a phase-2 window call materialises at once (8 MB
per work array; ordinary searches stay far below it): see ``_Pass._window_groups``."""


def _chunks(n: int, size: int):
    for s in range(0, n, size):
        yield slice(s, min(n, s + size))


class _Pass:
    """One search over one pair of indexes (one parts budget) for one connection."""

    def __init__(self, kind, target, r_index, c_index, c_ids, limits, power: PowerCheck,
                 ex, chunk: int = 2048, bound_hint: float = math.inf):
        """``bound_hint``: the worst |error| of a smaller parts budget's full pool, which bounds
        this pass's pool too (see ``run2``); inf when there is none."""
        self.p = _Bound(kind, target, limits)
        self.r = SortedView(r_index)
        self.c_ids = c_ids
        c_sorted = c_index.sorted_values()   # 1-2 part networks: ids are positions there
        self.c_vals = (np.zeros(0) if not c_ids.size else c_sorted[c_ids] if c_sorted is not None
                       else c_index.values(c_ids))
        self.lim = limits
        self.power = power
        # RB's own power check (issue 10): peak (2VCC/3)²/RB at the start of the discharge, per
        # part, against rating × derating; a condition on RB alone, applied before a pair is scored
        self.rb_power = PowerCheck(r_index, limits.rb_power_volts, limits.r_power_derating)
        self.ex = ex
        self.chunk = chunk
        # When every line holds enough for two networks of the largest size on every board, RA
        # and RB can never overdraw a line together and the pairwise check can be skipped.
        self.bound_hint = bound_hint   # see run2
        qty = np.asarray(r_index.quantity, dtype=np.int64)
        self.no_conflict = bool(qty.size) and int((qty // r_index.boards).min()) >= 2 * r_index.max_parts

    # ---- two-resistor connections
    def _best_ra(self, cv, rb_id, rb, bound: Optional[float] = None):
        """Best RA for each (c, RB) pair: (ra_id, signed error, t_high, t_low); ra_id -1 = none.
        With ``bound`` (phase 2) only RA whose high-time error is within the bound are looked at:
        t_high grows with RA, so they form the window [RA(T_high·(1 − B)), RA(T_high·(1 + B))]
        and ``between`` lists it exactly; a pair with no feasible RA there cannot reach B."""
        lim, p, tg = self.lim, self.p, self.p.target
        n = len(cv)
        lo = np.full(n, lim.min_r_ohm, dtype=float)
        sink = getattr(lim, "dis_sink_a", math.inf)
        ra_dis = np.zeros(n)
        if math.isfinite(sink):
            # the DIS pin at turn-on takes C's discharge through RB, (2VCC/3)/RB, and RA's VCC/RA:
            # their sum within the family's DIS figure is a lower bound on RA for this RB
            room = sink - (2.0 * lim.vcc / 3.0) / rb
            with np.errstate(divide="ignore"):
                ra_dis = np.where(room > 0, lim.vcc / np.where(room > 0, room, 1.0), np.inf)
            lo = np.maximum(lo, ra_dis)
        if math.isfinite(lim.max_freq_hz):
            # period >= 1/fmax. t_low falls as RA grows (discharge law, ``timing``), so for RA >=
            # lo it is at most t_low(lo): t_high(RA) >= 1/fmax - t_low(lo) is NECESSARY, a lower
            # bound on RA; the period itself is checked on each candidate (``_freq_ok``), since
            # with RD > 0 it need not grow with RA
            need_high = 1.0 / lim.max_freq_hz - p.t_low(lo, rb, cv)
            pos = need_high > 0
            ra_f = np.full(n, -np.inf)
            if pos.any():
                ra_f[pos] = p.ra_for_high(need_high[pos], rb[pos], cv[pos])
            too_fast = np.isnan(ra_f)
            ra_f = np.where(too_fast, np.inf, ra_f)
            freq_bound = ra_f > lo
            lo = np.maximum(lo, ra_f)
        else:
            freq_bound = np.zeros(n, dtype=bool)
        hi_total = lim.max_total_r_ohm - rb
        max_ra = getattr(lim, "max_ra_ohm", math.inf)
        ra_bound = max_ra < hi_total
        hi = np.minimum(hi_total, max_ra)
        empty = lo > hi * (1 + _SLACK)
        if bound is None:
            dis_empty = empty & (ra_dis > hi * (1 + _SLACK))
            self.ex.add(f"RA/RB pairs over the {_fmt(sink, 'A')} DIS pin current ((2VCC/3)/RB + VCC/RA)",
                        dis_empty.sum())
            empty_rest = empty & ~dis_empty
            self.ex.add(f"RA/RB pairs needing RA above the {_fmt(max_ra, 'Ω')} maximum RA (threshold "
                        "current through RA alone)", (empty_rest & ~freq_bound & ra_bound).sum())
            self.ex.add(f"RA/RB pairs over the {_fmt(lim.max_total_r_ohm, 'Ω')} total timing resistance "
                        f"limit{lim.reason('max_total_r_ohm')}", (empty_rest & ~freq_bound & ~ra_bound).sum())
            self.ex.add(f"combinations above the {_fmt(lim.max_freq_hz, 'Hz')} maximum frequency"
                        f"{lim.reason('max_freq_hz')}", (empty_rest & freq_bound).sum())

        def ok(ids, rows):
            good = self.power.ok(ids)
            if good.any() and not self.no_conflict:
                sub = np.flatnonzero(good)
                good[sub] = self.r.fits_together(ids[sub], rb_id[rows[sub]])
            return good

        if bound is not None:
            return self._best_ra_window(cv, rb, lo, hi, empty, bound, ok)

        ra_star = p.ra_for_high(np.full(n, tg.t_high), rb, cv)  # (phase 1 only: the windows need none)
        below, above = _nearest_feasible(self.r, ra_star, lo, hi, ok)
        best_id, best_err, th_out, tl_out = self._nearer_side(below, above, rb, cv)
        nothing = (best_id < 0) & ~empty
        over_ra = np.zeros(n, dtype=bool)
        if nothing.any() and math.isfinite(max_ra):
            rows = np.flatnonzero(nothing & ra_bound)
            if rows.size:  # a network between the maximum RA and the total limit: that limit excluded it
                offsets, _ids = self.r.between(np.full(rows.size, max_ra * (1 + 1e-9)), hi_total[rows])
                over_ra[rows] = np.diff(offsets) > 0
        over_total = np.zeros(n, dtype=bool)
        rows = np.flatnonzero(nothing & ~over_ra & ~ra_bound & np.isfinite(hi_total))
        if rows.size:  # a network above RA + RB's ceiling (and no RA below it): that limit excluded it
            _b, above = self.r.nearest_sides(hi_total[rows] * (1 + 1e-9), 1)
            over_total[rows] = np.asarray(above).reshape(rows.size, -1)[:, 0] >= 0
        self.ex.add(f"RA/RB pairs over the {_fmt(lim.max_total_r_ohm, 'Ω')} total timing resistance "
                    f"limit{lim.reason('max_total_r_ohm')}", over_total.sum())
        over_dis = np.zeros(n, dtype=bool)
        rows = np.flatnonzero(nothing & ~over_ra & ~over_total & (ra_dis > lim.min_r_ohm))
        if rows.size:  # a network between the minimum RA and the DIS-current bound excluded
            offsets, _ids = self.r.between(np.full(rows.size, lim.min_r_ohm),
                                           np.minimum(ra_dis[rows], hi[rows]) * (1 - 1e-9))
            over_dis[rows] = np.diff(offsets) > 0
        self.ex.add(f"RA/RB pairs needing RA above the {_fmt(max_ra, 'Ω')} maximum RA (threshold "
                    "current through RA alone)", over_ra.sum())
        self.ex.add(f"RA/RB pairs over the {_fmt(sink, 'A')} DIS pin current ((2VCC/3)/RB + VCC/RA)",
                    over_dis.sum())
        self.ex.add("RA/RB pairs with no RA in range (over its power rating or sharing stock with RB)",
                    (nothing & ~over_ra & ~over_total & ~over_dis).sum())
        return best_id, best_err, th_out, tl_out

    def _nearer_side(self, below, above, rb, cv):
        """(ra_id, signed error, t_high, t_low) of the better of the RA ``below`` and ``above``
        (ids, -1 none) for each (c, RB) row: the one with the smaller |error| among those within
        the frequency limit, the one below on a tie. The times come from one call per side (a
        diode model iterates a 1-D call until its slowest element converges: joined sides could
        move a last digit); the rest is element-wise, done once on the joined arrays."""
        p, tg = self.p, self.p.target
        n = len(cv)
        hb, ha = np.flatnonzero(below >= 0), np.flatnonzero(above >= 0)
        ids = np.concatenate([below[hb], above[ha]])
        times = [p.times2(self.r.values(ids[sl]), rb[h], cv[h])
                 for h, sl in ((hb, slice(0, hb.size)), (ha, slice(hb.size, None))) if h.size]
        if not times:
            return (np.full(n, -1, dtype=np.int64), np.full(n, np.nan), np.full(n, np.nan),
                    np.full(n, np.nan))
        th = np.concatenate([t[0] for t in times]) if len(times) > 1 else times[0][0]
        tl = np.concatenate([t[1] for t in times]) if len(times) > 1 else times[0][1]
        e = _signed_max(th / tg.t_high - 1, tl / tg.t_low - 1)
        fast = ~self._freq_ok(th, tl)
        self.ex.add(f"combinations above the {_fmt(self.lim.max_freq_hz, 'Hz')} maximum frequency",
                    fast.sum())
        e = np.where(fast, np.nan, e)
        e_b, e_a = np.full(n, np.nan), np.full(n, np.nan)
        e_b[hb], e_a[ha] = e[:hb.size], e[hb.size:]
        # above replaces below only when strictly better (below is kept on a tie)
        take_a = ~np.isnan(e_a) & (np.isnan(e_b) | (np.abs(e_a) < np.abs(e_b)))
        take_b = ~take_a & ~np.isnan(e_b)
        at = np.full(n, -1, dtype=np.int64)   # where each row's choice sits in ``ids``
        at[hb[take_b[hb]]] = np.flatnonzero(take_b[hb])
        at[ha[take_a[ha]]] = hb.size + np.flatnonzero(take_a[ha])
        got = at >= 0
        best_id = np.full(n, -1, dtype=np.int64)
        best_err, th_out, tl_out = np.full(n, np.nan), np.full(n, np.nan), np.full(n, np.nan)
        j = at[got]
        best_id[got], best_err[got], th_out[got], tl_out[got] = ids[j], e[j], th[j], tl[j]
        return best_id, best_err, th_out, tl_out

    def _best_ra_window(self, cv, rb, lo, hi, empty, bound, ok):
        p, tg = self.p, self.p.target
        n = len(cv)
        best_id = np.full(n, -1, dtype=np.int64)
        best_err = np.full(n, np.nan)
        th_out = np.full(n, np.nan)
        tl_out = np.full(n, np.nan)
        w_lo, w_hi = _both_ends(p.ra_for_high, tg.t_high * (1 - bound), tg.t_high * (1 + bound), rb, rb, cv)
        # nan from the inverse means "no positive RA gives that time": no bound on that side
        a = np.maximum(lo, _nan_to(w_lo, 0.0)) * (1 - _SLACK)
        b = np.minimum(hi, _nan_to(w_hi, INF)) * (1 + _SLACK)
        live = ~empty & (a <= b) & (b > 0)
        rows_live = np.flatnonzero(live)
        if rows_live.size == 0:
            return best_id, best_err, th_out, tl_out
        out = (best_id, best_err, th_out, tl_out)
        for group in self._window_groups(rows_live, a, b):
            self._best_in_windows(group, a, b, cv, rb, ok, out)
        return out

    def _window_groups(self, rows_live, a, b):
        """``rows_live`` in consecutive groups whose RA windows hold at most ``WINDOW_CAP``
        networks together (a row alone may hold more), so a loose bound (a target the stock can
        barely reach) cannot ask for windows of 10^8 networks at once. Each row's best RA depends
        on its own window only, so the groups give the same choices as one call. Counted exactly
        on a 1-2 part index; a 3-part index enumerates its windows in target chunks already."""
        v = self.r.sorted_values
        if v is None:
            return [rows_live]
        count = (np.searchsorted(v, b[rows_live], side="right")
                 - np.searchsorted(v, np.maximum(a[rows_live], 0.0), side="left"))
        total = np.cumsum(np.maximum(count, 0))
        if total[-1] <= WINDOW_CAP:
            return [rows_live]
        cuts = np.searchsorted(total, np.arange(WINDOW_CAP, total[-1], WINDOW_CAP), side="right")
        return [g for g in np.split(rows_live, np.unique(cuts)) if g.size]

    def _best_in_windows(self, rows_live, a, b, cv, rb, ok, out) -> None:
        """Phase 2's best RA for the rows ``rows_live`` (windows [a, b]), written into ``out`` =
        (best_id, best_err, th_out, tl_out)."""
        p, tg = self.p, self.p.target
        best_id, best_err, th_out, tl_out = out
        offsets, ids = self.r.between(np.maximum(a[rows_live], 0.0), b[rows_live])
        ids = np.asarray(ids, dtype=np.int64)
        if ids.size == 0:
            return
        rows = np.repeat(rows_live, np.diff(offsets))
        good = ok(ids, rows)
        ids, rows = ids[good], rows[good]
        if ids.size == 0:
            return
        th, tl = p.times2(self.r.values(ids), rb[rows], cv[rows])
        e = _signed_max(th / tg.t_high - 1, tl / tg.t_low - 1)
        fine = self._freq_ok(th, tl)
        if not fine.all():
            ids, rows, th, tl, e = ids[fine], rows[fine], th[fine], tl[fine], e[fine]
            if ids.size == 0:
                return
        order = np.lexsort((np.abs(e), rows))
        ro = rows[order]
        first = order[np.concatenate([[True], ro[1:] != ro[:-1]])]
        r = rows[first]
        best_id[r], best_err[r], th_out[r], tl_out[r] = ids[first], e[first], th[first], tl[first]

    def _freq_ok(self, th, tl):
        """Candidates whose period keeps the frequency within the limit (1e-9 rounding slack)."""
        f = self.lim.max_freq_hz
        if not math.isfinite(f):
            return np.ones(np.shape(th), dtype=bool)
        with np.errstate(divide="ignore", invalid="ignore"):
            return ~(1.0 / (th + tl) > f * (1 + _SLACK))

    def _eval_pairs(self, ci, rb_id, bound: Optional[float] = None):
        """Evaluate pairs given by positions ``ci`` into c_ids and RB ids; returns rows kept."""
        good = self.rb_power.ok(rb_id)
        if not good.all():
            self.ex.add(f"(C, RB) pairs with RB over its power rating (peak (2VCC/3)²/RB above "
                        f"{self.lim.r_power_derating:.0%} of the rating)", (~good).sum())
            ci, rb_id = ci[good], rb_id[good]
        cv = self.c_vals[ci]
        rb = self.r.values(rb_id)
        ra_id, err, th, tl = self._best_ra(cv, rb_id, rb, bound)
        keep = (ra_id >= 0) & (np.abs(err) <= MAX_ERROR)
        return (ci[keep], rb_id[keep], ra_id[keep], err[keep], th[keep], tl[keep])

    def _resistors_usable(self) -> bool:
        """False (and counted) when no resistor network reaches the minimum RA / R at all."""
        if self.r.empty:
            return False  # noted by the caller ("no resistor in stock")
        if self.lim.min_r_ohm > 0:
            _b, above = self.r.nearest_sides(np.array([self.lim.min_r_ohm * (1 - _SLACK)]), 1)
            if int(np.asarray(above).ravel()[0]) < 0:
                self.ex.add(f"resistor networks below the {_fmt(self.lim.min_r_ohm, 'Ω')} minimum "
                            f"RA / R{self.lim.reason('min_r_ohm')} (all of them)", len(self.r))
                return False
        return True

    def run2(self, pool: int, progress: Optional[Callable[[], None]] = None,
             sample: Optional[int] = None) -> list[tuple]:
        """Phase 1 gives the bound B; phase 2 evaluates every pair that can reach B. With 3-part
        resistor networks each nearest look-up is costly, so phase 1 first runs on an evenly
        spread sample of ``sample`` capacitor networks: their options are options too, so the
        K-th best of them is still a valid bound (dense 3-part networks make it tight); only
        when the sample holds fewer than K options does phase 1 run on every C. With 1-2 part
        networks the subset is the ``PHASE1_PICK`` capacitor networks whose nearest RB is
        closest to the ideal one (``_closest_low``), and ``_phase1_ties`` then gives the pool's
        pairs the RA a phase 1 on every C would have given them."""
        lim, p = self.lim, self.p
        nc = self.c_ids.size
        if nc == 0 or not self._resistors_usable():
            return []
        found, bound = [], MAX_ERROR
        sample = PHASE1_SAMPLE if sample is None else int(sample)
        subset = picked = None
        if self.r.max_parts >= 3 and nc > 2 * sample:
            subset = np.unique(np.linspace(0, nc - 1, sample).astype(np.int64))
        elif self.r.max_parts <= 2 and nc > 2 * PHASE1_PICK:
            subset = picked = self._closest_low(PHASE1_PICK)
        if subset is not None:
            found, bound, enough = self._quiet_phase1(pool, progress, subset)
            if not enough:
                found, bound, picked = [], MAX_ERROR, None
        if not found:
            found, bound, _enough = self._phase1(pool, progress)
        # A smaller parts budget's pool (``bound_hint``, set by the engine) is ``pool`` distinct
        # (C, RB) pairs this pass's indexes hold too (every smaller network is in them, under the
        # same limits and stock), each at most at that error here: so its worst error bounds this
        # pool's as well, and a target the stock can barely reach keeps the tighter of the two.
        bound = min(bound, self.bound_hint)
        # Phase 2: every RB in the certified slice, each with its best RA.
        if self.r.max_parts >= 3 and self._phase2_ordered(found, bound, pool, progress):
            return self._collect(found, pool, two=True)
        if self.r.sorted_values is not None:
            found.extend(self._phase2_sorted(bound, progress))
        else:
            for sl in _chunks(nc, self.chunk):
                found.extend(self._phase2(np.arange(sl.start, sl.stop), bound))
                if progress:
                    progress()
        if picked is not None:
            found = self._phase1_ties(found, pool, picked)
        return self._collect(found, pool, two=True)

    def _quiet_phase1(self, pool: int, progress, subset):
        """``_phase1`` on a subset, its exclusion counts dropped: what the limits excluded is
        counted by a full pass (the fallback when the subset gives too few options; the counts
        are read only when nothing at all is found)."""
        ex, self.ex = self.ex, type(self.ex)()
        try:
            return self._phase1(pool, progress, subset)
        finally:
            self.ex = ex

    def _phase1_ties(self, found: list, pool: int, picked: np.ndarray) -> list:
        """The pool as if phase 1 had run on every capacitor network, not only the ``picked``
        ones: the same pairs and errors (phase 2 alone already gives every pair within the
        bound its smallest error), and for a pair whose RA has equal-error rivals (the same
        value from other drawers) the RA phase 1 would have given it, since ``_collect`` keeps
        the first of equal entries and phase 1's come first. Only the capacitor networks of the
        pool's pairs need it: phase 1 on them, put in front."""
        hits = self._collect(found, pool, two=True)
        pos = np.flatnonzero(np.isin(self.c_ids, [h.c_id for h in hits]))
        rest = pos[~np.isin(pos, picked)]   # np.setdiff1d (pos is sorted, distinct) without its numpy.ma import
        if rest.size == 0:
            return found
        more, _bound, _enough = self._quiet_phase1(pool, None, rest)
        return more + found

    def _closest_low(self, k: int) -> np.ndarray:
        """Positions of the ``k`` capacitor networks whose nearest resistor network (either
        side) is closest, in ratio, to the RB that meets the low time with the circuit's closed
        form (``rb_ideal`` without the discharge switch's refinement): a cheap guess at where the
        best options are, for phase 1 on 1-2 part networks. Any subset gives a valid bound (its
        options are real); a good one gives nearly the bound of all capacitor networks at a
        fraction of the look-ups (the diode's RA inverse is the costly step)."""
        v = self.r.sorted_values
        rb0 = np.asarray(self.p.kind.rb_ideal(self.p.target, self.c_vals), dtype=float)
        with np.errstate(all="ignore"):
            i = np.searchsorted(v, rb0)
            below = v[np.clip(i - 1, 0, v.size - 1)]
            above = v[np.clip(i, 0, v.size - 1)]
            d = np.minimum(np.abs(np.log(below / rb0)), np.abs(np.log(above / rb0)))
        d = np.where(np.isfinite(d), d, INF)
        return np.sort(np.argpartition(d, k - 1)[:k]).astype(np.int64)

    def _r_range(self) -> tuple[float, float]:
        """Smallest and largest resistor network value (0, inf when unknown)."""
        if not hasattr(self, "_r_minmax"):
            lo, hi = 0.0, math.inf
            v = self.r.sorted_values
            if v is not None:  # the look-ups below, on the sorted array itself
                a = int(np.searchsorted(v, 1e-300, side="left"))
                b = int(np.searchsorted(v, 1e300, side="right")) - 1
                self._r_minmax = (float(v[a]) if a < v.size else lo, float(v[b]) if b >= 0 else hi)
                return self._r_minmax
            try:
                below, above = self.r.nearest_sides(np.array([1e-300, 1e300]), 1)
                a, b = int(np.ravel(above)[0]), int(np.ravel(below)[-1])
                if a >= 0:
                    lo = float(self.r.values(np.array([a]))[0])
                if b >= 0:
                    hi = float(self.r.values(np.array([b]))[0])
            except (ValueError, IndexError):
                pass
            self._r_minmax = (lo, hi)
        return self._r_minmax

    def _box(self, pos, bound: float):
        """Certified ranges (rb_lo, rb_hi, ra_lo, ra_hi) holding RB and RA of EVERY option with
        error <= ``bound`` of the capacitor networks at ``pos`` (see "Why the two-resistor pass
        is exact" at the end of this module)."""
        p, lim, tg = self.p, self.lim, self.p.target
        cv = self.c_vals[pos]
        n = cv.size
        r_min, r_max = self._r_range()
        rd = float(lim.discharge_ohms)
        ra_lo = np.full(n, max(lim.min_r_ohm, r_min, 2.0 * rd))
        ra_hi = np.full(n, min(lim.max_ra_ohm, lim.max_total_r_ohm - r_min, r_max))
        rb_lo = np.full(n, r_min)
        rb_hi = np.full(n, min(lim.max_total_r_ohm - lim.min_r_ohm, r_max))
        tl_lo, tl_hi = np.full(n, tg.t_low * (1 - bound)), np.full(n, tg.t_low * (1 + bound))
        th_lo, th_hi = np.full(n, tg.t_high * (1 - bound)), np.full(n, tg.t_high * (1 + bound))
        lo_s, hi_s = 1 - _SLACK, 1 + _SLACK
        active = None   # the rows still narrowed: None = all of them (a slice: no gather copies)
        with np.errstate(all="ignore"):
            rounds = _BOX_ROUNDS if self.r.max_parts >= 3 else _BOX_ROUNDS_2
            for rnd in range(rounds + 1):
                i = slice(None) if active is None else active
                # t_low is non-increasing in RA and increasing in RB
                rb_lo[i] = np.maximum(rb_lo[i], _nan_to(p.rb_for_low(tl_lo[i], ra_lo[i], cv[i]),
                                                        -INF) * lo_s)
                rb_hi[i] = np.minimum(rb_hi[i], _nan_to(p.rb_for_low(tl_hi[i], ra_hi[i], cv[i]),
                                                        INF) * hi_s)
                rb_hi[i] = np.minimum(rb_hi[i], (lim.max_total_r_ohm - ra_lo[i]) * hi_s)
                if rnd == rounds or rd == 0.0:
                    break   # (RD = 0: t_low does not depend on RA, the RB range is already exact)
                # rows still worth narrowing: not empty, and the RB range wider than 1.5× what
                # the bound alone allows
                w = rb_hi[i] - rb_lo[i]
                keep = (w >= 0) & (ra_lo[i] <= ra_hi[i]) & (rb_lo[i] > 0) & (w > 3.0 * bound * rb_hi[i] + 1e-9 * rb_hi[i])
                if active is None:
                    active = None if keep.all() else np.flatnonzero(keep)
                else:
                    active = active[keep]
                if active is not None and active.size == 0:
                    break
                i = slice(None) if active is None else active
                # t_high is increasing in RA and non-decreasing in RB
                a, b = _both_ends(p.ra_for_high, th_lo[i], th_hi[i], rb_hi[i], rb_lo[i], cv[i])
                ra_lo[i] = np.maximum(ra_lo[i], _nan_to(a, -INF) * lo_s)
                ra_hi[i] = np.minimum(ra_hi[i], _nan_to(b, INF) * hi_s)
        return rb_lo, rb_hi, ra_lo, ra_hi

    def _phase2(self, pos, bound: float) -> list[tuple]:
        """Every RB in the certified slice of each capacitor network at ``pos``, with its best RA
        within ``bound``."""
        lo, hi, _a, _b = self._box(pos, bound)
        return self._eval_slices(pos, lo, np.maximum(hi, lo), bound)

    def _eval_slices(self, pos, lo, hi, bound: float) -> list[tuple]:
        """Every RB network in [lo[i], hi[i]] with capacitor network pos[i], evaluated 200 000
        pairs at a time."""
        offsets, ids = self.r.between(lo, hi)
        ci = np.repeat(pos, np.diff(offsets))
        ids = np.asarray(ids, dtype=np.int64)
        return [self._eval_pairs(ci[sub], ids[sub], bound) for sub in _chunks(ids.size, 200_000)]

    def _phase2_sorted(self, bound: float, progress=None) -> list[tuple]:
        """``_phase2`` over every capacitor network when the resistor networks are 1-2 part ones
        in one sorted array: the boxes of all at once (each costly RA inverse called once, not
        once per chunk of capacitor networks), then the slices - the same pairs ``_phase2``
        lists: the size of each is two ``searchsorted`` away - in groups of capacitor networks
        holding about a million pairs at most, evaluated 200 000 pairs at a time."""
        pos = np.arange(self.c_ids.size)
        lo, hi, _a, _b = self._box(pos, bound)
        hi = np.maximum(hi, lo)
        v = self.r.sorted_values
        a = np.searchsorted(v, lo, side="left")
        size = np.maximum(np.searchsorted(v, hi, side="right"), a) - a
        group = np.cumsum(size) // 1_000_000
        cuts = np.flatnonzero(np.diff(group)) + 1
        out = []
        for g in np.split(pos, cuts):
            if g.size == 0:
                continue
            out.extend(self._eval_slices(g, lo[g], hi[g], bound))
            if progress:
                progress()
        return out

    def _low_floor(self, cand, ra_lo, ra_hi, pos=None) -> np.ndarray:
        """LB(c): a lower bound on the low-time error of any option of each capacitor network
        whose RB is one of ``cand`` (sorted) and whose RA lies in [ra_lo, ra_hi]. t_low of such an
        option lies in [t_low(ra_hi, RB), t_low(ra_lo, RB)], so e_low >= max(0,
        t_low(ra_hi, RB)/T_low − 1, 1 − t_low(ra_lo, RB)/T_low), which is 0 for RB in [za, zb]
        (the RB meeting T_low at ra_lo and at ra_hi), falls toward za from below and rises
        from zb upward: the minimum over ``cand`` is at the nearest value on each side."""
        p, tg = self.p, self.p.target
        cv = self.c_vals if pos is None else self.c_vals[pos]
        out = np.full(cv.size, INF)
        if cand.size == 0:
            return out
        t = np.full(cv.size, tg.t_low)
        with np.errstate(all="ignore"):
            za = p.rb_for_low(t, ra_lo, cv)
            zb = p.rb_for_low(t, ra_hi, cv)
            i = np.searchsorted(cand, za, side="left")
            j = np.searchsorted(cand, zb, side="right")
            inside = j > i
            below = cand[np.clip(i - 1, 0, cand.size - 1)]
            above = cand[np.clip(i, 0, cand.size - 1)]
            lb_below = 1.0 - p.t_low(ra_lo, below, cv) / tg.t_low
            lb_above = p.t_low(ra_hi, above, cv) / tg.t_low - 1.0
            # a value that is not a number bounds nothing: 0 (never skips a network); +inf
            # above means RA <= 2·RD, where no option has a finite low time
            lb_below = np.where(i > 0, np.nan_to_num(lb_below, nan=0.0, neginf=0.0, posinf=INF), INF)
            lb_above = np.where(i < cand.size, np.nan_to_num(lb_above, nan=0.0, neginf=0.0, posinf=INF), INF)
            out = np.maximum(np.minimum(lb_below, lb_above), 0.0)
            out = np.where(inside, 0.0, out * (1 - 1e-12))   # rounding: never above the true error
        return out

    def _phase2_ordered(self, found: list, bound: float, pool: int, progress=None) -> bool:
        """Phase 2 as branch and bound (3-part resistor networks); False when the sweep does not
        pay and the caller should run the plain phase 2 instead.

        Why it is exact.  Phase 2 for a capacitor network c with bound B evaluates the slice
        S(c, B) = [rb_lo, rb_hi] of ``_box(c, B)``; every option of c with error <= B has its RB
        there and its RA in [ra_lo, ra_hi].  For B <= B0 those ranges lie inside the ranges at
        B0.  ``values_within`` returns every network value inside any S(c, B0) (and maybe
        more), and LB(c) = ``_low_floor`` of that swept set with the RA range at B0 is at most
        the error of every option of c with error <= B0 (that option's RB is swept, and the
        floor is a lower bound on its low-time error).  The capacitor networks are taken in
        order of LB; after each chunk B becomes the pool-th smallest error among the distinct
        (c, RB) pairs found so far (real options, so still an upper bound on the pool-th best;
        never larger than before).  The loop stops at the first c with LB(c) > B: that c and
        every later one has no option within B.  Every option with error <= the final B (which
        includes the exact pool best) therefore came from a processed c that was searched with a
        bound at least as large: the result equals the plain phase 2's."""
        nc = self.c_ids.size
        rb_lo, rb_hi, ra_lo, ra_hi = self._box(np.arange(nc), bound)
        have = (rb_lo <= rb_hi * (1 + _SLACK)) & (ra_lo <= ra_hi * (1 + _SLACK))
        cand = self.r.values_within(rb_lo[have], rb_hi[have])
        if cand is None:
            return False
        lb = self._low_floor(np.asarray(cand, dtype=float), ra_lo, ra_hi)
        lb[~have] = INF
        live = np.flatnonzero(lb <= bound * (1 + 1e-9) + 1e-15)
        order = live[np.argsort(lb[live], kind="stable")]
        b, start, size = bound, 0, 256
        lb_at = bound   # the bound the floors were computed for
        while start < order.size and lb[order[start]] <= b * (1 + 1e-9) + 1e-15:
            pos = order[start:start + size]
            found.extend(self._phase2(pos, b))
            b = min(b, _kth_distinct(found, pool, 3))
            start += size
            size = min(2 * size, self.chunk)
            if progress:
                progress()
            if self.lim.discharge_ohms > 0 and b < 0.1 * lb_at and start < order.size:
                # With RD > 0 the floor is blurred by the width of the RA range at the bound it
                # was computed for; recompute it for the networks not yet visited with the
                # ranges at the current b (still a lower bound for every option with error <= b,
                # and the swept values still cover their slices, which only narrow), re-order
                # them and go on: the stopping argument above holds for the new order.
                rest = order[start:]
                rest = rest[lb[rest] <= b * (1 + 1e-9) + 1e-15]
                _l, _h, r_lo, r_hi = self._box(rest, b)
                sub = self._low_floor(np.asarray(cand, dtype=float), r_lo, r_hi, rest)
                sub[~((_l <= _h * (1 + _SLACK)) & (r_lo <= r_hi * (1 + _SLACK)))] = INF
                lb[rest] = sub
                order = rest[np.argsort(sub, kind="stable")]
                start, lb_at = 0, b
        return True

    def _phase1(self, pool: int, progress=None, subset=None) -> tuple[list, float, bool]:
        """Provisional bound: the nearest RB on each side of RB*(c), each with its best RA; B is
        the pool-th smallest error (MAX_ERROR when fewer options exist, ``enough`` False)."""
        lim, p = self.lim, self.p
        pos = np.arange(self.c_ids.size) if subset is None else np.asarray(subset, dtype=np.int64)
        rb_star = p.rb_ideal(self.c_vals[pos])
        rb_hi_all = np.full(pos.size, lim.max_total_r_ohm - lim.min_r_ohm)
        found: list[tuple] = []
        for sl in _chunks(pos.size, self.chunk):
            ci = pos[sl]
            below, above = _nearest_feasible(self.r, rb_star[sl], np.zeros(ci.size), rb_hi_all[sl],
                                             lambda ids, rows: self.rb_power.ok(ids))
            above = np.where(above == below, -1, above)  # an exact hit is found on both sides
            cc = np.concatenate([ci[below >= 0], ci[above >= 0]])
            rr = np.concatenate([below[below >= 0], above[above >= 0]])
            if cc.size:
                found.append(self._eval_pairs(cc, rr))
            if progress:
                progress()
        errs = np.concatenate([f[3] for f in found]) if found else np.zeros(0)
        errs = np.abs(errs)
        if errs.size >= pool:
            bound = float(np.partition(errs, pool - 1)[pool - 1])
        else:
            bound = MAX_ERROR  # too few options yet: certify the whole allowed range
        bound = min(bound, MAX_ERROR) * (1 + _SLACK) + 1e-15
        return found, bound, errs.size >= pool

    # ---- one-resistor connections
    def run1(self, pool: int, progress: Optional[Callable[[], None]] = None,
             sample: Optional[int] = None) -> list[Hit]:
        """The best feasible R on each side of R*(c) for every capacitor network c (see the
        engine's argument).  With 3-part resistor networks the capacitor networks are taken in
        order of a lower bound instead and the search stops once no later one can enter the
        pool (``_run1_ordered``); its first bound comes from the 1-2 part resistor networks
        (``_pairs_bound``), and only when the sweep gives up on it from a sample of exact
        look-ups (tighter, costlier)."""
        p = self.p
        nc = self.c_ids.size
        if nc == 0 or not self._resistors_usable():
            return []
        sample = PHASE1_SAMPLE if sample is None else int(sample)
        if self.r.max_parts >= 3 and nc > 2 * sample:
            found = []
            bound = self._pairs_bound(pool)
            done = math.isfinite(bound) and self._run1_ordered(found, bound, pool, progress)
            if not done:
                subset = np.unique(np.linspace(0, nc - 1, sample).astype(np.int64))
                found = self._one_chunk(subset, count=False)
                bound = _kth_distinct(found, pool, 2)
                done = math.isfinite(bound) and self._run1_ordered(found, bound, pool, progress)
            if done:
                lo, hi = p.r_bounds1(self.c_vals)
                self.ex.add(_r_range_text(self.lim), (lo > hi * (1 + _SLACK)).sum())
                return self._collect(found, pool, two=False)
        found = []
        for sl in _chunks(nc, self.chunk):
            found.extend(self._one_chunk(np.arange(sl.start, sl.stop)))
            if progress:
                progress()
        return self._collect(found, pool, two=False)

    def _one_chunk(self, ci, count: bool = True, r=None) -> list[tuple]:
        """The nearest feasible R on each side of clamp(R*(c)) for the capacitor networks ``ci``
        (among the networks of ``r``, a view of the resistor index; all of them by default)."""
        p = self.p
        r = self.r if r is None else r
        cv = self.c_vals[ci]
        r_star = p.r_ideal(cv)
        lo, hi = p.r_bounds1(cv)
        empty = lo > hi * (1 + _SLACK)
        below, above = _nearest_feasible(r, r_star, lo, hi, lambda ids, rows: self.power.ok(ids))
        if count:
            self.ex.add(_r_range_text(self.lim), empty.sum())
            none = (below < 0) & (above < 0) & ~empty
            over = np.zeros(none.shape, dtype=bool)
            rows = np.flatnonzero(none & np.isfinite(hi))
            if rows.size:  # a network above the maximum R: that limit excluded it
                _b, up = self.r.nearest_sides(hi[rows] * (1 + 1e-9), 1)
                over[rows] = np.asarray(up).reshape(rows.size, -1)[:, 0] >= 0
            self.ex.add(f"C networks whose R would be above the {_fmt(self.lim.max_total_r_ohm, 'Ω')} maximum R"
                        f"{self.lim.reason('max_total_r_ohm')}", over.sum())
            self.ex.add("C networks with no R in range within its power rating", (none & ~over).sum())
        found = []
        for side in (below, above):
            has = side >= 0
            if not has.any():
                continue
            e, th, tl, tt = p.error1(r.values(side[has]), cv[has])
            keep = np.abs(e) <= MAX_ERROR
            found.append((ci[has][keep], side[has][keep], e[keep], th[keep], tl[keep], tt[keep]))
        return found

    def _pairs_bound(self, pool: int) -> float:
        """A first bound for ``_run1_ordered`` from every capacitor network with its nearest
        feasible 1-2 part resistor network on each side (plain searchsorted look-ups): the
        pool-th smallest over the capacitor networks of each one's best |error| there, widened
        against rounding; inf when fewer than pool of them have one.

        Why it bounds the pool.  Let c have a feasible 1-2 part network with |error| E(c). The
        plain pass (the engine's argument) pairs c with the nearest feasible network of ALL the
        index on that side of q(c), which is at least as near, hence (V shape) has |error| <=
        E(c). So pool distinct capacitor networks give pool distinct pairs of the plain pass
        with |error| <= the bound, and the plain pass's pool-th error is <= the bound: its
        whole pool lies within it, which is all ``_run1_ordered`` needs of its first bound.
        These look-ups' own pairs are not kept as options (they need not be pairs of the plain
        pass: a 3-part network may be nearer on the same side)."""
        nc = self.c_ids.size
        ci = np.arange(nc)
        if nc > PAIRS_BOUND_C:  # an even spread of them: any subset gives a valid bound
            ci = np.unique(np.linspace(0, nc - 1, PAIRS_BOUND_C).astype(np.int64))
        found = self._one_chunk(ci, count=False, r=self.r.pairs_only())
        if not found:
            return INF
        best = np.full(nc, INF)
        for ci, _r, e, *_rest in found:
            np.minimum.at(best, ci, np.abs(e))
        best = best[np.isfinite(best)]
        if best.size < pool:
            return INF
        kth = float(np.partition(best, pool - 1)[pool - 1])
        return min(kth, MAX_ERROR) * (1 + _SLACK) + 1e-15

    def _run1_ordered(self, found: list, bound: float, pool: int, progress=None) -> bool:
        """Branch and bound over the capacitor networks; False when the sweep does not pay.

        Why it is exact.  For each c the error is V-shaped in R around R*(c) (engine argument), so
        W(c) = {R : |e(R, c)| <= B0} is an interval around R*; it is found by bisection on each
        side and kept on its outer end (a superset).  ``values_within`` returns every resistor
        network value inside any W(c) ∩ [lo, hi] (and maybe more).  LB(c) = the smaller |e| of the
        swept values nearest to q = clamp(R*, lo, hi) on each side: any network v in that window
        is swept, and the nearest swept value on v's side of q lies between v and q, on the same
        branch of the V, so LB(c) <= |e(v, c)|.  Hence c has no option within B when LB(c) > B.
        B0 only has to hold the plain pass's whole pool (its pool-th error <= B0): the error of
        an option found, or ``_pairs_bound``. The capacitor networks with LB(c) <= B0 are
        processed in order of LB with the exact per-c look-up (``found``: pairs of the plain
        pass only); B becomes the pool-th smallest |error| of the distinct (c, R) found (inf
        while fewer); the loop stops at the first LB(c) >= B, and every later c has no option
        that can improve the pool: the same pool errors as the plain pass (among options tied
        at exactly the pool-th error, which ones are kept may differ)."""
        p = self.p
        cv = self.c_vals
        r_star = p.r_ideal(cv)
        lo, hi = p.r_bounds1(cv)
        with np.errstate(all="ignore"):
            odd = ~(np.isfinite(r_star) & (r_star > 0))
            rs = np.where(odd, 1.0, r_star)
            wl, wh = _window1(p, rs, cv, bound)
            a, b = np.maximum(lo, wl), np.minimum(hi, wh)
            have = ~odd & (a <= b * (1 + _SLACK))
            cand = self.r.values_within(a[have], b[have])
            if cand is None:
                return False
            q = np.clip(rs, lo, np.maximum(hi, lo))
            i = np.searchsorted(cand, q)
            lb = np.full(cv.size, INF)
            for j, ok in ((i - 1, i > 0), (i, i < cand.size)):
                v = cand[np.clip(j, 0, max(cand.size - 1, 0))] if cand.size else np.full(cv.size, np.nan)
                e = np.abs(p.error1(v, cv)[0])
                lb = np.minimum(lb, np.where(ok & np.isfinite(e), e, INF))
        lb[~have] = INF
        lb[odd] = 0.0  # no ideal R known: always searched
        live = np.flatnonzero(lb <= bound * (1 + 1e-9) + 1e-15)
        order = live[np.argsort(lb[live], kind="stable")]
        # Once the pool is full (B finite), an option whose |error| EQUALS the current pool-th
        # best cannot change the pool's errors: the loop stops at LB >= B. No rounding slack is
        # needed here: LB is the circuit's own error1 on the same value (same join of the same
        # parts), so it equals that option's |error| bit for bit. (Many exact hits, e.g. an RC
        # target of 0 error, would otherwise all be visited.) The first chunk is small: in LB
        # order the first few capacitor networks usually fill the pool already.
        b, start, size = _kth_distinct(found, pool, 2, slack=False), 0, max(32, 2 * pool)
        while start < order.size and lb[order[start]] < b:
            found.extend(self._one_chunk(order[start:start + size], count=False))
            b = min(b, _kth_distinct(found, pool, 2, slack=False))
            start += size
            size = min(2 * size, self.chunk)
            if progress:
                progress()
        return True

    def _collect(self, found, pool: int, two: bool) -> list[tuple]:
        if not found:
            return []
        cols = [np.concatenate(col) for col in zip(*found)]
        if two:
            ci, rb, ra, err, th, tl = cols
            second = rb
        else:
            ci, r, err, th, tl, tt = cols
            second = r
        if ci.size == 0:
            return []
        # each pair once, with its smallest error: phase 1 may have paired an RB with an RA that
        # phase 2 beats (with RD > 0 the low time depends on RA too). One int64 key per pair
        # (positions and ids are >= 0 and small): a 1-D unique, far cheaper than unique rows.
        key = ci.astype(np.int64) * (int(second.max()) + 1) + second.astype(np.int64)
        by_err = np.argsort(np.abs(err), kind="stable")
        _, first = np.unique(key[by_err], return_index=True)
        first = by_err[first]
        order = first[np.argsort(np.abs(err[first]), kind="stable")][:pool]
        # to Python numbers in one ``tolist`` per column (the same ints and floats as int()/float())
        c_l, err_l, th_l, tl_l = (self.c_ids[ci[order]].tolist(), err[order].tolist(),
                                  th[order].tolist(), tl[order].tolist())
        if two:
            return [Hit(c, (a, b), e, h, lo, math.nan) for c, a, b, e, h, lo
                    in zip(c_l, ra[order].tolist(), rb[order].tolist(), err_l, th_l, tl_l)]
        return [Hit(c, (x,), e, h, lo, t) for c, x, e, h, lo, t
                in zip(c_l, r[order].tolist(), err_l, th_l, tl_l, tt[order].tolist())]


# --------------------------------------------------------------------------- limit wording


def _r_range_text(lim) -> str:
    """The one-resistor exclusion, naming the R range and what sets each end."""
    text = (f"C networks needing R outside {_fmt(lim.min_r_ohm, 'Ω')}{lim.reason('min_r_ohm')} to "
            f"{_fmt(lim.max_total_r_ohm, 'Ω')}{lim.reason('max_total_r_ohm')}")
    if math.isfinite(lim.max_freq_hz):
        text += f" or above the {_fmt(lim.max_freq_hz, 'Hz')} maximum frequency{lim.reason('max_freq_hz')}"
    return text


# --------------------------------------------------------------------------- bounds


def _kth_distinct(found: list, pool: int, col: int, slack: bool = True) -> float:
    """The pool-th smallest |error| over the distinct (capacitor, first resistor) pairs in
    ``found`` (tuples of arrays: positions, resistor ids, ..., errors in column ``col``: 3 for
    the two-resistor pass, 2 for the one-resistor pass), slightly widened; inf when fewer pairs
    exist. Duplicates must not count twice or the bound would be too low."""
    if not found:
        return INF
    ci = np.concatenate([f[0] for f in found]).astype(np.int64)
    rid = np.concatenate([f[1] for f in found]).astype(np.int64)
    err = np.abs(np.concatenate([f[col] for f in found]))
    if ci.size < pool:
        return INF
    key = ci * (int(rid.max()) + 1) + rid
    by_err = np.argsort(err, kind="stable")       # each pair with its smallest error
    _u, first = np.unique(key[by_err], return_index=True)
    if first.size < pool:
        return INF
    kth = float(np.partition(err[by_err][first], pool - 1)[pool - 1])
    return min(kth, MAX_ERROR) * (1 + _SLACK) + 1e-15 if slack else kth


def _window1(p, r_star: np.ndarray, c: np.ndarray, bound: float) -> tuple[np.ndarray, np.ndarray]:
    """A superset [wl, wh] of {R : |e(R, c)| <= bound} for one-resistor circuits (V-shaped around
    R*). On each side, in the log-distance x from R*, a bracket [x_in, x_out] is kept with x_in
    inside (error within the bound) and x_out outside, and the window ends at x_out: first x_out
    doubles until it is outside; then one step tries two points just either side of where the
    straight line through the bracket's two errors meets the bound (the error is nearly linear
    in x over such short distances, so this usually closes the bracket at once); then halving,
    until x_out - x_in <= max(``_WINDOW_TOL``·x_out, ``_WINDOW_ABS``) (or 40 halvings). Every
    point tried moves the end it is on the side of (the V shape: beyond an outside point all is
    outside), so the window only ever holds the exact one. Empty (wl > wh) where even R* misses
    the bound."""
    e0 = np.abs(p.error1(r_star, c)[0])
    wl = np.full(np.shape(r_star), INF)
    wh = np.zeros(np.shape(r_star))
    idx = np.flatnonzero(e0 <= bound)
    if idx.size == 0:
        return wl, wh
    rs, cc, ez = r_star[idx], c[idx], e0[idx]
    # first step: the room left, bound - e0 (the error grows about 1:1 with the log-distance
    # for these circuits, so the edge is near); any positive start keeps the search right
    x0 = np.maximum(bound - ez, max(bound, 1e-12) * 1e-3)
    n = idx.size

    def err(x, sign, sub):
        return np.abs(p.error1(rs[sub] * np.exp(sign * x), cc[sub])[0])

    def close(x_in, x_out, sub, x, e):
        """Move the bracket ends of the entries ``sub`` to the points x (errors e) on their side."""
        inside = e <= bound
        x_in[sub] = np.where(inside, np.maximum(x_in[sub], x), x_in[sub])
        x_out[sub] = np.where(inside, x_out[sub], np.minimum(x_out[sub], x))

    for sign, out in ((-1.0, wl), (1.0, wh)):
        x_in, e_in = np.zeros(n), ez.copy()
        x_out, e_out = x0.copy(), np.full(n, np.nan)
        grow = np.arange(n)
        for _ in range(80):
            if grow.size == 0:
                break
            e = err(x_out[grow], sign, grow)
            still = e <= bound
            g_in = grow[still]
            x_in[g_in], e_in[g_in] = x_out[g_in], e[still]
            e_out[grow[~still]] = e[~still]
            x_out[g_in] *= 2.0
            grow = g_in[x_out[g_in] < 700.0]
        far = x_out >= 700.0  # within the bound all the way out: no end on this side
        todo = np.flatnonzero(~far & (x_out - x_in > np.maximum(_WINDOW_TOL * x_out, _WINDOW_ABS)))
        if todo.size:
            with np.errstate(all="ignore"):
                t = (bound - e_in[todo]) / (e_out[todo] - e_in[todo])
            t = np.where(np.isfinite(t), np.clip(t, 0.0, 1.0), 0.5)
            x_lin = x_in[todo] + t * (x_out[todo] - x_in[todo])
            tries = np.concatenate([x_lin * (1 - 0.25 * _WINDOW_TOL), x_lin * (1 + 0.25 * _WINDOW_TOL)])
            e = err(tries, sign, np.concatenate([todo, todo]))
            close(x_in, x_out, todo, tries[:todo.size], e[:todo.size])
            close(x_in, x_out, todo, tries[todo.size:], e[todo.size:])
        for _ in range(40):
            todo = todo[x_out[todo] - x_in[todo] > np.maximum(_WINDOW_TOL * x_out[todo], _WINDOW_ABS)]
            if todo.size == 0:
                break
            mid = 0.5 * (x_in[todo] + x_out[todo])
            close(x_in, x_out, todo, mid, err(mid, sign, todo))
        out[idx] = np.where(far, 0.0 if sign < 0 else INF, rs * np.exp(sign * x_out))
    return wl, wh


# --------------------------------------------------------------------------- the argument
TWO_RESISTOR_ARGUMENT = """Why the two-resistor pass is exact (standard and diode-steered astables).

Error of an option: e = max(|t_high/T_high − 1|, |t_low/T_low − 1|). What the circuits guarantee
(``timing``; derived there):
  (H) t_high(RA, RB, c) is strictly increasing in RA and non-decreasing in RB (standard: ln2·(RA+RB)·c;
      diode: dt/dRA = c·ln(I0/I1) > 0, and a larger RB raises the diode's drop at every level, so C
      charges more slowly). ``ra_for_high(t, RB, c)`` is its exact inverse in RA.
  (L) t_low(RA, RB, c) = (RB + RA∥RD)·c·ln((2 − 3δ)/(1 − 3δ)), δ = RD/(RA+RD): linear and
      increasing in RB, non-increasing in RA (strictly for RD > 0), infinite for RA <= 2·RD.
      ``rb_for_low(t, RA, c)`` is its exact inverse in RB.
Limits: RA >= lo (minimum RA, the DIS-current bound, and the frequency bound below), RA <= the
maximum RA and RA + RB <= the maximum total; power and shared stock are checked per candidate;
the frequency limit 1/(t_high + t_low) <= fmax is checked per candidate too (with RD > 0 the
period need not grow with RA). The lower bound on RA used for it, t_high(RA) >= 1/fmax −
t_low(lo, RB), is necessary because t_low(RA) <= t_low(lo) for RA >= lo (L).

1. Phase 1 (a bound): for each capacitor network c, the networks nearest the RB that meets both
   halves with its ideal RA, each paired with the feasible RA nearest the t_high ideal, give real
   options; B = the pool-th smallest error among distinct (c, RB) pairs (MAX_ERROR when fewer).
   Any real options would do: B only has to be attained. So phase 1 may run on a subset of the
   capacitor networks (an even sample with 3-part networks, the ones whose nearest RB is closest
   to RB*(c) with 1-2 part ones), falling back to all of them when the subset gives fewer than
   the pool's options.
2. The box (``_box``). Let O be an option of c with error <= B: t_high in T_high·[1−B, 1+B] and
   t_low in T_low·[1−B, 1+B]. Start from ranges every option satisfies (RA >= max(min RA, smallest
   network, 2·RD), RA <= min(max RA, max total − smallest network, largest network); RB between the
   smallest network and max total − min RA). Then, repeatedly:
     RB >= rb_for_low(T_low(1−B), RA_lo)  since t_low(RA, RB) <= t_low(RA_lo, RB) (L);
     RB <= rb_for_low(T_low(1+B), RA_hi)  since t_low(RA, RB) >= t_low(RA_hi, RB) (L);
     RB <= max total − RA_lo;
     RA >= ra_for_high(T_high(1−B), RB_hi) since t_high(RA, RB) <= t_high(RA, RB_hi) (H);
     RA <= ra_for_high(T_high(1+B), RB_lo) since t_high(RA, RB) >= t_high(RA, RB_lo) (H).
   Each step is implied by O's error <= B and the ranges before it, so O stays inside after any
   number of rounds (each bound is also widened by 1e-9 against rounding). With RD = 0 the RB range
   is exactly the old slice RB*(c)·[1−B, 1+B]; with RD > 0 and RA >> RD it is barely wider.
3. Phase 2 evaluates, for every c and every RB network in [RB_lo, RB_hi] (``between`` lists the
   slice exactly), every feasible RA network in the t_high window [ra_for_high(T_high(1−B), RB),
   ra_for_high(T_high(1+B), RB)] ∩ [lo, hi] (every RA with e_high <= B lies there by (H)) and
   keeps the pair's smallest exact error. So every option with error <= B is evaluated, the
   option with the smallest error among them is the global best, and the pool best pairs are
   exact (each pair counted once with its best RA; ``_collect`` keeps the smallest of phase 1's
   and phase 2's errors for a pair).
4. With 3-part resistor networks the capacitor networks are visited in order of a lower bound
   LB(c) (``_phase2_ordered`` explains why stopping at LB(c) > B is exact); LB is ``_low_floor``:
   with RA in the box's range, t_low lies in [t_low(RA_hi, RB), t_low(RA_lo, RB)], which bounds
   e_low from below for each RB. With RD = 0 it is the old |RB/RB*(c) − 1|.
"""
