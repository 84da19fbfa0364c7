"""Use case ``find value``: the networks of the stock nearest to one value (a missing part).

``plan_value`` is pure (stock lines in, report out); ``find_value`` reads the stock in one
transaction, plans, and saves the search (mode "value") in another, so ``selector bom N`` can
list the parts of option N."""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import Any, Sequence

from selector.core.errors import NothingFeasible
from selector.core.types import KINDS, StockLine
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
    all_networks: bool = False  # True: also networks with a token part (--all-networks)

    def check(self) -> None:
        if self.kind not in KINDS:
            raise ValueError(f"unknown kind {self.kind!r}")
        if not (self.target > 0 and self.target < float("inf")):
            raise ValueError("target must be a positive value")
        if self.max_parts not in (1, 2, 3) or self.top < 1 or self.boards < 1:
            raise ValueError("max_parts must be 1-3, top and boards at least 1")


@dataclass
class ValueReport:
    """Ranked options (best first) with the notes to show under them."""

    request: ValueRequest
    options: list  # list[Network]
    notes: list[str] = field(default_factory=list)
    network_count: int = 0
    alternatives: list = field(default_factory=list)  # per option: same-looking variants from other lines
    search_id: int | None = None

    @property
    def kind(self) -> str:
        return self.request.kind

    @property
    def target(self) -> float:
        return self.request.target

    def options_json(self) -> list[dict[str, Any]]:
        return [option_json(rank, net, self.target) for rank, net in enumerate(self.options, start=1)]

    def to_json(self) -> dict[str, Any]:
        """Exactly ``{"target": …, "options": [...]}`` (SI units, signed errors)."""
        return {"target": self.target, "options": self.options_json()}


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
    """The ``top`` networks nearest to the target (exact), with notes. Raises NothingFeasible
    when the stock holds no usable part of the kind."""
    import numpy as np

    from selector.core.networks import build_index

    req.check()
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
    # only other drawers) are folded into one option; the best-ranked variant is kept and the
    # others are listed as alternatives. Fetch more than `top` so folding still leaves `top`.
    fetch = req.top
    while True:
        ids = index.nearest_few(np.array([req.target]), fetch * 4)[0]
        options, alternatives = _fold(index.networks(ids))
        if len(options) >= req.top or ids[-1] < 0 or fetch * 4 >= 1 << 16:
            break
        fetch *= 4
    options, alternatives = options[:req.top], alternatives[:req.top]
    count = sum(index.size_by_parts().values())
    return ValueReport(request=req, options=options, notes=_notes(req, options), network_count=count,
                       alternatives=alternatives)


def _look(net) -> tuple:
    return (net.shape, net.structure,
            tuple((p.value, p.tol_minus, p.tol_plus, p.dielectric, p.polarized) for p in net.physical))


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
    """One SearchRow (mode "value") and one SearchOptionRow per option; returns the search id."""
    from selector.store.models import SearchOptionRow, SearchRow

    req = report.request
    target = {"mode": "value", "kind": req.kind, "value": req.target}
    params = {"kind": req.kind, "max_parts": req.max_parts, "top": req.top, "boards": req.boards,
              "allow_polarized_series": req.allow_polarized_series}
    row = SearchRow(mode="value", target_json=json.dumps(target), params_json=json.dumps(params))
    session.add(row)
    session.flush()
    for opt in report.options_json():
        session.add(SearchOptionRow(search_id=row.id, rank=opt["rank"], connection="",
                                    error=float(opt["error"]), data_json=json.dumps(opt)))
    session.flush()
    return int(row.id)


def find_value(engine, req: ValueRequest) -> ValueReport:
    """Read the stock, plan, save; returns the report with ``search_id`` set."""
    from selector.store.db import load_stock, run_in_transaction

    req.check()
    lines = run_in_transaction(engine, lambda s: load_stock(s, req.kind), write=False)
    report = plan_value(lines, req)
    report.search_id = run_in_transaction(engine, lambda s: save_search(s, report))
    return report
