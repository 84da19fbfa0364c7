"""The registry of circuit kinds: one module per kind in this package, one line per kind below.

Each module defines ``CIRCUIT``, an instance of a subclass of one of the mode bases in
``modes`` following the protocol in ``base`` (key, name, roles, kernel, limits, model, inverse
for the kernel, formula and wiring text, BOM parts, SPICE netlist and measurements, cautions).
Everything else (CLI choices, services, ranking, render, BOM, SPICE, simulate) goes through
:func:`get` / :func:`for_mode` and never compares circuit names.

Importing this package is cheap (no numpy): the CLI reads its choices from it at start-up.
"""

from __future__ import annotations

from selector.core.circuits import diode, monostable, output_fed, rc, schmitt, standard
from selector.core.circuits.base import CircuitKind

REGISTRY: dict[str, CircuitKind] = {m.CIRCUIT.key: m.CIRCUIT for m in (
    standard,
    diode,
    output_fed,
    schmitt,
    monostable,
    rc,
)}


def get(key: str) -> CircuitKind:
    """The circuit kind with this connection key (KeyError when there is none)."""
    return REGISTRY[key]


def keys() -> tuple[str, ...]:
    return tuple(REGISTRY)


def for_mode(mode: str) -> tuple[CircuitKind, ...]:
    """Every circuit kind of one mode ("astable", "monostable", "rc"), in registry order."""
    return tuple(c for c in REGISTRY.values() if c.mode == mode)


def of_option(mode: str, connection: str) -> CircuitKind:
    """The circuit kind of a saved option: by its connection, else the only kind of its mode."""
    if connection in REGISTRY:
        return REGISTRY[connection]
    kinds = for_mode(mode)
    if len(kinds) == 1:
        return kinds[0]
    raise KeyError(connection)


def reaching(target, settings, accept: float, mode: str, kinds=()) -> list[str]:
    """What would reach ``target`` when the circuit kinds ``kinds`` cannot: the command-line
    changes (``--connection X``, ``--chip Y``) under which some kind of ``mode`` has no reason to
    refuse (``why_unreachable``), one change at a time."""
    import dataclasses

    from selector.core import chips

    out: list[str] = []
    tried = {k.key for k in kinds}
    for kind in for_mode(mode):
        if kind.key not in tried and kind.why_unreachable(target, settings, accept) is None:
            out.append(f"--connection {kind.key}")
    for fam in chips.FAMILIES:
        if fam == settings.chip:
            continue
        other = dataclasses.replace(settings, chip=fam)
        if any(k.why_unreachable(target, other, accept) is None for k in kinds):
            out.append(f"--chip {fam}")
    return out
