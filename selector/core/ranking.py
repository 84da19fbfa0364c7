"""Tolerance spread, build yield and the ranking of timing options (pure core).

For each option found by :mod:`selector.core.search`:
- predicted values from the nominal parts;
- the worst-case range of each predicted quantity over the PHYSICAL parts' tolerance bands
  (``tolerance.corners`` through each network's own ``combine`` law; exact because every model is
  monotone in each part, see ``tolerance.corners``), widened by any Monte Carlo sample outside it;
- the build yield: the share of seeded Monte Carlo builds (>= 10 000 per option, part values drawn
  uniformly within tolerance, or ``normal`` with tolerance = 3σ) that meet the target within
  ``accept``. Astable: frequency within ±accept of the target frequency AND duty within ±accept of
  the target duty, both relative (|f/F − 1| <= accept and |D/D0 − 1| <= accept). Monostable:
  |width/W − 1| <= accept. RC: |τ/T − 1| <= accept (or the corner, when a corner was asked).
  Besides the parts, the yield draws the circuit's ``uncertain`` terms (the chip's initial timing
  error, supply drift, the diode's Vf spread, logic thresholds); ``yield_parts_only`` is the same
  Monte Carlo without them.

Ranking rule (what a technician should pick first; the README states it in three sentences):
    tier   = 0 when every nominal error in the asker's terms (frequency, duty in points judged
             against accept x the target duty, width, tau or corner) is within HALF the acceptance,
             1 when within the acceptance, 2 otherwise: a lower tier always ranks higher;
    yields = within a tier, yields within 2 points of each other count as equal: options sorted
             by yield are cut into groups from the top, each group spanning at most 2 points, so
             an option more than 2 points better always ranks higher (no separate 100 % band);
    then   = among equal yields fewer physical parts, then smaller nominal error; in tier 2 (no
             build is nominally within the acceptance) the smaller error comes before fewer parts,
             because a simpler build that misses the target is no answer.
The option with the exact smallest search error (the certified best the stock and limits allow)
is always among those returned and marked: if the rule would push it below the cut, it takes the
last place shown. Every row carries ``why``, two or three words on why it sits where it does.
"""

from __future__ import annotations

import functools
from typing import Optional, Sequence

import numpy as np

# One option evaluated alone lives in core.evaluation (yield_runs uses it too); the names
# other modules read from here stay importable from here.
from selector.core.evaluation import (  # noqa: F401  (re-exported)
    BAND, ROLE_ORDER, SCORE_FLOOR, RankedOption, binomial_se, cautions, evaluate, tier_of,
)
YIELD_EQUAL = 0.02
"""Yields within 2 points of each other are equal for ranking (issue 11)."""

RANKING_RULE = ("Ranking: options nominally within half the acceptance (duty in points against that "
                "share of the target duty) first, then within the acceptance; then yield (within 2 "
                "points counts as equal), then fewer parts, then smaller error (outside the "
                "acceptance: smaller error before fewer parts).")
"""The rule above in one paragraph, for ``--explain`` and ``show``."""


def build_key(found) -> tuple:
    """Options with equal keys are ONE build: the same connection and, in every role, the same
    shape with the same part values (drawers, tolerances, dielectrics may differ)."""
    return (found.connection,) + tuple(
        (role, n.shape, f"{n.value:.9g}", tuple(sorted(f"{p.value:.9g}" for p in n.physical)))
        for role, n in sorted(found.networks.items()))


def _dielectric_rank(line) -> int:
    return _dielectric_rank_of(line.dielectric or "")


@functools.lru_cache(maxsize=256)
def _dielectric_rank_of(text: str) -> int:
    """Place of a dielectric (as written in stock) in the timing order; a pure function of the
    text, remembered because sorting the variants of every build asks for it hundreds of times."""
    from selector.core import parts

    try:
        d = parts.normalize_dielectric(text)
    except Exception:  # a hand-written dielectric the table does not know: last
        d = ""
    order = parts.TIMING_DIELECTRIC_ORDER
    return order.index(d) if d in order else len(order)


def variant_key(found) -> tuple:
    """Which variant of one build is shown: tighter tolerance (the widest part band, then the sum
    of the bands), then the better timing dielectric, then the fuller drawer (most parts left on
    the emptiest line used), then the lower stock line ids (stable)."""
    phys = [p for n in found.networks.values() for p in n.physical]
    tols = [max(p.tol_minus, p.tol_plus) for p in phys]
    caps = [p for p in phys if p.kind == "capacitor"]
    left = [ln.quantity - cnt for n in found.networks.values() for ln, cnt in n.parts]
    return (round(max(tols), 12), round(sum(tols), 12),
            max((_dielectric_rank(p) for p in caps), default=0),
            sum(_dielectric_rank(p) for p in caps), -min(left, default=0),
            tuple(sorted(p.id for p in phys)))


MAX_ALTERNATIVES = 8
"""At most this many other variants of one build are evaluated and listed (best first)."""


def _substitute_ok(orig, sub, limits) -> bool:
    """May stock line ``sub`` stand in for part ``orig`` (same kind and value) without a new limit
    check? Resistors: rating unknown (the search allows it) or at least the original's. Capacitors:
    rating unknown or enough for the working voltage after its dielectric's derating."""
    if sub.kind != orig.kind or sub.value != orig.value or sub.polarized != orig.polarized:
        return False
    if sub.kind == "resistor":
        return sub.rating is None or (orig.rating is not None and sub.rating >= orig.rating)
    if sub.rating is None or limits is None or limits.cap_volts <= 0:
        return True
    try:
        return sub.rating * limits.cap_derating(sub.dielectric or "") >= limits.cap_volts
    except Exception:  # a dielectric the derating table does not know
        return False


def _with_lines(found, lines_by_role: dict, memo: Optional[dict] = None):
    """``found`` with each role's physical parts replaced by the given stock lines (same values).
    ``memo`` (one dict per ``found``): a role given the same lines again reuses its network (the
    variants of one build differ in one part)."""
    import dataclasses

    nets = {}
    for role, net in found.networks.items():
        phys = tuple(lines_by_role[role])
        key = (role, tuple(ln.id for ln in phys))
        if memo is not None and key in memo:
            nets[role] = memo[key]
            continue
        counts: dict = {}
        order: list = []
        for ln in phys:
            if ln.id not in counts:
                order.append(ln)
            counts[ln.id] = counts.get(ln.id, 0) + 1
        # the band edges v·(1 − tm) and v·(1 + tp) of every part (IEEE products, as numpy makes
        # them), both through the network's law in one call
        lo, hi = (float(x) for x in net.combine(np.array(
            [[p.value * (1 - p.tol_minus), p.value * (1 + p.tol_plus)] for p in phys], dtype=float)))
        nets[role] = dataclasses.replace(net, parts=tuple((ln, counts[ln.id]) for ln in order),
                                         physical=phys, vmin=lo, vmax=hi)
        if memo is not None:
            memo[key] = nets[role]
    if dataclasses.is_dataclass(found):
        return dataclasses.replace(found, networks=nets)
    import copy

    out = copy.copy(found)  # a plain holder of networks (find value)
    out.networks = nets
    return out


def _line_key(ln) -> tuple:
    return (round(max(ln.tol_minus, ln.tol_plus), 12), _dielectric_rank(ln), -ln.quantity, ln.id)


def lines_by_value(stock: Sequence) -> dict:
    """The stock lines grouped by (kind, value), each group best line first (``_line_key``)."""
    by_value: dict = {}
    for ln in stock:
        by_value.setdefault((ln.kind, ln.value), []).append(ln)
    for v in by_value.values():
        v.sort(key=_line_key)
    return by_value


def more_variants(found, stock: Sequence, boards: int, limits, by_value: Optional[dict] = None) -> list:
    """Other variants of the same build from the stock: the best one assembled part by part
    (each part from the tightest, best-dielectric, fullest line of its value that still has
    ``boards`` parts left) and every variant that swaps one part of it for another line.
    ``by_value``: ``lines_by_value(stock)`` when the caller has it (one grouping for many builds)."""
    if by_value is None:
        by_value = lines_by_value(stock)
    roles = sorted(found.networks)
    used: dict = {}
    best: dict = {}
    for role in roles:
        best[role] = []
        for orig in found.networks[role].physical:
            pick = orig
            for cand in by_value.get((orig.kind, orig.value), []):
                if _substitute_ok(orig, cand, limits) and cand.quantity >= (used.get(cand.id, 0) + 1) * boards:
                    pick = cand
                    break
            used[pick.id] = used.get(pick.id, 0) + 1
            best[role].append(pick)
    if any(used[i] * boards > next(ln.quantity for r in roles for ln in best[r] if ln.id == i) for i in used):
        return []  # the greedy pick ran out of a line the original used: keep what the search found
    memo: dict = {}
    out = [_with_lines(found, best, memo)]
    for role in roles:
        for k, orig in enumerate(best[role]):
            for cand in by_value.get((orig.kind, orig.value), []):
                if cand.id == orig.id or not _substitute_ok(found.networks[role].physical[k], cand, limits):
                    continue
                u = dict(used)
                u[orig.id] -= 1
                u[cand.id] = u.get(cand.id, 0) + 1
                if cand.quantity < u[cand.id] * boards:
                    continue
                swapped = {r: list(best[r]) for r in roles}
                swapped[role][k] = cand
                out.append(_with_lines(found, swapped, memo))
    return out


def _variant_id(found) -> tuple:
    """The stock lines a variant takes, per role (as a pick list sees it: which of two parts of
    equal value sits where is not another variant)."""
    return tuple((role, tuple(sorted(p.id for p in n.physical))) for role, n in sorted(found.networks.items()))


def distinct_variants(variants: Sequence) -> list:
    """The variants of one build best first (``variant_key``), each set of stock lines once."""
    seen, unique = set(), []
    for v in sorted(variants, key=variant_key):
        vid = _variant_id(v)
        if vid not in seen:
            seen.add(vid)
            unique.append(v)
    return unique


def fold_builds(found_options: Sequence, stock: Sequence = (), boards: int = 1,
                limits_by_connection: Optional[dict] = None) -> tuple[list, dict]:
    """One option per build (its best variant by ``variant_key``) and, per shown variant's id,
    its other variants in that order. With ``stock``, variants the search did not list (the same
    values from other lines) are added."""
    groups: dict[tuple, list] = {}
    for o in found_options:
        groups.setdefault(build_key(o), []).append(o)
    shown, others = [], {}
    by_value = lines_by_value(stock) if stock else {}
    for variants in groups.values():
        if stock:
            lim = (limits_by_connection or {}).get(variants[0].connection)
            variants = variants + more_variants(variants[0], stock, boards, lim, by_value)
        unique = distinct_variants(variants)
        shown.append(unique[0])
        others[id(unique[0])] = unique[1:]
    return shown, others


def evaluate_and_rank(found_options: Sequence, target, limits_by_connection: dict, accept: float,
                      top: int, distribution: str = "uniform", samples: int = 10_000,
                      seed: int = 0, folded: Sequence = (), stock: Sequence = (),
                      boards: int = 1) -> list:
    """Fold the pool (with ``folded``, variants the search set aside) to one option per build,
    evaluate and rank. The Monte Carlo (the costly part) runs only for the first ``top + 5``
    options by (tier, parts, error), by (tier, score band, error), by (tier, error) and the exact
    best; the ranking is over those. The shown options' other variants get their yield too.
    Every figure is the one ``evaluate`` gives for that option alone (``yield_runs.YieldRuns``)."""
    from selector.core.yield_runs import YieldRuns

    if not found_options:
        return []
    found_options, others = fold_builds(list(found_options) + list(folded), stock, boards,
                                        limits_by_connection)
    simulate = YieldRuns(target, limits_by_connection, accept, distribution, samples, seed)
    first = simulate.firsts(found_options)
    best = min(first, key=lambda o: (abs(o.error), o.nparts))
    k = int(top) + 5
    by_parts = sorted(first, key=lambda o: (o.tier, o.nparts, o.asked_error))
    by_score = sorted(first, key=lambda o: (o.tier, o.bucket, o.asked_error))
    by_error = sorted(first, key=lambda o: (o.tier, o.asked_error, o.nparts))
    chosen: list = []
    for o in by_parts[:k] + by_score[:k] + by_error[:k] + [best]:
        if o not in chosen:
            chosen.append(o)
    if _screen_pays(len(chosen), int(top), int(samples)):
        # screen every contender with a smaller sample, then the full sample only for the head
        # of that order (the ones that can be listed) and the exact best; rank those
        screened = rank(simulate.many([o.found for o in chosen], SCREEN_SAMPLES), len(chosen))
        head = [o.found for o in screened[:int(top) + SCREEN_MARGIN]]
        if not any(f is best.found for f in head):
            head.append(best.found)
        full = simulate.many(head, samples)
    else:
        full = simulate.many([o.found for o in chosen], samples)
    shown = rank(full, top)
    simulate.parts_only(shown)
    n_alt = min(int(samples), ALTERNATIVE_SAMPLES)
    alts = [others.get(id(o.found), [])[:MAX_ALTERNATIVES] for o in shown]
    ys = simulate.yields_of([v for a in alts for v in a], n_alt)
    i = 0
    for o, a in zip(shown, alts):
        o.alternatives = list(zip(a, ys[i:i + len(a)]))
        i += len(a)
        o.alternative_samples = simulate.samples_used(n_alt)
    return shown


def _screen_pays(contenders: int, top: int, samples: int) -> bool:
    """Screen only when it saves builds: the full sample it spares the contenders outside the
    head (``top + SCREEN_MARGIN`` and the exact best) must outweigh the screen's own sample of
    every contender. Otherwise every contender gets the full sample (the listed figures are the
    same either way: each is its option's stand-alone full run)."""
    head = top + SCREEN_MARGIN + 1
    return samples > SCREEN_SAMPLES and (contenders - head) * samples > contenders * SCREEN_SAMPLES


SCREEN_SAMPLES = 2_000
"""Monte Carlo builds per contender when screening which options get the full sample (standard
error at most 1.1 points, at a yield of 50 %)."""
ALTERNATIVE_SAMPLES = SCREEN_SAMPLES
"""Monte Carlo builds behind an alternative's yield (the same build from other drawers: it is
listed beside its option, not ranked), stated in the JSON with its standard error."""
SCREEN_MARGIN = 5
"""Contenders beyond ``top`` (in the screened order) that get the full sample too, so an option
that the smaller sample ranked just below the cut can still take its place."""


def yield_group_ids(yields: Sequence[float]) -> list[int]:
    """For each yield, its group: sorted high to low, a new group starts at the first yield more
    than ``YIELD_EQUAL`` below the group's highest (so equal-for-ranking yields share a group)."""
    order = sorted(range(len(yields)), key=lambda i: -yields[i])
    out = [0] * len(yields)
    group, top_y = 0, None
    for i in order:
        if top_y is None:
            top_y = yields[i]
        elif top_y - yields[i] > YIELD_EQUAL + 1e-12:
            group, top_y = group + 1, yields[i]
        out[i] = group
    return out


def yield_groups(options: Sequence[RankedOption]) -> None:
    """Set ``yield_group`` within each tier: sorted by yield, a new group starts at the first
    option more than ``YIELD_EQUAL`` below the group's highest yield."""
    for tier in {o.tier for o in options}:
        members = [o for o in options if o.tier == tier]
        for o, group in zip(members, yield_group_ids([o.yield_value for o in members])):
            o.yield_group = group


def _why(o: RankedOption, below: Optional[RankedOption], first: bool) -> str:
    """Two or three words: ``closest`` for the marked smallest-error option, otherwise what puts
    ``o`` above the option ranked just below it."""
    if o.is_best_error:
        return "closest"
    if below is None:
        return ("near target", "within acceptance", "next closest")[o.tier]
    if o.tier < below.tier:
        return "near target" if o.tier == 0 else "within acceptance"
    if o.yield_group < below.yield_group:
        return "best yield" if first else "higher yield"
    if o.tier == 2 and o.asked_error < below.asked_error:
        return "closer"  # `closest` is kept for the marked option
    if o.nparts < below.nparts:
        return "fewest parts" if first else "fewer parts"
    return "closer" if o.asked_error < below.asked_error else "equal standing"


def rank(options: Sequence[RankedOption], top: int) -> list:
    """Order by the ranking rule, keep ``top``, make sure the exact best-error option is there
    (marked ``is_best_error``), say why each row sits where it does, and number them 1..n."""
    if not options:
        return []
    best = min(options, key=lambda o: (abs(o.error), o.nparts))
    best.is_best_error = True
    yield_groups(options)
    ordered = sorted(options, key=RankedOption.sort_key)
    shown = ordered[: max(1, int(top))]
    if best not in shown:
        shown[-1] = best
    for i, o in enumerate(shown, start=1):
        o.rank = i
        # compared with the first option below that the rule does not count as equal to it
        below = next((b for b in shown[i:] if b.sort_key()[:3] != o.sort_key()[:3]),
                     shown[i] if i < len(shown) else None)
        o.why = _why(o, below, i == 1)
    return shown
