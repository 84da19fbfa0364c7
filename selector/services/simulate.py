"""Use cases ``netlist`` and ``simulate``: read a saved option, write its SPICE netlist, run it
in ngspice batch mode (a subprocess) and compare the measurements with the search's prediction.

The database is only read (one short read transaction); ngspice runs after it has closed. The
netlist and measurement logic is pure and lives in :mod:`selector.core.spice`.
"""

from __future__ import annotations

import math
import os
import shutil
import subprocess
import tempfile
import time
from dataclasses import dataclass, field, replace
from typing import Any, Mapping, Optional

import sqlalchemy as sa
from sqlalchemy.engine import Engine

from selector.core import circuits, spice
from selector.core.errors import SimulationFailed, SimulatorMissing, UnknownSearch
from selector.store.db import transaction
from selector.store.tables import stock_lines

INSTALL_HINT = "install it (Debian/Ubuntu: apt-get install ngspice) or put it on PATH"
NGSPICE_TIMEOUT_S = 120.0
SIMULATED_MODES = tuple(dict.fromkeys(k.mode for k in circuits.REGISTRY.values()))  # every mode of a circuit kind


@dataclass(frozen=True)
class CornerResult:
    """One worst-case tolerance corner: the formula's and ngspice's figures for it."""

    name: str
    description: str
    predicted: dict[str, float]
    simulated: dict[str, float]
    difference: dict[str, float]


@dataclass(frozen=True)
class Waveform:
    """Node voltages over time from the nominal run (for ``--plot``)."""

    times: tuple[float, ...]
    series: tuple[tuple[str, tuple[float, ...]], ...]   # (label, volts)
    levels: tuple[tuple[str, float], ...] = ()          # dashed guide lines, e.g. 1/3 and 2/3 VCC


@dataclass(frozen=True)
class SimulationReport:
    """What ``simulate`` shows: prediction, simulation and their signed relative difference."""

    search_id: int
    rank: int
    mode: str
    connection: str
    chip: str
    vcc: float
    predicted: dict[str, float]
    simulated: dict[str, float]
    difference: dict[str, float]
    cycles: int
    discharge_ohms: float
    diode_vf: Optional[float]
    netlist: str
    elapsed_s: float
    corners: tuple[CornerResult, ...] = ()
    warnings: tuple[str, ...] = field(default_factory=tuple)
    waveform: Optional["Waveform"] = None
    model_note: str = ""            # what ngspice runs (the circuit kind's words)
    device: str = ""                # the device in the title, e.g. "bipolar 555"; "" for a plain RC
    has_discharge: bool = True      # the model has a 555 discharge switch (its footer line)

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "search": self.search_id, "option": self.rank, "mode": self.mode,
            "connection": self.connection, "chip": self.chip, "vcc": self.vcc,
            "predicted": self.predicted, "simulated": self.simulated, "difference": self.difference,
            "difference_is": "(simulated - predicted) / predicted, a signed fraction",
            "cycles": self.cycles,
            "model": {"discharge_ohms": self.discharge_ohms, "diode_vf": self.diode_vf},
        }
        if self.corners:
            out["corners"] = [{"name": c.name, "description": c.description, "predicted": c.predicted,
                               "simulated": c.simulated, "difference": c.difference} for c in self.corners]
        return out


# ----------------------------------------------------------------------------- option → circuit
def _float(x: Any, what: str) -> float:
    try:
        v = float(x)
    except (TypeError, ValueError):
        raise UnknownSearch(f"the saved option has an unreadable {what} ({x!r}); run the search again") from None
    if not math.isfinite(v):
        raise UnknownSearch(f"the saved option has an unreadable {what} ({x!r}); run the search again")
    return v


def _network(label: str, raw: Mapping[str, Any], tolerances: Mapping[int, tuple[float, float]]) -> spice.Network:
    parts: list[spice.Part] = []
    for p in raw.get("parts") or []:
        line_id = p.get("line_id")
        tol = tolerances.get(int(line_id)) if line_id is not None else None
        count = int(p.get("count") or 1)
        for _ in range(count):
            parts.append(spice.Part(value=_float(p.get("value"), f"{label} part value"),
                                    line_id=None if line_id is None else int(line_id),
                                    location=str(p.get("location") or ""),
                                    tol_minus=tol[0] if tol else None, tol_plus=tol[1] if tol else None))
    if not parts:
        raise UnknownSearch(f"the saved option's {label} network lists no parts; run the search again")
    shape = str(raw.get("shape") or ("single" if len(parts) == 1 else ""))
    value = raw.get("value")
    value = None if value is None else _float(value, f"{label} value")
    kind = "C" if label.startswith("C") else "R"
    trim = raw.get("trimmer")
    trim_part = None
    fixed_value = value
    if isinstance(trim, Mapping):  # a trimmer in series (core.trim): simulated at its nominal setting
        setting = _float(trim.get("setting"), f"{label} trimmer setting")
        trim_part = spice.Part(value=setting, line_id=None if trim.get("line_id") is None else int(trim["line_id"]),
                               location=str(trim.get("location") or ""))
        fixed_value = None if value is None else _float(raw.get("fixed_value", value - setting), f"{label} value")
    ordered = spice.physical_order(shape, kind, parts, fixed_value)
    return spice.Network(label=label, shape=shape, parts=ordered, value=value, trim=trim_part)


def circuit_from_saved(mode: str, connection: str, params: Mapping[str, Any], data: Mapping[str, Any],
                       tolerances: Mapping[int, tuple[float, float]], *, discharge_ohms: Optional[float] = None,
                       title: str = "") -> spice.Circuit:
    """A :class:`spice.Circuit` from a saved search's mode, settings and option record."""
    from selector.core import timing
    from selector.core.circuits.base import Settings

    if mode not in SIMULATED_MODES:
        raise SimulationFailed(f"a {mode} search has no circuit to simulate; expected one of: "
                               + ", ".join(SIMULATED_MODES))
    try:
        kind = circuits.of_option(mode, connection)
    except KeyError:
        raise UnknownSearch(f"the saved option has an unknown connection {connection!r}; run the search again") from None
    fam_key = str(params.get("chip") or "bipolar")
    vcc = params.get("vcc")
    vcc = _float(vcc, "supply voltage") if vcc is not None else (1.0 if mode == "rc" else None)
    if vcc is None or vcc <= 0:
        raise UnknownSearch("the saved search has no supply voltage; run the search again")
    vf = params.get("diode_vf")
    vf = timing.DIODE_VF_DEFAULT if vf is None else _float(vf, "diode forward drop")
    settings = Settings(fam_key, vcc, vf, dict(params.get("options") or {}))
    chip = kind.spice_chip(settings, discharge_ohms)
    extra = dict(kind.limits(settings).extra)
    nets = {label: _network(label, raw, tolerances) for label, raw in (data.get("networks") or {}).items()}
    predicted = {k: float(v) for k, v in (data.get("predicted") or {}).items() if isinstance(v, (int, float))}
    return spice.Circuit(connection=kind.key, networks=nets, chip=chip, diode_vf=vf,
                         expected=predicted, title=title, extra=extra)


def predict(c: spice.Circuit) -> dict[str, float]:
    """The formulas' figures (the circuit kind's model) for a circuit, e.g. a tolerance corner."""
    from selector.core.circuits.base import Limits

    def val(label: str) -> float:
        n = c.networks[label]
        kind = "C" if label.startswith("C") else "R"
        fixed = spice.tree_value(spice.shape_tree(n.shape, len(n.parts)), [p.value for p in n.parts], kind)
        return fixed + (n.trim.value if n.trim is not None else 0.0)

    kind = circuits.get(c.connection)
    # the netlist's discharge switch on-resistance goes into the prediction too (t_low, and the
    # monostable's start level), so the two agree for the same reason
    rd = c.chip.discharge_ohms if kind.has_discharge_switch else 0.0
    limits = Limits(vcc=c.chip.vcc, diode_vf=c.diode_vf, voh=c.chip.voh, vol=c.chip.vol, extra=c.extra,
                    discharge_ohms=rd)
    outs = kind.model({label: val(label) for label in c.networks}, limits, {})
    return {name: float(x) for name, x in zip(kind.outputs, outs)}


def _load(engine: Engine, rank: int, search_id: Optional[int], discharge_ohms: Optional[float]):
    from selector.services.bom import load_saved_option

    with transaction(engine, write=False, core=True) as session:  # Core: no ORM import
        saved = load_saved_option(session, rank, search_id)
        params = dict(saved.params)
        ids = set()
        for raw in (saved.data.get("networks") or {}).values():
            for p in raw.get("parts") or []:
                if p.get("line_id") is not None:
                    ids.add(int(p["line_id"]))
        tolerances = {}
        if ids:
            t = stock_lines.c
            for row in session.execute(sa.select(t.id, t.tol_minus, t.tol_plus).where(t.id.in_(ids))):
                tolerances[row.id] = (float(row.tol_minus), float(row.tol_plus))
        mode = saved.spec.mode
    title = f"selector: search {saved.search_id}, option {saved.rank} ({mode}, {saved.spec.connection})"
    circuit = circuit_from_saved(mode, saved.spec.connection, params, saved.data, tolerances,
                                 discharge_ohms=discharge_ohms, title=title)
    return saved, mode, circuit


def option_netlist(engine: Engine, rank: int, search_id: Optional[int] = None, *, cycles: int = 5,
                   discharge_ohms: Optional[float] = None) -> str:
    """The SPICE netlist text of option ``rank`` of a saved search (default: the latest)."""
    _saved, _mode, circuit = _load(engine, rank, search_id, discharge_ohms)
    return spice.build_netlist(circuit, cycles).text


# ----------------------------------------------------------------------------- running ngspice
def find_ngspice(ngspice: Optional[str] = None) -> str:
    """Path of the ngspice program, or :class:`SimulatorMissing` with the install hint."""
    exe = shutil.which(ngspice or "ngspice")
    if exe is None:
        raise SimulatorMissing(f"ngspice was not found on PATH; {INSTALL_HINT}")
    return exe


def run_ngspice(text: str, exe: str, timeout: float = NGSPICE_TIMEOUT_S) -> str:
    """Run one netlist in batch mode in a scratch directory; return everything it printed."""
    return _run(text, exe, timeout)[0]


def _run(text: str, exe: str, timeout: float = NGSPICE_TIMEOUT_S,
         read: Optional[str] = None) -> tuple[str, Optional[str]]:
    """ngspice -b on ``text``; returns (what it printed, the text of file ``read`` it wrote)."""
    extra: Optional[str] = None
    with tempfile.TemporaryDirectory(prefix="selector-spice-") as tmp:
        path = os.path.join(tmp, "option.cir")
        with open(path, "w", encoding="ascii", errors="replace") as fh:
            fh.write(text)
        try:
            proc = subprocess.run([exe, "-b", path], capture_output=True, text=True, cwd=tmp,
                                  timeout=timeout, stdin=subprocess.DEVNULL)
        except subprocess.TimeoutExpired:
            raise SimulationFailed(f"ngspice did not finish within {timeout:g} s") from None
        except OSError as err:
            raise SimulatorMissing(f"ngspice could not be started ({err.strerror or err}); {INSTALL_HINT}") from None
        if read is not None and os.path.exists(os.path.join(tmp, read)):
            with open(os.path.join(tmp, read), encoding="ascii", errors="replace") as fh:
                extra = fh.read()
    out = (proc.stdout or "") + "\n" + (proc.stderr or "")
    if proc.returncode != 0:
        first = next((ln.strip() for ln in out.splitlines() if "error" in ln.lower()), "")
        raise SimulationFailed(f"ngspice stopped with exit code {proc.returncode}"
                               + (f": {first}" if first else ""))
    return out, extra


def simulate_circuit(c: spice.Circuit, exe: str, cycles: int = 5) -> dict[str, float]:
    """Netlist → ngspice → measurements for one circuit (raises SimulationFailed)."""
    nl = spice.build_netlist(c, cycles)
    found, _failed = spice.parse_measurements(run_ngspice(nl.text, exe))
    return spice.reduce_measurements(c, found, nl.cycles)


def _waveform(c: spice.Circuit, text: Optional[str]) -> Waveform:
    if text is None:
        raise SimulationFailed("ngspice wrote no waveform file")
    times, cols = spice.parse_waveform(text)
    names, levels = circuits.get(c.connection).spice_waveform(c)
    return Waveform(tuple(times), tuple((n, tuple(col)) for n, col in zip(names, cols)), levels)


def simulate_option(engine: Engine, rank: int, search_id: Optional[int] = None, *, cycles: int = 5,
                    corners: bool = False, discharge_ohms: Optional[float] = None,
                    ngspice: Optional[str] = None, waveform: bool = False) -> SimulationReport:
    """Simulate option ``rank`` (and, with ``corners``, its worst-case tolerance corners); with
    ``waveform`` the report also carries the nominal run's node voltages."""
    exe = find_ngspice(ngspice)
    t0 = time.perf_counter()
    saved, mode, circuit = _load(engine, rank, search_id, discharge_ohms)
    netlist = spice.build_netlist(circuit, cycles, waveform=waveform)
    out, wave_text = _run(netlist.text, exe, read=spice.WAVE_FILE if waveform else None)
    found, _ = spice.parse_measurements(out)
    simulated = spice.reduce_measurements(circuit, found, netlist.cycles)
    wave = _waveform(circuit, wave_text) if waveform else None
    # the prediction with the run's own discharge resistance (the chip family's data-sheet figure,
    # or --discharge-ohms): the same model the search used when the figure is the family's
    predicted = {k: v for k, v in predict(circuit).items() if k in simulated}
    results = []
    if corners:
        for name, desc, cc in spice.corner_circuits(circuit):
            pred = predict(cc)
            cc = replace(cc, expected=pred)
            sim = simulate_circuit(cc, exe, cycles)
            results.append(CornerResult(name, desc, pred, sim, spice.difference(pred, sim)))
    kind = circuits.get(circuit.connection)
    warnings = kind.spice_warnings(circuit)
    if any(n.trim is not None for n in circuit.networks.values()):
        warnings = list(warnings) + [
            "the trimmer is simulated at its nominal setting" + (
                " in every corner too (before adjustment: on the bench it is set on each build)"
                if corners else "")]
    return SimulationReport(
        search_id=saved.search_id, rank=saved.rank, mode=mode, connection=circuit.connection,
        chip=circuit.chip.family, vcc=circuit.chip.vcc, predicted=predicted, simulated=simulated,
        difference=spice.difference(predicted, simulated), cycles=netlist.cycles,
        discharge_ohms=circuit.chip.discharge_ohms,
        diode_vf=circuit.diode_vf if kind.uses_diode else None,
        netlist=netlist.text, elapsed_s=time.perf_counter() - t0, corners=tuple(results),
        warnings=tuple(warnings), waveform=wave, model_note=kind.model_note,
        has_discharge=kind.has_discharge_switch, device=kind.spice_device_name(circuit))
