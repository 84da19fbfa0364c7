"""Trimmer suggestions: a fixed network in series with a trimmer from stock in ONE timing
resistance, set on the bench (pure core: numpy + stdlib).

When fixed parts cannot hold a target over their tolerances (an electrolytic's ±20 % alone spreads
a pulse width by as much), the shop answer is a fixed resistor plus a trimmer adjusted on the bench
while the output is measured. This module offers such options after the exact fixed-parts search.

What makes an option valid (the rule the README states):
- Every tolerance corner of the OTHER parts (the capacitor network, the other resistor network of
  an astable), of the circuit's own uncertain terms (``kind.uncertain``: the chip's initial timing
  error and supply drift for a 555, logic thresholds for the Schmitt oscillator) gives a total
  resistance ``R_need`` that puts the main output (frequency, width, τ or corner) exactly on the
  target. It is found from the circuit's OWN model (``kind.model``) by bisection in log R, so it
  follows whatever physics the circuit modules hold. Every model here is monotone in each part and
  in R (``tolerance.corners``), so R_need is monotone in every term and its corners are its extremes.
- The trimmer setting needed is ``s = R_need − F`` where F is the fixed network's actual value
  (anywhere in its band). With the trimmer's actual end-to-end value T' anywhere in its own band,
  the fraction of travel used is s/T'. Valid when, at every corner, at least ``TRAVEL_MARGIN``
  (10 %) of the travel is left at EACH end: s_min/T'_max >= 10 % and 1 − s_max/T'_min >= 10 %
  (decision: room to turn past the target both ways on any build; no standard found).
- The setting for the nominal build lies within ``NOMINAL_BAND`` (20–80 % of travel): near
  mid-travel (decision).
- Astable: the trimmer sets the frequency; the duty follows. Where a duty was asked, the duty at
  the adjusted setting must lie within the acceptance at every corner too.
- Limits with the trimmer at either end: the fixed network alone (trimmer at 0) meets the minimum
  resistance of its role and the discharge-current limit; fixed + trimmer at full travel stays
  within the maximum total timing resistance.
- Power: the trimmer in series with at least F dissipates at most V²/(4·F) (the maximum of
  V²·s/(F+s)² over s, derived), which must stay within the derating fraction of its rating when
  the rating is known (``limits.r_power_derating``, 50 %: common practice); each fixed part must
  take the whole V²/F within its derated rating (conservative).

Ranking of trimmer options: the worst-corner travel left (grouped in steps of ``MARGIN_STEP``, 5
points, so near-equal margins count as equal), then resolution (relative change of the target per
1 % of rotation at the nominal setting: finer first), then fewer parts.

The other networks come from the fixed search's results (its pool), not from every capacitor
network the stock can form: the suggestions are not exhaustive over capacitor networks.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping, Optional, Sequence

import numpy as np

from selector.core.types import TRIMMER_KIND, StockLine

TRIM_RULE = ("Trimmer options (offered when no fixed option reaches a 90 % yield, or with --trim): one "
             "timing resistance is a fixed network of 1-2 parts in series with a trimmer from stock. "
             "Offered only if, at every corner of the other parts, the chip terms, the fixed network "
             "and the trimmer's own end-to-end tolerance, the setting that puts the target on value "
             "leaves at least 10 % of the travel at each end, and the nominal setting lies within "
             "20-80 % of the travel; the trimmer may dissipate at most VCC²/(4·fixed), kept within 50 % "
             "of its rating (common practice). Ranked by the travel left at the worst corner (5-point "
             "steps), then resolution (target change per 1 % of travel, finer first), then fewer parts. "
             "The other networks come from the fixed search's options, not every capacitor network.")
"""The rule above in one paragraph, for ``--explain`` (the README says the same at length)."""
YIELD_THRESHOLD = 0.90
"""Trimmer options are offered unasked when the best fixed option's yield is below this (issue 14)."""
TRAVEL_MARGIN = 0.10
"""Fraction of travel left at each end at every corner (decision)."""
NOMINAL_BAND = (0.20, 0.80)
"""The nominal build's setting lies in this part of the travel (near mid-travel; decision)."""
MARGIN_STEP = 0.05
"""Worst-corner travel margins within the same 5-point step rank as equal."""
MAX_OPTIONS = 3
"""At most this many trimmer options are added after the fixed ones."""
MAX_BASES = 40
"""Fixed options of the search whose other networks (capacitor, other resistor) are tried with a
trimmer: the shown ones, then the pool by |error| (not exhaustive over capacitor networks)."""
MAX_FIXED_PARTS = 2
"""The fixed network in series with a trimmer has 1-2 parts: a third part would chase a value the
trimmer sets anyway (decision; it also keeps the pass cheap)."""
FIXED_PER_TRIMMER = 6
"""Fixed networks tried per (other networks, role, trimmer): the best by margin, then parts."""
_BISECT_STEPS = 100
_R_LO, _R_HI = 1e-3, 1e12


@dataclass(frozen=True)
class TrimOption:
    """One adjustable option: ``networks`` holds every role's fixed network (in ``role`` the fixed
    part of the series string); the trimmer line and its settings in ohms."""

    connection: str
    role: str
    networks: dict
    trimmer: StockLine
    setting: float                      # ohms for the nominal build
    setting_range: tuple[float, float]  # ohms needed over every corner
    margin: float                       # worst-corner fraction of travel left at the nearer end
    resolution: float                   # relative target change per 1 % of travel (nominal)
    predicted: dict                     # outputs of the nominal build at ``setting``
    range: dict                         # outputs over every corner after adjustment
    moves: tuple[str, ...]              # outputs the trimmer moves ("frequency", "duty", ...)

    @property
    def nparts(self) -> int:
        return sum(n.nparts for n in self.networks.values()) + 1

    @property
    def travel(self) -> float:
        """The nominal setting as a fraction of the nominal end-to-end value."""
        return self.setting / self.trimmer.value

    @property
    def total(self) -> float:
        """Nominal total resistance of the trimmed role at the nominal setting."""
        return self.networks[self.role].value + self.setting

    def sort_key(self) -> tuple:
        return (-math.floor(self.margin / MARGIN_STEP + 1e-9), self.resolution, self.nparts, -self.margin)


def trimmer_lines(lines: Sequence[StockLine], boards: int = 1) -> list[StockLine]:
    """Stock lines of kind trimmer with a positive value that hold a part for every board."""
    return [ln for ln in lines if ln.kind == TRIMMER_KIND and ln.quantity >= max(1, boards)
            and ln.value > 0 and 0 <= ln.tol_minus < 1 and ln.tol_plus >= 0]


def wanted(best_yield: Optional[float], asked: bool) -> bool:
    """Whether the trimmer pass runs: asked with --trim, or no fixed option reached the threshold."""
    if asked:
        return True
    return best_yield is None or not (best_yield >= YIELD_THRESHOLD)


def main_target(kind, target) -> tuple[int, float]:
    """(index of the main output in ``kind.outputs``, the target value of that output)."""
    name = kind.main_output(target)
    value = {"frequency_hz": target.frequency if target.mode == "astable" else math.nan,
             "width_s": target.width, "tau_s": target.tau, "corner_hz": target.corner_hz}[name]
    return kind.outputs.index(name), float(value)


def _corner_inputs(kind, nets: Mapping, role: str, limits):
    """Inputs other than the trimmed role: (labels, nominal, lows, highs) of every physical part of
    the other roles, then the circuit's uncertain terms."""
    from selector.core.ranking import ROLE_ORDER
    from selector.core.tolerance import band

    roles = [r for r in ROLE_ORDER if r in nets and r != role]
    unc = tuple(kind.uncertain(limits))
    parts = [p for r in roles for p in nets[r].physical]
    terms = parts + list(unc)
    vals = np.array([p.value for p in parts] + [u.nominal for u in unc], float)
    lo, hi = band(vals, [t.tol_minus for t in terms], [t.tol_plus for t in terms])
    return roles, unc, vals, lo, hi


def _evaluator(kind, nets: Mapping, role: str, roles, unc, limits):
    """fn(r_total, inputs (k, n)) -> outputs tuple: the circuit's own model with the other roles'
    networks combined from their part values and the uncertain terms as ``extra``."""
    sizes = [nets[r].nparts for r in roles]
    n_parts = sum(sizes)

    def fn(r_total, inputs):
        v, i = {}, 0
        for r, k in zip(roles, sizes):
            v[r] = nets[r].combine(inputs[i:i + k])
            i += k
        v[role] = np.asarray(r_total, dtype=float)
        extra = {u.name: inputs[n_parts + j] for j, u in enumerate(unc)}
        return tuple(np.asarray(o, dtype=float) for o in kind.model(v, limits, extra))

    return fn


def solve_r(fn, inputs: np.ndarray, out_index: int, goal: float, guess: Optional[float] = None) -> np.ndarray:
    """Total resistance in the trimmed role that puts output ``out_index`` on ``goal`` for every
    column of ``inputs``; nan where no resistance in [1 mΩ, 1 TΩ] reaches it.

    The model is monotone in R (``tolerance.corners``), so g(x) = ln(output/goal) with x = ln R has
    one root, bracketed first by [guess/8, guess·8] (the base option's own value is close) and
    else by [1 mΩ, 1 TΩ]; the Illinois variant of regula falsi then converges superlinearly (g is
    nearly linear in x: every time is close to proportional to R), until the output is on the goal to a relative 1e-14 (or the bracket is 1e-13 wide)."""
    n = inputs.shape[1]

    def g(x):
        with np.errstate(all="ignore"):
            return np.log(fn(np.exp(x), inputs)[out_index] / goal)

    wide = (math.log(_R_LO), math.log(_R_HI))
    a = np.full(n, wide[0])
    b = np.full(n, wide[1])
    if guess is not None and guess > 0:
        a0 = np.full(n, math.log(guess / 8.0))
        b0 = np.full(n, math.log(guess * 8.0))
        ga0, gb0 = g(a0), g(b0)
        near = np.isfinite(ga0) & np.isfinite(gb0) & (np.sign(ga0) != np.sign(gb0))
        a = np.where(near, a0, a)
        b = np.where(near, b0, b)
    ga, gb = g(a), g(b)
    ok = np.isfinite(ga) & np.isfinite(gb) & (np.sign(ga) != np.sign(gb))
    ga = np.where(ok, ga, -1.0)
    gb = np.where(ok, gb, 1.0)
    side = np.zeros(n)
    best, best_g = np.where(np.abs(ga) <= np.abs(gb), a, b), np.minimum(np.abs(ga), np.abs(gb))
    for _ in range(_BISECT_STEPS):
        with np.errstate(all="ignore"):
            x = (a * gb - b * ga) / (gb - ga)
        x = np.where(np.isfinite(x) & (x > np.minimum(a, b)) & (x < np.maximum(a, b)), x, 0.5 * (a + b))
        gx = g(x)
        gx = np.where(np.isfinite(gx), gx, 0.0)
        same_a = np.sign(gx) == np.sign(ga)
        # Illinois: halve the stale end's value when the same end is kept twice in a row
        b_new = np.where(same_a, b, x)
        a_new = np.where(same_a, x, a)
        gb = np.where(same_a, np.where(side == 1, gb * 0.5, gb), gx)
        ga = np.where(same_a, gx, np.where(side == -1, ga * 0.5, ga))
        side = np.where(same_a, 1, -1)
        a, b = a_new, b_new
        best = np.where(np.abs(gx) < np.abs(best_g), x, best)
        best_g = np.where(np.abs(gx) < np.abs(best_g), gx, best_g)
        if np.all(~ok | (np.abs(b - a) < 1e-13) | (np.abs(best_g) <= 1e-14)):
            break
    return np.where(ok, np.exp(best), np.nan)


def corner_grid(nominal: np.ndarray, lows: np.ndarray, highs: np.ndarray) -> np.ndarray:
    """(k, 2^k + 1) inputs: the nominal build first, then every corner of the box."""
    k = len(nominal)
    if k == 0:
        return np.zeros((0, 1))
    idx = np.indices([2] * k).reshape(k, -1).astype(bool)
    grid = np.where(idx, highs[:, None], lows[:, None])
    return np.concatenate([nominal[:, None], grid], axis=1)


@dataclass(frozen=True)
class Need:
    """The total resistance one role needs for the target: nominal build and over every corner,
    and the outputs after adjustment at the corners (for the duty of an astable)."""

    nominal: float
    low: float
    high: float
    outputs_lo: tuple
    outputs_hi: tuple
    outputs_nom: tuple


def needed(kind, nets: Mapping, role: str, target, limits) -> Optional[Need]:
    """The resistance ``role`` needs to put the main output on target, nominal and over every
    corner of the other parts and the circuit's uncertain terms (None when unreachable)."""
    out_i, goal = main_target(kind, target)
    roles, unc, nom, lo, hi = _corner_inputs(kind, nets, role, limits)
    fn = _evaluator(kind, nets, role, roles, unc, limits)
    grid = corner_grid(nom, lo, hi)
    r = solve_r(fn, grid, out_i, goal, nets[role].value if role in nets else None)
    if not np.all(np.isfinite(r)) or not np.all(r > 0):
        return None
    with np.errstate(all="ignore"):
        outs = fn(r, grid)
    if not all(np.all(np.isfinite(o)) for o in outs):
        return None
    return Need(float(r[0]), float(np.min(r[1:])) if r.size > 1 else float(r[0]),
                float(np.max(r[1:])) if r.size > 1 else float(r[0]),
                tuple(float(np.min(o[1:] if o.size > 1 else o)) for o in outs),
                tuple(float(np.max(o[1:] if o.size > 1 else o)) for o in outs),
                tuple(float(o[0]) for o in outs))


def travel_margin(need_low: float, need_high: float, fixed_lo, fixed_hi, t_lo: float, t_hi: float):
    """Worst fraction of travel left at the nearer end over every corner: the smaller of
    s_min/T'_max (low end) and 1 − s_max/T'_min (high end), s = R_need − F."""
    s_min = need_low - np.asarray(fixed_hi, dtype=float)
    s_max = need_high - np.asarray(fixed_lo, dtype=float)
    return np.minimum(s_min / t_hi, 1.0 - s_max / t_lo)


def _role_limits_ok(kind, role: str, fixed_lo: float, fixed_hi: float, trim_hi: float,
                    nets: Mapping, limits) -> bool:
    """The chip's limits with the trimmer at either end of its travel."""
    r_roles = kind.resistor_roles
    others_hi = sum(nets[r].vmax for r in r_roles if r != role and r in nets)
    if fixed_hi + trim_hi + others_hi > limits.max_total_r_ohm:
        return False
    if role == r_roles[0] and fixed_lo < limits.min_r_ohm:  # RA / R: the minimum resistance
        return False
    if role == "RA" and fixed_hi + trim_hi > limits.max_ra_ohm:
        return False
    if math.isfinite(limits.dis_sink_a) and "RA" in r_roles and "RB" in r_roles:
        ra = fixed_lo if role == "RA" else nets["RA"].vmin
        rb = fixed_lo if role == "RB" else nets["RB"].vmin
        if (2.0 * limits.vcc / 3.0) / rb + limits.vcc / ra > limits.dis_sink_a:
            return False
    return True


def _power_ok(fixed, trimmer: StockLine, limits) -> bool:
    volts = limits.r_power_volts
    if volts <= 0:
        return True
    f_lo = fixed.vmin
    der = limits.r_power_derating
    if trimmer.rating is not None and volts * volts / (4.0 * f_lo) > der * trimmer.rating:
        return False
    return all(p.rating is None or volts * volts / f_lo <= der * p.rating for p in fixed.physical)


def _usage_ok(nets: Mapping, fixed, trimmer: StockLine, boards: int) -> bool:
    use: dict[int, int] = {}
    qty: dict[int, int] = {trimmer.id: trimmer.quantity}
    for net in list(nets.values()) + [fixed]:
        for ln, cnt in net.parts:
            use[ln.id] = use.get(ln.id, 0) + cnt
            qty[ln.id] = ln.quantity
    use[trimmer.id] = use.get(trimmer.id, 0) + 1
    return all(use[i] * boards <= qty[i] for i in use)


def _moves(kind) -> tuple[str, ...]:
    if kind.mode == "astable":
        return ("frequency",) if kind.duty_fixed else ("frequency", "duty")
    return {"monostable": ("width",), "rc": ("tau", "corner")}.get(kind.mode, ())


def suggest(bases: Sequence, target, limits_by_connection: Mapping, trimmers: Sequence[StockLine],
            r_index, accept: float, boards: int = 1, top: int = MAX_OPTIONS) -> list[TrimOption]:
    """Up to ``top`` trimmer options, best first (see the module docstring).

    ``bases`` are fixed options of the search (``connection`` and ``networks``): their other
    networks are kept and each resistor role in turn gets a fixed network from ``r_index`` (the
    search's resistor networks) in series with one of ``trimmers``."""
    from selector.core import circuits

    if not trimmers or r_index is None or r_index.empty:
        return []
    out: list[TrimOption] = []
    seen_bases: set = set()
    for base in bases:
        kind = circuits.get(base.connection)
        limits = limits_by_connection[base.connection]
        main = main_target(kind, target)
        for role in kind.resistor_roles:
            key = (base.connection, role) + tuple(
                (r, n.shape, tuple(sorted(p.id for p in n.physical)))
                for r, n in sorted(base.networks.items()) if r != role)
            if key in seen_bases:
                continue
            seen_bases.add(key)
            others = {r: n for r, n in base.networks.items() if r != role}
            need = needed(kind, base.networks, role, target, limits)
            if need is None:
                continue
            if target.mode == "astable" and target.duty_given and "duty" in kind.outputs:
                d = kind.outputs.index("duty")
                if (abs(need.outputs_lo[d] / target.duty - 1) > accept
                        or abs(need.outputs_hi[d] / target.duty - 1) > accept):
                    continue
            for tr in trimmers:
                out += _with_trimmer(kind, role, others, base.networks, need, tr, main, limits,
                                     r_index, boards)
    out.sort(key=TrimOption.sort_key)
    picked, builds = [], set()
    for o in out:
        # one option per trimmer and other networks: the best fixed network for them (a second
        # fixed value beside the same trimmer would be the same bench job)
        # (by values, as the fixed rows: the same build from another drawer is not another option)
        b = (o.connection, o.role, o.trimmer.value, o.trimmer.tol_minus, o.trimmer.tol_plus) + tuple(
            (r, n.shape, tuple(sorted(f"{p.value:.9g}" for p in n.physical)))
            for r, n in sorted(o.networks.items()) if r != o.role)
        if b in builds:
            continue
        builds.add(b)
        picked.append(o)
        if len(picked) >= top:
            break
    return picked


def _with_trimmer(kind, role, others, base_nets, need: Need, tr: StockLine, main: tuple, limits,
                  r_index, boards) -> list[TrimOption]:
    """The options with trimmer ``tr`` in ``role``; ``main`` is ``main_target(kind, target)``."""
    t_nom = tr.value
    t_lo, t_hi = t_nom * (1 - tr.tol_minus), t_nom * (1 + tr.tol_plus)
    lo_band, hi_band = NOMINAL_BAND
    # the nominal setting within 20-80 % of travel, and (as F_min <= F <= F_max) the margin at
    # the corners: a superset window of nominal F, filtered exactly below
    f_lo = max(need.nominal - hi_band * t_nom, need.high - (1 - TRAVEL_MARGIN) * t_lo)
    f_hi = min(need.nominal - lo_band * t_nom, need.low - TRAVEL_MARGIN * t_hi)
    if f_hi <= 0 or f_hi < f_lo:
        return []
    offsets, ids = r_index.between(np.array([max(f_lo, 1e-12)]), np.array([f_hi]))
    if ids.size == 0:
        return []
    vmin, vmax = r_index.bounds(ids)
    margin = travel_margin(need.low, need.high, vmin, vmax, t_lo, t_hi)
    keep = margin >= TRAVEL_MARGIN - 1e-12
    if not np.any(keep):
        return []
    ids, margin = ids[keep], margin[keep]
    nparts = r_index.nparts(ids)
    order = np.lexsort((nparts, -np.floor(margin / MARGIN_STEP + 1e-9)))
    found = []
    out_i, goal = main
    for i in order:
        if len(found) >= FIXED_PER_TRIMMER:
            break
        fixed = r_index.network(int(ids[i]))
        if not _role_limits_ok(kind, role, fixed.vmin, fixed.vmax, t_hi, others, limits):
            continue
        if not _power_ok(fixed, tr, limits) or not _usage_ok(others, fixed, tr, boards):
            continue
        setting = need.nominal - fixed.value
        nets = dict(base_nets)
        nets[role] = fixed
        found.append(_option(kind, role, nets, fixed, tr, setting, need, float(margin[i]),
                             limits, out_i, goal))
    return found


def _option(kind, role, nets, fixed, tr, setting, need: Need, margin, limits,
            out_i, goal) -> TrimOption:
    nominal_v = {r: np.array([n.value]) for r, n in nets.items()}
    nominal_v[role] = np.array([fixed.value + setting])
    pred = [float(np.asarray(o).ravel()[0]) for o in kind.model(nominal_v, limits, {})]
    turned = dict(nominal_v)
    turned[role] = np.array([fixed.value + setting + 0.01 * tr.value])
    after = float(np.asarray(kind.model(turned, limits, {})[out_i]).ravel()[0])
    resolution = abs(after / pred[out_i] - 1.0)
    names = kind.outputs
    rng = {name: [need.outputs_lo[j], need.outputs_hi[j]] for j, name in enumerate(names)}
    rng[names[out_i]] = [goal, goal]          # adjusted onto the target at every corner
    s_lo = need.low - fixed.vmax
    s_hi = need.high - fixed.vmin
    return TrimOption(kind.key, role, nets, tr, float(setting), (float(s_lo), float(s_hi)),
                      float(margin), float(resolution), dict(zip(names, pred)), rng, _moves(kind))


__all__ = ["TRIM_RULE", "TrimOption", "suggest", "needed", "solve_r", "travel_margin", "trimmer_lines", "wanted",
           "YIELD_THRESHOLD", "TRAVEL_MARGIN", "NOMINAL_BAND", "MARGIN_STEP", "MAX_OPTIONS",
           "TRIMMER_KIND", "corner_grid", "main_target", "MAX_FIXED_PARTS", "MAX_BASES"]
