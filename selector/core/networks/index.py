"""Series/parallel networks of stock parts, and exact nearest-value look-ups over all of them.

Public API (the timing search and ``find value`` build on it)::

    build_index(lines, max_parts=2, boards=1, allow_polarized_series=False, kind=None,
                all_networks=True) -> NetworkIndex   (all_networks=False: token-part rule, token_share)
    nearest_networks(lines, target, k=10, max_parts=2, boards=1, allow_polarized_series=False,
                     kind=None) -> list[Network]

    NetworkIndex (one kind; every network of 1..max_parts parts the stock allows for `boards`):
        kind, max_parts, boards, allow_polarized_series, lines (tuple[StockLine], sorted by value)
        nearest_few(targets, k)            -> (n, k) int64 ids, by |log(value/target)|, then fewer
                                              parts, then id; -1 padding.  EXACT.
        nearest_sides(targets, k=1)        -> (below (n, k), above (n, k)): the k nearest with
                                              value <= target (nearest first) and value >= target.
        between(lo, hi)                    -> (offsets (n+1,), ids): CSR list of every network with
                                              lo[i] <= value <= hi[i], each row sorted by value.
        values(ids), bounds(ids) -> (vmin, vmax), nparts(ids)
        usage_arrays(ids)                  -> (positions (n, 3), counts (n, 3)); positions index
                                              ``lines`` / ``line_ids`` / ``quantity``; -1 padding
        fits_together(ids_a, ids_b, boards=None) -> bool (n,)
        network(id) -> Network;  networks(ids) -> list[Network]
        size_by_parts() -> {1: n1, 2: n2, 3: n3}   (exact counts, 3-part ones never materialised)
        len(index) = total count; line_ids, quantity: arrays by line position

    Network (frozen): kind, value, vmin, vmax, shape, parts ((StockLine, count), ...), physical
        (one StockLine per part, in combine() order), structure (nested (joint, children) with
        leaves = indices into physical); combine(part_values (nphys, n)) -> (n,); usage
        {line_id: count}; nparts; in_series() per part; polarized_in_series; dielectrics.

Cost notes: with max_parts=3 a look-up costs about (number of lines x 4 shapes) small steps per
target (a few hundred µs per target in batches on an E96 decade set); keep k small there (tens,
not thousands) and use ``between`` for wide certified slices.  With max_parts <= 2 every look-up
is a plain ``searchsorted`` on the sorted array.

Ids are opaque int64.  1- and 2-part networks are materialised in one array sorted by value (an id
is a position there); a 3-part network is one part ``a`` joined to a pair ``p`` from that array,
encoded as ``M + (shape3 * L + a) * M + p`` in canonical form, so equal ids mean equal networks.

Shapes (our own names; ``+`` = in series, ``∥`` = in parallel):
    "single"           A
    "series"           A + B
    "parallel"         A ∥ B
    "series3"          A + B + C
    "parallel3"        A ∥ B ∥ C
    "series+parallel"  (B ∥ C) + A      one part in series with a parallel pair
    "parallel+series"  (B + C) ∥ A      one part in parallel with a series pair
Resistors in series add, capacitors in parallel add; the other joint adds reciprocals.

How the 3-part look-up stays exact without materialising ~10^8 networks (meet in the middle; the
code is in ``selector.core.nearest``, with the full argument in ``ThreePartSearch.sides``): for a
fixed single part ``a`` and outer joint, the network value is strictly increasing in the pair value
(x + p and 1/(1/x + 1/p) are both increasing in p, also after floating-point rounding).  So for
each ``a`` the pair value that would hit the target exactly is computed, found in the sorted pair
array with ``searchsorted``, and the k nearest *allowed* pairs on each side of it (allowed = the
quantity rule holds with ``a`` added) are the k best networks with that ``a``.  The k best overall
are among the union over all ``a`` of those per-``a`` bests.  A small value slack (1e-9 relative)
around the exact pair value makes the split into "below"/"above" safe against rounding: the pairs
inside the slack are always examined, and every network is finally judged by its canonical value.

Quantity rule: a network may use a line ``c`` times only if ``c * boards <= quantity``.
Polarized capacitors: by default no polarized part sits in a series joint (anywhere up the tree);
``allow_polarized_series=True`` keeps such networks (the caller shows a caution).
"""

from __future__ import annotations

import functools
from typing import Iterable, Sequence

import numpy as np

from selector.core.networks import shapes as _shapes
from selector.core.networks.network import Network
from selector.core.networks.nearest import ThreePartSearch, join as _join, rank_rows, ranges_concat
from selector.core.types import NETWORK_KINDS, StockLine

SHAPES: tuple[str, ...] = tuple(_shapes.SHAPES)  # the names; their meaning is in networks.shapes
# 3-part shapes, in the order of their code in an id: (name, outer joint, inner joint, symmetric)
_SHAPES3: tuple[tuple[str, str, str, bool], ...] = tuple(
    (s.name, s.outer, s.inner, s.symmetric) for s in _shapes.SHAPES3)
_SINGLE, _SERIES, _PARALLEL = 0, 1, 2  # shape codes in the materialised array

Structure = _shapes.Structure  # a leaf (index into Network.physical) or (joint, (children...))
adds = _shapes.adds


class NetworkIndex:
    """All networks of 1..max_parts parts of ONE kind that the stock allows for `boards` boards.
    Build it with :func:`build_index`.  See the module docstring for the id scheme and methods."""

    def __init__(self, lines: Sequence[StockLine], kind: str, max_parts: int = 2, boards: int = 1,
                 allow_polarized_series: bool = False, all_networks: bool = True):
        if kind not in NETWORK_KINDS:
            raise ValueError(f"unknown part kind {kind!r}; expected one of {', '.join(NETWORK_KINDS)}")
        if max_parts not in (1, 2, 3):
            raise ValueError(f"max_parts must be 1, 2 or 3, not {max_parts!r}")
        if int(boards) != boards or boards < 1:
            raise ValueError(f"boards must be a whole number >= 1, not {boards!r}")
        self.kind = kind
        self.max_parts = int(max_parts)
        self.boards = int(boards)
        self.allow_polarized_series = bool(allow_polarized_series)
        self.all_networks = bool(all_networks)  # False: token-part networks left out (see token_share)
        usable = [ln for ln in lines if ln.kind == kind and ln.value > 0 and ln.quantity // self.boards >= 1]
        usable.sort(key=lambda ln: (ln.value, ln.id))
        self.lines: tuple[StockLine, ...] = tuple(usable)
        L = len(usable)
        self._L = L
        self.line_ids = np.array([ln.id for ln in usable], dtype=np.int64)
        self.quantity = np.array([ln.quantity for ln in usable], dtype=np.int64)
        self._v = np.array([ln.value for ln in usable], dtype=float)
        self._vlo = self._v * (1.0 - np.array([ln.tol_minus for ln in usable], dtype=float))
        self._vhi = self._v * (1.0 + np.array([ln.tol_plus for ln in usable], dtype=float))
        self._pol = np.array([bool(ln.polarized) for ln in usable], dtype=bool)
        self._tol = np.array([max(ln.tol_minus, ln.tol_plus) for ln in usable], dtype=float)
        self._build_materialised()
        self._build_pools()

    # ----------------------------------------------------------------- building
    def _cap(self, boards: int | None = None) -> np.ndarray:
        return self.quantity // (self.boards if boards is None else int(boards))

    def _block_polarized(self, joint: str) -> bool:
        return self.kind == "capacitor" and not self.allow_polarized_series and joint == "series"

    def _build_materialised(self) -> None:
        L, v, cap = self._L, self._v, self._cap()
        vals = [v]
        segs: list[tuple[int, np.ndarray, np.ndarray]] = []  # pair segments in build order
        if self.max_parts >= 2 and L:
            i, j = _pairs_upper(L)
            keep = (i != j) | (cap[i] >= 2)
            if not self.all_networks:  # both joints: the smaller share is min/(sum) (see token_share)
                keep &= token_share(v[i], v[j]) >= np.maximum(self._tol[i], self._tol[j]) / 2
            i, j = i[keep].astype(np.int64, copy=False), j[keep].astype(np.int64, copy=False)
            ppol = self._pol[i] | self._pol[j]
            for code, joint in ((_SERIES, "series"), (_PARALLEL, "parallel")):
                ii, jj = i, j
                if self._block_polarized(joint) and ppol.any():
                    ii, jj = i[~ppol], j[~ppol]
                vals.append(_join(adds(self.kind, joint), v[ii], v[jj]))
                segs.append((code, ii, jj))
        val = np.concatenate(vals)
        # Built in (parts, shape, li, lj) order, so sorting on (value, build position) gives the
        # order (value, parts, shape, li, lj) that ids and tie-breaks rely on. A stable sort is
        # exactly that order; numpy's (timsort for floats) finds the already sorted runs the build
        # makes (for each first line, both joints grow with the second) and merges them: about 3x
        # faster than a quicksort here (measured on 481 E96 lines, 232 k entries: 6.4 vs 18 ms).
        order = np.argsort(val, kind="stable")
        self._val = val[order]
        # The parts of an entry are read through its build position (``_entry_parts``): the
        # 1-2 part searches only ever need them for a few candidates, so the full per-entry
        # arrays (shape, first line, second line) are laid out only on first use.
        self._segs = segs
        self._full_parts: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None
        self._M = len(self._val)
        self._order = order  # build position of each entry (for the lazily built tables below)
        self._order_desc_cache: np.ndarray | None = None
        self._pair_table: tuple[np.ndarray, np.ndarray] | None = None
        self._net_cache: dict[int, Network] = {}

    def _entry_parts(self, pos: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(shape code, first line, second line or -1) of the materialised entries at ``pos``,
        from their build position: below L a single part (line = build position), then the
        pair segments in build order."""
        if self._full_parts is not None:
            shape, li, lj = self._full_parts
            return shape[pos], li[pos], lj[pos]
        b = self._order[pos]
        shape = np.zeros(b.shape, dtype=np.int8)
        li = b.astype(np.int64, copy=True)
        lj = np.full(b.shape, -1, dtype=np.int64)
        start = self._L
        for code, ii, jj in self._segs:
            k = b - start
            m = (k >= 0) & (k < len(ii))
            if m.any():
                shape[m] = code
                li[m] = ii[k[m]]
                lj[m] = jj[k[m]]
            start += len(ii)
        return shape, li, lj

    def _all_parts(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        if self._full_parts is None:  # in build order, then put in value order
            L, segs, o = self._L, self._segs, self._order
            shape = np.concatenate([np.zeros(L, np.int8)] + [np.full(len(ii), code, np.int8) for code, ii, _ in segs])
            li = np.concatenate([np.arange(L, dtype=np.int64)] + [ii for _, ii, _ in segs])
            lj = np.concatenate([np.full(L, -1, np.int64)] + [jj for _, _, jj in segs])
            self._full_parts = (shape[o], li[o], lj[o])
        return self._full_parts

    @property
    def _shape(self) -> np.ndarray:
        return self._all_parts()[0]

    @property
    def _li(self) -> np.ndarray:
        return self._all_parts()[1]

    @property
    def _lj(self) -> np.ndarray:
        return self._all_parts()[2]

    # The two tables below serve only some look-ups (the index's own ``nearest_sides`` and
    # ``nearest_few``; the 3-part search), so they are built on first use, not with the index.
    @property
    def _order_desc(self) -> np.ndarray:
        """Second order for "at or below" look-ups: within each run of equal values the higher
        positions (more parts, higher id) first, so the last k entries at or below a target are
        the k best by (distance, parts, id)."""
        if self._order_desc_cache is None:
            M = self._M
            p = np.arange(M)
            new_run = np.ones(M, dtype=bool)
            new_run[1:] = self._val[1:] != self._val[:-1]
            run = np.cumsum(new_run) - 1
            starts = np.flatnonzero(new_run)
            ends = np.append(starts[1:], M) - 1
            self._order_desc_cache = starts[run] + ends[run] - p
        return self._order_desc_cache

    def _pairs(self) -> tuple[np.ndarray, np.ndarray]:
        """(keys, positions) of the 2-part entries, keys (shape, li, lj) ascending."""
        if self._pair_table is None:
            L, M = self._L, self._M
            # The build position of entry ``order[p]`` is p: entries L.. in build order are the
            # pairs, whose (shape, li, lj) keys are increasing in build order: no sort needed.
            inverse = np.empty(M, dtype=np.int64)
            inverse[self._order] = np.arange(M)
            pos = inverse[L:]
            keys = (self._shape[pos].astype(np.int64) * L + self._li[pos]) * L + self._lj[pos]
            self._pair_table = (keys, pos)
        return self._pair_table

    def _mat_bounds(self, pos: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Worst-case bounds of materialised entries, computed on demand from their parts."""
        shape, li, lj = self._entry_parts(pos)
        single = shape == _SINGLE
        add = np.where(shape == _SERIES, adds(self.kind, "series"), adds(self.kind, "parallel"))
        ljc = np.where(single, li, lj)
        lo = np.where(single, self._vlo[li], _join(add, self._vlo[li], self._vlo[ljc]))
        hi = np.where(single, self._vhi[li], _join(add, self._vhi[li], self._vhi[ljc]))
        return lo, hi

    def _mat_polarized(self, pos: np.ndarray) -> np.ndarray:
        _shape, li, lj = self._entry_parts(pos)
        return self._pol[li] | ((lj >= 0) & self._pol[np.maximum(lj, 0)])

    def _build_pools(self) -> None:
        """For each 3-part shape: the sorted array of allowed inner pairs and the allowed singles."""
        self._outer_add = np.array([adds(self.kind, outer) for _, outer, _, _ in _SHAPES3])
        self._three: ThreePartSearch | None = None
        if self.max_parts < 3:
            return
        shapes = []
        for _name, outer, inner, sym in _SHAPES3:
            code = _SERIES if inner == "series" else _PARALLEL
            mask = self._shape == code
            a_lines = np.arange(self._L, dtype=np.int64)
            if self._block_polarized(outer):
                mask &= ~self._mat_polarized(np.arange(self._M))
                a_lines = a_lines[~self._pol]
            shapes.append((adds(self.kind, outer), sym, code, np.flatnonzero(mask).astype(np.int64), a_lines))
        self._three = ThreePartSearch(self, shapes)

    # ------------------------------------------------------------ id plumbing
    def _encode(self, s, a: np.ndarray, pos: np.ndarray) -> np.ndarray:
        return self._M + (s * self._L + a) * self._M + pos

    def _decode(self, ids: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        t = ids - self._M
        pos = t % self._M
        q = t // self._M
        return q // self._L, q % self._L, pos

    def _pair_lookup(self, code, i: np.ndarray, j: np.ndarray) -> np.ndarray:
        pair_keys, pair_pos = self._pairs()
        keys = (code * self._L + i) * self._L + j
        at = np.searchsorted(pair_keys, keys)
        at = np.minimum(at, len(pair_keys) - 1)
        if not np.all(pair_keys[at] == keys):  # pragma: no cover - would be a bug
            raise AssertionError("pair missing from the materialised array")
        return pair_pos[at]

    def _check_ids(self, ids) -> np.ndarray:
        ids = np.asarray(ids, dtype=np.int64)
        top = self._M + 4 * self._L * self._M
        bad = (ids < -1) | (ids >= top) | ((ids >= self._M) & (self.max_parts < 3))
        if np.any(bad):
            raise ValueError(f"unknown network id {int(ids[bad].flat[0])}")
        return ids

    # ------------------------------------------------------------ views for the searches
    # Read-only arrays and helpers the 3-part search (networks.nearest) and the timing kernels
    # use; callers must not write to them.
    @property
    def entry_values(self) -> np.ndarray:
        """Values of the materialised 1-2 part networks, ascending (the id of one is its position)."""
        return self._val

    @property
    def entry_lines(self) -> tuple[np.ndarray, np.ndarray]:
        """(first line, second line) positions of each materialised network (-1: none)."""
        return self._li, self._lj

    def entry_parts(self, pos: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(first line, second line or -1) of the materialised networks at ``pos``."""
        _shape, li, lj = self._entry_parts(np.asarray(pos, dtype=np.int64))
        return li, lj

    def entry_adds(self, pos: np.ndarray) -> np.ndarray:
        """For materialised entries: True where the joint adds the values themselves (resistors
        in series, capacitors in parallel; ``shapes.adds``), False for the other joint and for
        single parts."""
        code = self._entry_parts(pos)[0]
        return ((code == _SERIES) & adds(self.kind, "series")) | ((code == _PARALLEL) & adds(self.kind, "parallel"))

    @property
    def line_values(self) -> np.ndarray:
        """Nominal value of each stock line, by line position."""
        return self._v

    @property
    def line_tolerances(self) -> np.ndarray:
        """The larger of each stock line's minus and plus tolerance, by line position."""
        return self._tol

    @property
    def line_count(self) -> int:
        return self._L

    def capacity(self) -> np.ndarray:
        """Parts per board each line can give: quantity // boards."""
        return self._cap()

    def pair_position(self, code, i: np.ndarray, j: np.ndarray) -> np.ndarray:
        """Position of the pair of lines (i, j), i <= j, joined as shape code 1 (series) or 2."""
        return self._pair_lookup(code, i, j)

    def triple_ids(self, s, a: np.ndarray, pos: np.ndarray) -> np.ndarray:
        """Ids of 3-part networks: shape code ``s``, single line ``a``, pair at ``pos``."""
        return self._encode(s, a, pos)

    def sorted_values(self) -> np.ndarray | None:
        """Every network's value indexed by id, when ids are positions in ascending order (an
        index of 1-2 part networks); None when 3-part networks are in it."""
        return self._val if self._three is None and self.max_parts <= 2 else None

    # ------------------------------------------------------------ per-id data
    def __len__(self) -> int:
        return sum(self.size_by_parts().values())

    @property
    def empty(self) -> bool:
        """No network at all (cheap; every 3-part network's single part is a network too)."""
        return self._M == 0

    def values(self, ids) -> np.ndarray:
        """Nominal values (nan for -1)."""
        ids = self._check_ids(ids)
        out = np.full(ids.shape, np.nan)
        m = (ids >= 0) & (ids < self._M)
        out[m] = self._val[ids[m]]
        t = ids >= self._M
        if np.any(t):
            s, a, pos = self._decode(ids[t])
            out[t] = _join(self._outer_add[s], self._v[a], self._val[pos])
        return out

    def bounds(self, ids) -> tuple[np.ndarray, np.ndarray]:
        """Worst-case (vmin, vmax) from the part tolerances (every part at its low or high end;
        both joints are increasing in every part, so the corners are the extremes)."""
        ids = self._check_ids(ids)
        lo, hi = np.full(ids.shape, np.nan), np.full(ids.shape, np.nan)
        m = (ids >= 0) & (ids < self._M)
        lo[m], hi[m] = self._mat_bounds(ids[m])
        t = ids >= self._M
        if np.any(t):
            s, a, pos = self._decode(ids[t])
            add = self._outer_add[s]
            plo, phi = self._mat_bounds(pos)
            lo[t] = _join(add, self._vlo[a], plo)
            hi[t] = _join(add, self._vhi[a], phi)
        return lo, hi

    def nparts(self, ids) -> np.ndarray:
        """Number of physical parts (0 for -1)."""
        ids = self._check_ids(ids)
        out = np.zeros(ids.shape, dtype=np.int64)
        m = (ids >= 0) & (ids < self._M)
        out[m] = np.where(self._order[ids[m]] < self._L, 1, 2)  # build positions below L: singles
        out[ids >= self._M] = 3
        return out

    def _raw_lines(self, ids: np.ndarray) -> np.ndarray:
        """(n, 3) line position of each physical part, -1 padding."""
        raw = np.full((len(ids), 3), -1, dtype=np.int64)
        m = (ids >= 0) & (ids < self._M)
        _shape, raw[m, 0], raw[m, 1] = self._entry_parts(ids[m])
        t = ids >= self._M
        if np.any(t):
            _s, a, pos = self._decode(ids[t])
            _shape, li, lj = self._entry_parts(pos)
            raw[t] = np.stack([a, li, lj], axis=1)
        return raw

    def usage_arrays(self, ids) -> tuple[np.ndarray, np.ndarray]:
        """(positions (n, 3), counts (n, 3)): distinct line positions used by each network (index
        into ``lines``, ``line_ids``, ``quantity``) and how many parts of each; -1 / 0 padding."""
        ids = self._check_ids(ids).ravel()
        raw = self._raw_lines(ids)
        big = np.iinfo(np.int64).max
        srt = np.sort(np.where(raw < 0, big, raw), axis=1)
        eq = srt[:, :, None] == srt[:, None, :]
        counts = eq.sum(axis=2)
        first = np.ones_like(srt, dtype=bool)
        first[:, 1] = srt[:, 1] != srt[:, 0]
        first[:, 2] = srt[:, 2] != srt[:, 1]
        keep = first & (srt != big)
        order = np.argsort(~keep, axis=1, kind="stable")
        pos = np.take_along_axis(np.where(keep, srt, -1), order, axis=1)
        cnt = np.take_along_axis(np.where(keep, counts, 0), order, axis=1)
        return pos, cnt

    def fits_together(self, ids_a, ids_b, boards: int | None = None) -> np.ndarray:
        """True where network a and network b can both be built for ``boards`` boards (default:
        the index's): for every line, (count in a + count in b) * boards <= quantity."""
        b = self.boards if boards is None else int(boards)
        ia, ib = np.broadcast_arrays(self._check_ids(ids_a), self._check_ids(ids_b))
        shape = ia.shape
        pa, ca = self.usage_arrays(ia.ravel())
        pb, cb = self.usage_arrays(ib.ravel())
        qty = np.append(self.quantity, 0)  # index -1 -> padding, never checked
        tot_a = ca + ((pa[:, :, None] == pb[:, None, :]) * cb[:, None, :]).sum(axis=2)
        tot_b = cb + ((pb[:, :, None] == pa[:, None, :]) * ca[:, None, :]).sum(axis=2)
        ok = np.all((pa < 0) | (tot_a * b <= qty[pa]), axis=1) & np.all((pb < 0) | (tot_b * b <= qty[pb]), axis=1)
        ok &= (ia.ravel() >= 0) & (ib.ravel() >= 0)
        return ok.reshape(shape)

    def network(self, id) -> Network:
        """The concrete network behind one id (built once per index and id, then shared: a
        Network is frozen)."""
        net = self._net_cache.get(id) if isinstance(id, int) else None
        if net is None:
            i = int(self._check_ids(np.array([id]))[0])
            if i < 0:
                raise ValueError("id -1 is padding, not a network")
            net = self._net_cache.get(i)
            if net is None:
                net = self._materialised_network(i) if i < self._M else self._network(i)
                self._net_cache[i] = net
        return net

    def _materialised_network(self, i: int) -> Network:
        """``_network`` for a 1-2 part entry, in scalar arithmetic (Python floats are IEEE
        doubles: the same value and bounds as ``values`` and ``bounds`` give)."""
        ln = self.lines
        shapes, lis, ljs = self._entry_parts(np.array([i]))
        code = int(shapes[0])
        a = int(lis[0])
        if code == _SINGLE:
            shape, physical = "single", (ln[a],)
            lo, hi = float(self._vlo[a]), float(self._vhi[a])
            parts = ((ln[a], 1),)
        else:
            b = int(ljs[0])
            shape = "series" if code == _SERIES else "parallel"
            physical = (ln[a], ln[b])
            add = adds(self.kind, shape)
            xl, yl, xh, yh = float(self._vlo[a]), float(self._vlo[b]), float(self._vhi[a]), float(self._vhi[b])
            lo = xl + yl if add else 1.0 / (1.0 / xl + 1.0 / yl)
            hi = xh + yh if add else 1.0 / (1.0 / xh + 1.0 / yh)
            parts = ((ln[a], 2),) if a == b else ((ln[a], 1), (ln[b], 1))
        return Network(kind=self.kind, value=float(self._val[i]), vmin=lo, vmax=hi, shape=shape,
                       parts=parts, physical=physical, structure=_shapes.SHAPES[shape].structure)

    def _network(self, i: int) -> Network:
        """The network behind a 3-part id."""
        value = float(self.values(np.array([i]))[0])
        lo, hi = self.bounds(np.array([i]))
        raw = self._raw_lines(np.array([i]))[0]
        ln = self.lines
        s = int(self._decode(np.array([i]))[0][0])
        shape, _outer, _inner, sym = _SHAPES3[s]
        if sym:
            physical = (ln[raw[0]], ln[raw[1]], ln[raw[2]])
        else:  # pair first, as written: (B ∥ C) + A
            physical = (ln[raw[1]], ln[raw[2]], ln[raw[0]])
        structure = _shapes.SHAPES[shape].structure
        counts: dict[int, int] = {}
        for line in physical:
            counts[line.id] = counts.get(line.id, 0) + 1
        seen: list[StockLine] = []
        for line in physical:
            if line not in seen:
                seen.append(line)
        parts = tuple((line, counts[line.id]) for line in seen)
        return Network(kind=self.kind, value=value, vmin=float(lo[0]), vmax=float(hi[0]), shape=shape,
                       parts=parts, physical=physical, structure=structure)

    def networks(self, ids: Iterable[int]) -> list[Network]:
        return [self.network(int(i)) for i in ids if int(i) >= 0]

    def size_by_parts(self) -> dict[int, int]:
        """Exact number of distinct networks by part count (3-part ones counted, not built;
        with the token-part rule that checks every candidate once, then it is kept)."""
        if getattr(self, "_sizes", None) is not None:
            return dict(self._sizes)
        out = {1: self._L}  # every usable line is a single-part network
        if self.max_parts >= 2:
            out[2] = self._M - self._L
        if self.max_parts >= 3:
            out[3] = self._three.count()
        self._sizes = dict(out)
        return out

    # ------------------------------------------------------------ look-ups
    @staticmethod
    def _targets(targets) -> np.ndarray:
        t = np.atleast_1d(np.asarray(targets, dtype=float)).ravel()
        if not np.all(np.isfinite(t) & (t > 0)):
            raise ValueError("targets must be finite positive values")
        return t

    def _chunks(self, n: int):
        """Target chunks small enough that the 3-part windows stay a few MB."""
        per = self._three.nrows if self._three is not None else 0
        step = max(1, 200_000 // per) if per else max(1, n)
        for start in range(0, n, step):
            yield slice(start, min(n, start + step))

    def nearest_sides(self, targets, k: int = 1) -> tuple[np.ndarray, np.ndarray]:
        """(below, above): for each target the k nearest networks with value <= target (nearest
        first, then fewer parts, then id) and the k nearest with value >= target; -1 padding.
        A network exactly on the target appears on both sides.  EXACT, 3-part ones included."""
        T_in = self._targets(targets)
        k = int(k)
        below = np.full((len(T_in), k), -1, dtype=np.int64)
        above = np.full((len(T_in), k), -1, dtype=np.int64)
        if k <= 0 or self._M == 0:
            return below, above
        if self._three is None:  # only materialised networks: both sides are plain slices
            step = np.arange(k)
            ib = np.searchsorted(self._val, T_in, side="right")[:, None] - 1 - step
            ia = np.searchsorted(self._val, T_in, side="left")[:, None] + step
            below = np.where(ib >= 0, self._order_desc[np.maximum(ib, 0)], -1)
            above = np.where(ia < self._M, np.minimum(ia, self._M - 1), -1)
            return below.astype(np.int64), above.astype(np.int64)
        order = np.argsort(T_in, kind="stable")
        T = T_in[order]
        for sl in self._chunks(len(T)):
            t = T[sl]
            n = len(t)
            ib = np.searchsorted(self._val, t, side="right")
            rb, eb = ranges_concat(np.maximum(ib - k, 0), ib)
            eb = self._order_desc[eb]
            ia = np.searchsorted(self._val, t, side="left")
            ra, ea = ranges_concat(ia, np.minimum(ia + k, self._M))
            vb, va = self._val[eb], self._val[ea]
            # the k-th best 1-2 part distance bounds the 3-part search (inf if fewer than k)
            kb = np.where(ib >= k, self._val[np.maximum(ib - k, 0)], 0.0)
            ka = np.where(ia + k <= self._M, self._val[np.minimum(ia + k - 1, self._M - 1)], np.inf)
            with np.errstate(divide="ignore"):
                bounds = (np.log(t / kb), np.log(ka / t))
            (br, bi, bv), (ar, ai, av) = self._three.sides(t, k, bounds)
            rb, eb, vb = np.concatenate([rb, br]), np.concatenate([eb, bi]), np.concatenate([vb, bv])
            ra, ea, va = np.concatenate([ra, ar]), np.concatenate([ea, ai]), np.concatenate([va, av])
            below[order[sl]] = rank_rows(rb, eb, (-vb, self.nparts(eb)), n, k)
            above[order[sl]] = rank_rows(ra, ea, (va, self.nparts(ea)), n, k)
        return below, above

    def nearest_few(self, targets, k: int) -> np.ndarray:
        """(len(targets), k) ids of the k nearest networks to each target by |log(value/target)|,
        then fewer parts, then id; -1 padding when fewer than k exist.  EXACT: the k nearest are
        among the k nearest at or below and the k nearest at or above."""
        T = self._targets(targets)
        below, above = self.nearest_sides(T, k)
        cand = np.concatenate([below, above], axis=1)
        rows = np.repeat(np.arange(len(T)), cand.shape[1])
        ids = cand.ravel()
        m = ids >= 0
        rows, ids = rows[m], ids[m]
        with np.errstate(divide="ignore"):
            err = np.abs(np.log(self.values(ids) / T[rows]))
        return rank_rows(rows, ids, (err, self.nparts(ids)), len(T), int(k))

    def values_within(self, lo, hi) -> np.ndarray | None:
        """Sorted network values that include every value v of the index with lo[i] <= v <=
        hi[i] for some i (possibly with some others: a superset, meant for lower bounds and
        pruning, never as a list of answers); None when the intervals are too wide for that to
        be cheaper than ``between`` (see ``ThreePartSearch.values_within``)."""
        lo = np.atleast_1d(np.asarray(lo, dtype=float)).ravel()
        hi = np.atleast_1d(np.asarray(hi, dtype=float)).ravel()
        parts = [self._val]
        if self._three is not None:
            three = self._three.values_within(lo, hi)
            if three is None:
                return None
            parts.append(three)
        return np.sort(np.concatenate(parts), kind="stable")  # two sorted runs: one merge

    def between(self, lo, hi) -> tuple[np.ndarray, np.ndarray]:
        """Every network with lo[i] <= value <= hi[i], CSR style: (offsets (n+1,), ids), each
        row sorted by value, then fewer parts, then id.  Exact for 3-part networks as well (they
        are enumerated slice by slice of the sorted pair arrays, never all at once)."""
        lo = np.atleast_1d(np.asarray(lo, dtype=float)).ravel()
        hi = np.atleast_1d(np.asarray(hi, dtype=float)).ravel()
        lo, hi = np.broadcast_arrays(lo, hi)
        n = len(lo)
        rows_all, ids_all, vals_all = [], [], []
        if self._M:
            s0 = np.searchsorted(self._val, lo, side="left")
            e0 = np.searchsorted(self._val, hi, side="right")
            r, e = ranges_concat(s0, np.maximum(e0, s0))
            rows_all.append(r)
            ids_all.append(e)
            vals_all.append(self._val[e])
        if self._three is not None:
            for sl in self._chunks(n):
                t, ids, vals = self._three.between(lo[sl], hi[sl])
                rows_all.append(t + sl.start)
                ids_all.append(ids)
                vals_all.append(vals)
        if not rows_all:
            return np.zeros(n + 1, dtype=np.int64), np.zeros(0, dtype=np.int64)
        rows, ids, vals = (np.concatenate(x) for x in (rows_all, ids_all, vals_all))
        order = np.lexsort((ids, self.nparts(ids), vals, rows))
        rows, ids = rows[order], ids[order]
        offsets = np.searchsorted(rows, np.arange(n + 1), side="left").astype(np.int64)
        return offsets, ids.astype(np.int64)


@functools.lru_cache(maxsize=8)
def _pairs_upper(n: int) -> tuple[np.ndarray, np.ndarray]:
    """``np.triu_indices(n)``, kept for the next index of the same number of lines (a search
    builds one per parts budget, a session many for the same stock; on a small stock working
    them out was a third of the build). Read-only: callers only index with them."""
    i, j = np.triu_indices(n)
    i.setflags(write=False)
    j.setflags(write=False)
    return i, j


def token_share(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """The smaller branch share of a two-branch joint with branch values x and y (same kind).

    The token-part rule: a network is offered only if at every series/parallel joint each
    branch's share of the joint's sum - resistance for series resistors, conductance for parallel
    resistors, capacitance for parallel capacitors, elastance 1/C for series capacitors - is at
    least half the largest tolerance (the larger of minus and plus) among the parts under that
    joint.  For two branches both joints give the same smaller share, min(x, y)/(x + y): with
    conductances (1/x)/(1/x + 1/y) = y/(x + y).  A joint of three parts (series3, parallel3) is
    one joint with three branches (``ThreePartSearch.rule``)."""
    return np.minimum(x, y) / (x + y)


def build_index(lines: Sequence[StockLine], max_parts: int = 2, boards: int = 1,
                allow_polarized_series: bool = False, kind: str | None = None,
                all_networks: bool = True) -> NetworkIndex:
    """Index every network of 1..max_parts parts of one kind that ``lines`` allow for ``boards``
    boards.  ``kind`` picks the lines of that kind; when omitted all lines must share one kind
    (an empty list gives an empty resistor index)."""
    if kind is None:
        kinds = {ln.kind for ln in lines}
        if len(kinds) > 1:
            raise ValueError("stock lines of several kinds: pass kind='resistor' or kind='capacitor'")
        kind = kinds.pop() if kinds else "resistor"
    return NetworkIndex(lines, kind, max_parts=max_parts, boards=boards,
                        allow_polarized_series=allow_polarized_series, all_networks=all_networks)


def nearest_networks(lines: Sequence[StockLine], target: float, k: int = 10, max_parts: int = 2,
                     boards: int = 1, allow_polarized_series: bool = False,
                     kind: str | None = None) -> list[Network]:
    """The k networks nearest to ``target`` (by |log ratio|, then fewer parts), best first."""
    index = build_index(lines, max_parts=max_parts, boards=boards,
                        allow_polarized_series=allow_polarized_series, kind=kind)
    return index.networks(index.nearest_few(np.array([float(target)]), k)[0])
