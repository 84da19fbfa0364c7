"""Plain exhaustive reference for series/parallel networks, for tests only.

Obviously correct on purpose: itertools over the stock lines, the textbook laws written out in
plain Python (resistors: series R = R1 + R2 + ..., parallel 1/R = 1/R1 + 1/R2 + ...; capacitors
the other way round; facts.md §10 "Networks"), the quantity rule checked with a Counter.  No numpy
and nothing from ``selector.core.networks`` except the ``Network`` record used as a container.

    enumerate_all(lines, max_parts, boards, allow_polarized_series=False, kind=None,
                  all_networks=True) -> list[Network]     (all_networks=False: token-part rule)
    token_ok(net) -> bool   the token-part rule, written out joint by joint
    network_key(net) -> hashable key, equal exactly for the same network

Import it as `from reference_networks import enumerate_all` (pytest puts tests/ on sys.path).
"""

from __future__ import annotations

import itertools
from collections import Counter
from typing import Sequence

from selector.core.networks import Network
from selector.core.types import StockLine


def _series(kind: str, xs: Sequence[float]) -> float:
    if kind == "resistor":
        return sum(xs)
    return 1.0 / sum(1.0 / x for x in xs)


def _parallel(kind: str, xs: Sequence[float]) -> float:
    if kind == "resistor":
        return 1.0 / sum(1.0 / x for x in xs)
    return sum(xs)


def _value(kind: str, shape: str, xs: Sequence[float]) -> float:
    """xs in physical order: for the mixed shapes the pair first, then the single part."""
    if shape == "single":
        return xs[0]
    if shape in ("series", "series3"):
        return _series(kind, xs)
    if shape in ("parallel", "parallel3"):
        return _parallel(kind, xs)
    if shape == "series+parallel":  # (B ∥ C) + A
        return _series(kind, [_parallel(kind, xs[:2]), xs[2]])
    if shape == "parallel+series":  # (B + C) ∥ A
        return _parallel(kind, [_series(kind, xs[:2]), xs[2]])
    raise ValueError(shape)


_STRUCTURE = {
    "single": 0,
    "series": ("series", (0, 1)),
    "parallel": ("parallel", (0, 1)),
    "series3": ("series", (0, 1, 2)),
    "parallel3": ("parallel", (0, 1, 2)),
    "series+parallel": ("series", (("parallel", (0, 1)), 2)),
    "parallel+series": ("parallel", (("series", (0, 1)), 2)),
}
# which physical positions sit under a series joint, per shape
_IN_SERIES = {
    "single": (False,),
    "series": (True, True),
    "parallel": (False, False),
    "series3": (True, True, True),
    "parallel3": (False, False, False),
    "series+parallel": (True, True, True),
    "parallel+series": (True, True, False),
}


def _make(kind: str, shape: str, physical: tuple[StockLine, ...]) -> Network:
    nominal = [p.value for p in physical]
    low = [p.value * (1 - p.tol_minus) for p in physical]
    high = [p.value * (1 + p.tol_plus) for p in physical]
    counts = Counter(p.id for p in physical)
    parts, seen = [], set()
    for p in physical:
        if p.id not in seen:
            seen.add(p.id)
            parts.append((p, counts[p.id]))
    return Network(kind=kind, value=_value(kind, shape, nominal), vmin=_value(kind, shape, low),
                   vmax=_value(kind, shape, high), shape=shape, parts=tuple(parts),
                   physical=physical, structure=_STRUCTURE[shape])


def token_ok(net: Network) -> bool:
    """The token-part rule (issue 11, item 1), written out plainly: at every joint of the
    structure each child's share of the joint's sum is at least half the largest tolerance
    (max of minus and plus) among the parts under that joint. The summed quantity is what the
    joint adds: resistance (series R), conductance (parallel R), capacitance (parallel C),
    elastance 1/C (series C)."""
    kind = net.kind

    def leaves(node):
        if isinstance(node, int):
            return [node]
        return [i for child in node[1] for i in leaves(child)]

    def val(node) -> float:
        if isinstance(node, int):
            return net.physical[node].value
        joint, children = node
        xs = [val(c) for c in children]
        return _series(kind, xs) if joint == "series" else _parallel(kind, xs)

    def check(node) -> bool:
        if isinstance(node, int):
            return True
        joint, children = node
        adds_value = (joint == "series") == (kind == "resistor")
        qty = [val(c) if adds_value else 1.0 / val(c) for c in children]
        total = sum(qty)
        bar = max(max(net.physical[i].tol_minus, net.physical[i].tol_plus) for i in leaves(node)) / 2
        return all(q / total >= bar for q in qty) and all(check(c) for c in children)

    return check(net.structure)


def enumerate_all(lines: Sequence[StockLine], max_parts: int = 2, boards: int = 1,
                  allow_polarized_series: bool = False, kind: str | None = None,
                  all_networks: bool = True) -> list[Network]:
    """Every distinct network of 1..max_parts parts of one kind, one entry per network; with
    ``all_networks=False`` only those that pass the token-part rule (``token_ok``)."""
    if kind is None:
        kinds = {ln.kind for ln in lines}
        assert len(kinds) <= 1, "pass kind= for mixed stock"
        kind = kinds.pop() if kinds else "resistor"
    pool = [ln for ln in lines if ln.kind == kind and ln.value > 0]
    out: list[Network] = []

    def allowed(combo: tuple[StockLine, ...], shape: str) -> bool:
        for line_id, n in Counter(p.id for p in combo).items():
            line = next(p for p in combo if p.id == line_id)
            if n * boards > line.quantity:
                return False
        if kind == "capacitor" and not allow_polarized_series:
            if any(p.polarized and s for p, s in zip(combo, _IN_SERIES[shape])):
                return False
        return True

    for n in range(1, max_parts + 1):
        for combo in itertools.combinations_with_replacement(range(len(pool)), n):
            parts = tuple(pool[i] for i in combo)
            if n == 1:
                shapes = [("single", parts)]
            elif n == 2:
                shapes = [("series", parts), ("parallel", parts)]
            else:
                shapes = [("series3", parts), ("parallel3", parts)]
                seen = set()
                for a in range(3):  # the single part A; the other two form the pair
                    pair = tuple(sorted((combo[x] for x in range(3) if x != a)))
                    if (combo[a], pair) in seen:
                        continue
                    seen.add((combo[a], pair))
                    physical = (pool[pair[0]], pool[pair[1]], pool[combo[a]])
                    shapes += [("series+parallel", physical), ("parallel+series", physical)]
            for shape, physical in shapes:
                if allowed(physical, shape):
                    net = _make(kind, shape, physical)
                    if all_networks or token_ok(net):
                        out.append(net)
    return out


def network_key(net: Network) -> tuple:
    """A key that is equal exactly for the same network (shape + which lines in which role)."""
    ids = [p.id for p in net.physical]
    if net.shape in ("series+parallel", "parallel+series"):
        return (net.shape, tuple(sorted(ids[:2])), ids[2])
    return (net.shape, tuple(sorted(ids)))
