"""Parts to buy when the stock cannot reach a target within the acceptance (pure core).

For the closest option found, each network in turn is replaced by one new part of a preferred
value (IEC 60063 E12, E24, E96 for resistors; E12, E24 for capacitors, the series capacitors are
commonly sold in) while the other networks stay as they are. For each role and series the value
whose prediction comes closest to the target is the ideal value of that network rounded to the
series (the error is V-shaped in the value, so the best member is a neighbour of the ideal). A
suggestion is kept when it brings every nominal error within the acceptance; best first.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

RESISTOR_SERIES = ("E12", "E24", "E96")
CAPACITOR_SERIES = ("E12", "E24")


@dataclass(frozen=True)
class Suggestion:
    """Buy one part of ``value`` (``series``) for ``role`` instead of its network."""

    role: str
    kind: str  # "resistor" | "capacitor"
    value: float
    series: str
    replaces: float  # the value of the network it replaces
    predicted: dict
    errors: dict
    asked_error: float

    def to_json(self) -> dict:
        return {"role": self.role, "kind": self.kind, "value": self.value, "series": self.series,
                "replaces": self.replaces, "predicted": dict(self.predicted), "errors": dict(self.errors)}


def _members(series: str, around: float) -> np.ndarray:
    from selector.core.eseries import series_values

    return np.array(series_values(series, around / 20.0, around * 20.0), dtype=float)


def suggest_buy(ranked: Sequence, target, limits_by_connection: dict, accept: float,
                limit: int = 3) -> list:
    """Up to ``limit`` single-part purchases that would bring the closest option (smallest
    nominal error in the asker's terms) within ``accept``; empty when none would."""
    from selector.core import circuits

    if not ranked:
        return []
    base = min(ranked, key=lambda o: o.asked_error)
    kind = circuits.get(base.connection)
    lim = limits_by_connection[base.connection]
    nets = base.found.networks
    extra = {u.name: np.asarray(u.nominal, dtype=float) for u in kind.uncertain(lim)}
    out: list[Suggestion] = []
    for role, net in nets.items():
        for series in (RESISTOR_SERIES if net.kind == "resistor" else CAPACITOR_SERIES):
            vals = _members(series, net.value)
            if net.kind == "resistor":
                vals = vals[(vals >= lim.min_r_ohm) & (vals <= lim.max_total_r_ohm)]
            else:
                vals = vals[vals >= lim.min_c_f]
            if vals.size == 0:
                continue
            v = {r: (vals if r == role else np.full(vals.size, n.value)) for r, n in nets.items()}
            outs = [np.asarray(o, dtype=float) for o in kind.model(v, lim, extra)]
            if kind.mode == "astable":
                ok = outs[0] <= lim.max_freq_hz * (1 + 1e-9)
                if not ok.any():
                    continue
            else:
                ok = np.ones(vals.size, dtype=bool)
            best_i, best = -1, (math.inf, None, None)
            for i in np.flatnonzero(ok):
                pred = {name: float(o[i]) for name, o in zip(kind.outputs, outs)}
                errs = kind.errors(pred, target)
                a = kind.asked_error(errs, target)
                if a < best[0]:
                    best_i, best = i, (a, pred, errs)
            if best_i >= 0 and best[0] <= accept * (1 + 1e-12):
                out.append(Suggestion(role, net.kind, float(vals[best_i]), series, net.value,
                                      best[1], best[2], best[0]))
    # one per role and value (E12 members are E24 members too): the smaller series first
    seen, unique = set(), []
    for s in sorted(out, key=lambda s: (s.asked_error > accept / 2, RESISTOR_SERIES.index(s.series),
                                        s.asked_error)):
        k = (s.role, f"{s.value:.6g}")
        if k not in seen:
            seen.add(k)
            unique.append(s)
    return unique[:limit]
