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
  Part tolerances only: the chip's own initial error (e.g. 2.25 % typ astable, bipolar [S1]) is
  not included, and the footer says so.

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

import math
from dataclasses import dataclass, field
from typing import Optional, Sequence

import numpy as np

SCORE_FLOOR = 1e-6
BAND = 1.25  # score bands, used only to pick which options get the Monte Carlo (first cut)
YIELD_EQUAL = 0.02
"""Yields within 2 points of each other are equal for ranking (issue 11)."""


@dataclass
class RankedOption:
    """An option with its predictions, spread, yield and ranking keys."""

    found: object  # selector.core.search.FoundOption
    predicted: dict
    range: dict
    yield_fraction: float
    spread: float
    score: float
    cautions: list = field(default_factory=list)
    rank: int = 0
    is_best_error: bool = False
    errors: dict = field(default_factory=dict)  # the nominal errors in the asker's terms
    asked_error: float = math.nan  # those errors as one figure comparable with --accept
    tier: int = 2  # 0 within half the acceptance, 1 within it, 2 outside
    why: str = ""
    yield_group: int = 0

    @property
    def connection(self) -> str:
        return self.found.connection

    @property
    def error(self) -> float:
        return self.found.error

    @property
    def nparts(self) -> int:
        return self.found.nparts

    @property
    def bucket(self) -> int:
        return math.floor(math.log(max(self.score, SCORE_FLOOR)) / math.log(BAND))

    @property
    def yield_value(self) -> float:
        return 0.0 if math.isnan(self.yield_fraction) else self.yield_fraction

    def sort_key(self) -> tuple:
        """Order within the list once ``yield_group`` is set (see the module docstring)."""
        if self.tier < 2:
            return (self.tier, self.yield_group, self.nparts, self.asked_error, abs(self.error))
        return (self.tier, self.yield_group, self.asked_error, self.nparts, abs(self.error))


def tier_of(asked_error: float, accept: float) -> int:
    """0 within half the acceptance, 1 within it, 2 outside (a relative 1e-12 of slack)."""
    if asked_error <= accept / 2.0 * (1 + 1e-12):
        return 0
    return 1 if asked_error <= accept * (1 + 1e-12) else 2


ROLE_ORDER = ("RA", "RB", "R", "C")
"""Order of the networks of an option wherever they are listed (tables, JSON, BOM, model inputs)."""


def _order(found) -> list:
    return [r for r in ROLE_ORDER if r in found.networks]


def _model(found, target, limits):
    """fn(*inputs) -> tuple of outputs, the output names, and the inputs: every physical part
    (role order RA, RB, R, C) followed by the circuit's own uncertain inputs (e.g. thresholds),
    each with a value and a tolerance band."""
    from selector.core import circuits

    kind = circuits.get(found.connection)
    roles = _order(found)
    nets = [found.networks[r] for r in roles]
    sizes = [n.nparts for n in nets]
    uncertain = kind.uncertain(limits)
    n_parts = sum(sizes)

    def fn(*args):
        v, i = {}, 0
        for role, net, k in zip(roles, nets, sizes):
            v[role] = net.combine(np.stack([np.asarray(a, dtype=float) for a in args[i:i + k]]))
            i += k
        extra = {u.name: np.asarray(a, dtype=float) for u, a in zip(uncertain, args[n_parts:])}
        return kind.model(v, limits, extra)

    inputs = [(p.value, p.tol_minus, p.tol_plus) for n in nets for p in n.physical]
    inputs += [(u.nominal, u.tol_minus, u.tol_plus) for u in uncertain]
    return fn, kind.outputs, inputs, kind


def evaluate(found, target, limits, accept: float, distribution: str = "uniform", samples: int = 10_000,
             seed: int = 0, monte_carlo: bool = True) -> RankedOption:
    """Predictions, worst-case range, Monte Carlo yield and cautions of one option
    (``monte_carlo=False``: corners only, yield nan - for a first cut of a large pool)."""
    from selector.core import tolerance

    fn, names, inputs, kind = _model(found, target, limits)
    nominal = np.array([x[0] for x in inputs], dtype=float)
    tm = np.array([x[1] for x in inputs], dtype=float)
    tp = np.array([x[2] for x in inputs], dtype=float)
    nom = [float(np.asarray(x).ravel()[0]) for x in fn(*[np.array([v]) for v in nominal])]
    lows, highs = tolerance.band(nominal, tm, tp)
    cmin, cmax = tolerance.corners(fn, list(lows), list(highs))
    if monte_carlo:
        rng = tolerance.rng_for(seed)
        n = max(int(samples), tolerance.MIN_SAMPLES)
        draws = tolerance.draw_parts(nominal, tm, tp, n, rng, distribution)
        outs = [np.asarray(o, dtype=float) for o in fn(*draws)]
    else:
        outs = [np.array([np.nan]) for _ in names]
    predicted, rng_out = {}, {}
    for j, name in enumerate(names):
        lo, hi = float(np.min(cmin[j])), float(np.max(cmax[j]))
        if monte_carlo:
            lo, hi = min(lo, float(np.nanmin(outs[j]))), max(hi, float(np.nanmax(outs[j])))
        predicted[name] = nom[j]
        rng_out[name] = [lo, hi]
    ok = kind.in_spec(outs, target, accept)
    main = kind.main_output(target)
    y = float(np.mean(ok)) if monte_carlo else math.nan
    lo, hi = rng_out[main]
    spread = (hi - lo) / predicted[main] if predicted[main] > 0 else math.inf
    score = max(abs(found.error), spread / 4.0)
    errs = kind.errors(predicted, target)
    asked = kind.asked_error(errs, target)
    return RankedOption(found, predicted, rng_out, y, spread, score, cautions(found, target, limits),
                        errors=errs, asked_error=asked, tier=tier_of(asked, accept))


def cautions(found, target, limits) -> list:
    """Per-option cautions (keys of ``chips.CAUTIONS`` or plain sentences)."""
    from selector.core import chips, circuits, parts

    out = []
    c = found.networks["C"]
    kind = circuits.get(found.connection)
    charging = kind.charging_roles
    r_charge = sum(found.networks[k].value for k in charging if k in found.networks)
    long_time = (target.mode == "monostable" and target.width >= 1.0) or (
        target.mode == "astable" and target.t_high + target.t_low >= 1.0)
    for ln in c.physical:
        try:
            diel = parts.normalize_dielectric(ln.dielectric or "")
        except Exception:  # a hand-written dielectric the table does not know: keep it as is
            diel = ln.dielectric or ""
        if ln.polarized or diel in ("electrolytic", "tantalum"):
            v_rated = ln.rating if ln.rating is not None else limits.vcc
            if target.mode != "rc" and (long_time or not bool(chips.leakage_ok(r_charge, c.value, limits.vcc, v_rated))):
                if "electrolytic_leakage" not in out:
                    out.append("electrolytic_leakage")
        if parts.is_class2_ceramic(diel) and "class2" not in out:
            out.append("class2")
        if ln.rating is None and limits.cap_volts > 0 and "cap_rating_unknown" not in out:
            out.append("cap_rating_unknown")
    out += [k for k in kind.cautions if k not in out]
    return out


def evaluate_and_rank(found_options: Sequence, target, limits_by_connection: dict, accept: float,
                      top: int, distribution: str = "uniform", samples: int = 10_000,
                      seed: int = 0) -> list:
    """Evaluate a pool and rank it. The Monte Carlo (the costly part) runs only for the first
    ``top + 5`` options by (tier, parts, error), by (tier, score band, error), by (tier, error)
    and the exact best; the ranking is over those."""
    if not found_options:
        return []
    first = [evaluate(o, target, limits_by_connection[o.connection], accept, distribution, samples,
                      seed, monte_carlo=False) for o in found_options]
    best = min(first, key=lambda o: (abs(o.error), o.nparts))
    k = int(top) + 5
    by_parts = sorted(first, key=lambda o: (o.tier, o.nparts, o.asked_error))
    by_score = sorted(first, key=lambda o: (o.tier, o.bucket, o.asked_error))
    by_error = sorted(first, key=lambda o: (o.tier, o.asked_error, o.nparts))
    chosen: list = []
    for o in by_parts[:k] + by_score[:k] + by_error[:k] + [best]:
        if o not in chosen:
            chosen.append(o)
    full = [evaluate(o.found, target, limits_by_connection[o.connection], accept, distribution,
                     samples, seed) for o in chosen]
    return rank(full, top)


def yield_groups(options: Sequence[RankedOption]) -> None:
    """Set ``yield_group`` within each tier: sorted by yield, a new group starts at the first
    option more than ``YIELD_EQUAL`` below the group's highest yield."""
    for tier in {o.tier for o in options}:
        members = sorted((o for o in options if o.tier == tier), key=lambda o: -o.yield_value)
        group, top_y = 0, None
        for o in members:
            if top_y is None:
                top_y = o.yield_value
            elif top_y - o.yield_value > YIELD_EQUAL + 1e-12:
                group, top_y = group + 1, o.yield_value
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
        below = next((b for b in shown[i:] if b.sort_key()[:3] != o.sort_key()[:3]), None)
        o.why = _why(o, below, i == 1)
    return shown
