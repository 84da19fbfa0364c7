"""Use case ``show N``: everything about one option of a saved search, read in one transaction —
the option as saved, the search's target and settings, the stock lines its parts come from, its
BOM against the current stock, the cautions that apply to it, and the guide levels of its
waveform (the circuit kind's thresholds). Read-only; rendering is ``render/show.py``."""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import SimpleNamespace
from typing import Any, Optional

from selector.core.types import StockLine


@dataclass(frozen=True)
class ShowReport:
    """One saved option in full (plain data; the renderer draws it)."""

    search_id: int
    rank: int
    mode: str
    connection: str
    target: dict
    params: dict
    option: dict
    lines: dict  # stock line id -> StockLine (the lines the option's parts come from, as they are now)
    bom: Any  # services.bom.BomReport
    cautions: tuple  # keys of core.cautions.CAUTIONS (or plain sentences), the option's own first
    levels: tuple  # (name, volts) guide levels of the capacitor voltage (thresholds)
    supply: float  # volts the waveform swings to
    uses_timer: bool  # a 555 is the device (the schematic draws it)

    @property
    def kind(self):
        from selector.core import circuits

        try:
            return circuits.of_option(self.mode, self.connection)
        except KeyError:
            return None

    @property
    def main_output(self) -> str:
        """The output the circuit is set by (``frequency_hz``, ``width_s``, ``tau_s``, ``corner_hz``;
        '' for a circuit kind this version does not know): what a trimmer is adjusted for."""
        kind = self.kind
        return kind.main_output(_target(self.mode, self.target, kind)) if kind is not None else ""


def _target(mode: str, target: dict, kind):
    from selector.core.circuits.base import Target

    if mode == "astable":
        duty = target.get("duty")
        if duty is None:
            duty = target["t_high_s"] / (target["t_high_s"] + target["t_low_s"])
        return Target.astable(float(target["frequency_hz"]), float(duty))
    if mode == "monostable":
        return Target("monostable", width=float(target["width_s"]))
    return Target("rc", tau=float(target["tau_s"]),
                  corner_hz=float(target["corner_hz"]) if target.get("corner_hz") else math.nan)


def option_cautions(mode: str, connection: str, target: dict, settings, option: dict,
                    lines: dict) -> list:
    """The cautions of the option, by the same rule as the search (``ranking.cautions``)."""
    from selector.core import circuits, ranking

    try:
        kind = circuits.of_option(mode, connection)
    except KeyError:
        return []
    nets = {}
    for role, raw in (option.get("networks") or {}).items():
        physical = [lines[int(p["line_id"])] for p in raw.get("parts") or [] if int(p["line_id"]) in lines
                    for _ in range(int(p.get("count") or 1))]
        nets[role] = SimpleNamespace(value=float(raw["value"]), physical=physical)
    if "C" not in nets:
        return list(kind.cautions)
    found = SimpleNamespace(networks=nets, connection=kind.key)
    try:
        return ranking.cautions(found, _target(mode, target, kind), kind.limits(settings))
    except (KeyError, TypeError, ValueError):  # an older record: the circuit's own cautions
        return list(kind.cautions)


def _levels(mode: str, connection: str, params: dict, option: dict, lines: dict) -> tuple[tuple, float]:
    """The guide levels of the capacitor voltage from the circuit kind (``spice_waveform``) and
    the supply; none when the record cannot be read back into a circuit."""
    from selector.core import circuits
    from selector.core.errors import SelectorError
    from selector.services.simulate import circuit_from_saved

    tolerances = {i: (ln.tol_minus, ln.tol_plus) for i, ln in lines.items()}
    try:
        c = circuit_from_saved(mode, connection, params, option, tolerances)
        _names, levels = circuits.get(c.connection).spice_waveform(c)
        return tuple((str(n), float(v)) for n, v in levels), float(c.chip.vcc)
    except (SelectorError, KeyError, TypeError, ValueError):
        vcc = params.get("vcc")
        return (), float(vcc) if isinstance(vcc, (int, float)) and vcc > 0 else 1.0


def show_in_session(session, option: int, search_id: Optional[int] = None) -> ShowReport:
    from selector.core.circuits.base import Settings
    from selector.core.errors import NothingFeasible
    from selector.services.bom import bom_of_saved, load_saved_option
    from selector.services.simulate import SIMULATED_MODES
    from selector.store.db import load_stock

    saved = load_saved_option(session, option, search_id)
    mode = saved.spec.mode
    if mode not in SIMULATED_MODES:  # a `find value` search: parts, no circuit to draw
        raise NothingFeasible(f"search {saved.search_id} is a {mode} search: show needs a timing "
                              f"search ({', '.join(SIMULATED_MODES)}); its parts: selector bom {option} "
                              f"--search {saved.search_id}")
    target = dict(saved.target)
    params = dict(saved.params)
    stock = load_stock(session)
    bom = bom_of_saved(saved, stock)
    used = {int(p["line_id"]) for raw in (saved.data.get("networks") or {}).values()
            for p in raw.get("parts") or [] if p.get("line_id") is not None}
    used |= {int(raw["trimmer"]["line_id"]) for raw in (saved.data.get("networks") or {}).values()
             if isinstance(raw.get("trimmer"), dict) and raw["trimmer"].get("line_id") is not None}
    lines: dict[int, StockLine] = {ln.id: ln for ln in stock if ln.id in used}
    connection = saved.spec.connection
    settings = Settings(saved.spec.chip, saved.spec.vcc or 0.0, saved.spec.diode_vf, dict(saved.spec.options))
    cautions = option_cautions(mode, connection, target, settings, saved.data, lines)
    levels, supply = _levels(mode, connection, params, saved.data, lines)
    return ShowReport(search_id=saved.search_id, rank=saved.rank, mode=mode, connection=connection,
                      target=target, params=params, option=saved.data, lines=lines, bom=bom,
                      cautions=tuple(cautions), levels=levels, supply=supply,
                      uses_timer=saved.spec.uses_timer)


def show_option(engine, option: int, search_id: Optional[int] = None) -> ShowReport:
    """Option ``option`` of search ``search_id`` (default: the latest search), in full."""
    from selector.store.db import run_in_transaction

    return run_in_transaction(engine, lambda s: show_in_session(s, option, search_id), write=False, core=True)
