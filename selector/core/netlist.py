"""The pieces of an option's SPICE netlist, and reading ngspice's printed measurements back (pure).
The circuit kinds assemble netlists from these; ``selector.core.spice`` runs them.

The netlist is the open SPICE text format that ngspice reads in batch mode. It holds

- the supply (and, for a monostable, a trigger pulse; for an RC option, a step with an AC drive);
- the timing networks exactly as built from stock: every physical part is its own element, wired
  as its network's shape says (two resistors in series are two ``R`` lines);
- for 555 options, our own behavioural 555 written from the published block diagram
  (``.subckt SEL555_<FAMILY>``, pins in data-sheet order 1 GND … 8 VCC):

  * a divider of three equal resistors VCC–CV–LO–GND sets the threshold level (CV, 2/3 VCC) and
    the trigger level (LO, 1/3 VCC) [S12 model netlists, S14: 3 × 5 kΩ in the bipolar part];
  * two comparators (behavioural ``B`` sources giving logic 0/1 V): THRES above CV, TRIG below LO;
  * an SR latch of two cross-coupled NOR gates, each a ``B`` source behind a 1 kΩ/1 pF delay
    (1 ns); the trigger comparator has priority over the threshold comparator and an active-low
    RESET (below 0.7 V [S1]) overrides both, as in the data-sheet function table [S1, S5];
  * the discharge transistor as a voltage-controlled switch from DIS to GND, closed while the
    latch is reset, with the family's on-resistance (:data:`DISCHARGE_OHMS`);
  * the output stage as an ideal source at the family's light-load levels VOH/VOL
    (``selector.core.chips``); load regulation is not modelled.

  Not modelled: comparator propagation delay and storage time, threshold/trigger input currents,
  supply current and its spikes, temperature. Those are why the data sheets warn above ~100 kHz.

- the steering diode of a diode-steered option as a SPICE ``D`` element with the prediction's
  Shockley law: IS from the forward voltage at 1 mA (``diode_vf``) and the ideality n
  (``parts.DIODE_N_DEFAULT`` or ``--diode-n``), no series resistance or junction capacitance.

Measurements are ``.meas`` lines whose names start with ``m_``; ngspice prints ``name = value``.
A ``.meas`` that cannot trigger still lets ngspice exit 0, so :func:`parse_measurements` returns
what it found and :func:`reduce_measurements` raises :class:`SimulationFailed` naming what is
missing. Astable figures are taken after the first (longer) cycle from power-up.
"""

from __future__ import annotations

import itertools
import math
import re
from dataclasses import dataclass, field, replace
from typing import Mapping, Optional, Sequence, Union

from selector.core.errors import SimulationFailed
from selector.core.parts import DIODE_VF_DEFAULT

# ----------------------------------------------------------------------------- model constants
# Per-family figures (divider resistors, the discharge switch's data-sheet saturation) are
# ``selector.core.chips`` data: ChipFamily.spice_divider_ohms, .datasheet_discharge_ohms.
DISCHARGE_OHMS = 1.0
"""Default on-resistance of the discharge switch: near-ideal, as the published timing formulas
assume (they ignore the switch, which is fair "only if RB ≫ RD" [S2]); 1 Ω rather than 0 so the
switch never shorts a node outright. Use ``--discharge-ohms``
to see what a real part's saturation does (``ChipFamily.datasheet_discharge_ohms``): it stops C short of 0 V and lengthens t_low."""
DISCHARGE_OFF_OHMS = 1e12
"""Off-resistance of the discharge switch: near-ideal too. A real bipolar DIS leaks 20 nA typ
[S1] (about 1 GΩ at 9 V), which with a 1.8 MΩ timing resistor already lengthens a monostable
pulse by 0.15 %; the formulas ignore it, as they ignore the threshold input current."""
RESET_LEVEL_V = 0.7        # [S1] reset threshold 0.4 / 0.7 / 1.0 V (min/typ/max)
LATCH_DELAY_R, LATCH_DELAY_C = 1e3, 1e-12   # 1 ns per gate: keeps the latch well-posed
RC_FRACTION = 1.0 - math.exp(-1.0)          # 63.212 % of the step: reached after one τ (derived)
MINUS_3DB = 20.0 * math.log10(1.0 / math.sqrt(2.0))  # −3.0103 dB: the corner of a first-order RC
STEPS_PER_SEGMENT = 1000   # timestep limit: the shortest half-period / this (ecosystem §6: ≤ 0.1 %)
STEPS_PER_PULSE = 5000     # monostable and RC runs are one segment, so they can afford a finer step
MAX_STEPS = 200_000        # cap on points per run, so a very lopsided duty (1 %) stays near 4 s

# ----------------------------------------------------------------------------- plain records
@dataclass(frozen=True)
class Part:
    """One physical part of a network: its value (ohms or farads) and where it came from."""

    value: float
    line_id: Optional[int] = None
    location: str = ""
    tol_minus: Optional[float] = None   # fractions; None when unknown (corners then refuse)
    tol_plus: Optional[float] = None


@dataclass(frozen=True)
class Network:
    """A role in the circuit ("RA", "RB", "R" or "C") built from 1–3 parts joined as ``shape``."""

    label: str
    shape: str
    parts: tuple[Part, ...]
    value: Optional[float] = None       # effective value as the search computed it (comments)
    trim: Optional[Part] = None         # a trimmer in series, at its nominal setting (core.trim)


@dataclass(frozen=True)
class ChipModel:
    """The numbers the behavioural 555 needs; see :func:`chip_model`."""

    family: str
    vcc: float
    voh: float
    vol: float
    divider_ohms: float
    discharge_ohms: float


@dataclass(frozen=True)
class Circuit:
    """Everything a netlist needs: connection, networks, chip, supply and the expected times
    (used only to size the simulated time span and timestep)."""

    connection: str
    networks: Mapping[str, Network]
    chip: ChipModel
    diode_vf: float = DIODE_VF_DEFAULT
    expected: Mapping[str, float] = field(default_factory=dict)
    title: str = ""
    extra: Mapping[str, float] = field(default_factory=dict)   # a circuit's own figures (Limits.extra)


@dataclass(frozen=True)
class Netlist:
    text: str
    measures: tuple[str, ...]
    cycles: int


def chip_model(family_key: str, vcc: float, voh: float, vol: float,
               discharge_ohms: Optional[float] = None) -> ChipModel:
    """A :class:`ChipModel` with the family's divider value (``chips``) and the discharge
    switch's on-resistance (default :data:`DISCHARGE_OHMS`)."""
    from selector.core import chips

    key = family_key.strip().lower()
    if key not in chips.FAMILIES:
        raise SimulationFailed(f"no SPICE 555 model for chip family {family_key!r}; expected one of: "
                               + ", ".join(chips.FAMILIES))
    rd = DISCHARGE_OHMS if discharge_ohms is None else float(discharge_ohms)
    if not (rd > 0 and math.isfinite(rd)):
        raise SimulationFailed(f"discharge on-resistance {discharge_ohms!r} must be a positive number of ohms")
    return ChipModel(key, float(vcc), float(voh), float(vol), chips.FAMILIES[key].spice_divider_ohms, rd)


# ----------------------------------------------------------------------------- shapes → wiring
Tree = Union[int, tuple]   # a part index, or ("s"|"p", child, child, ...)


def shape_tree(shape: str, n: int) -> Tree:
    """Wiring of ``n`` parts for ``shape`` (the SPICE sub-tree of ``networks.shapes.SHAPES``):
    a part index or ("s"|"p", children...). One joint takes any number of parts."""
    from selector.core.networks.shapes import SHAPES, spice_tree

    if shape in ("series", "parallel") and n >= 2:
        return spice_tree((shape, tuple(range(n))))
    entry = SHAPES.get(shape)
    if entry is None or entry.parts != n:
        raise SimulationFailed(f"cannot wire a network of shape {shape!r} with {n} part(s)")
    return entry.spice_tree


def physical_order(shape: str, kind: str, parts: Sequence[Part], value: Optional[float]) -> tuple[Part, ...]:
    """The physical parts in wiring order. ``parts`` is expanded from distinct lines with counts;
    for an unsymmetric shape that repeats a line the order is ambiguous, so every distinct order
    is tried and the one that gives the network's recorded ``value`` wins."""
    parts = tuple(parts)
    tree = shape_tree(shape, len(parts))
    if value is None or isinstance(tree, int):
        return parts
    seen: list[tuple[Part, ...]] = []
    for perm in itertools.permutations(parts):
        if perm in seen:
            continue
        seen.append(perm)
        if math.isclose(tree_value(tree, [p.value for p in perm], kind), value, rel_tol=1e-9):
            return perm
    raise SimulationFailed(f"the parts of a {shape} network do not add up to its value {value:g}; "
                           "run the search again")


def _structure(tree: Tree):
    if isinstance(tree, int):
        return tree
    return ("series" if tree[0] == "s" else "parallel", tuple(_structure(t) for t in tree[1:]))


def tree_value(tree: Tree, values: Sequence[float], kind: str) -> float:
    """Effective value of a wired network (the value law of ``networks.shapes``; kind "R"/"C")."""
    from selector.core.networks.shapes import value

    return value(_structure(tree), values, "resistor" if kind == "R" else "capacitor")


def _wire(tree: Tree, a: str, b: str, label: str, values: Sequence[float], out: list[str],
          counter: list[int]) -> None:
    """Append element lines connecting nodes a–b as ``tree`` says."""
    if isinstance(tree, int):
        letter = "C" if label.startswith("C") else "R"
        counter[0] += 1
        out.append(f"{letter}{label}_{tree + 1} {a} {b} {_num(values[tree])}")
        return
    op, children = tree[0], tree[1:]
    if op == "p":
        for child in children:
            _wire(child, a, b, label, values, out, counter)
        return
    nodes = [a] + [f"n{label.lower()}_{counter[0]}_{k}" for k in range(1, len(children))] + [b]
    counter[0] += 1
    for k, child in enumerate(children):
        _wire(child, nodes[k], nodes[k + 1], label, values, out, counter)


def network_lines(net: Network, a: str, b: str, ic: Optional[float] = None) -> list[str]:
    """The elements of one network between nodes ``a`` and ``b`` (capacitors get ``IC=``)."""
    values = [p.value for p in net.parts]
    tree = shape_tree(net.shape, len(values))
    lines: list[str] = []
    end = b if net.trim is None else f"{net.label.lower()}_trim"
    _wire(tree, a, end, net.label, values, lines, [0])
    desc = ", ".join(_part_text(p, net.label) for p in net.parts)
    if net.trim is not None:  # the fixed network, then the trimmer at its nominal setting
        lines.append(f"RV{net.label}_1 {end} {b} {_num(net.trim.value)}")
        desc += f", in series with a trimmer set to {_part_text(net.trim, net.label)}"
    head = f"* {net.label}: {net.shape} of {desc}"
    if net.value is not None:
        head += f" = {_eng(net.value, 'F' if net.label.startswith('C') else 'ohm')}"
    if ic is not None:
        lines = [ln + f" IC={_num(ic)}" if ln.startswith("C") else ln for ln in lines]
    return [head] + lines


def _part_text(p: Part, label: str) -> str:
    s = _eng(p.value, "F" if label.startswith("C") else "ohm")
    if p.line_id is not None:
        s += f" (line {p.line_id}{', ' + p.location if p.location else ''})"
    return s


def _num(x: float) -> str:
    return f"{float(x):.10g}"


def _eng(x: float, unit: str) -> str:
    for exp, prefix in ((1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "u"), (1e-9, "n"),
                        (1e-12, "p")):
        if abs(x) >= exp * 0.999999:
            return f"{x / exp:.4g} {prefix}{unit}"
    return f"{x:.4g} {unit}"


# ----------------------------------------------------------------------------- the 555 model
def subckt_name(family: str) -> str:
    """The ``.subckt`` name of a family's 555 model: SEL555_ + the key in capitals, a "-" (as in
    "cmos-2v") written "_" so every SPICE reader takes it as one plain name."""
    return "SEL555_" + family.upper().replace("-", "_")


def subckt_555(chip: ChipModel) -> list[str]:
    """Our behavioural 555 (see the module docstring) as a ``.subckt``."""
    name = subckt_name(chip.family)
    r, rd = _num(chip.divider_ohms), _num(chip.discharge_ohms)
    dr, dc = _num(LATCH_DELAY_R), _num(LATCH_DELAY_C)
    return [
        f"* Behavioural {chip.family} 555 after the published block diagram (selector's own model).",
        "* Pins in data-sheet order: 1 GND, 2 TRIG, 3 OUT, 4 RESET, 5 CV, 6 THRES, 7 DIS, 8 VCC.",
        f".subckt {name} gnd trig out rst cv thr dis vcc",
        "* divider: CV at 2/3 VCC (threshold level), LO at 1/3 VCC (trigger level)",
        f"Rdiv1 vcc cv {r}",
        f"Rdiv2 cv lo {r}",
        f"Rdiv3 lo gnd {r}",
        "* comparators, logic 0/1 V",
        "Bcthr cthr gnd V = v(thr,gnd) > v(cv,gnd) ? 1 : 0",
        "Bctrg ctrg gnd V = v(trig,gnd) < v(lo,gnd) ? 1 : 0",
        f"Bcrst crst gnd V = v(rst,gnd) < {_num(RESET_LEVEL_V)} ? 1 : 0",
        "* latch inputs: RESET overrides all; TRIG has priority over THRES",
        "Bset s gnd V = (v(ctrg,gnd) > 0.5 && v(crst,gnd) < 0.5) ? 1 : 0",
        "Bclr r gnd V = (v(crst,gnd) > 0.5 || (v(cthr,gnd) > 0.5 && v(ctrg,gnd) < 0.5)) ? 1 : 0",
        "* SR latch: two cross-coupled NOR gates, 1 ns delay each",
        "Bnor1 q0 gnd V = (v(r,gnd) > 0.5 || v(qb,gnd) > 0.5) ? 0 : 1",
        f"Rdly1 q0 q {dr}",
        f"Cdly1 q gnd {dc} IC=0",
        "Bnor2 qb0 gnd V = (v(s,gnd) > 0.5 || v(q,gnd) > 0.5) ? 0 : 1",
        f"Rdly2 qb0 qb {dr}",
        f"Cdly2 qb gnd {dc} IC=1",
        "* discharge transistor: closed while the latch is reset",
        "Sdis dis gnd qb gnd SELDIS",
        f".model SELDIS SW(VT=0.5 VH=0.1 RON={rd} ROFF={_num(DISCHARGE_OFF_OHMS)})",
        "* output stage at the family's light-load levels",
        f"Bout out gnd V = v(q,gnd) > 0.5 ? {_num(chip.voh)} : {_num(chip.vol)}",
        f".ends {name}",
    ]


# ----------------------------------------------------------------------------- netlists
def _net(c: Circuit, label: str) -> Network:
    try:
        return c.networks[label]
    except KeyError:
        raise SimulationFailed(f"the {c.connection} option has no {label} network") from None


def _tran(tmax: float, tstop: float) -> str:
    tmax = max(tmax, tstop / MAX_STEPS)
    return f".tran {_num(tmax)} {_num(tstop)} 0 {_num(tmax)} UIC"


WAVE_FILE = "waveform.txt"


def _wave_block(nodes: str) -> list[str]:
    # an ngspice control block: run the analysis above, then dump the waveforms as columns
    return [".control", "run", "set wr_singlescale", f"wrdata {WAVE_FILE} {nodes}", "quit", ".endc"]


# ----------------------------------------------------------------------------- reading results
_MEAS_LINE = re.compile(r"^\s*(m_\w+)\s*=\s*([-+]?[0-9.]+(?:[eE][-+]?\d+)?)")
_MEAS_FAIL = re.compile(r"measure\s+(m_\w+)\b", re.IGNORECASE)


def parse_measurements(text: str) -> tuple[dict[str, float], set[str]]:
    """``({name: value}, {names ngspice said it could not measure})`` from ngspice's stdout."""
    found: dict[str, float] = {}
    failed: set[str] = set()
    for line in text.splitlines():
        m = _MEAS_LINE.match(line)
        if m:
            found[m.group(1).lower()] = float(m.group(2))
            continue
        if "failed" in line.lower() or "out of interval" in line.lower():
            f = _MEAS_FAIL.search(line)
            if f:
                failed.add(f.group(1).lower())
    return found, failed - set(found)


def _need(found: Mapping[str, float], name: str, what: str) -> float:
    if name not in found:
        raise SimulationFailed(f"ngspice could not measure {what} ({name}): the circuit never got there "
                               "(it does not switch, or runs far slower than predicted)")
    return found[name]


def parse_waveform(text: str) -> tuple[list[float], list[list[float]]]:
    """``(times, [column, ...])`` from an ngspice ``wrdata`` file written with a single time
    scale (time first, then one column per node)."""
    times: list[float] = []
    cols: list[list[float]] = []
    for line in text.splitlines():
        f = line.split()
        if not f:
            continue
        try:
            row = [float(x) for x in f]
        except ValueError:
            continue
        if not cols:
            cols = [[] for _ in row[1:]]
        if len(row) != len(cols) + 1:
            continue
        times.append(row[0])
        for col, v in zip(cols, row[1:]):
            col.append(v)
    if not times:
        raise SimulationFailed("ngspice wrote no waveform data")
    return times, cols


def difference(predicted: Mapping[str, float], simulated: Mapping[str, float]) -> dict[str, float]:
    """Signed relative differences (simulated − predicted)/predicted for every shared key."""
    out = {}
    for k, p in predicted.items():
        if k in simulated and isinstance(p, (int, float)) and p and math.isfinite(p):
            out[k] = (simulated[k] - p) / p
    return out


# ----------------------------------------------------------------------------- corners
def _scaled(net: Network, direction: int) -> Network:
    parts = []
    for p in net.parts:
        if direction == 0:
            parts.append(p)
            continue
        tol = p.tol_plus if direction > 0 else p.tol_minus
        if tol is None:
            raise SimulationFailed(f"the tolerance of a {net.label} part (line {p.line_id}) is unknown; "
                                   "corners need every part's tolerance")
        parts.append(replace(p, value=p.value * (1.0 + direction * tol)))
    return replace(net, parts=tuple(parts), value=None)


