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

Ranking rule (what a technician should pick first):
    yield band = floor(20 · yield): builds in spec, in 5-point bands - the share of builds that
             meet the target is what the bench cares about, and it already weighs the error
             against the tolerance spread;
    score  = max(|error|, spread / 4), where spread is the full relative width of the worst-case
             range of the main quantity (frequency, width, τ or corner), (max − min)/nominal;
             an error far below the option's own tolerance spread is worth nothing;
    bucket = floor(log(score) / log(1.25)) (bands 25 % wide; scores below 1e-6 share one band);
    order  = higher yield band, then bucket, then fewer physical parts, then smaller |error|,
             then higher yield.
So among builds equally likely to meet the target and equally close within their spread, the
one with fewer parts comes first (when every yield is low, the score decides).
The option with the exact smallest error is always among those returned: if the rule would push
it below the cut, it takes the last place shown (its true error is in every option's JSON).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

SCORE_FLOOR = 1e-6
BAND = 1.25  # width of a ranking band: scores within 25 % of each other count as equal


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
    yield_parts_only: float = math.nan   # the same Monte Carlo with the chip, supply and diode terms at nominal

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

    def sort_key(self) -> tuple:
        y = 0.0 if math.isnan(self.yield_fraction) else self.yield_fraction
        return (-math.floor(20 * y + 1e-9), self.bucket, self.nparts, abs(self.error), -y)


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
    # inputs counted in the parts-only yield first (the circuit's own, e.g. thresholds), then the
    # chip, supply and diode terms, so the parts-only draws are exactly the draws of the first columns
    uncertain = kind.uncertain(limits)
    uncertain = tuple(u for u in uncertain if u.in_parts_only) + tuple(u for u in uncertain if not u.in_parts_only)
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
    fn.n_parts_only = n_parts + sum(1 for u in uncertain if u.in_parts_only)
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
        k = fn.n_parts_only
        # parts (and a circuit's own thresholds) drawn first, exactly as a parts-only run draws
        # them; the chip, supply and diode terms after them from the same generator
        draws = tolerance.draw_parts(nominal[:k], tm[:k], tp[:k], n, rng, distribution)
        if k < len(nominal):
            rest = tolerance.draw_parts(nominal[k:], tm[k:], tp[k:], n, rng, distribution)
            parts_outs = [np.asarray(o, dtype=float) for o in
                          fn(*draws, *[np.full(n, v) for v in nominal[k:]])]
            draws = np.concatenate([draws, rest])
        outs = [np.asarray(o, dtype=float) for o in fn(*draws)]
        if k == len(nominal):
            parts_outs = outs
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
    y_parts = float(np.mean(kind.in_spec(parts_outs, target, accept))) if monte_carlo else math.nan
    lo, hi = rng_out[main]
    spread = (hi - lo) / predicted[main] if predicted[main] > 0 else math.inf
    score = max(abs(found.error), spread / 4.0)
    return RankedOption(found, predicted, rng_out, y, spread, score, cautions(found, target, limits),
                        yield_parts_only=y_parts)


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
    ``top + 5`` options by (bucket, parts, |error|), the first ``top + 5`` by (bucket, |error|)
    and the exact best; the ranking is over those."""
    if not found_options:
        return []
    first = [evaluate(o, target, limits_by_connection[o.connection], accept, distribution, samples,
                      seed, monte_carlo=False) for o in found_options]
    best = min(first, key=lambda o: (abs(o.error), o.nparts))
    by_parts = sorted(first, key=lambda o: (o.bucket, o.nparts, abs(o.error)))
    by_score = sorted(first, key=lambda o: (o.bucket, abs(o.error)))
    chosen: list = []
    for o in by_parts[: int(top) + 5] + by_score[: int(top) + 5] + [best]:
        if o not in chosen:
            chosen.append(o)
    full = [evaluate(o.found, target, limits_by_connection[o.connection], accept, distribution,
                     samples, seed) for o in chosen]
    return rank(full, top)


def rank(options: Sequence[RankedOption], top: int) -> list:
    """Order by the ranking rule, keep ``top``, make sure the exact best-error option is there,
    and number them 1..n."""
    if not options:
        return []
    best = min(options, key=lambda o: (abs(o.error), o.nparts))
    best.is_best_error = True
    ordered = sorted(options, key=RankedOption.sort_key)
    shown = ordered[: max(1, int(top))]
    if best not in shown:
        shown[-1] = best
    for i, o in enumerate(shown, start=1):
        o.rank = i
    return shown
