"""Kernels of the exact timing search (see ``selector.core.search`` for the correctness argument):
the candidate filters on single networks, the widening nearest-feasible look-up, the timing laws
in the form the search needs, and one search pass over one pair of network indexes."""

from __future__ import annotations

import math
from typing import Callable, NamedTuple, Optional

import numpy as np

INF = float("inf")
_SLACK = 1e-9  # relative widening of certified slices and intervals against rounding

PHASE1_SAMPLE = 400
"""Capacitor networks sampled for the provisional bound when 3-part resistor networks are searched
(see ``_Pass.run2``); tests lower it to exercise that path on small stocks."""

MAX_ERROR = 1.0
"""Options more than 100 % off target (a factor of two on a time) are never offered; exactness is
over the options within this bound (the exhaustive reference in the tests applies it too)."""


# --------------------------------------------------------------------------- per-network checks


def _line_arrays(index, attr: str, default: float = math.nan) -> np.ndarray:
    lines = index.lines
    out = np.empty(len(lines), dtype=float)
    for i, ln in enumerate(lines):
        v = getattr(ln, attr)
        out[i] = default if v is None else float(v)
    return out


def _all_ids(index) -> np.ndarray:
    if index.max_parts <= 2:  # materialised: the ids are the positions 0..n-1
        return np.arange(len(index), dtype=np.int64)
    _, ids = index.between(np.array([0.0]), np.array([INF]))
    return np.asarray(ids, dtype=np.int64)


def capacitor_candidates(c_index, limits, ex) -> np.ndarray:
    """Ids of the capacitor networks allowed in the timing position: value >= the minimum timing
    capacitance, and every part rated for the working voltage after derating (each part of a
    series string must stand the full voltage on its own: the DC division across series
    capacitors is set by leakage, not by capacitance - common practice). Unknown rating: allowed
    (the renderer adds a caution)."""
    ids = _all_ids(c_index)
    if ids.size == 0:
        return ids
    vals = c_index.values(ids)
    small = vals < limits.min_c_f * (1 - _SLACK)
    ex.add(f"C networks below the {_fmt(limits.min_c_f, 'F')} minimum timing capacitance", small.sum())
    ids = ids[~small]
    if limits.cap_volts > 0 and ids.size:
        rating = _line_arrays(c_index, "rating")
        derate = np.array([limits.cap_derating(ln.dielectric or "") for ln in c_index.lines])
        line_ok = ~(rating * derate < limits.cap_volts)  # nan (unknown) -> allowed
        pos, _cnt = c_index.usage_arrays(ids)
        pos = np.asarray(pos)
        ok = np.all(np.where(pos >= 0, line_ok[np.maximum(pos, 0)], True), axis=1)
        ex.add(f"C networks with a part rated below {limits.cap_volts:g} V after derating", (~ok).sum())
        ids = ids[ok]
    return ids


class PowerCheck:
    """Per-part power of resistor networks with ``volts`` across them, against rating × derating.
    The power in part i of any series/parallel network is P·S_i, where P = V²/R is the network's
    power and S_i = d ln R / d ln r_i its sensitivity to that part (S_i >= 0, sum 1: R is
    homogeneous of degree 1 in its parts) - a standard consequence of Tellegen's theorem. A cheap
    bound decides most networks (P <= derating × the smallest rating: every part is fine); the
    rest are computed exactly from the network's own combine() law and cached."""

    def __init__(self, r_index, volts: float, derating: float):
        self.index = r_index
        self.volts = volts
        self.derating = derating
        rating = _line_arrays(r_index, "rating")
        self.line_rating = rating
        self.active = volts > 0 and bool(np.isfinite(rating).any())
        self._cache: dict[int, bool] = {}

    def ok(self, ids: np.ndarray) -> np.ndarray:
        ids = np.asarray(ids, dtype=np.int64)
        if not self.active or ids.size == 0:
            return np.ones(ids.shape, dtype=bool)
        flat = ids.ravel()
        vals = self.index.values(flat)
        p = self.volts**2 / vals
        pos, _cnt = self.index.usage_arrays(flat)
        pos = np.asarray(pos)
        r = np.where(pos >= 0, self.line_rating[np.maximum(pos, 0)], np.nan)
        known = np.isfinite(r)
        rmin = np.where(known, r, np.inf).min(axis=1)
        surely_ok = p <= self.derating * rmin
        res = surely_ok.copy()
        for j in np.flatnonzero(~surely_ok):
            nid = int(flat[j])
            hit = self._cache.get(nid)
            if hit is None:
                hit = self._exact(nid)
                self._cache[nid] = hit
            res[j] = hit
        return res.reshape(ids.shape)

    def _exact(self, nid: int) -> bool:
        net = self.index.network(nid)
        phys = np.array([ln.value for ln in net.physical], dtype=float)
        n = len(phys)
        total = float(net.combine(phys[:, None])[0])
        p = self.volts**2 / total
        h = 1e-6
        bumped = np.repeat(phys[:, None], n, axis=1)
        bumped[np.arange(n), np.arange(n)] *= 1 + h
        sens = np.log(net.combine(bumped) / total) / math.log1p(h)
        for ln, s in zip(net.physical, sens):
            if ln.rating is not None and p * max(float(s), 0.0) > self.derating * ln.rating * (1 + 1e-9):
                return False
        return True


# --------------------------------------------------------------------------- the look-up kernel


class SortedView:
    """Faster look-ups for an index of 1- and 2-part networks, which the network module keeps
    materialised in one array sorted by value with the id = the position there (documented in
    selector.core.networks). ``nearest_sides`` and ``between`` then become plain searchsorted
    calls with the same meaning (at-or-below / at-or-above, inclusive ranges). Anything else, and
    any index with 3-part networks, goes to the index itself."""

    def __init__(self, index):
        self._index = index
        self._len = len(index)
        self.sorted_values = index.sorted_values() if self._len else None

    def __getattr__(self, name):
        return getattr(self._index, name)

    def __len__(self) -> int:
        return self._len

    def values(self, ids):
        if self.sorted_values is None:
            return self._index.values(ids)
        return self.sorted_values[np.asarray(ids, dtype=np.int64)]

    def nearest_sides(self, targets, k: int = 1):
        v = self.sorted_values
        if v is None:
            return self._index.nearest_sides(targets, k)
        t = np.asarray(targets, dtype=float)
        step = np.arange(k, dtype=np.int64)
        below = np.searchsorted(v, t, side="right")[:, None] - 1 - step
        above = np.searchsorted(v, t, side="left")[:, None] + step
        below = np.where(below >= 0, below, -1)
        above = np.where(above < v.size, above, -1)
        return below, above

    def between(self, lo, hi):
        v = self.sorted_values
        if v is None:
            return self._index.between(lo, hi)
        a = np.searchsorted(v, np.asarray(lo, dtype=float), side="left")
        b = np.maximum(np.searchsorted(v, np.asarray(hi, dtype=float), side="right"), a)
        counts = b - a
        offsets = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
        ids = np.arange(int(offsets[-1]), dtype=np.int64) - np.repeat(offsets[:-1] - a, counts)
        return offsets, ids


def _nearest_feasible(index, target, lo, hi, ok_fn, k0: int = 2, kmax: int = 1 << 16):
    """For each row i: the feasible network nearest in value to q = clamp(target[i], lo[i], hi[i])
    on each side (at or below q, at or above q), feasible meaning lo <= value <= hi and
    ``ok_fn(ids, rows)`` true. Returns (below_ids, above_ids), -1 where a side has none. One
    index query per row and round serves both sides; k widens until a feasible network is found
    or the side is proven empty (it ran out of networks, or its next one is outside [lo, hi])."""
    n = len(target)
    out = [np.full(n, -1, dtype=np.int64), np.full(n, -1, dtype=np.int64)]
    if len(index) == 0:
        return out[0], out[1]
    target = np.asarray(target, dtype=float)
    good = ~np.isnan(target) & (lo <= hi * (1 + _SLACK))
    with np.errstate(invalid="ignore"):
        q = np.clip(target, lo, hi)
    q = np.where(np.isfinite(q), np.maximum(q, 1e-30), 1e-30)  # finite positive queries only
    open_side = [good.copy(), good.copy()]  # rows still looking on each side
    k = k0
    while (open_side[0].any() or open_side[1].any()) and k <= kmax:
        rows = np.flatnonzero(open_side[0] | open_side[1])
        below, above = index.nearest_sides(q[rows], k)
        for side, got in ((0, below), (1, above)):
            want = open_side[side][rows]
            if not want.any():
                continue
            r = rows[want]
            ids = np.asarray(got, dtype=np.int64).reshape(rows.size, -1)[want]
            valid = ids >= 0
            vals = np.full(ids.shape, np.nan)
            vals[valid] = index.values(ids[valid])
            lo_r = (lo[r] * (1 - _SLACK))[:, None]
            hi_r = (hi[r] * (1 + _SLACK))[:, None]
            inrange = valid & (vals >= lo_r) & (vals <= hi_r)
            okm = inrange.copy()
            if inrange.any():
                rr = np.broadcast_to(r[:, None], ids.shape)[inrange]
                okm[inrange] = ok_fn(ids[inrange], rr)
            dist = np.where(okm, np.abs(vals - q[r][:, None]), np.inf)
            j = np.argmin(dist, axis=1)
            found = np.isfinite(dist[np.arange(r.size), j])
            out[side][r[found]] = ids[found, j[found]]
            if side == 0:  # going down: once a value is below lo, everything further is too
                beyond = np.any(valid & (vals < lo_r), axis=1)
            else:
                beyond = np.any(valid & (vals > hi_r), axis=1)
            more = ~found & valid.all(axis=1) & ~beyond & (ids.shape[1] >= k)
            open_side[side][r[~more]] = False
        k *= 4
    return out[0], out[1]


def _fmt(v: float, unit: str) -> str:
    from selector.core.notation import format_value

    return format_value(v, unit)


def _signed_max(e1: np.ndarray, e2: np.ndarray) -> np.ndarray:
    from selector.core.circuits.base import signed_max

    return signed_max(e1, e2)


# --------------------------------------------------------------------------- the circuit, bound


class _Bound:
    """A circuit kind with the target and limits of one pass: the methods the kernels call,
    each the circuit's own (see ``selector.core.circuits``: two-resistor kinds supply t_low,
    rb_ideal, ra_for_high, times2; one-resistor kinds r_ideal, error1, r_bounds1)."""

    def __init__(self, kind, target, limits):
        self.kind, self.target, self.limits = kind, target, limits

    def t_low(self, rb, c):
        return self.kind.t_low(rb, c)

    def rb_ideal(self, c):
        return self.kind.rb_ideal(self.target, c)

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


def _chunks(n: int, size: int):
    for s in range(0, n, size):
        yield slice(s, min(n, s + size))


class _Pass:
    """One search over one pair of indexes (one parts budget) for one connection."""

    def __init__(self, kind, target, r_index, c_index, c_ids, limits, power: PowerCheck,
                 ex, chunk: int = 2048):
        self.p = _Bound(kind, target, limits)
        self.r = SortedView(r_index)
        self.c_ids = c_ids
        self.c_vals = c_index.values(c_ids) if c_ids.size else np.zeros(0)
        self.lim = limits
        self.power = power
        self.ex = ex
        self.chunk = chunk
        # When every line holds enough for two networks of the largest size on every board, RA
        # and RB can never overdraw a line together and the pairwise check can be skipped.
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
        t_low = p.t_low(rb, cv)
        ra_star = p.ra_for_high(np.full(n, tg.t_high), rb, cv)
        lo = np.full(n, lim.min_r_ohm, dtype=float)
        if math.isfinite(lim.max_freq_hz):
            need_high = 1.0 / lim.max_freq_hz - t_low  # period >= 1/fmax
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
        hi = lim.max_total_r_ohm - rb
        empty = lo > hi * (1 + _SLACK)
        if bound is None:
            self.ex.add("RA/RB pairs over the total timing resistance limit", (empty & ~freq_bound).sum())
            self.ex.add(f"combinations above the {_fmt(lim.max_freq_hz, 'Hz')} maximum frequency",
                        (empty & freq_bound).sum())

        def ok(ids, rows):
            good = self.power.ok(ids)
            if good.any() and not self.no_conflict:
                sub = np.flatnonzero(good)
                good[sub] = self.r.fits_together(ids[sub], rb_id[rows[sub]])
            return good

        if bound is not None:
            return self._best_ra_window(cv, rb, lo, hi, empty, bound, ok)

        below, above = _nearest_feasible(self.r, ra_star, lo, hi, ok)
        best_id = np.full(n, -1, dtype=np.int64)
        best_err = np.full(n, np.nan)
        th_out = np.full(n, np.nan)
        tl_out = np.full(n, np.nan)
        for side in (below, above):
            has = side >= 0
            if not has.any():
                continue
            ra = self.r.values(side[has])
            th, tl = p.times2(ra, rb[has], cv[has])
            e = _signed_max(th / tg.t_high - 1, tl / tg.t_low - 1)
            cur = best_err[has]
            better = np.isnan(cur) | (np.abs(e) < np.abs(cur))
            idx = np.flatnonzero(has)[better]
            best_id[idx] = side[has][better]
            best_err[idx] = e[better]
            th_out[idx] = th[better]
            tl_out[idx] = tl[better]
        nothing = (best_id < 0) & ~empty
        self.ex.add("RA/RB pairs with no RA in range (over its power rating or sharing stock with RB)", nothing.sum())
        return best_id, best_err, th_out, tl_out

    def _best_ra_window(self, cv, rb, lo, hi, empty, bound, ok):
        p, tg = self.p, self.p.target
        n = len(cv)
        best_id = np.full(n, -1, dtype=np.int64)
        best_err = np.full(n, np.nan)
        th_out = np.full(n, np.nan)
        tl_out = np.full(n, np.nan)
        w_lo = p.ra_for_high(np.full(n, tg.t_high * (1 - bound)), rb, cv)
        w_hi = p.ra_for_high(np.full(n, tg.t_high * (1 + bound)), rb, cv)
        # nan from the inverse means "no positive RA gives that time": no bound on that side
        a = np.maximum(lo, np.nan_to_num(w_lo, nan=0.0)) * (1 - _SLACK)
        b = np.minimum(hi, np.nan_to_num(w_hi, nan=np.inf)) * (1 + _SLACK)
        live = ~empty & (a <= b) & (b > 0)
        rows_live = np.flatnonzero(live)
        if rows_live.size == 0:
            return best_id, best_err, th_out, tl_out
        offsets, ids = self.r.between(np.maximum(a[rows_live], 0.0), b[rows_live])
        ids = np.asarray(ids, dtype=np.int64)
        if ids.size == 0:
            return best_id, best_err, th_out, tl_out
        rows = np.repeat(rows_live, np.diff(offsets))
        good = ok(ids, rows)
        ids, rows = ids[good], rows[good]
        if ids.size == 0:
            return best_id, best_err, th_out, tl_out
        th, tl = p.times2(self.r.values(ids), rb[rows], cv[rows])
        e = _signed_max(th / tg.t_high - 1, tl / tg.t_low - 1)
        order = np.lexsort((np.abs(e), rows))
        first = order[np.r_[True, rows[order][1:] != rows[order][:-1]]]
        r = rows[first]
        best_id[r], best_err[r], th_out[r], tl_out[r] = ids[first], e[first], th[first], tl[first]
        return best_id, best_err, th_out, tl_out

    def _eval_pairs(self, ci, rb_id, bound: Optional[float] = None):
        """Evaluate pairs given by positions ``ci`` into c_ids and RB ids; returns rows kept."""
        cv = self.c_vals[ci]
        rb = self.r.values(rb_id)
        ra_id, err, th, tl = self._best_ra(cv, rb_id, rb, bound)
        keep = (ra_id >= 0) & (np.abs(err) <= MAX_ERROR)
        return (ci[keep], rb_id[keep], ra_id[keep], err[keep], th[keep], tl[keep])

    def _resistors_usable(self) -> bool:
        """False (and counted) when no resistor network reaches the minimum RA / R at all."""
        if len(self.r) == 0:
            return False  # noted by the caller ("no resistor in stock")
        if self.lim.min_r_ohm > 0:
            _b, above = self.r.nearest_sides(np.array([self.lim.min_r_ohm * (1 - _SLACK)]), 1)
            if int(np.asarray(above).ravel()[0]) < 0:
                self.ex.add(f"resistor networks below the {_fmt(self.lim.min_r_ohm, 'Ω')} minimum "
                            "RA / R (all of them)", len(self.r))
                return False
        return True

    def run2(self, pool: int, progress: Optional[Callable[[], None]] = None,
             sample: Optional[int] = None) -> list[tuple]:
        """Phase 1 gives the bound B; phase 2 evaluates every pair that can reach B. With 3-part
        resistor networks each nearest look-up is costly, so phase 1 first runs on an evenly
        spread sample of ``sample`` capacitor networks: their options are options too, so the
        K-th best of them is still a valid bound (dense 3-part networks make it tight); only
        when the sample holds fewer than K options does phase 1 run on every C."""
        lim, p = self.lim, self.p
        nc = self.c_ids.size
        if nc == 0 or not self._resistors_usable():
            return []
        rb_star = p.rb_ideal(self.c_vals)
        rb_hi_all = np.full(nc, lim.max_total_r_ohm - lim.min_r_ohm)
        found, bound = [], MAX_ERROR
        sample = PHASE1_SAMPLE if sample is None else int(sample)
        if self.r.max_parts >= 3 and nc > 2 * sample:
            subset = np.unique(np.linspace(0, nc - 1, sample).astype(np.int64))
            found, bound, enough = self._phase1(pool, progress, subset)
            if not enough:
                found, bound = [], MAX_ERROR
        if not found:
            found, bound, _enough = self._phase1(pool, progress)
        # Phase 2: every RB in the certified slice, each with its best RA.
        for sl in _chunks(nc, self.chunk):
            lo = rb_star[sl] * (1 - bound)
            hi = np.minimum(rb_star[sl] * (1 + bound), rb_hi_all[sl])
            offsets, ids = self.r.between(lo, np.maximum(hi, lo))
            counts = np.diff(offsets)
            ci = np.repeat(np.arange(sl.start, sl.stop), counts)
            ids = np.asarray(ids, dtype=np.int64)
            for sub in _chunks(ids.size, 200_000):
                found.append(self._eval_pairs(ci[sub], ids[sub], bound))
            if progress:
                progress()
        return self._collect(found, pool, two=True)

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
                                             lambda ids, rows: np.ones(ids.shape, dtype=bool))
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
    def run1(self, pool: int, progress: Optional[Callable[[], None]] = None) -> list[Hit]:
        p = self.p
        nc = self.c_ids.size
        if nc == 0 or not self._resistors_usable():
            return []
        found = []
        for sl in _chunks(nc, self.chunk):
            ci = np.arange(sl.start, sl.stop)
            cv = self.c_vals[sl]
            r_star = p.r_ideal(cv)
            lo, hi = p.r_bounds1(cv)
            empty = lo > hi * (1 + _SLACK)
            self.ex.add("C networks needing R outside the allowed range", empty.sum())
            below, above = _nearest_feasible(self.r, r_star, lo, hi, lambda ids, rows: self.power.ok(ids))
            self.ex.add("C networks with no R in range within its power rating",
                        ((below < 0) & (above < 0) & ~empty).sum())
            for side in (below, above):
                has = side >= 0
                if not has.any():
                    continue
                e, th, tl, tt = p.error1(self.r.values(side[has]), cv[has])
                keep = np.abs(e) <= MAX_ERROR
                found.append((ci[has][keep], side[has][keep], e[keep], th[keep], tl[keep], tt[keep]))
            if progress:
                progress()
        return self._collect(found, pool, two=False)

    def _collect(self, found, pool: int, two: bool) -> list[tuple]:
        if not found:
            return []
        cols = [np.concatenate(col) for col in zip(*found)]
        if two:
            ci, rb, ra, err, th, tl = cols
            key = np.stack([ci, rb], axis=1)
        else:
            ci, r, err, th, tl, tt = cols
            key = np.stack([ci, r], axis=1)
        if key.size == 0:
            return []
        _, first = np.unique(key, axis=0, return_index=True)
        order = first[np.argsort(np.abs(err[first]), kind="stable")][:pool]
        out = []
        for j in order:
            if two:
                out.append(Hit(int(self.c_ids[ci[j]]), (int(ra[j]), int(rb[j])), float(err[j]),
                               float(th[j]), float(tl[j]), math.nan))
            else:
                out.append(Hit(int(self.c_ids[ci[j]]), (int(r[j]),), float(err[j]),
                               float(th[j]), float(tl[j]), float(tt[j])))
        return out
