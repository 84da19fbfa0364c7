"""Use case ``find value``: the networks of the stock nearest to one value (a missing part).

``plan_value`` is pure (stock lines in, report out); ``find_value`` reads the stock in one
transaction, plans, and saves the search (mode "value") in another, so ``selector bom N`` can
list the parts of option N."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Optional, Sequence

from selector.core.errors import NothingFeasible
from selector.core.types import NETWORK_KINDS, StockLine
from selector.core.cautions import CAUTIONS as CAUTION_TEXTS

FAR_LIMIT = 0.10  # "cannot get within 10 %" (issue 3 §5)

CAPACITOR_CAUTION = CAUTION_TEXTS["find_value_capacitor"]


@dataclass(frozen=True)
class ValueRequest:
    """What ``find value`` was asked (already parsed: SI target, known kind)."""

    target: float
    kind: str
    max_parts: int = 2
    top: int = 10
    boards: int = 1
    allow_polarized_series: bool = False
    accept: float = 0.05  # a build counts when its value is within this of the target
    max_tolerance: Optional[float] = None  # --tolerance: parts of at most this tolerance
    dielectrics: tuple = ()  # --dielectric: capacitor dielectrics allowed (canonical names)
    min_rating: Optional[float] = None  # --min-rating: W (resistor) or V (capacitor), every part
    locations: tuple = ()  # --location: drawers allowed (case ignored)
    samples: int = 10_000
    seed: int = 0
    all_networks: bool = False  # True: also networks with a token part (--all-networks)

    def check(self) -> None:
        from selector.core.errors import OutOfRange

        if self.kind not in NETWORK_KINDS:
            raise ValueError(f"unknown kind {self.kind!r}")
        if not (self.target > 0 and self.target < float("inf")):
            raise ValueError("target must be a positive value")
        if self.max_parts not in (1, 2, 3) or self.top < 1 or self.boards < 1:
            raise ValueError("max_parts must be 1-3, top and boards at least 1")
        if not (0.0 < self.accept < 1.0):
            raise OutOfRange(f"--accept must be between 0 and 100 % (exclusive), not {self.accept!r}")
        if self.max_tolerance is not None and not (0.0 < self.max_tolerance < 1.0):
            raise OutOfRange(f"--tolerance must be between 0 and 100 % (exclusive), not {self.max_tolerance!r}")
        if self.dielectrics and self.kind != "capacitor":
            raise OutOfRange("--dielectric applies to capacitors only")
        if self.min_rating is not None and not self.min_rating > 0:
            raise OutOfRange(f"--min-rating must be above zero, not {self.min_rating!r}")

    def filters_text(self) -> str:
        """The filters given, as the options were written (for messages)."""
        from selector.core.notation import VOLT, WATT, format_value

        out = []
        if self.max_tolerance is not None:
            out.append(f"--tolerance {self.max_tolerance * 100:g} %")
        if self.dielectrics:
            out.append("--dielectric " + ",".join(self.dielectrics))
        if self.min_rating is not None:
            out.append("--min-rating " + format_value(self.min_rating, WATT if self.kind == "resistor" else VOLT))
        if self.locations:
            out.append("--location " + ",".join(self.locations))
        return ", ".join(out)

    def keeps(self, line: StockLine) -> bool:
        """Does a stock line pass the filters?"""
        from selector.core import parts

        if self.max_tolerance is not None and max(line.tol_minus, line.tol_plus) > self.max_tolerance * (1 + 1e-12):
            return False
        if self.dielectrics:
            try:
                d = parts.normalize_dielectric(line.dielectric or "")
            except Exception:  # a hand-written dielectric the table does not know
                d = line.dielectric or ""
            if d not in self.dielectrics:
                return False
        if self.min_rating is not None and (line.rating is None or line.rating < self.min_rating * (1 - 1e-12)):
            return False
        if self.locations and (line.location or "").strip().casefold() not in {x.casefold() for x in self.locations}:
            return False
        return True


@dataclass
class ValueReport:
    """Ranked options (best first) with the notes to show under them."""

    request: ValueRequest
    options: list  # list[Network]
    notes: list[str] = field(default_factory=list)
    network_count: int = 0
    alternatives: list = field(default_factory=list)  # per option: same-looking variants from other lines
    search_id: int | None = None
    yields: list = field(default_factory=list)  # per option: share of builds within --accept
    whys: list = field(default_factory=list)  # per option: why it sits there (2-3 words)

    @property
    def kind(self) -> str:
        return self.request.kind

    @property
    def target(self) -> float:
        return self.request.target

    def options_json(self) -> list[dict[str, Any]]:
        out = [option_json(rank, net, self.target) for rank, net in enumerate(self.options, start=1)]
        for i, o in enumerate(out):
            if i < len(self.yields):
                o["yield"] = self.yields[i]
            if i < len(self.whys):
                o["why"] = self.whys[i]
        return out

    def to_json(self) -> dict[str, Any]:
        """``{"target": …, "options": [...], "search": id}`` (SI units, signed errors)."""
        return {"target": self.target, "options": self.options_json(), "search": self.search_id}


def parts_json(net: Any) -> list[dict[str, Any]]:
    """[{"line_id", "value", "count", "location"}] for the distinct stock lines of a network."""
    return [{"line_id": line.id, "value": line.value, "count": count, "location": line.location}
            for line, count in net.parts]


def option_json(rank: int, net: Any, target: float) -> dict[str, Any]:
    """One ``find value`` option exactly as --json prints it (SI units; error = value/target - 1)."""
    return {"rank": rank, "value": net.value, "error": net.value / target - 1.0, "min": net.vmin,
            "max": net.vmax, "shape": net.shape, "parts": parts_json(net)}



def _notes(req: ValueRequest, options: Sequence) -> list[str]:
    from selector.core.notation import FARAD, OHM, format_value

    def value_text(kind: str, value: float) -> str:
        return format_value(value, OHM if kind == "resistor" else FARAD)

    notes: list[str] = []
    best = abs(options[0].value / req.target - 1.0)
    if best > FAR_LIMIT:
        notes.append(f"The stock cannot get within {FAR_LIMIT * 100:.0f} % of {value_text(req.kind, req.target)}: "
                     f"the nearest option is {(options[0].value / req.target - 1.0) * 100:+.1f} % off. "
                     "The nearest ones are shown anyway.")
    if req.kind == "capacitor":
        pol = [str(i) for i, n in enumerate(options, 1) if n.polarized_in_series]
        if pol:
            notes.append(f"Caution (option {', '.join(pol)}): polarized capacitors in series. Leakage, "
                         "not capacitance, decides how the voltage divides between them: give each part a "
                         "rating for the full voltage and fit every one the right way round.")
        mixed = [f"{i} ({', '.join(n.dielectrics)})" for i, n in enumerate(options, 1) if len(n.dielectrics) > 1]
        if mixed:
            notes.append(f"Mixed dielectrics in option {'; '.join(mixed)}: the parts drift differently "
                         "with temperature, voltage and age, so the value is less stable than either alone.")
        notes.append(CAPACITOR_CAUTION)
    return notes


def plan_value(lines: Sequence[StockLine], req: ValueRequest) -> ValueReport:
    """The ``top`` networks of the stock for the target, ranked by the share of builds within
    ``accept`` of it (part tolerances drawn as in the timing yield; shares within 2 points count as
    equal), then fewer parts, then smaller error; with notes. Only lines passing the filters are
    used. Raises NothingFeasible when the stock holds no usable part of the kind."""
    import numpy as np

    from selector.core.networks import build_index

    req.check()
    kept = [ln for ln in lines if ln.kind != req.kind or req.keeps(ln)]
    if req.filters_text() and not any(ln.kind == req.kind for ln in kept) and any(ln.kind == req.kind for ln in lines):
        raise NothingFeasible(f"no {req.kind} in stock matches {req.filters_text()}")
    lines = kept
    index = build_index(lines, max_parts=req.max_parts, boards=req.boards,
                        allow_polarized_series=req.allow_polarized_series, kind=req.kind,
                        all_networks=req.all_networks)
    if not index.lines:
        held = [ln for ln in lines if ln.kind == req.kind]
        if not held:
            raise NothingFeasible(f"there is no {req.kind} in stock")
        raise NothingFeasible(f"no {req.kind} line holds enough parts for {req.boards} board"
                              f"{'s' if req.boards != 1 else ''} (every {req.kind} line has fewer than "
                              f"{req.boards} left)")
    # Networks that look the same on the bench (same shape, same part values and tolerances,
    # only other drawers) are folded into one option; the nearest variant is kept and the others
    # are listed as alternatives. The pool ranked by share: the nearest distinct builds of each
    # parts budget (so a single part a little further off is weighed against dense 3-part ones).
    want = max(4 * req.top, 64)
    options, alternatives, seen = [], [], {}
    for budget in range(1, req.max_parts + 1):
        idx = index if budget == req.max_parts else build_index(
            lines, max_parts=budget, boards=req.boards,
            allow_polarized_series=req.allow_polarized_series, kind=req.kind,
            all_networks=req.all_networks)
        fetch = want
        while True:
            ids = idx.nearest_few(np.array([req.target]), fetch)[0]
            opts, alts = _fold(idx.networks(ids[ids >= 0]))
            if len(opts) >= want or ids[-1] < 0 or fetch >= 1 << 16:
                break
            fetch *= 4
        for net, more in zip(opts, alts):
            k = _look(net)
            if k in seen:
                alternatives[seen[k]].extend([net] + more)
                continue
            seen[k] = len(options)
            options.append(net)
            alternatives.append(more)
    options, alternatives = _best_variants(options, alternatives, lines, req.boards)
    shares = [build_share(net, req.target, req.accept, req.samples, req.seed) for net in options]
    order, whys = rank_by_share(options, shares, req.target)
    order = order[:req.top]
    options = [options[i] for i in order]
    alternatives = [alternatives[i] for i in order]
    count = sum(index.size_by_parts().values())
    return ValueReport(request=req, options=options, notes=_notes(req, options), network_count=count,
                       alternatives=alternatives, yields=[shares[i] for i in order],
                       whys=whys[:req.top])


def build_share(net, target: float, accept: float, samples: int = 10_000, seed: int = 0) -> float:
    """Share of seeded Monte Carlo builds of ``net`` (each part uniform within its tolerance)
    whose value is within ``accept`` of ``target``."""
    import numpy as np

    from selector.core import tolerance

    nominal = np.array([p.value for p in net.physical], dtype=float)
    tm = np.array([p.tol_minus for p in net.physical], dtype=float)
    tp = np.array([p.tol_plus for p in net.physical], dtype=float)
    n = max(int(samples), tolerance.MIN_SAMPLES)
    draws = tolerance.draw_parts(nominal, tm, tp, n, tolerance.rng_for(seed))
    vals = np.asarray(net.combine(draws), dtype=float)
    return float(np.mean(np.abs(vals / target - 1.0) <= accept))


def rank_by_share(nets: Sequence, shares: Sequence[float], target: float) -> tuple[list[int], list[str]]:
    """Indexes of ``nets`` best first: share of builds in spec (within 2 points equal), then
    fewer parts, then smaller |error|; and, in that order, why each sits there (2-3 words)."""
    from selector.core.ranking import yield_group_ids

    groups = yield_group_ids(list(shares))
    err = [abs(n.value / target - 1.0) for n in nets]
    key = [(groups[i], nets[i].nparts, err[i]) for i in range(len(nets))]
    order = sorted(range(len(nets)), key=lambda i: key[i])
    nearest = min(range(len(nets)), key=lambda i: (err[i], nets[i].nparts)) if nets else -1
    whys = []
    for pos, i in enumerate(order):
        below = order[pos + 1] if pos + 1 < len(order) else None
        if i == nearest:
            whys.append("closest")
        elif below is None:
            whys.append("next closest")
        elif groups[i] < groups[below]:
            whys.append("best in spec" if pos == 0 else "more in spec")
        elif nets[i].nparts < nets[below].nparts:
            whys.append("fewest parts" if pos == 0 else "fewer parts")
        elif err[i] < err[below]:
            whys.append("closer")
        else:
            whys.append("equal standing")
    return order, whys


def _look(net) -> tuple:
    """One build: the same shape with the same part values (drawers, tolerances, dielectrics may
    differ; issue 11: one row per build)."""
    return (net.shape, net.structure, f"{net.value:.9g}",
            tuple(sorted(f"{p.value:.9g}" for p in net.physical)))


def _best_variants(options: list, alternatives: list, lines: Sequence, boards: int) -> tuple[list, list]:
    """Per build, the variant to show (``core.ranking.variant_key``: tighter tolerance, better
    dielectric, fuller drawer; also variants assembled from other lines of the same values) and
    the others, best first (at most ``ranking.MAX_ALTERNATIVES``)."""
    from types import SimpleNamespace

    from selector.core import ranking

    shown, others = [], []
    for net, more in zip(options, alternatives):
        wrap = [SimpleNamespace(networks={"X": n}) for n in [net] + list(more)]
        extra = ranking.more_variants(SimpleNamespace(networks={"X": net}, connection=""), lines, boards, None)
        unique = [w.networks["X"] for w in ranking.distinct_variants(wrap + extra)]
        shown.append(unique[0])
        others.append(unique[1:1 + ranking.MAX_ALTERNATIVES])
    return shown, others


def _fold(nets: Sequence) -> tuple[list, list[list]]:
    options: list = []
    alternatives: list[list] = []
    where: dict[tuple, int] = {}
    for net in nets:
        key = _look(net)
        if key in where:
            alternatives[where[key]].append(net)
        else:
            where[key] = len(options)
            options.append(net)
            alternatives.append([])
    return options, alternatives


def save_search(session, report: ValueReport) -> int:
    """One search (mode "value") and one search option per option, in the caller's unit (a Core
    Connection or a Session); returns the search id."""
    from selector.store import db

    req = report.request
    target = {"mode": "value", "kind": req.kind, "value": req.target}
    params = {"kind": req.kind, "max_parts": req.max_parts, "top": req.top, "boards": req.boards,
              "allow_polarized_series": req.allow_polarized_series, "accept": req.accept,
              "tolerance": req.max_tolerance, "dielectric": list(req.dielectrics),
              "min_rating": req.min_rating, "location": list(req.locations)}
    return db.save_search(session, "value", target, params, [("", opt) for opt in report.options_json()])


def find_value(engine, req: ValueRequest) -> ValueReport:
    """Read the stock, plan, save; returns the report with ``search_id`` set."""
    from selector.store.db import load_stock, run_in_transaction

    req.check()
    lines = run_in_transaction(engine, lambda s: load_stock(s, req.kind), write=False, core=True)
    report = plan_value(lines, req)
    report.search_id = run_in_transaction(engine, lambda s: save_search(s, report), core=True)
    return report
