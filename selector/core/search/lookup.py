"""What the kernels do to single networks: the candidate filters (minimum capacitance, voltage
and power ratings) and the widening nearest-feasible look-up over a network index."""

from __future__ import annotations

import functools
import math

import numpy as np


def sorted_unique(a: np.ndarray) -> np.ndarray:
    """``np.unique(a)`` for a 1-D array (sorted distinct values). Written out because numpy 2's
    ``np.unique`` imports ``numpy.ma`` on its first call (~10 ms a process, issue 12 start-up)."""
    s = np.sort(a)
    if s.size < 2:
        return s
    keep = np.empty(s.shape, dtype=bool)
    keep[0] = True
    np.not_equal(s[1:], s[:-1], out=keep[1:])
    return s[keep]

INF = float("inf")
_SLACK = 1e-9  # relative widening of certified slices and intervals against rounding


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


def _part_positions(index, ids) -> tuple[np.ndarray, np.ndarray]:
    """(positions, counts) of each network's stock lines in ``index.lines`` (-1: no part there)
    and how many parts it takes from each. 1-2 part networks, which the index keeps
    materialised, are read directly as (first line, second line or -1) with a count of 1 each (a
    line used twice appears twice); others go through ``usage_arrays``. Either form gives the
    same per-network sums and all()s below."""
    n = len(index.entry_values)
    if not ids.size or (int(ids.min()) >= 0 and int(ids.max()) < n):
        li, lj = index.entry_parts(ids)
        return np.stack([li, lj], axis=1), np.ones((ids.size, 2))
    pos, cnt = index.usage_arrays(ids)
    return np.asarray(pos), np.asarray(cnt, dtype=float)


LEAKAGE_REASON = "C networks whose electrolytic leakage is above 1/10 of the charging current"


def _leakage_ok(c_index, ids, limits, charge_r) -> np.ndarray:
    """Leakage as a limit (common practice, facts §6): a capacitor network holding an aluminium
    electrolytic is allowed in the timing position only when the charging current at the upper
    threshold, VCC/(3·R*), is at least ``chips.LEAKAGE_MARGIN_MIN`` (10) times the summed rated
    leakage of its electrolytic parts, 0.01·C·V_R or 3 µA [S15] (``chips.electrolytic_leakage_a``;
    rating unknown: VCC). R* is the charging resistance the target needs with that network
    (``charge_r``, the circuit's ideal formula), so the rule is a limit on C alone for the target
    and is applied before the search, which keeps the search exact over what it allows; the R the
    search picks differs from R* by the option's error (a few % at most)."""
    from selector.core import chips, parts

    def leak_of(ln):
        try:
            diel = parts.normalize_dielectric(ln.dielectric or "")
        except Exception:
            diel = ln.dielectric or ""
        if diel != "electrolytic":
            return 0.0
        return float(chips.electrolytic_leakage_a(ln.value, ln.rating if ln.rating else limits.vcc))

    line_leak = np.array([leak_of(ln) for ln in c_index.lines], dtype=float)
    if not np.any(line_leak > 0):
        return np.ones(ids.size, dtype=bool)
    pos, cnt = _part_positions(c_index, ids)
    leak = np.sum(np.where(pos >= 0, line_leak[np.maximum(pos, 0)] * cnt, 0.0), axis=1)
    r = np.asarray(charge_r(c_index.values(ids)), dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        current = limits.vcc / (3.0 * r)
    return (leak <= 0) | (current >= chips.LEAKAGE_MARGIN_MIN * leak)


def capacitor_candidates(c_index, limits, ex, charge_r=None) -> np.ndarray:
    """Ids of the capacitor networks allowed in the timing position: value >= the minimum timing
    capacitance, and every part rated for the working voltage after derating (each part of a
    series string must stand the full voltage on its own: the DC division across series
    capacitors is set by leakage, not by capacitance - common practice). Unknown rating: allowed
    (the renderer adds a caution)."""
    ids = _all_ids(c_index)
    if ids.size == 0:
        return ids
    sv = c_index.sorted_values()
    vals = sv[ids] if sv is not None else c_index.values(ids)  # (ids are positions there)
    small = vals < limits.min_c_f * (1 - _SLACK)
    ex.add(f"C networks below the {_fmt(limits.min_c_f, 'F')} minimum timing capacitance", small.sum())
    ids = ids[~small]
    if limits.cap_volts > 0 and ids.size:
        rating = _line_arrays(c_index, "rating")
        by_name: dict[str, float] = {}  # each dielectric's derating asked once (a pure function of the name)
        for ln in c_index.lines:
            d = ln.dielectric or ""
            if d not in by_name:
                by_name[d] = limits.cap_derating(d)
        derate = np.array([by_name[ln.dielectric or ""] for ln in c_index.lines])
        line_ok = ~(rating * derate < limits.cap_volts)  # nan (unknown) -> allowed
        if not line_ok.all():  # (every line fine: every network is, no need to read their parts)
            pos, _cnt = _part_positions(c_index, ids)
            ok = np.all(np.where(pos >= 0, line_ok[np.maximum(pos, 0)], True), axis=1)
            ex.add(f"C networks with a part rated below {limits.cap_volts:g} V after derating", (~ok).sum())
            ids = ids[ok]
    if charge_r is not None and ids.size:
        ok = _leakage_ok(c_index, ids, limits, charge_r)
        ex.add(LEAKAGE_REASON, (~ok).sum())
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
        self._cache: dict[int, bool] = {}  # 3-part networks
        # 1-2 part networks (ids 0..M-1): -1 not decided yet, 0 fails, 1 passes
        self._known = np.full(len(r_index.entry_values), -1, dtype=np.int8) if self.active else None

    def ok(self, ids: np.ndarray) -> np.ndarray:
        ids = np.asarray(ids, dtype=np.int64)
        if not self.active or ids.size == 0:
            return np.ones(ids.shape, dtype=bool)
        flat = ids.ravel()
        known = self._known
        mat = (flat >= 0) & (flat < known.size)
        res = np.zeros(flat.shape, dtype=bool)
        if mat.all():
            got = known[flat]
        else:
            got = np.full(flat.shape, -1, dtype=np.int8)
            got[mat] = known[flat[mat]]
        todo = np.flatnonzero(mat & (got < 0))
        if todo.size:
            new = sorted_unique(flat[todo])
            known[new] = self._decide_materialised(new)
            got[todo] = known[flat[todo]]
        res[mat] = got[mat] > 0
        rest = np.flatnonzero(~mat)
        if rest.size:
            res[rest] = self._ok_three(flat[rest])
        return res.reshape(ids.shape)

    def _decide_materialised(self, pos: np.ndarray) -> np.ndarray:
        """The same decision as ``_ok_three`` (the cheap bound, then ``_exact``) for 1-2 part
        networks, vectorised: ``_exact``'s arithmetic on the network's combine() law written out
        for one part and for two parts in series or in parallel (the same floating-point
        operations in the same order, so the same result)."""
        index = self.index
        li, lj = index.entry_parts(pos)
        two = lj >= 0
        ljc = np.where(two, lj, li)
        a, b = index.line_values[li], index.line_values[ljc]
        adds_value = index.entry_adds(pos)  # the pair's joint adds the values (else reciprocals)
        vals = index.entry_values[pos]
        p = self.volts**2 / vals
        ra, rb = self.line_rating[li], np.where(two, self.line_rating[ljc], np.nan)
        rmin = np.fmin(np.where(np.isfinite(ra), ra, np.inf), np.where(np.isfinite(rb), rb, np.inf))
        surely_ok = p <= self.derating * rmin
        out = surely_ok.astype(np.int8)
        j = np.flatnonzero(~surely_ok)
        if j.size == 0:
            return out
        a, b, two, adds_value = a[j], b[j], two[j], adds_value[j]
        h = 1e-6
        g = 1 + h
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            def law(x, y):
                return np.where(two, np.where(adds_value, x + y, 1.0 / (1.0 / x + 1.0 / y)), x)

            total = law(a, b)
            pw = self.volts**2 / total
            sa = np.log(law(a * g, b) / total) / math.log1p(h)
            sb = np.log(law(a, b * g) / total) / math.log1p(h)
            bad_a = np.isfinite(ra[j]) & (pw * np.maximum(sa, 0.0) > self.derating * ra[j] * (1 + 1e-9))
            bad_b = two & np.isfinite(rb[j]) & (pw * np.maximum(sb, 0.0) > self.derating * rb[j] * (1 + 1e-9))
        out[j] = ~(bad_a | bad_b)
        return out

    def _ok_three(self, flat: np.ndarray) -> np.ndarray:
        """The check for networks with 3 parts: the cheap bound, then ``_exact`` per network."""
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
        return res

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
        self._len = None  # counted on first use: a 3-part count with the token-part rule is costly
        self.sorted_values = None if index.empty else index.sorted_values()

    def __getattr__(self, name):
        return getattr(self._index, name)

    def __len__(self) -> int:
        if self._len is None:
            self._len = len(self._index)
        return self._len

    def pairs_only(self) -> "SortedView":
        """The same look-ups over the index's 1-2 part networks alone: its materialised array,
        sorted by value with id = position (the same ids as in the index itself, so a network
        found here is that network of the index)."""
        view = SortedView.__new__(SortedView)
        view._index, view._len = self._index, None
        view.sorted_values = None if self._index.empty else self._index.entry_values
        return view

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
    if index.empty:
        return out[0], out[1]
    target = np.asarray(target, dtype=float)
    good = ~np.isnan(target) & (lo <= hi * (1 + _SLACK))
    with np.errstate(invalid="ignore"):
        q = np.minimum(np.maximum(target, lo), hi)  # np.clip's definition, without its wrapper
    q = np.where(np.isfinite(q), np.maximum(q, 1e-30), 1e-30)  # finite positive queries only
    v = getattr(index, "sorted_values", None)
    if v is not None and k0 >= 1:
        return _nearest_feasible_sorted(v, q, lo, hi, good, ok_fn, k0, kmax)
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
                rr = r[np.nonzero(inrange)[0]]  # each in-range candidate's row, in row-major order
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


def _nearest_feasible_sorted(v, q, lo, hi, good, ok_fn, k0: int, kmax: int):
    """``_nearest_feasible``'s widening look-up for a ``SortedView`` of 1-2 part networks (ids
    are positions in the sorted array ``v``), with the same answers in fewer array operations.

    Why the same.  There the candidates of a row's side are positions ib − s (ib the last with
    v <= q) or ia + s (ia the first with v >= q) for s = 0..k−1, k = k0, 4·k0, ... while k <=
    kmax; their distance |v − q| is non-decreasing in s (sorted values; rounding is monotone),
    so ``argmin`` over the feasible ones picks the first feasible in s order. A side closes
    when a round finds one, runs out of networks, or meets a value past lo (below) or hi
    (above); running out and passing the bound are monotone in s (once true, true for every
    later s), and a feasible candidate is neither. So the answer is the first feasible s before
    the first closing s, over s < the last k tried - whatever the steps are grouped into. Here:
    step 0 of every side of every row in one 1-D batch (it settles nearly all of them), then the
    few left in growing groups of steps; ``ok_fn`` is a per-element test, asked once per
    candidate. Tested against a plain scan in tests/core/search/test_nearest_sorted.py."""
    n = len(q)
    rows = np.flatnonzero(good)
    out = np.full(2 * n, -1, dtype=np.int64)   # below of each row, then above
    last = k0
    while last * 4 <= kmax:
        last *= 4                              # steps 0..last-1: what the general form examines
    if rows.size == 0 or k0 > kmax:
        return out[:n], out[n:]
    m = rows.size
    qr = q[rows]
    start = np.concatenate([np.searchsorted(v, qr, side="right") - 1, np.searchsorted(v, qr, side="left")])
    row2 = np.concatenate([rows, rows])        # the row of each (side, row) entry
    dest = np.concatenate([rows, rows + n])    # its place in ``out``
    lo_r, hi_r = lo[rows] * (1 - _SLACK), hi[rows] * (1 + _SLACK)
    lo2, hi2 = np.concatenate([lo_r, lo_r]), np.concatenate([hi_r, hi_r])
    top = v.size - 1
    cur = np.arange(2 * m)                     # entries still looking; below ones are < m
    s0, w = 0, 1
    while cur.size and s0 < last:
        w = min(w, last - s0)
        down = cur < m
        st = start[cur]
        l, h = lo2[cur], hi2[cur]
        if w == 1:
            pos = np.where(down, st - s0, st + s0)
            valid = (pos >= 0) & (pos <= top)
            vals = v[np.where(valid, pos, 0)]
            okm = valid & (vals >= l) & (vals <= h)
            if okm.any():
                at = np.flatnonzero(okm)
                okm[at] = ok_fn(pos[at], row2[cur[at]])
            out[dest[cur[okm]]] = pos[okm]
            beyond = np.where(down, vals < l, vals > h)
            stop = okm | ~valid | beyond
        else:
            steps = np.arange(s0, s0 + w, dtype=np.int64)
            pos = st[:, None] + np.where(down, -1, 1)[:, None] * steps[None, :]
            valid = (pos >= 0) & (pos <= top)
            vals = v[np.where(valid, pos, 0)]
            l, h = l[:, None], h[:, None]
            okm = valid & (vals >= l) & (vals <= h)
            if okm.any():
                at = np.nonzero(okm)
                okm[at] = ok_fn(pos[at], row2[cur[at[0]]])
            found = okm.any(axis=1)
            first = np.argmax(okm, axis=1)
            out[dest[cur[found]]] = pos[found, first[found]]
            beyond = np.where(down[:, None], vals < l, vals > h)
            stop = found | ~(valid & ~beyond).all(axis=1)
        cur = cur[~stop]
        s0, w = s0 + w, w * 4
    return out[:n], out[n:]


@functools.lru_cache(maxsize=256)
def _fmt(v: float, unit: str) -> str:
    """A limit as people read it, for the exclusion texts (a pass words the same few limits on
    every chunk, mostly for a count of 0: remembered)."""
    from selector.core.notation import format_value

    return format_value(v, unit)


def _signed_max(e1: np.ndarray, e2: np.ndarray) -> np.ndarray:
    from selector.core.circuits.base import signed_max

    return signed_max(e1, e2)


def _nan_to(x, nan: float) -> np.ndarray:
    from selector.core.circuits.base import nan_to

    return nan_to(x, nan)
