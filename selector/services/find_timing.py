"""Use case: search the stock for an astable, monostable or RC timing option, rank the options
and save the search so ``bom N`` / ``pull N`` can refer to its numbered options.

Plan, then apply: :func:`plan_timing` is pure (stock lines in, ranked options and the exact JSON
out); :func:`find_timing` reads the stock in one transaction, plans, and saves the search and its
options in a second, short transaction. The search itself can take seconds (3-part networks) and
must not hold SQLite's write lock meanwhile; the saved options record what was computed from that
snapshot, and ``pull`` re-checks quantities inside its own transaction.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable, Optional

from selector.core import circuits
from selector.core.errors import OutOfRange

CONNECTIONS = ("auto",) + tuple(c.key for c in circuits.for_mode("astable"))
MODES = tuple(dict.fromkeys(c.mode for c in circuits.REGISTRY.values()))


@dataclass(frozen=True)
class TimingRequest:
    """What ``find astable|monostable|rc`` asks for, in SI units (validated by ``check``)."""

    mode: str  # "astable" | "monostable" | "rc"
    freq_hz: Optional[float] = None
    duty: Optional[float] = None
    width_s: Optional[float] = None
    tau_s: Optional[float] = None
    corner_hz: Optional[float] = None
    connection: str = "auto"
    chip: str = "bipolar"
    vcc: float = 9.0
    diode_vf: Optional[float] = None  # None: timing.DIODE_VF_DEFAULT
    max_parts: int = 2
    top: int = 10
    boards: int = 1
    accept: float = 0.05
    distribution: str = "uniform"
    seed: int = 0
    samples: int = 10_000
    options: dict = field(default_factory=dict)  # the circuit's own options (e.g. logic family)
    all_networks: bool = False  # True: also networks with a token part (--all-networks)
    trim: bool = False  # True: always offer trimmer options (--trim); else only below the yield threshold

    @property
    def kind(self):
        """The circuit kind searched (None for ``--connection auto``)."""
        key = self.connection if self.mode == "astable" else self.mode
        return circuits.REGISTRY.get(key)

    @property
    def kinds(self) -> tuple:
        """The circuit kinds this request may search: the named one, or for ``auto`` every
        astable kind that takes part in auto."""
        if self.kind is not None:
            return (self.kind,)
        return tuple(k for k in circuits.for_mode(self.mode) if k.in_auto)

    @property
    def settings(self):
        from selector.core.circuits.base import Settings

        return Settings(self.chip, self.vcc, self.vf, {k: v for k, v in self.options.items() if v is not None})

    def check(self) -> None:
        """Raise OutOfRange (one line, naming the option) for values outside what we accept."""
        from selector.core import tolerance
        from selector.core.circuits.base import check_positive

        if self.mode not in MODES:
            raise OutOfRange(f"unknown search mode {self.mode!r}")
        if self.mode == "astable" and self.connection not in CONNECTIONS:
            raise OutOfRange(f"--connection must be one of {', '.join(CONNECTIONS)}, not {self.connection!r}")
        kinds = self.kinds
        kinds[0].check_target(self, duty_optional=all(k.duty_fixed for k in kinds))
        check_positive("--vcc", self.vcc)
        for kind in kinds:
            kind.check_supply(self.settings)
        if self.diode_vf is not None and not (0.0 <= self.diode_vf < self.vcc / 3.0):
            raise OutOfRange(f"--diode-vf {self.diode_vf:g} V must be at least 0 V and below VCC/3 "
                             f"({self.vcc / 3.0:.3g} V)")
        vt = self.options.get("vcc_tol")
        if vt is not None and not (0.0 <= vt < 0.5):
            raise OutOfRange(f"--vcc-tol {vt * 100:g} % must be at least 0 % and below 50 %")
        n = self.options.get("diode_n")
        if n is not None and not (0.8 <= n <= 3.0):
            raise OutOfRange(f"--diode-n {n:g} must be between 0.8 and 3 (the diode's ideality factor)")
        if self.max_parts not in (1, 2, 3):
            raise OutOfRange(f"--max-parts must be 1, 2 or 3, not {self.max_parts}")
        if self.top < 1:
            raise OutOfRange(f"--top must be at least 1, not {self.top}")
        if self.boards < 1:
            raise OutOfRange(f"--boards must be at least 1, not {self.boards}")
        if not (0.0 < self.accept < 1.0):
            raise OutOfRange(f"--accept must be between 0 and 100 % (exclusive), not {self.accept!r}")
        if self.distribution not in tolerance.DISTRIBUTIONS:
            raise OutOfRange(f"--distribution must be one of {', '.join(tolerance.DISTRIBUTIONS)}, "
                             f"not {self.distribution!r}")
        if self.samples < tolerance.MIN_SAMPLES:
            raise OutOfRange(f"--samples must be at least {tolerance.MIN_SAMPLES}, not {self.samples}")

    @property
    def vf(self) -> float:
        from selector.core import timing

        return timing.DIODE_VF_DEFAULT if self.diode_vf is None else float(self.diode_vf)


@dataclass
class TimingReport:
    """Everything the renderer needs; ``json`` is exactly what ``--json`` prints."""

    request: TimingRequest
    target: dict
    params: dict
    options: list  # option dicts, exactly as saved and printed
    ranked: list  # core.ranking.RankedOption, same order
    connections: tuple
    limits: dict  # connection -> core.search.Limits
    network_counts: dict = field(default_factory=dict)
    search_id: Optional[int] = None
    within_acceptance: bool = True  # some option is nominally within --accept in every error
    suggestions: list = field(default_factory=list)  # core.suggest.Suggestion, when it is not
    leakage_excluded: int = 0  # capacitor networks the electrolytic leakage limit left out
    trims: list = field(default_factory=list)  # core.trim.TrimOption, after the fixed options

    @property
    def json(self) -> dict:
        return {"target": self.target, "options": self.options, "search": self.search_id,
                "within_acceptance": self.within_acceptance,
                "suggest_buy": [s.to_json() for s in self.suggestions]}


def _target(req: TimingRequest):
    return req.kinds[0].make_target(req, req.settings)


def target_json(req: TimingRequest, target) -> dict:
    return req.kinds[0].target_json(req, target)


def params_json(req: TimingRequest) -> dict:
    out = {"chip": req.chip, "vcc": req.vcc, "diode_vf": req.vf if req.mode == "astable" else None,
           "boards": req.boards, "max_parts": req.max_parts, "accept": req.accept,
           "distribution": req.distribution, "seed": req.seed,
           "connection": req.connection if req.mode == "astable" else req.mode, "top": req.top}
    options = dict(req.settings.options)
    if options:  # a circuit's own options (only circuits that have them add this key)
        out["options"] = options
    if req.all_networks:  # only when asked: token-part networks were searched too
        out["all_networks"] = True
    if req.trim:  # only when asked: trimmer options were offered whatever the fixed yield
        out["trim"] = True
    return out


def network_json(net) -> dict:
    from selector.services.find_value import parts_json

    return {"value": net.value, "shape": net.shape, "parts": parts_json(net)}


def option_json(opt) -> dict:
    """One option in the documented shape (SI units, signed error, yield as a fraction)."""
    from selector.core.ranking import ROLE_ORDER as order, binomial_se

    nets = opt.found.networks
    return {
        "rank": opt.rank,
        "connection": opt.connection,
        "error": opt.error,
        "predicted": dict(opt.predicted),
        "range": {k: list(v) for k, v in opt.range.items()},
        "yield": opt.yield_fraction,
        "yield_parts_only": opt.yield_parts_only,
        "yield_samples": opt.yield_samples,  # Monte Carlo builds behind both yields
        "yield_standard_error": opt.yield_standard_error,  # sqrt(y(1 - y)/n) of `yield`
        "networks": {role: network_json(nets[role]) for role in order if role in nets},
        "errors": dict(opt.errors),  # in the asker's terms (issue 11); `error` stays as it was
        "why": opt.why,
        "adjustable": False,
        "alternatives": [  # the same build from other drawers, tolerances or dielectrics
            {"networks": {role: network_json(alt.networks[role]) for role in order if role in alt.networks},
             "yield": y, "yield_samples": opt.alternative_samples,
             "yield_standard_error": binomial_se(y, opt.alternative_samples)}
            for alt, y in opt.alternatives],
    }


def trim_option_json(o, rank: int, target) -> dict:
    """A trimmer option (``core.trim.TrimOption``) in the option shape: the trimmed role's network
    keeps its fixed parts in ``parts``, gains ``trimmer`` and its ``value`` is the nominal total at
    the setting; the option is ``adjustable`` and carries how to set it under ``trim``."""
    from selector.core import circuits
    from selector.core.ranking import ROLE_ORDER as order

    kind = circuits.get(o.connection)
    nets = {}
    for role in order:
        if role not in o.networks:
            continue
        nets[role] = network_json(o.networks[role])
        if role == o.role:
            t = o.trimmer
            nets[role]["value"] = o.total
            nets[role]["fixed_value"] = o.networks[role].value
            nets[role]["trimmer"] = {"line_id": t.id, "value": t.value, "tol_minus": t.tol_minus,
                                     "tol_plus": t.tol_plus, "setting": o.setting}
    errs = kind.errors(o.predicted, target)
    lo, hi = o.setting_range
    return {
        "rank": rank,
        "connection": o.connection,
        "error": max(errs.values(), key=abs),  # left by the adjustment (duty points; ~0 on the main output)
        "predicted": dict(o.predicted),
        "range": {k: list(v) for k, v in o.range.items()},
        "yield": 1.0,  # after adjustment every build within the stated terms is on target
        "yield_parts_only": 1.0,
        "yield_samples": 0,  # not a Monte Carlo: every build is set onto the target by construction
        "yield_standard_error": 0.0,
        "networks": nets,
        "errors": errs,
        "why": "adjustable",
        "adjustable": True,
        "trim": {"role": o.role, "location": o.trimmer.location, "setting": o.setting, "setting_range": [lo, hi],
                 "travel": o.travel, "travel_range": [lo / o.trimmer.value, hi / o.trimmer.value],
                 "margin": o.margin, "resolution": o.resolution, "moves": list(o.moves)},
        "alternatives": [],
    }


def _trim_options(req: TimingRequest, result, ranked, target, limits, t_lines) -> list:
    """The trimmer pass (``core.trim``): when asked, or when the best fixed yield is below the
    threshold; up to three options numbered after the fixed ones."""
    from selector.core import trim

    best = max((o.yield_fraction for o in ranked if o.yield_fraction == o.yield_fraction), default=None)
    if not trim.wanted(best, req.trim):
        return []
    trimmers = trim.trimmer_lines(t_lines, req.boards)
    if not trimmers:
        return []
    # fixed networks of 1-2 parts: the trimmer takes up the slack a third part would chase
    r_index = result.network_counts.indexes(min(req.max_parts, trim.MAX_FIXED_PARTS))[0]
    # the shown options first, then the search's pool by |error|, up to MAX_BASES of them
    bases = ([o.found for o in ranked] + list(result.options))[:trim.MAX_BASES]
    return trim.suggest(bases, target, limits, trimmers, r_index, req.accept, req.boards)


def _reachable(req: TimingRequest, target, connections) -> tuple:
    """The connections that could reach the target at all; when none can, NothingFeasible with
    the limit that stops the first and what would reach it (from the registry)."""
    from selector.core.errors import NothingFeasible

    settings = req.settings
    why = {c: circuits.get(c).why_unreachable(target, settings, req.accept) for c in connections}
    ok = tuple(c for c in connections if why[c] is None)
    if ok:
        return ok
    kinds = [circuits.get(c) for c in connections]
    hint = circuits.reaching(target, settings, req.accept, req.mode, kinds)
    tail = (" would reach it" if len(hint) == 1 else " would each reach it") if hint else ""
    none = "; no connection or chip family here reaches it" if req.mode == "astable" else \
        "; no chip family here reaches it"
    raise NothingFeasible(why[connections[0]] + ("; " + " or ".join(hint) + tail if hint else none))


def plan_timing(r_lines, c_lines, req: TimingRequest,
                progress: Optional[Callable[[float], None]] = None, t_lines=()) -> TimingReport:
    """Search, evaluate and rank (pure: no database). Raises NothingFeasible when nothing fits."""
    from selector.core.ranking import evaluate_and_rank
    from selector.core.search import choose_connections, resolve_limits, search_timing

    req.check()
    target = _target(req)
    options = dict(req.settings.options)
    if req.mode == "astable":
        connections = choose_connections(target, req.connection, req.chip, req.vcc, req.vf, req.accept,
                                         options)
    else:
        connections = (req.mode,)
    connections = _reachable(req, target, connections)
    limits = {c: resolve_limits(c, req.chip, req.vcc, req.vf, options) for c in connections}
    result = search_timing(r_lines, c_lines, target, connections, limits, max_parts=req.max_parts,
                           boards=req.boards, pool=2 * max(req.top, 5), progress=progress,
                           all_networks=req.all_networks)
    ranked = evaluate_and_rank(result.options, target, limits, req.accept, req.top,
                               req.distribution, req.samples, req.seed,
                               folded=result.folded,
                               stock=list(r_lines) + list(c_lines), boards=req.boards)
    options = [option_json(o) for o in ranked]
    trims = _trim_options(req, result, ranked, target, limits, t_lines)
    options += [trim_option_json(o, len(options) + i, target) for i, o in enumerate(trims, start=1)]
    from selector.core.search.lookup import LEAKAGE_REASON

    within = any(o.tier <= 1 for o in ranked)
    if within:
        buy = []
    else:
        from selector.core.suggest import suggest_buy

        buy = suggest_buy(ranked, target, limits, req.accept)
    return TimingReport(req, target_json(req, target), params_json(req), options, ranked,
                        tuple(connections), limits, result.network_counts,
                        within_acceptance=within, suggestions=buy,
                        leakage_excluded=result.exclusions.counts.get(LEAKAGE_REASON, 0), trims=trims)


def save_search(session, report: TimingReport) -> int:
    """Write the search and its options (a row of ``searches``, one of ``search_options`` per
    option) in the caller's unit (a Core Connection or a Session); returns the search id."""
    from selector.store import db

    return db.save_search(session, report.request.mode, report.target, report.params,
                          [(opt["connection"], opt) for opt in report.options])


def find_timing(engine, req: TimingRequest,
                progress: Optional[Callable[[float], None]] = None) -> TimingReport:
    """Read the stock, plan, save; returns the report with ``search_id`` set."""
    from selector.core.types import NETWORK_KINDS, TRIMMER_KIND
    from selector.store.db import load_stock, run_in_transaction

    req.check()  # bad options fail before the database is touched
    # Core units (core=True): a search never imports the ORM (issue 12, start-up cost)
    lines = run_in_transaction(engine, lambda s: load_stock(s, NETWORK_KINDS + (TRIMMER_KIND,)), write=False,
                               core=True)
    r_lines = [ln for ln in lines if ln.kind == "resistor"]
    c_lines = [ln for ln in lines if ln.kind == "capacitor"]
    t_lines = [ln for ln in lines if ln.kind == TRIMMER_KIND]
    report = plan_timing(r_lines, c_lines, req, progress, t_lines)
    report.search_id = run_in_transaction(engine, lambda s: save_search(s, report), core=True)
    return report


__all__ = ["TimingRequest", "TimingReport", "plan_timing", "find_timing", "save_search",
           "option_json", "network_json", "target_json", "params_json", "CONNECTIONS"]
