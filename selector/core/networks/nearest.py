"""Meet-in-the-middle look-ups over 3-part networks, and the small vectorised helpers the network
index shares with it.  Pure numpy; used only through ``selector.core.networks.NetworkIndex``.

A 3-part network is one single part ``a`` joined (outer joint) to a pair ``p`` taken from the
sorted array of 2-part networks (inner joint).  Four shapes, codes 0-3 in an id:
    0 series3           a + (b + c)      symmetric: canonical copy has a = the lowest line
    1 parallel3         a ∥ (b ∥ c)      symmetric
    2 series+parallel   a + (b ∥ c)
    3 parallel+series   a ∥ (b + c)
For each shape there is a "pool" (the sorted positions of the allowed inner pairs) and a list of
allowed singles; all pools are concatenated into one array and every (shape, single) is a "row".
For a fixed row the network value is strictly increasing in the pair value (x + p and
1/(1/x + 1/p) are increasing in p, also after rounding), which is what makes a per-row
``searchsorted`` on the pool exact.
"""

from __future__ import annotations

from typing import Sequence, Union

import numpy as np

EPS = 1e-9  # relative value slack around a target when splitting a pool (see ThreePartSearch)
_CELLS = 2_000_000  # elements per vectorised window block (keeps memory to tens of MB)
SWEEP_MAX_SHARE = 0.125
"""``values_within`` gives up (returns None) when the intervals mark more than this share of
its value bins: most values would come back and the slice-by-slice search is cheaper.  Tests
raise it to 1.0 to run the sweep on small stocks."""
COARSE_BITS = 4
"""``values_within`` first looks every value up in marks 2**COARSE_BITS times coarser (small
enough to stay in cache), then only the values in a marked coarse bin in the full marks."""


def join(add: Union[bool, np.ndarray], x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Combine two values (arrays) by a joint: the sum, or the reciprocal of the sum of the
    reciprocals.  ``add`` is a bool or a bool array (broadcast)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        if add is True or add is False:
            return x + y if add else 1.0 / (1.0 / x + 1.0 / y)
        return np.where(add, x + y, 1.0 / (1.0 / x + 1.0 / y))


def preimage(add: bool, a: np.ndarray, v: np.ndarray) -> np.ndarray:
    """The pair value p with join(a, p) == v (elementwise; +inf when no finite p reaches v)."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        if add:
            return v - a
        p = 1.0 / (1.0 / v - 1.0 / a)
        return np.where(v >= a, np.inf, p)


def ranges_concat(start: np.ndarray, stop: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Concatenate integer ranges [start[i], stop[i]) without a Python loop.
    Returns (row of each element, element)."""
    length = np.maximum(stop - start, 0)
    total = int(length.sum())
    rows = np.repeat(np.arange(len(start)), length)
    if total == 0:
        return rows, np.zeros(0, dtype=np.int64)
    first = np.cumsum(length) - length
    elem = np.arange(total, dtype=np.int64) - np.repeat(first, length) + np.repeat(start, length)
    return rows, elem


def rank_rows(rows: np.ndarray, ids: np.ndarray, keys: Sequence[np.ndarray], nrows: int,
              k: int) -> np.ndarray:
    """Per row, the first k distinct ids ordered by ``keys`` (primary first) then id; -1 pad."""
    out = np.full((nrows, k), -1, dtype=np.int64)
    if len(ids) == 0 or k == 0:
        return out
    order = np.lexsort((ids,) + tuple(reversed(keys)) + (rows,))
    r, i = rows[order], ids[order]
    keep = np.ones(len(i), dtype=bool)
    keep[1:] = (r[1:] != r[:-1]) | (i[1:] != i[:-1])  # duplicates are adjacent after the sort
    r, i = r[keep], i[keep]
    first = np.searchsorted(r, np.arange(nrows), side="left")
    rank = np.arange(len(r)) - first[r]
    sel = rank < k
    out[r[sel], rank[sel]] = i[sel]
    return out


def _zone_end(pv: np.ndarray, left: np.ndarray, p_hi: np.ndarray) -> np.ndarray:
    """End of each zone that starts at ``left``: the first index whose pair value exceeds
    ``p_hi``. A point zone holds only the few pairs within the slack, so step over them a few
    times before falling back to a full ``searchsorted``."""
    right = left.copy()
    n = len(pv)
    for _ in range(8):
        step = right < n
        step[step] = pv[right[step]] <= p_hi[step]
        if not step.any():
            return right
        right += step
    return np.searchsorted(pv, p_hi, side="right")

class ThreePartSearch:
    """The 3-part side of a NetworkIndex.  ``ix`` is the index it serves (read through its
    public views: entry_values, entry_lines, line_values, capacity(), pair_position(),
    triple_ids()); ``shapes`` lists per 3-part shape
    (outer adds?, symmetric?, inner shape code, allowed pool positions, allowed single lines)."""

    def __init__(self, ix, shapes: Sequence[tuple[bool, bool, int, np.ndarray, np.ndarray]]):
        self.ix = ix
        self.token = not getattr(ix, "all_networks", True)
        self.per_shape = []  # (s, pool_pos, pool_val, a_lines, seg_lo, row_lo, row_hi)
        pools, rows_s, rows_a, seg_lo, seg_hi = [], [], [], [], []
        start = 0
        r0 = 0
        self.outer_add = np.array([sh[0] for sh in shapes], dtype=bool)
        self.symmetric = np.array([sh[1] for sh in shapes], dtype=bool)
        self.inner_code = np.array([sh[2] for sh in shapes], dtype=np.int64)
        for s, (_add, _sym, _code, pool_pos, a_lines) in enumerate(shapes):
            n = len(pool_pos)
            if n == 0 or len(a_lines) == 0:
                continue  # no network of this shape
            pv = ix.entry_values[pool_pos]
            lo_i, hi_i = np.zeros(len(a_lines), np.int64), np.full(len(a_lines), n, np.int64)
            if self.token:
                # Token-part rule, a necessary part of it: at the outer joint the single's share
                # and the pair's share are both >= h >= max(tol(a), smallest tolerance)/2, and for
                # every shape that means min(a, p)/(a + p) >= h (see ``rule``), i.e. the pair value
                # p lies in [a·h/(1-h), a·(1-h)/h]. Each row keeps only that slice of its pool
                # (widened against rounding); the full rule is still checked per network.
                tol = ix.line_tolerances
                h = np.maximum(tol[a_lines], tol.min()) / 2
                av = ix.line_values[a_lines]
                with np.errstate(divide="ignore", invalid="ignore"):
                    p_lo = np.where(h < 0.5, av * h / (1 - h), np.inf) * (1 - 1e-9)
                    p_hi = np.where(h > 0, av * (1 - h) / np.where(h > 0, h, 1.0), np.inf) * (1 + 1e-9)
                lo_i = np.searchsorted(pv, p_lo, side="left")
                hi_i = np.searchsorted(pv, p_hi, side="right")
                keep = lo_i < hi_i
                a_lines, lo_i, hi_i = a_lines[keep], lo_i[keep], hi_i[keep]
                if len(a_lines) == 0:
                    continue
            self.per_shape.append((s, pool_pos, pv, a_lines, start, r0, r0 + len(a_lines)))
            pools.append(pool_pos)
            rows_s.append(np.full(len(a_lines), s, dtype=np.int64))
            rows_a.append(a_lines)
            seg_lo.append(start + lo_i)
            seg_hi.append(start + hi_i)
            start += n
            r0 += len(a_lines)
        self.pool_pos = np.concatenate(pools) if pools else np.zeros(0, np.int64)
        self.pool_val = ix.entry_values[self.pool_pos]
        self.pool_li = ix.entry_lines[0][self.pool_pos]  # pair lines in pool order: one gather, not two
        self.pool_lj = ix.entry_lines[1][self.pool_pos]
        self.row_s = np.concatenate(rows_s) if rows_s else np.zeros(0, np.int64)
        self.row_a = np.concatenate(rows_a) if rows_a else np.zeros(0, np.int64)
        self.row_lo = np.concatenate(seg_lo) if seg_lo else np.zeros(0, np.int64)
        self.row_hi = np.concatenate(seg_hi) if seg_hi else np.zeros(0, np.int64)
        self.row_add = self.outer_add[self.row_s] if len(self.row_s) else np.zeros(0, bool)
        self.row_av = ix.line_values[self.row_a]
        self.nrows = len(self.row_s)
        # each row's value range (first and last pair of its pool) and whether those two
        # networks are allowed: rows whose range misses a target need no search for it
        cap = ix.capacity()
        self.row_vmin = join(self.row_add, self.row_av, self.pool_val[self.row_lo]) if self.nrows else np.zeros(0)
        self.row_vmax = join(self.row_add, self.row_av, self.pool_val[self.row_hi - 1]) if self.nrows else np.zeros(0)
        self.row_ok_first = self.ok_at(self.row_a, self.row_lo, cap, self.row_s) if self.nrows else np.zeros(0, bool)
        self.row_ok_last = self.ok_at(self.row_a, self.row_hi - 1, cap, self.row_s) if self.nrows else np.zeros(0, bool)
        self.shape_rows = np.array([r0 for *_x, r0, _r1 in self.per_shape] + [self.nrows], dtype=np.int64)

    # ------------------------------------------------------------------ plumbing
    def ok(self, a: np.ndarray, pos: np.ndarray, cap: np.ndarray, s) -> np.ndarray:
        """Quantity rule for single ``a`` added to pair ``pos`` (the pair alone is allowed), and
        the token-part rule of the 3-part network of shape ``s`` unless every network is wanted."""
        ix = self.ix
        good = 1 + (ix.entry_lines[0][pos] == a) + (ix.entry_lines[1][pos] == a) <= cap[a]
        if self.token:
            good = good & self.rule(s, a, pos)
        return good

    def ok_at(self, a: np.ndarray, at: np.ndarray, cap: np.ndarray, s) -> np.ndarray:
        """The same rules for the pair at pool index ``at``."""
        good = 1 + (self.pool_li[at] == a) + (self.pool_lj[at] == a) <= cap[a]
        if self.token:
            good = good & self.rule(s, a, self.pool_pos[at])
        return good

    def rule(self, s, a: np.ndarray, pos: np.ndarray) -> np.ndarray:
        """Token-part rule at the outer joint of 3-part networks (shape s, single a, pair pos);
        the inner pair already passed it when the pair array was built.  series3 / parallel3
        are ONE joint of three branches: the smallest share is min(v)/sum(v) where the joint
        adds values and (1/max(v))/sum(1/v) where it adds reciprocals.  The mixed shapes have
        two branches, the single and the pair: min(a, p)/(a + p) for either joint.  The bar is
        half the largest tolerance among all three parts."""
        ix = self.ix
        v, tol = ix.line_values, ix.line_tolerances
        li, lj = ix.entry_lines[0][pos], ix.entry_lines[1][pos]
        va, vb, vc = v[a], v[li], v[lj]
        h = np.maximum(tol[a], np.maximum(tol[li], tol[lj])) / 2
        s = np.asarray(s)
        sym, add = self.symmetric[s], self.outer_add[s]
        p = ix.entry_values[pos]
        lo3 = np.minimum(va, np.minimum(vb, vc))
        hi3 = np.maximum(va, np.maximum(vb, vc))
        flat = np.where(add, lo3 / (va + vb + vc), (1.0 / hi3) / (1.0 / va + 1.0 / vb + 1.0 / vc))
        share = np.where(sym, flat, np.minimum(va, p) / (va + p))
        return share >= h

    def canonical(self, s: np.ndarray, a: np.ndarray, pos: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Canonical ids and values of networks given as (shape s, single a, pair pos)."""
        ix = self.ix
        sym = self.symmetric[s]
        if sym.any():
            x = np.sort(np.stack([a[sym], ix.entry_lines[0][pos[sym]], ix.entry_lines[1][pos[sym]]], axis=1), axis=1)
            a = a.copy()
            pos = pos.copy()
            a[sym] = x[:, 0]
            pos[sym] = ix.pair_position(self.inner_code[s[sym]], x[:, 1], x[:, 2])
        vals = join(self.outer_add[s], ix.line_values[a], ix.entry_values[pos])
        return ix.triple_ids(s, a, pos), vals

    def zones(self, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(zl, zh), shape (nrows, len(lo)): per row the pool slice [zl, zh) of the pairs whose
        network value may lie in [lo(1-EPS), hi(1+EPS)] (global indices into the pool)."""
        m = len(lo)
        zl = np.empty((self.nrows, m), dtype=np.int64)
        zh = np.empty((self.nrows, m), dtype=np.int64)
        for s, _pp, pv, a_lines, seg, r0, r1 in self.per_shape:
            if r0 == r1:
                continue
            add = bool(self.outer_add[s])
            av = self.ix.line_values[a_lines][:, None]  # a-major rows, targets in given order within each a
            left = np.searchsorted(pv, preimage(add, av, (lo * (1.0 - EPS))[None, :]))
            p_hi = preimage(add, av, (hi * (1.0 + EPS))[None, :])
            if lo is hi:  # a point query: the zone holds only pairs within the slack, step over them
                right = _zone_end(pv, left, p_hi)
            else:
                right = np.searchsorted(pv, p_hi, side="right")
            rl, rh = self.row_lo[r0:r1, None], self.row_hi[r0:r1, None]  # the row's slice of its pool
            zl[r0:r1] = np.clip(left + seg, rl, rh)
            zh[r0:r1] = np.clip(right + seg, rl, rh)
        return zl, zh

    def point_zones(self, rows: np.ndarray, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(zl, zh) for (row, target) entries given flat, rows ascending: the pool slice of the
        pairs whose value may lie within the slack around t (global pool indices)."""
        zl = np.empty(len(rows), dtype=np.int64)
        zh = np.empty(len(rows), dtype=np.int64)
        cut = np.searchsorted(rows, self.shape_rows)
        for (s, _pp, pv, _a, seg, _r0, _r1), c0, c1 in zip(self.per_shape, cut[:-1], cut[1:]):
            if c0 == c1:
                continue
            add = bool(self.outer_add[s])
            av = self.row_av[rows[c0:c1]]
            tt = t[c0:c1]
            left = np.searchsorted(pv, preimage(add, av, tt * (1.0 - EPS)))
            p_hi = preimage(add, av, tt * (1.0 + EPS))
            right = _zone_end(pv, left, p_hi)  # only pairs within the slack: step over them
            rl, rh = self.row_lo[rows[c0:c1]], self.row_hi[rows[c0:c1]]
            zl[c0:c1] = np.clip(left + seg, rl, rh)
            zh[c0:c1] = np.clip(right + seg, rl, rh)
        return zl, zh

    def windows(self, rows: np.ndarray, zl: np.ndarray, zh: np.ndarray, k: int, below: bool,
                cap: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """For each (row, zone [zl, zh)): every allowed pair in the zone plus the k nearest allowed
        pairs beyond it on one side (below: indices < zl; above: >= zh), widening until found or
        the row's pool ends.  Returns (index into the inputs, pair position)."""
        out_i, out_p = [], []
        lo_b, hi_b, a, rs = self.row_lo[rows], self.row_hi[rows], self.row_a[rows], self.row_s[rows]
        pending = np.arange(len(rows))
        w = k + 2
        while pending.size:
            zmax = int(np.max(zh[pending] - zl[pending]))
            width = zmax + w
            step = max(1, _CELLS // width)
            more_all = []
            for c0 in range(0, len(pending), step):
                pend = pending[c0:c0 + step]
                pl, ph, pa, sl, sh = zl[pend], zh[pend], a[pend], lo_b[pend], hi_b[pend]
                if below:
                    idx = ph[:, None] - 1 - np.arange(width)[None, :]  # from the zone end downwards
                    inside = idx >= sl[:, None]
                else:
                    idx = pl[:, None] + np.arange(width)[None, :]
                    inside = idx < sh[:, None]
                at = np.clip(idx, 0, max(len(self.pool_pos) - 1, 0))
                good = inside & self.ok_at(pa[:, None], at, cap, rs[pend][:, None])
                pos = self.pool_pos[at]
                if below:
                    beyond = np.sum(good & (idx < pl[:, None]), axis=1)
                    more = (beyond < k) & (ph - width > sl)
                else:
                    beyond = np.sum(good & (idx >= ph[:, None]), axis=1)
                    more = (beyond < k) & (pl + width < sh)
                r, c = np.nonzero(good & ~more[:, None])
                out_i.append(pend[r])
                out_p.append(pos[r, c])
                more_all.append(pend[more])
            pending = np.concatenate(more_all)
            w *= 4
        return np.concatenate(out_i), np.concatenate(out_p)

    # ------------------------------------------------------------------ look-ups
    def sides(self, T: np.ndarray, k: int, bounds: tuple[np.ndarray, np.ndarray]):
        """Candidates among the 3-part networks for the k nearest below and above each target
        (T ascending, so each row's look-ups come in ascending order).  ``bounds`` are upper
        bounds on the k-th best distance per side known from the 1-2 part networks.

        Exactness argument.  Along a row the entries on the wanted side of a target are a prefix
        (below) or suffix (above) of the row's pool, and the row's best ones lie next to the
        split.  Phase 1 looks only at the pool entry next to the split: its distance is a lower
        bound LB for every entry of the row on that side, and when that entry is allowed it is a
        real network, so its distance is an upper bound for the row.  A network occurs in at
        most 3 rows (the symmetric shapes), so the (3k)-th smallest row upper bound - and the
        bound from the 1-2 part networks - bound the k-th best distance: U.  A row with LB > U
        holds none of the k best; phase 2 takes the k nearest allowed entries beyond the
        rounding-slack zone, and the whole zone, of every other row.  The rounding slack EPS
        keeps every entry whose side is in doubt inside the zone; the side of each candidate is
        finally decided on its canonical value.
        Returns [(target index, canonical id, value) below, (...) above]."""
        ix = self.ix
        m = len(T)
        z = np.zeros(0, dtype=np.int64)
        empty = (z, z, np.zeros(0))
        if self.nrows == 0 or len(self.pool_pos) == 0:
            return [empty, empty]
        cap = ix.capacity()
        # Rows whose whole value range lies above (below) the target's slack need no search:
        # their split is at the row start (end).  Only the other entries are searched.
        above_all = (T * (1.0 + EPS))[None, :] < self.row_vmin[:, None]
        below_all = (T * (1.0 - EPS))[None, :] > self.row_vmax[:, None]
        act = np.flatnonzero(~(above_all | below_all).ravel())
        ar, at_t = act // m, act % m
        zl_a, zh_a = self.point_zones(ar, T[at_t])
        zl = np.where(above_all, self.row_lo[:, None], self.row_hi[:, None])
        zl.ravel()[act] = zl_a
        zh = zl.copy()
        zh.ravel()[act] = zh_a
        last = len(self.pool_pos) - 1
        cut = np.searchsorted(ar, self.shape_rows)
        result = []
        for below in (True, False):
            # phase 1 on the searched entries: the pool entry next to the split
            probe = zh_a - 1 if below else zl_a
            have = probe >= self.row_lo[ar] if below else probe < self.row_hi[ar]
            pc = np.clip(probe, 0, last)
            value = np.empty(len(pc))
            for (s, *_x), c0, c1 in zip(self.per_shape, cut[:-1], cut[1:]):  # one joint per shape
                value[c0:c1] = join(bool(self.outer_add[s]), self.row_av[ar[c0:c1]], self.pool_val[pc[c0:c1]])
            # distances as ratios >= 1 (same order as |log|, no logarithms on the big arrays)
            with np.errstate(divide="ignore", invalid="ignore"):
                ratio = T[at_t] / value if below else value / T[at_t]
                if below:  # clamped rows: the row's last pair is its best below the target
                    edge = T[None, :] / self.row_vmax[:, None]
                    lb = np.where(below_all, edge, np.inf)
                    ub = np.where(below_all & self.row_ok_last[:, None], edge, np.inf)
                else:
                    edge = self.row_vmin[:, None] / T[None, :]
                    lb = np.where(above_all, edge, np.inf)
                    ub = np.where(above_all & self.row_ok_first[:, None], edge, np.inf)
            lb.ravel()[act] = np.where(have, np.maximum(ratio, 1.0), np.inf)
            good = have & (ratio >= 1.0) & self.ok_at(self.row_a[ar], pc, cap, self.row_s[ar])
            ub.ravel()[act] = np.where(good, ratio, np.inf)
            u = np.exp(bounds[0 if below else 1])
            if self.nrows >= 3 * k:
                u = np.minimum(u, np.partition(ub, 3 * k - 1, axis=0)[3 * k - 1])
            u = u * (1.0 + 1e-9)  # generous: more candidates never hurt exactness
            keep = np.flatnonzero((lb <= u[None, :]).ravel())
            if keep.size == 0:
                result.append(empty)
                continue
            rows, cols = keep // m, keep % m
            at, pos = self.windows(rows, zl.ravel()[keep], zh.ravel()[keep], k, below, cap)
            ids, vals = self.canonical(self.row_s[rows[at]], self.row_a[rows[at]], pos)
            t = cols[at]
            with np.errstate(divide="ignore", invalid="ignore"):
                d = T[t] / vals if below else vals / T[t]
            sel = (d >= 1.0) & (d <= u[t])
            result.append((t[sel], ids[sel], vals[sel]))
        return result

    def between(self, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Every 3-part network with lo[i] <= value <= hi[i]: (i, canonical id, value)."""
        ix = self.ix
        m = len(lo)
        z = np.zeros(0, dtype=np.int64)
        if self.nrows == 0 or len(self.pool_pos) == 0 or m == 0:
            return z, z, np.zeros(0)
        cap = ix.capacity()
        zl, zh = self.zones(lo, hi)
        r, e = ranges_concat(zl.ravel(), np.maximum(zh, zl).ravel())
        row, t = r // m, r % m
        s, a, pos = self.row_s[row], self.row_a[row], self.pool_pos[e]
        good = self.ok(a, pos, cap, s) & (~self.symmetric[s] | (a <= ix.entry_lines[0][pos]))  # canonical copy only
        s, a, pos, t = s[good], a[good], pos[good], t[good]
        vals = join(self.outer_add[s], ix.line_values[a], ix.entry_values[pos])
        inr = (vals >= lo[t]) & (vals <= hi[t])
        return t[inr], ix.triple_ids(s[inr], a[inr], pos[inr]), vals[inr]

    def values_within(self, lo: np.ndarray, hi: np.ndarray) -> np.ndarray | None:
        """Sorted values of 3-part networks (quantity rule applied) that include EVERY such value
        lying in some interval [lo[i], hi[i]], plus possibly some nearby others; None when the
        intervals are too wide for the sweep to pay (the caller then searches slice by slice).

        One sweep over the rows instead of one look-up per interval.  A positive double's bit
        pattern read as an integer is increasing in the value, so its top bits (``>> shift``)
        cut the value axis into bins of equal relative width (2**-b per octave, b = 52 - shift).
        The bins touched by any (slightly widened) interval are marked; then every row's values
        (single joined to its pool) are binned and only those in marked bins are kept.  A value
        inside an interval lies in a marked bin, so none is lost; extra values only make the
        caller's later checks do a little more work.

        Each row sweeps only the part of its pool that can hold such a value (``_sweep_slices``:
        every part it leaves out holds no network value inside [min lo, max hi], or no allowed
        network, or only a copy of a symmetric network whose canonical copy is swept in another
        row), one row at a time so the row's values and the bins it reads stay in cache."""
        if self.nrows == 0 or len(self.pool_pos) == 0 or len(lo) == 0:
            return np.zeros(0)
        lo = np.asarray(lo, dtype=float) * (1.0 - 4 * EPS)
        hi = np.asarray(hi, dtype=float) * (1.0 + 4 * EPS)
        use = (lo <= hi) & (hi > 0)
        lo, hi = np.maximum(lo[use], 1e-300), hi[use]
        if lo.size == 0:
            return np.zeros(0)
        if not np.all(np.isfinite(hi)):
            return None
        octaves = float(np.log2(hi.max() / lo.min())) + 2
        spread = float(np.sum(np.log2(hi / lo))) + 1e-300  # octaves the intervals cover in all
        b = int(min(22, max(0, np.floor(np.log2(min(2 ** 26 / octaves, 2 ** 23 / spread))))))
        shift = 52 - b
        kmin = int(np.array(lo.min()).view(np.int64) >> shift)
        kl = (lo.view(np.int64) >> shift) - kmin
        kh = (hi.view(np.int64) >> shift) - kmin
        nb = int(kh.max()) + 1
        if nb > 2 ** 27:
            return None
        marked = np.zeros(nb + 2, dtype=bool)  # [0] and [-1]: outside every interval
        _r, el = ranges_concat(kl + 1, kh + 2)
        marked[el] = True
        if int(np.count_nonzero(marked)) > nb * SWEEP_MAX_SHARE:
            return None  # wide intervals: most values would come back, a sweep does not pay
        cap = self.ix.capacity()
        li0 = self.ix.entry_lines[0]
        base = np.int64((kmin - 1) << shift)  # bin k of a value: ((bits - base) >> shift), 0 = below all
        # A coarse copy of the marks (a bin of it is marked when any of its fine bins is) is small
        # enough to stay in cache: every value is looked up there first, and only the values in
        # a marked coarse bin in the fine marks.
        cs = COARSE_BITS if nb >> COARSE_BITS >= 1 << 12 else 0
        coarse = np.zeros(((nb + 1) >> cs) + 2, dtype=bool)
        coarse[np.flatnonzero(marked) >> cs] = True
        out = []
        for s, pool_pos, pv, a_lines, start, stop in self._sweep_slices(float(lo.min()), float(hi.max())):
            add = bool(self.outer_add[s])
            sym = bool(self.symmetric[s])
            av = self.ix.line_values[a_lines]
            for r in np.flatnonzero(stop > start):
                c0, c1 = int(start[r]), int(stop[r])
                vals = join(add, av[r], pv[c0:c1])
                k = vals.view(np.int64) - base
                np.right_shift(k, shift + cs, out=k)
                hit = np.flatnonzero(np.take(coarse, k, mode="clip"))  # clip: outside = unmarked ends
                if hit.size and cs:
                    kf = (vals[hit].view(np.int64) - base) >> shift
                    hit = hit[np.take(marked, kf, mode="clip")]
                if hit.size == 0:
                    continue
                pos = pool_pos[c0 + hit]
                if sym:  # the canonical copy only (the others repeat its network)
                    canon = a_lines[r] <= li0[pos]
                    hit, pos = hit[canon], pos[canon]
                good = self.ok(np.full(hit.size, a_lines[r]), pos, cap, s)
                out.append(vals[hit[good]])
        return np.sort(np.concatenate(out)) if out else np.zeros(0)

    def _sweep_slices(self, vlo: float, vhi: float):
        """Per 3-part shape: (s, pool positions, pool values, single lines, start, stop), where
        [start[r], stop[r]) is the part of the shape's pool row r (single a_lines[r]) sweeps for
        values in [vlo, vhi].  It is the intersection of
          - the row's own slice [row_lo, row_hi): outside it the token-part rule fails (a
            necessary part of the rule, see __init__; ok() would reject every such network);
          - the pairs p with join(a, p) in [vlo, vhi], widened by EPS: the value is increasing in
            p (module docstring), so that is a slice, found by searchsorted on the preimages
            (as ``zones`` does);
          - for the symmetric shapes (series3, parallel3), the pairs p >= join(a, a)·(1 - EPS):
            the canonical copy of a symmetric network has a = its lowest line, so both pair
            lines are at or above a in value, and since rounding is monotone the pair value
            join(b, c) >= join(a, a) (the pair array is built with the same ``join``).  Every
            network whose canonical copy has single a is therefore swept in a's row."""
        for s, pool_pos, pv, a_lines, seg, r0, r1 in self.per_shape:
            if r0 == r1:
                continue
            add = bool(self.outer_add[s])
            av = self.ix.line_values[a_lines]
            start = self.row_lo[r0:r1] - seg
            stop = self.row_hi[r0:r1] - seg
            start = np.maximum(start, np.searchsorted(pv, preimage(add, av, vlo * (1.0 - EPS)), side="left"))
            stop = np.minimum(stop, np.searchsorted(pv, preimage(add, av, vhi * (1.0 + EPS)), side="right"))
            if self.symmetric[s]:
                start = np.maximum(start, np.searchsorted(pv, join(add, av, av) * (1.0 - EPS), side="left"))
            yield s, pool_pos, pv, a_lines, start, stop

    def count(self) -> int:
        """Exact number of distinct 3-part networks, counted without building them."""
        ix = self.ix
        cap, L, n3 = ix.capacity(), ix.line_count, 0
        if self.token:
            return self._count_enumerated()
        for s, pool_pos, _pv, a_lines, _seg, _r0, _r1 in self.per_shape:
            pi, pj = ix.entry_lines[0][pool_pos], ix.entry_lines[1][pool_pos]
            diff = pi != pj
            first_other = np.bincount(pi[diff], minlength=L)
            other = first_other + np.bincount(pj[diff], minlength=L)
            own = np.bincount(pi[~diff], minlength=L)
            short2, short3 = cap[a_lines] < 2, cap[a_lines] < 3
            if self.symmetric[s]:  # canonical copy: a is the lowest line of the three
                ge = len(pi) - np.searchsorted(np.sort(pi), a_lines, side="left")
                n3 += int(np.sum(ge - short2 * first_other[a_lines] - short3 * own[a_lines]))
            else:
                n3 += int(len(a_lines) * len(pi) - np.sum(short2 * other[a_lines] + short3 * own[a_lines]))
        return n3

    def _count_enumerated(self) -> int:
        """The count with the token-part rule: every canonical network in each row's slice
        checked, in blocks (no closed form: the rule depends on all three parts)."""
        cap, n3 = self.ix.capacity(), 0
        li0 = self.ix.entry_lines[0]
        for s, _pool_pos, _pv, _a, _seg, r0, r1 in self.per_shape:
            length = self.row_hi[r0:r1] - self.row_lo[r0:r1]
            step = max(1, _CELLS // max(int(length.max()), 1))
            for c0 in range(r0, r1, step):
                c1 = min(r1, c0 + step)
                r, e = ranges_concat(self.row_lo[c0:c1], self.row_hi[c0:c1])
                a, pos = self.row_a[c0:c1][r], self.pool_pos[e]
                good = self.ok(a, pos, cap, s)
                if self.symmetric[s]:
                    good &= a <= li0[pos]
                n3 += int(np.count_nonzero(good))
        return n3
