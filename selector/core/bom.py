"""BOM assembly for a saved option (pure: stdlib only, no database or UI).

From the option JSON a search saved, the circuit it belongs to (mode, connection, chip family,
supply) and the current stock lines, build one BOM line per physical part:

* the timing networks, part by part, with reference designators R1, R2 … and C1, C2 … in role
  order (RA, RB, R, then the timing capacitor);
* the parts a 555 circuit needs beyond its timing network (decisions, with sources from
  facts.md):
  - the timer IC of the chosen family (U1) and, for the diode-steered connection, the steering
    diode across RB (D1; anode at DIS, cathode at THR/TRIG) [S8]; the Schmitt-inverter
    oscillator's logic IC. Each is taken from an ic / diode stock line that matches it by the
    rule in selector/core/stock_match.py, else listed "not in stock";
  - the control-pin (CV, pin 5) capacitor, 10 nF to ground, for the bipolar family only: bypass
    CV with 10 nF when it is not used [S14]. CMOS parts: not listed, because one CMOS 555 data
    sheet says CV "need not be decoupled" [S6]; the notes tell the technician to fit one if their
    part's data sheet asks for it;
  - supply decoupling: 100 nF close to the IC for both families (common practice, no source), plus,
    for the bipolar family, a 10-100 uF reservoir close to the IC because its output draws
    current spikes at each transition [S3]. CMOS parts have "no crowbarring" [S6], so no
    reservoir is listed for them;
  - an RC option or a plain "value" option is only a network: no IC, no extras.
* an extra capacitor is taken from stock when one stock line can supply every board's worth on
  its own (after what the timing networks already take from that line) and its voltage rating,
  derated for its dielectric, covers VCC; a line whose rating is unknown is used only when no
  rated line fits, with a note to check it. Otherwise the part is listed "not in stock".

Also here: the pick list (drawers in natural order, each visited once), the quantities a pull
takes, shortages, and the CSV / Markdown / JSON forms with spreadsheet formula neutralising.

Tolerance in JSON is ``{"minus": f, "plus": f}`` (positive fractions of nominal, as in the stock)
or ``null`` for a part that has none in our records (the IC, the diode, a part not in stock).
"""

from __future__ import annotations

import math
import re
from dataclasses import replace
from typing import Any, Callable, Iterable, Mapping, Optional, Sequence

from selector.core.bom_formats import (  # noqa: F401  (the output forms; same public names here)
    CSV_COLUMNS, MD_COLUMNS, md_cell, neutralize_cell, rating_text, to_csv, to_json, to_markdown, to_rows,
    tolerance_text, value_text,
)
from selector.core.cautions import CAUTIONS as CAUTION_TEXTS
from selector.core.bom_records import Bom, BomLine, CircuitSpec, PickItem, PickStop, Shortage
from selector.core.stock_match import matches, pick_line
from selector.core.types import TRIMMER_KIND, StockLine

# ---------------------------------------------------------------------------------------------
# Roles and fixed extra parts
# ---------------------------------------------------------------------------------------------

from selector.core.bom_records import (  # noqa: E402,F401  (re-exported)
    ROLE_CV, ROLE_DECOUPLE, ROLE_DIODE, ROLE_IC, ROLE_NETWORK, ROLE_RESERVOIR, ROLE_TIMING_C,
)

# Which extra capacitors a circuit needs (control pin, decoupling, reservoir) and their values
# are the circuit kind's and the chip family's data (selector.core.circuits, selector.core.chips).
from selector.core.circuits.base import POLARIZED  # noqa: E402

#: Order of the networks of an option in the BOM, and the role each network key plays.
NETWORK_ORDER = ("RA", "RB", "R", "C")

# Relative tolerance for "this stock line holds the value the search used" (floats from JSON).
_SAME_VALUE = 1e-9

CAUTIONS = (CAUTION_TEXTS["bom_charged_capacitor"], CAUTION_TEXTS["bom_mains"])


# ---------------------------------------------------------------------------------------------
# Reading the saved option
# ---------------------------------------------------------------------------------------------


class OptionShapeError(ValueError):
    """The saved option JSON does not have the documented shape (a programming error upstream)."""


def option_networks(mode: str, option: Mapping[str, Any]) -> list[tuple[str, Mapping[str, Any]]]:
    """The networks of a saved option as ``(key, network)`` pairs in BOM order. A "value" option
    is itself the single network (key "network")."""
    if mode == "value" or "networks" not in option:
        if "parts" not in option:
            raise OptionShapeError("option has neither 'networks' nor 'parts'")
        return [(ROLE_NETWORK, option)]
    nets = option["networks"]
    if not isinstance(nets, Mapping) or not nets:
        raise OptionShapeError("option 'networks' is empty")
    order = {k: i for i, k in enumerate(NETWORK_ORDER)}
    return sorted(nets.items(), key=lambda kv: (order.get(kv[0], len(order)), kv[0]))


def _role_for(key: str, mode: str) -> str:
    if key == "C" and mode != "rc":
        return ROLE_TIMING_C
    return key


# ---------------------------------------------------------------------------------------------
# Wiring of a network
# ---------------------------------------------------------------------------------------------

def wiring(shape: str, physical: Sequence[StockLine], value: Optional[float]) -> tuple[list[StockLine], str]:
    """Order the physical parts of a network as its formula reads and return the formula
    template (the shape's written form, ``networks.shapes``). The saved JSON lists parts by
    stock line with counts, which loses which part is the lone one in a mixed 3-part shape; it is
    recovered as the choice that reproduces the network's saved value (else the last part, the
    network engine's order)."""
    from selector.core.networks.shapes import SHAPES, value as shape_value

    parts = list(physical)
    entry = SHAPES.get(shape)
    if entry is None or entry.parts != len(parts):
        joint = " ∥ " if shape.startswith("parallel") else " + "
        return parts, joint.join("{%d}" % i for i in range(len(parts)))
    if not entry.symmetric and value is not None:
        kind = parts[0].kind
        for lone in (2, 1, 0):
            order = [parts[i] for i in range(3) if i != lone] + [parts[lone]]
            if math.isclose(shape_value(entry.structure, [p.value for p in order], kind), value, rel_tol=1e-6):
                parts = order
                break
    return parts, entry.template


# ---------------------------------------------------------------------------------------------
# Assembly
# ---------------------------------------------------------------------------------------------


def demand(lines: Iterable[BomLine]) -> dict[int, int]:
    """Parts to take per stock line (all boards) for the BOM lines that come from stock."""
    out: dict[int, int] = {}
    for bl in lines:
        if bl.line_id is not None:
            out[bl.line_id] = out.get(bl.line_id, 0) + bl.total
    return out


def _derated_ok(line: StockLine, vcc: Optional[float], derating: Callable[[str], float]) -> Optional[bool]:
    """True/False whether the derated voltage rating covers VCC; None when unknown."""
    if vcc is None or line.rating is None:
        return None
    return line.rating * derating(line.dielectric) >= vcc


def _dielectric_rank(dielectric: str, prefer: Sequence[str]) -> int:
    return prefer.index(dielectric) if dielectric in prefer else len(prefer)


def _pick_extra(
    stock: Sequence[StockLine],
    taken: Mapping[int, int],
    need: int,
    vcc: Optional[float],
    derating: Callable[[str], float],
    fits_value: Callable[[float], bool],
    prefer: Sequence[str],
    exclude: Sequence[str],
    visited: set[str],
) -> tuple[Optional[StockLine], bool]:
    """The best stock line for an extra capacitor, and whether its rating is unknown."""
    best_key = None
    best: Optional[StockLine] = None
    for line in stock:
        if line.kind != "capacitor" or not fits_value(line.value) or line.dielectric in exclude:
            continue
        if line.quantity - taken.get(line.id, 0) < need:
            continue
        ok = _derated_ok(line, vcc, derating)
        if ok is False:
            continue
        key = (
            0 if ok else 1,  # a known, sufficient rating first
            _dielectric_rank(line.dielectric, prefer),
            0 if line.location in visited else 1,  # a drawer already on the pick list
            line.value,
            line.id,
        )
        if best_key is None or key < best_key:
            best_key, best = key, line
    return best, best is not None and best.rating is None


def assemble_bom(
    search_id: int,
    option_rank: int,
    spec: CircuitSpec,
    option: Mapping[str, Any],
    stock: Sequence[StockLine],
    boards: int,
    derating: Callable[[str], float],
) -> Bom:
    """Build the BOM of one saved option for ``boards`` boards against the current ``stock``.

    ``derating(dielectric)`` gives the fraction of a capacitor's rated voltage allowed as working
    voltage (``selector.core.parts.voltage_derating``; passed in so this module stays free of the
    store's tables). A part whose stock line is gone or now holds another value raises
    :class:`OptionOutdatedError`; a malformed option raises :class:`OptionShapeError`."""
    if boards < 1:
        raise ValueError("boards must be at least 1")
    by_id = {s.id: s for s in stock}
    counters = {"R": 0, "C": 0, "RV": 0}
    lines: list[BomLine] = []
    notes: list[str] = []

    def next_ref(kind: str) -> str:
        letter = "R" if kind == "resistor" else "RV" if kind == TRIMMER_KIND else "C"
        counters[letter] += 1
        return f"{letter}{counters[letter]}"

    for key, net in option_networks(spec.mode, option):
        lines.extend(_network_lines(key, net, spec, by_id, boards, next_ref))

    if spec.uses_timer:
        lines.extend(_extras(spec, stock, boards, derating, lines, next_ref, notes))

    # Mark timing parts whose line cannot cover every use on every board.
    need = demand(lines)
    lines = [
        replace(bl, in_stock=False) if bl.line_id is not None and by_id[bl.line_id].quantity < need[bl.line_id]
        else bl
        for bl in lines
    ]
    notes[:0] = connection_notes(spec)
    notes.extend(f"{bl.ref}: {bl.setting}, then adjust on the bench (how: selector show "
                 f"{option_rank} --search {search_id})."
                 for bl in lines if bl.setting)
    kind = _kind(spec)
    if kind is not None:
        notes.extend(kind.bom_chip_notes(_settings(spec)))
    if any(bl.dielectric in POLARIZED for bl in lines if bl.kind == "capacitor"):
        notes.append("Polarized capacitors: fit the + lead towards the more positive node.")
    if spec.uses_timer or any(bl.kind == "capacitor" for bl in lines):
        notes.extend(CAUTIONS)
    return Bom(search_id=search_id, option=option_rank, boards=boards, spec=spec,
               lines=tuple(lines), notes=tuple(notes))


def _network_lines(key: str, net: Mapping[str, Any], spec: CircuitSpec, by_id: Mapping[int, StockLine],
                   boards: int, next_ref: Callable[[str], str]) -> list[BomLine]:
    """One BOM line per physical part of one saved network, in the order its formula reads."""
    parts = list(net.get("parts") or [])
    if not parts:
        raise OptionShapeError(f"network {key} has no parts")
    physical: list[StockLine] = []
    for p in parts:
        line_id = int(p["line_id"])
        line = by_id.get(line_id)
        value = float(p["value"])
        if line is None:
            raise OptionOutdatedError(line_id, None, value)
        if not math.isclose(line.value, value, rel_tol=_SAME_VALUE):
            raise OptionOutdatedError(line_id, line.value, value)
        physical.extend([line] * int(p["count"]))
    shape = str(net.get("shape") or ("single" if len(physical) == 1 else "series"))
    net_value = net.get("value")
    physical, template = wiring(shape, physical, None if net_value is None else float(net_value))
    role = _role_for(key, spec.mode)
    out: list[BomLine] = []
    refs = [next_ref(line.kind) for line in physical]
    formula = template.format(*refs)
    trim = net.get("trimmer")
    trim_line = None
    if isinstance(trim, Mapping):  # a trimmer in series with the fixed parts (core.trim)
        trim_line = by_id.get(int(trim["line_id"]))
        if trim_line is None or not math.isclose(trim_line.value, float(trim["value"]), rel_tol=_SAME_VALUE):
            raise OptionOutdatedError(int(trim["line_id"]), None if trim_line is None else trim_line.value,
                                      float(trim["value"]))
        trim_ref = next_ref(TRIMMER_KIND)
        fixed = f"({formula})" if len(physical) > 1 else formula
        formula = f"{fixed} + {trim_ref}"
    wired = f"{shape}: {formula}" if len(physical) > 1 else (f"series: {formula}" if trim_line else "")
    for ref, line in zip(refs, physical):
        out.append(BomLine(
            ref=ref, role=role, kind=line.kind, value=line.value,
            per_board=1, total=boards, in_stock=True, line_id=line.id,
            tol_minus=line.tol_minus, tol_plus=line.tol_plus, location=line.location,
            package=line.package, rating=line.rating, dielectric=line.dielectric,
            note=line.note, network=wired,
        ))
    if trim_line is not None:
        from selector.core.notation import OHM, format_value

        setting = float(trim["setting"])
        set_text = (f"set to {format_value(setting, OHM)} ≈ {setting / trim_line.value * 100:.0f} % of "
                    "travel from the fixed end")
        out.append(BomLine(
            ref=trim_ref, role=role, kind=trim_line.kind, value=trim_line.value,
            per_board=1, total=boards, in_stock=True, line_id=trim_line.id,
            tol_minus=trim_line.tol_minus, tol_plus=trim_line.tol_plus, location=trim_line.location,
            package=trim_line.package, rating=trim_line.rating, dielectric=trim_line.dielectric,
            note="; ".join(x for x in (trim_line.note, set_text) if x), network=wired, setting=set_text,
        ))
    return out


def _kind(spec: CircuitSpec):
    """The circuit kind of a 555/oscillator option (None for an RC or a plain value option)."""
    from selector.core import circuits

    if not spec.uses_timer:
        return None
    try:
        return circuits.of_option(spec.mode, spec.connection)
    except KeyError:
        return None


def _settings(spec: CircuitSpec):
    from selector.core.circuits.base import Settings

    return Settings(spec.chip, spec.vcc if spec.vcc is not None else 0.0, spec.diode_vf, dict(spec.options))


def connection_notes(spec: CircuitSpec) -> list[str]:
    """How the timing networks are wired to the device, for a timer/oscillator option."""
    kind = _kind(spec)
    return [] if kind is None else kind.bom_notes(_settings(spec))


def _extras(
    spec: CircuitSpec,
    stock: Sequence[StockLine],
    boards: int,
    derating: Callable[[str], float],
    so_far: list[BomLine],
    next_ref: Callable[[str], str],
    notes: list[str],
) -> list[BomLine]:
    kind = _kind(spec)
    if kind is None:
        return []
    settings = _settings(spec)
    taken = demand(so_far)
    visited = {bl.location for bl in so_far if bl.line_id is not None}
    out: list[BomLine] = []
    for o in kind.bom_obtain(settings):
        line = pick_line(o.want, stock, taken, boards, visited) if o.want else None
        if line is None:
            out.append(BomLine(ref=o.ref, role=o.role, kind=o.kind, value=None, per_board=1, total=boards,
                               in_stock=False, description=o.description, note=o.note))
            spent = [ln for ln in stock if o.want and matches(o.want, ln)]
            if spent:
                notes.append(f"{o.ref}: stock line{'s' if len(spent) > 1 else ''} "
                             f"{', '.join(f'{ln.id} ({ln.part})' for ln in spent)} would supply it but "
                             f"{'have' if len(spent) > 1 else 'has'} none left for it; restock or obtain the part.")
            continue
        taken[line.id] = taken.get(line.id, 0) + boards
        visited.add(line.location)
        out.append(BomLine(
            ref=o.ref, role=o.role, kind=line.kind, value=None, per_board=1, total=boards, in_stock=True,
            line_id=line.id, location=line.location, package=line.package, rating=line.rating,
            note="; ".join(x for x in (o.note, line.note) if x), description=o.description, part=line.part))
        drift = _diode_drop_note(o.ref, line, spec.diode_vf) if line.kind == "diode" else None
        if drift:
            notes.append(drift)
    for want in kind.bom_extra_caps(settings):
        line, unknown_rating = _pick_extra(stock, taken, boards, spec.vcc, derating, want.fits, want.prefer,
                                           want.exclude, visited)
        ref = next_ref("capacitor")
        if line is None:
            need_v = ""
            if spec.vcc is not None:
                need_v = f"; rated at least {math.ceil(spec.vcc / derating(want.dielectric_for_rating) * 10) / 10:g} V"
            out.append(BomLine(
                ref=ref, role=want.role, kind="capacitor", value=want.nominal, per_board=1, total=boards,
                in_stock=False, note=f"{want.where}{need_v}",
            ))
            continue
        taken[line.id] = taken.get(line.id, 0) + boards
        visited.add(line.location)
        note = line.note
        if unknown_rating:
            check = f"rating unknown: check it is at least {spec.vcc:g} V after derating" if spec.vcc else "rating unknown"
            note = f"{note}; {check}" if note else check
            notes.append(f"{ref}: the stock line's voltage rating is unknown; check it before fitting.")
        out.append(BomLine(
            ref=ref, role=want.role, kind="capacitor", value=line.value, per_board=1, total=boards,
            in_stock=True, line_id=line.id, tol_minus=line.tol_minus, tol_plus=line.tol_plus,
            location=line.location, package=line.package, rating=line.rating,
            dielectric=line.dielectric, note=note, description=want.where,
        ))
    return out


DIODE_DROP_SLACK_V = 0.05
"""A stock diode whose stated drop at 1 mA differs from the searched one by more than this gets a
note (the diode-steered timing depends on it; our threshold)."""


def _diode_drop_note(ref: str, line: StockLine, searched_vf: Optional[float]) -> Optional[str]:
    """A note when the diode taken from stock states a forward drop at 1 mA (or at no stated
    current) other than the one the search assumed (``--diode-vf`` is the drop at 1 mA)."""
    if line.rating is None or searched_vf is None:
        return None
    if line.rating_current is not None and not math.isclose(line.rating_current, 1e-3, rel_tol=1e-6):
        return None
    if abs(line.rating - searched_vf) <= DIODE_DROP_SLACK_V:
        return None
    return (f"{ref}: stock line {line.id} ({line.part}) drops {line.rating:g} V at 1 mA; the search assumed "
            f"{searched_vf:g} V. Search again with --diode-vf {line.rating:g} for the timing this diode gives.")


class OptionOutdatedError(LookupError):
    """A stock line the option uses is gone (``now`` None) or holds another value."""

    def __init__(self, line_id: int, now: Optional[float], expected: float):
        self.line_id, self.now, self.expected = line_id, now, expected
        super().__init__(line_id)


# ---------------------------------------------------------------------------------------------
# Pick list, pull plan, shortages
# ---------------------------------------------------------------------------------------------


def natural_key(text: str) -> tuple:
    """Sort drawers the way people read them: "A2" before "A10"; no location last."""
    if not text:
        return (1,)
    parts = re.split(r"(\d+)", text.casefold())
    return (0, tuple((0, int(p)) if p.isdigit() else (1, p) for p in parts if p != ""))


def pick_list(bom: Bom, stock: Sequence[StockLine]) -> list[PickStop]:
    """Stock parts grouped by drawer, drawers in natural order, each visited once; inside a
    drawer resistors, capacitors, trimmers, diodes, then ICs, by value."""
    by_id = {s.id: s for s in stock}
    need = demand(bom.lines)
    refs: dict[int, list[str]] = {}
    for bl in bom.lines:
        if bl.line_id is not None:
            refs.setdefault(bl.line_id, []).append(bl.ref)
    stops: dict[str, list[PickItem]] = {}
    for line_id, qty in need.items():
        s = by_id[line_id]
        stops.setdefault(s.location, []).append(PickItem(
            line_id=s.id, kind=s.kind, value=s.value, tol_minus=s.tol_minus, tol_plus=s.tol_plus,
            package=s.package, quantity=qty, on_hand=s.quantity, refs=tuple(refs[line_id]), part=s.part,
        ))
    kind_order = {"resistor": 0, "capacitor": 1, "trimmer": 2, "diode": 3, "ic": 4}
    return [
        PickStop(loc, tuple(sorted(items, key=lambda it: (kind_order.get(it.kind, 5), it.value, it.line_id))))
        for loc, items in sorted(stops.items(), key=lambda kv: natural_key(kv[0]))
    ]


def wirings(bom: Bom) -> list[tuple[str, str]]:
    """(role, "shape: formula") for each network of more than one part, in BOM order."""
    seen: list[tuple[str, str]] = []
    for bl in bom.lines:
        if bl.network and (bl.role, bl.network) not in seen:
            seen.append((bl.role, bl.network))
    return seen


def to_obtain(bom: Bom) -> list[BomLine]:
    """Parts the stock does not supply (an IC or diode with no matching line, extras with no fitting line)."""
    return [bl for bl in bom.lines if bl.line_id is None]


def shortages(bom: Bom, stock: Sequence[StockLine]) -> list[Shortage]:
    """Every stock line that holds fewer parts than the BOM takes from it, by line id."""
    by_id = {s.id: s for s in stock}
    out = []
    for line_id, qty in sorted(demand(bom.lines).items()):
        s = by_id[line_id]
        if s.quantity < qty:
            out.append(Shortage(line_id, s.kind, s.value, s.location, qty, s.quantity))
    return out


__all__ = [
    "Bom", "BomLine", "CircuitSpec", "PickItem", "PickStop", "Shortage", "OptionOutdatedError",
    "OptionShapeError", "assemble_bom", "demand", "pick_list", "wiring", "wirings", "to_obtain", "shortages",
    "neutralize_cell", "md_cell", "to_csv", "to_markdown", "to_json", "to_rows", "natural_key",
    "CSV_COLUMNS", "MD_COLUMNS", "rating_text", "tolerance_text", "value_text",
    "CAUTIONS", "ROLE_TIMING_C", "ROLE_IC", "ROLE_DIODE", "ROLE_CV", "ROLE_DECOUPLE",
    "ROLE_RESERVOIR", "ROLE_NETWORK",
]
