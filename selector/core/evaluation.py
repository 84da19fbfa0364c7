"""One timing option evaluated alone (pure core): its predictions from the nominal parts, the
worst-case range of each predicted quantity over the physical parts' tolerance bands, its seeded
Monte Carlo yield (with and without the circuit's uncertain terms), its cautions, and the record
that carries all of it (``RankedOption``). ``ranking`` orders such records; ``yield_runs`` makes
the same figures for many options at once. The rules themselves are in ``ranking``'s docstring."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

SCORE_FLOOR = 1e-6
BAND = 1.25  # score bands, used only to pick which options get the Monte Carlo (first cut)


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
    alternatives: list = field(default_factory=list)  # (FoundOption, yield) of the same build
    yield_parts_only: float = math.nan   # the same Monte Carlo with the chip, supply and diode terms at nominal
    yield_samples: int = 0   # Monte Carlo builds behind ``yield_fraction`` (0: not simulated)
    alternative_samples: int = 0   # Monte Carlo builds behind each alternative's yield

    @property
    def yield_standard_error(self) -> float:
        """Binomial standard error of ``yield_fraction``: sqrt(y(1 - y)/n) (nan when not simulated)."""
        return binomial_se(self.yield_fraction, self.yield_samples)

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


def binomial_se(y: float, n: int) -> float:
    """Standard error of a yield ``y`` measured on ``n`` independent builds: sqrt(y(1 - y)/n)
    (nan when not simulated)."""
    if not n or math.isnan(y):
        return math.nan
    return math.sqrt(y * (1.0 - y) / n)


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
    # inputs counted in the parts-only yield first (the circuit's own, e.g. thresholds), then the
    # chip, supply and diode terms, so the parts-only draws are exactly the draws of the first columns
    uncertain = kind.uncertain(limits)
    uncertain = tuple(u for u in uncertain if u.in_parts_only) + tuple(u for u in uncertain if not u.in_parts_only)
    n_parts = sum(sizes)

    def split(*args):
        """The model's (role values, uncertain terms) from one array per input."""
        v, i = {}, 0
        for role, net, k in zip(roles, nets, sizes):
            v[role] = net.combine(np.stack([np.asarray(a, dtype=float) for a in args[i:i + k]]))
            i += k
        extra = {u.name: np.asarray(a, dtype=float) for u, a in zip(uncertain, args[n_parts:])}
        return v, extra

    def split_array(x):
        """``split`` of one (inputs, n) array, its rows in input order (no copies)."""
        v, i = {}, 0
        for role, net, k in zip(roles, nets, sizes):
            v[role] = net.combine(x[i:i + k])
            i += k
        extra = {u.name: x[n_parts + j] for j, u in enumerate(uncertain)}
        return v, extra

    def fn(*args):
        v, extra = split(*args)
        return kind.model(v, limits, extra)

    inputs = [(p.value, p.tol_minus, p.tol_plus) for n in nets for p in n.physical]
    inputs += [(u.nominal, u.tol_minus, u.tol_plus) for u in uncertain]
    fn.n_parts_only = n_parts + sum(1 for u in uncertain if u.in_parts_only)
    fn.split = split
    fn.split_array = split_array
    return fn, kind.outputs, inputs, kind


def _columns(inputs) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(nominal, tol_minus, tol_plus) arrays of ``_model``'s inputs, in input order."""
    return tuple(np.array([x[j] for x in inputs], dtype=float) for j in range(3))


class _Base:
    """What an option's evaluation needs besides the Monte Carlo: its model (``_model``), the
    inputs' nominal values and bands, the nominal outputs and the corners of every output."""

    def __init__(self, found, target, limits, figures: bool = True):
        """``figures=False``: the model and inputs only; the caller sets ``nom``, ``cmin`` and
        ``cmax`` (``_Simulations.bases_of`` does, for many options in one model call)."""
        from selector.core import tolerance

        self.fn, self.names, inputs, self.kind = _model(found, target, limits)
        self.nominal, self.tm, self.tp = _columns(inputs)
        if figures:
            self.nom = [float(np.asarray(x).ravel()[0]) for x in self.fn(*[np.array([v]) for v in self.nominal])]
            lows, highs = tolerance.band(self.nominal, self.tm, self.tp)
            self.cmin, self.cmax = tolerance.corners(self.fn, list(lows), list(highs))

    def corner_points(self) -> list:
        """One array per input over the 2^k corners of the band box, in ``tolerance.corners``' order."""
        from selector.core import tolerance

        lows, highs = tolerance.band(self.nominal, self.tm, self.tp)
        k = len(lows)
        idx = np.indices((2,) * k).reshape(k, -1)
        return [np.stack([lo, hi])[idx[j]] for j, (lo, hi) in enumerate(zip(lows, highs))]


def _ranked(found, target, limits, accept, base: _Base, y: float, y_parts: float, n: int,
            mc_extremes=None) -> RankedOption:
    """The ``RankedOption`` of ``found`` from its ``_Base`` and Monte Carlo figures (``n`` = 0: none;
    ``mc_extremes``: per output (nanmin, nanmax) of the samples, widening the corners' range)."""
    kind, names = base.kind, base.names
    predicted, rng_out = {}, {}
    for j, name in enumerate(names):
        lo, hi = float(np.min(base.cmin[j])), float(np.max(base.cmax[j]))
        if mc_extremes is not None:
            lo, hi = min(lo, mc_extremes[j][0]), max(hi, mc_extremes[j][1])
        predicted[name] = base.nom[j]
        rng_out[name] = [lo, hi]
    main = kind.main_output(target)
    lo, hi = rng_out[main]
    spread = (hi - lo) / predicted[main] if predicted[main] > 0 else math.inf
    score = max(abs(found.error), spread / 4.0)
    errs = kind.errors(predicted, target)
    asked = kind.asked_error(errs, target)
    return RankedOption(found, predicted, rng_out, y, spread, score, cautions(found, target, limits),
                        errors=errs, asked_error=asked, tier=tier_of(asked, accept),
                        yield_parts_only=y_parts, yield_samples=n)


def _extremes(outs) -> list:
    """(nanmin, nanmax) of each output's samples, as floats."""
    return [(float(np.nanmin(o)), float(np.nanmax(o))) for o in outs]


def evaluate(found, target, limits, accept: float, distribution: str = "uniform", samples: int = 10_000,
             seed: int = 0, monte_carlo: bool = True, screen: bool = False) -> RankedOption:
    """Predictions, worst-case range, Monte Carlo yield and cautions of one option
    (``monte_carlo=False``: corners only, yield nan - for a first cut of a large pool;
    ``screen=True``: exactly ``samples`` builds, even below ``MIN_SAMPLES``, to screen contenders).
    The reference for ``evaluate_and_rank``, which gets the same figures for many options at once."""
    from selector.core import tolerance

    base = _Base(found, target, limits)
    if not monte_carlo:
        return _ranked(found, target, limits, accept, base, math.nan, math.nan, 0)
    n = int(samples) if screen else max(int(samples), tolerance.MIN_SAMPLES)
    outs, parts_outs = _monte_carlo(base.fn, base.nominal, base.tm, base.tp, n, seed, distribution)
    y = float(np.mean(base.kind.in_spec(outs, target, accept)))
    y_parts = float(np.mean(base.kind.in_spec(parts_outs, target, accept)))
    return _ranked(found, target, limits, accept, base, y, y_parts, n, _extremes(outs))


def _monte_carlo(fn, nominal, tm, tp, n: int, seed: int, distribution: str):
    """(outputs with every term drawn, outputs with the parts alone or None) over ``n`` seeded
    builds. Parts (and a circuit's own thresholds) are drawn first, exactly as a parts-only run
    draws them; the chip, supply and diode terms after them from the same generator."""
    from selector.core import tolerance

    rng = tolerance.rng_for(seed)
    k = fn.n_parts_only
    draws = tolerance.draw_parts(nominal[:k], tm[:k], tp[:k], n, rng, distribution)
    parts_outs = None
    if k < len(nominal):
        rest = tolerance.draw_parts(nominal[k:], tm[k:], tp[k:], n, rng, distribution)
        parts_outs = [np.asarray(o, dtype=float) for o in fn(*draws, *[np.full(n, v) for v in nominal[k:]])]
        draws = np.concatenate([draws, rest])
    outs = [np.asarray(o, dtype=float) for o in fn(*draws)]
    if k == len(nominal):
        parts_outs = outs
    return outs, parts_outs


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
