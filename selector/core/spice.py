"""SPICE runs of an option (pure): build the netlist, read ngspice's measurements back, vary the
parts to their tolerance corners. Each step asks the option's circuit kind
(``selector.core.circuits``) for its part; the shared pieces (records, network wiring, our
behavioural 555, measurement parsing) are in ``selector.core.netlist`` and re-exported here."""

from __future__ import annotations

from dataclasses import replace
from typing import Mapping

from selector.core.errors import SimulationFailed
from selector.core.netlist import *  # noqa: F401,F403  (the public names of the netlist pieces)
from selector.core.netlist import Circuit, Netlist, _scaled


def _kind(c: Circuit):
    from selector.core import circuits

    try:
        return circuits.get(c.connection)
    except KeyError:
        raise SimulationFailed(f"unknown connection {c.connection!r}; expected one of: "
                               + ", ".join(circuits.keys())) from None


def build_netlist(c: Circuit, cycles: int = 5, waveform: bool = False) -> Netlist:
    """The complete netlist for ``c`` with its ``.meas`` lines; ``cycles`` full astable cycles
    are measured after the first one. With ``waveform`` the run also writes ``WAVE_FILE``
    (time and the plotted node voltages, see ``parse_waveform``)."""
    kind = _kind(c)
    if cycles < 1:
        raise SimulationFailed(f"--cycles must be at least 1, got {cycles}")
    title = c.title or f"selector {c.connection} option"
    L = [f"* {title}",
         kind.spice_header(c),
         "* Written by selector; run with: ngspice -b <this file>",
         "* Caution: a real circuit's capacitors can stay charged after power is removed."]
    return kind.spice_netlist(c, L, cycles, waveform)


def reduce_measurements(c: Circuit, found: Mapping[str, float], cycles: int) -> dict[str, float]:
    """Turn crossing times into the option's keys (same keys as the search's ``predicted``)."""
    return _kind(c).spice_reduce(c, found, cycles)


def corner_circuits(c: Circuit) -> list[tuple[str, str, Circuit]]:
    """Worst-case tolerance corners: ``(name, description, circuit)``. Every connection gets
    "all -tol" and "all +tol" (the extremes of frequency, width or τ: each is monotonic in
    every part, facts §10); circuits whose duty is set by two resistors (``duty_corners``) also
    get the two duty corners."""
    def at(directions: Mapping[str, int], name: str, desc: str) -> tuple[str, str, Circuit]:
        nets = {k: _scaled(n, directions.get(k, 0)) for k, n in c.networks.items()}
        return name, desc, replace(c, networks=nets)

    labels = list(c.networks)
    out = [at({k: -1 for k in labels}, "all -tol", "every part at its lower tolerance limit"),
           at({k: +1 for k in labels}, "all +tol", "every part at its upper tolerance limit")]
    if _kind(c).duty_corners:
        out.append(at({"RA": +1, "RB": -1}, "duty max", "RA at +tol, RB at -tol, C nominal"))
        out.append(at({"RA": -1, "RB": +1}, "duty min", "RA at -tol, RB at +tol, C nominal"))
    return out
