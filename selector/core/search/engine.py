"""The exact timing search: which resistor and capacitor networks from the stock come closest to a
timing target inside the chip's limits and the parts' ratings.

Pure core (numpy + stdlib). It works on two network indexes built by ``selector.core.networks``
(one of resistor networks, one of capacitor networks, both already limited to what the stock
holds for the number of boards) and returns raw options sorted by |error|; tolerance spread,
yield and the final ranking live in ``selector.core.ranking``.

Error of an option (what "exact" refers to):
- astable (standard, diode, output-fed): the larger of the relative errors of t_high and t_low,
  ``max(|t_high/T_high - 1|, |t_low/T_low - 1|)``, reported signed (the sign of the larger one);
- monostable: ``width/W - 1``; RC: ``tau/T - 1`` or, for a corner target, ``corner/F - 1``.

Why the search cannot miss a better option (the correctness argument)
---------------------------------------------------------------------
Astable, standard and diode connections: the two-resistor pass. With the discharge switch's
on-resistance RD in t_low (issue 10), t_low depends on RA as well as RB, so the low-time error no
longer fixes RB alone; the argument (certified RA/RB ranges per capacitor network, then every RB
in range with every RA in its t_high window evaluated exactly) is written out at the end of
``selector.core.search.kernels`` ("Why the two-resistor pass is exact"). Limits on C alone
(minimum timing capacitance, voltage rating) and on RA alone (minimum RA, power) are applied to
the candidate sets BEFORE the search, so exactness holds over the allowed options.

Single-resistor connections (monostable, RC, output-fed). For a capacitor network c the error is a
function of R that is monotone on each side of one ideal value R* (width, tau and both half-periods
of the output-fed astable grow with R; a corner falls with R; for the output-fed astable the error
is the larger of two V-shaped functions of R, again V-shaped, smallest at R* = 2/(a_high + a_low)
where a = t/(R·T)). So the best R for c is the nearest feasible network on one side of clamp(R*,
lo, hi), and the exact best option is the best over all allowed c; no certificate is needed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from collections.abc import Mapping
from typing import Callable, Optional, Sequence

from selector.core import circuits
from selector.core.circuits.base import TWO_RESISTOR, Limits, Settings, Target  # noqa: F401  (re-exported)
from selector.core.errors import NothingFeasible

ProgressFn = Callable[[float], None]  # called with the fraction done, 0..1

ASTABLE_CONNECTIONS = tuple(c.key for c in circuits.for_mode("astable"))


@dataclass
class Exclusions:
    """How many candidates each limit excluded (for the NothingFeasible message)."""

    counts: dict[str, int] = field(default_factory=dict)
    notes: list = field(default_factory=list)

    def add(self, reason: str, n: int) -> None:
        if n:
            self.counts[reason] = self.counts.get(reason, 0) + int(n)

    def note(self, text: str) -> None:
        if text not in self.notes:
            self.notes.append(text)

    def message(self, what: str) -> str:
        if self.notes and not self.counts:
            return f"no {what} option: " + "; ".join(self.notes)
        if not self.counts:
            return f"no {what} option can be built from the stock"
        parts = [f"{n} {reason}" for reason, n in sorted(self.counts.items(), key=lambda kv: -kv[1])]
        head = f"no {what} option is inside the limits; "
        if self.notes:
            head += "; ".join(self.notes) + "; "
        return head + "excluded: " + "; ".join(parts)




# --------------------------------------------------------------------------- limits and connections


def resolve_limits(connection: str, chip_key: str, vcc: float, diode_vf: float,
                   options: Optional[dict] = None) -> Limits:
    """The limits of one connection: the circuit kind's ``limits`` for a chip family at ``vcc``
    (facts.md §6, §7, §8.5; see each circuit module)."""
    return circuits.get(connection).limits(Settings(chip_key, vcc, diode_vf, options or {}))


def output_fed_best_error(target: Target, limits: Limits) -> float:
    """The smallest error the output-fed astable can reach with a perfect R for this target: its
    duty is fixed by the output levels, so a duty mismatch alone costs this much."""
    return circuits.get("output-fed").best_error(target, limits)


def choose_connections(target: Target, connection: str, chip_key: str, vcc: float, diode_vf: float,
                       accept: float, options: Optional[dict] = None) -> tuple[str, ...]:
    """Which astable connections to search. ``auto``: every astable circuit kind that says so
    for this target (``auto_ok``: standard only above 50 % duty, diode-steered when VCC > 3·Vf,
    output-fed for rail-to-rail families when its fixed duty alone keeps the error within
    ``accept``). A named connection that cannot reach the target raises NothingFeasible saying
    why (``check_available``)."""
    settings = Settings(chip_key, vcc, diode_vf, options or {})
    astables = circuits.for_mode("astable")
    if connection == "auto":
        out = tuple(c.key for c in astables if c.in_auto and c.auto_ok(target, settings, accept))
        if not out:
            raise NothingFeasible(
                f"no connection reaches a duty of {target.duty:.1%}: the standard one needs more than 50 % "
                f"and the diode-steered one needs VCC above 3 × Vf ({3 * diode_vf:g} V)")
        return out
    kind = next((c for c in astables if c.key == connection), None)
    if kind is None:
        raise NothingFeasible(f"unknown connection {connection!r}; expected auto, "
                              + ", ".join(ASTABLE_CONNECTIONS))
    kind.check_available(target, settings)
    return (connection,)


# --------------------------------------------------------------------------- the public search


@dataclass(frozen=True)
class FoundOption:
    """One option with its concrete networks (roles "RA", "RB", "C" or "R", "C")."""

    connection: str
    networks: dict
    error: float
    t_high: float = math.nan
    t_low: float = math.nan
    time: float = math.nan
    budget: int = 0  # largest network size allowed in the pass that found it

    @property
    def abs_error(self) -> float:
        return abs(self.error)

    @property
    def nparts(self) -> int:
        return sum(n.nparts for n in self.networks.values())

    def same_build_key(self) -> tuple:
        """Options with equal keys are the same build from different drawers (same values,
        tolerances and dielectrics in the same shapes); only the first of them is kept."""
        return (self.connection,) + tuple(
            (role, n.shape, tuple(sorted((p.value, p.tol_minus, p.tol_plus, p.dielectric, p.rating or 0.0)
                                         for p in n.physical)))
            for role, n in sorted(self.networks.items()))

    def key(self) -> tuple:
        return (self.connection,) + tuple(
            (role, n.shape, round(n.value, 12), tuple(sorted(n.usage.items())))
            for role, n in sorted(self.networks.items()))


@dataclass
class SearchResult:
    """``options`` sorted by |error|; ``options[0]`` is the exact best the stock and limits
    allow. ``exclusions`` counts what each limit excluded."""

    options: list
    exclusions: Exclusions
    connections: tuple
    network_counts: dict = field(default_factory=dict)
    folded: list = field(default_factory=list)  # same build from other drawers (the alternatives)

    @property
    def best_error(self) -> float:
        return self.options[0].error if self.options else math.nan


def search_timing(r_lines: Sequence, c_lines: Sequence, target: Target, connections: Sequence[str],
                  limits: dict, max_parts: int = 2, boards: int = 1, pool: int = 20,
                  progress: Optional[ProgressFn] = None, indexes: Optional[dict] = None,
                  c_max_parts: Optional[int] = None, all_networks: bool = True) -> SearchResult:
    """Search every connection in ``connections`` (``limits[connection]`` holds its Limits) over
    the networks of up to ``max_parts`` parts the stock allows for ``boards`` boards.

    Besides the exact search with ``max_parts``, a pass is made for every smaller budget (1 ..
    max_parts − 1 parts per network) so the pool also holds the best simpler builds the ranking
    may prefer. Each pass keeps its ``pool`` best (C, RB) / (C, R) pairs by |error|. Raises
    NothingFeasible (naming the limits and what they excluded) when nothing is left.
    ``indexes`` may map budget -> (r_index, c_index) to reuse indexes already built;
    ``c_max_parts`` caps the capacitor networks below ``max_parts`` (e.g. 3-part resistor
    networks with 1-2-part capacitors). ``all_networks=False`` leaves token-part networks out
    of both indexes (``networks.index.token_share``); the search is then exact over the
    networks offered."""
    ex = Exclusions()
    found: dict[tuple, FoundOption] = {}
    weights = {p: 10.0 ** (p - 1) for p in range(1, max_parts + 1)}
    total_w = sum(weights.values()) * len(connections)
    done_w = 0.0
    counts = {}
    hints: dict = {}   # connection -> the pool's worst |error| of the last budget (kernels.run2)
    for budget in range(1, max_parts + 1):
        r_index, c_index = _indexes(r_lines, c_lines, budget, boards, indexes, c_max_parts, ex, all_networks)
        counts[budget] = (r_index, c_index)
        for conn in connections:
            pex = ex if budget == max_parts else Exclusions()  # count each exclusion once

            def tick(frac, w=weights[budget], base=done_w):
                if progress:
                    progress(min(1.0, (base + w * frac) / total_w))

            got = _one_pass(circuits.get(conn), target, limits[conn], r_index, c_index, pool,
                            budget, pex, tick, hints.get(conn, math.inf))
            # a full pool bounds the next budget's (1e-9: the same pair's error, another batch)
            hints[conn] = max(abs(o.error) for o in got) * (1 + 1e-9) if len(got) >= pool else math.inf
            for opt in got:
                found.setdefault(opt.key(), opt)
            done_w += weights[budget]
    if progress:
        progress(1.0)
    options, seen, folded = [], set(), []
    for o in sorted(found.values(), key=lambda o: (o.abs_error, o.nparts)):
        k = o.same_build_key()
        if k not in seen:
            seen.add(k)
            options.append(o)
        else:
            folded.append(o)
    if not options:
        what = target.mode if target.mode != "astable" else "astable (" + ", ".join(connections) + ")"
        raise NothingFeasible(ex.message(what))
    return SearchResult(options, ex, tuple(connections), NetworkCounts(counts), folded)


def _indexes(r_lines, c_lines, budget: int, boards: int, indexes: Optional[dict],
             c_max_parts: Optional[int], ex: Exclusions, all_networks: bool = True):
    """The resistor and capacitor indexes of one parts budget (reused when given); an empty one
    is noted for the NothingFeasible message."""
    from selector.core.networks import build_index

    if indexes and budget in indexes:
        r_index, c_index = indexes[budget]
    else:
        r_index = build_index(r_lines, max_parts=budget, boards=boards, kind="resistor",
                              all_networks=all_networks)
        c_parts = budget if c_max_parts is None else max(1, min(budget, int(c_max_parts)))
        c_index = build_index(c_lines, max_parts=c_parts, boards=boards, kind="capacitor",
                              all_networks=all_networks)
    per = f" for {boards} boards" if boards > 1 else ""
    if r_index.empty:
        ex.note(f"no resistor in stock{per}")
    if c_index.empty:
        ex.note(f"no capacitor in stock{per}")
    return r_index, c_index


def _one_pass(kind, target: Target, lim: Limits, r_index, c_index, pool: int, budget: int,
              ex: Exclusions, tick: Callable[[float], None], bound_hint: float = math.inf) -> list[FoundOption]:
    """Run the kernel the circuit kind names over one pair of indexes; options in pass order.
    ``bound_hint``: the worst |error| of a smaller budget's full pool (two-resistor kernel)."""
    from selector.core.search.kernels import _Pass
    from selector.core.search.lookup import PowerCheck, capacitor_candidates

    charge_r = getattr(kind, "charge_r_ideal", None)
    c_ids = capacitor_candidates(c_index, lim, ex,
                                 (lambda c: charge_r(target, c, lim)) if charge_r is not None else None)
    power = PowerCheck(r_index, lim.r_power_volts, lim.r_power_derating)
    ps = _Pass(kind, target, r_index, c_index, c_ids, lim, power, ex, bound_hint=bound_hint)
    two = kind.kernel == TWO_RESISTOR
    steps = max(1, -(-c_ids.size // ps.chunk)) * (2 if two else 1)
    state = {"n": 0}

    def step():
        state["n"] += 1
        tick(state["n"] / steps)

    raw = ps.run2(pool, step) if two else ps.run1(pool, step)
    out = []
    for hit in raw:
        nets = {"C": c_index.network(hit.c_id)}
        for role, r_id in zip(kind.resistor_roles, hit.r_ids):
            nets[role] = r_index.network(r_id)
        out.append(FoundOption(kind.key, nets, hit.error, hit.t_high, hit.t_low, hit.time, budget))
    return out


class NetworkCounts(Mapping):
    """budget -> (resistor networks, capacitor networks) searched, counted on first read: with
    the token-part rule an exact 3-part count checks every candidate network (seconds on a large
    stock), which a search that never shows the count should not pay."""

    def __init__(self, indexes: dict):
        self._indexes = indexes
        self._done: dict = {}

    def __getitem__(self, budget):
        if budget not in self._done:
            r_index, c_index = self._indexes[budget]
            self._done[budget] = (_size(r_index), _size(c_index))
        return self._done[budget]

    def __iter__(self):
        return iter(self._indexes)

    def __len__(self) -> int:
        return len(self._indexes)

    def indexes(self, budget):
        """(resistor index, capacitor index) the pass with this parts budget searched."""
        return self._indexes[budget]


def _size(index) -> int:
    return int(sum(index.size_by_parts().values()))
