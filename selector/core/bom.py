"""BOM assembly for a saved option (pure: stdlib only, no database or UI).

From the option JSON a search saved, the circuit it belongs to (mode, connection, chip family,
supply) and the current stock lines, build one BOM line per physical part:

* the timing networks, part by part, with reference designators R1, R2 … and C1, C2 … in role
  order (RA, RB, R, then the timing capacitor);
* the parts a 555 circuit needs beyond its timing network (decisions, with sources from
  facts.md):
  - the timer IC of the chosen family (U1) and, for the diode-steered connection, the steering
    diode across RB (D1; anode at DIS, cathode at THR/TRIG) [S8]. Stock holds only resistors and
    capacitors, so these two are always listed "not in stock";
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

import csv
import io
import math
import re
from dataclasses import dataclass, replace
from typing import Any, Callable, Iterable, Mapping, Optional, Sequence

from selector.core.types import StockLine

# ---------------------------------------------------------------------------------------------
# Roles and fixed extra parts
# ---------------------------------------------------------------------------------------------

ROLE_TIMING_C = "timing capacitor"
ROLE_IC = "timer IC"
ROLE_DIODE = "steering diode"
ROLE_CV = "control-pin capacitor"
ROLE_DECOUPLE = "supply decoupling capacitor"
ROLE_RESERVOIR = "supply reservoir capacitor"
ROLE_NETWORK = "network"

#: Control-pin bypass for the bipolar family: 10 nF CV to ground [facts §5, S14].
CV_CAPACITOR_F = 10e-9
#: Supply decoupling close to the IC, both families (common practice, no source).
DECOUPLING_F = 100e-9
#: Bipolar reservoir: 10-100 uF close to the IC [facts §6, S3]; 10 uF is listed when none fits.
RESERVOIR_RANGE_F = (10e-6, 100e-6)

CERAMIC = ("C0G", "X7R", "X5R", "Y5V", "Z5U")
FILM = ("film-PP", "film-PET", "film")
POLARIZED = ("electrolytic", "tantalum")

#: Order of the networks of an option in the BOM, and the role each network key plays.
NETWORK_ORDER = ("RA", "RB", "R", "C")

# Relative tolerance for "this stock line holds the value the search used" (floats from JSON).
_SAME_VALUE = 1e-9

CAUTIONS = (
    "Caution: capacitors can hold a charge after power is removed; discharge electrolytics "
    "through a resistor before handling them.",
    "Caution: when the circuit goes into mains-powered equipment under repair, follow your local "
    "electrical codes and qualified practice; isolate and discharge the equipment first.",
)


@dataclass(frozen=True)
class CircuitSpec:
    """What the saved search says about the circuit the option belongs to."""

    mode: str  # "astable" | "monostable" | "rc" | "value"
    connection: str = ""  # "standard" | "diode" | "output-fed" | "monostable" | "rc" | ""
    chip: str = "bipolar"  # "bipolar" | "cmos"
    vcc: Optional[float] = None  # volts
    diode_vf: Optional[float] = None  # volts

    @property
    def uses_timer(self) -> bool:
        return self.mode in ("astable", "monostable")


@dataclass(frozen=True)
class BomLine:
    """One physical part of the BOM (SI values; ``value`` None for the IC and the diode)."""

    ref: str
    role: str
    kind: str  # "resistor" | "capacitor" | "ic" | "diode"
    value: Optional[float]
    per_board: int
    total: int
    in_stock: bool
    line_id: Optional[int] = None
    tol_minus: Optional[float] = None
    tol_plus: Optional[float] = None
    location: str = ""
    package: str = ""
    rating: Optional[float] = None
    dielectric: str = ""
    note: str = ""
    network: str = ""  # e.g. "series, part 1 of 2"; "" for a single part or an extra
    description: str = ""  # what to obtain, for parts without a value

    @property
    def tolerance(self) -> Optional[dict[str, float]]:
        if self.tol_minus is None or self.tol_plus is None:
            return None
        return {"minus": self.tol_minus, "plus": self.tol_plus}


@dataclass(frozen=True)
class Bom:
    """A whole BOM: every physical part, for ``boards`` boards."""

    search_id: int
    option: int
    boards: int
    spec: CircuitSpec
    lines: tuple[BomLine, ...]
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class PickItem:
    line_id: int
    kind: str
    value: float
    tol_minus: float
    tol_plus: float
    package: str
    quantity: int  # to take, all boards
    on_hand: int
    refs: tuple[str, ...]

    @property
    def missing(self) -> int:
        return max(0, self.quantity - self.on_hand)


@dataclass(frozen=True)
class PickStop:
    """One drawer visited once, with everything to take from it."""

    location: str
    items: tuple[PickItem, ...]


@dataclass(frozen=True)
class Shortage:
    line_id: int
    kind: str
    value: float
    location: str
    needed: int
    on_hand: int

    @property
    def missing(self) -> int:
        return self.needed - self.on_hand


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


def _is(value: float) -> Callable[[float], bool]:
    return lambda v: math.isclose(v, value, rel_tol=1e-6)


def _within(lo: float, hi: float) -> Callable[[float], bool]:
    return lambda v: lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)


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
    counters = {"R": 0, "C": 0}
    lines: list[BomLine] = []
    notes: list[str] = []

    def next_ref(kind: str) -> str:
        letter = "R" if kind == "resistor" else "C"
        counters[letter] += 1
        return f"{letter}{counters[letter]}"

    for key, net in option_networks(spec.mode, option):
        parts = list(net.get("parts") or [])
        if not parts:
            raise OptionShapeError(f"network {key} has no parts")
        physical = sum(int(p["count"]) for p in parts)
        shape = str(net.get("shape") or ("single" if physical == 1 else ""))
        role = _role_for(key, spec.mode)
        i = 0
        for p in parts:
            line_id = int(p["line_id"])
            line = by_id.get(line_id)
            value = float(p["value"])
            if line is None:
                raise OptionOutdatedError(line_id, None, value)
            if not math.isclose(line.value, value, rel_tol=_SAME_VALUE):
                raise OptionOutdatedError(line_id, line.value, value)
            for _ in range(int(p["count"])):
                i += 1
                lines.append(BomLine(
                    ref=next_ref(line.kind), role=role, kind=line.kind, value=line.value,
                    per_board=1, total=boards, in_stock=True, line_id=line.id,
                    tol_minus=line.tol_minus, tol_plus=line.tol_plus, location=line.location,
                    package=line.package, rating=line.rating, dielectric=line.dielectric,
                    note=line.note, network=f"{shape}, part {i} of {physical}" if physical > 1 else "",
                ))

    if spec.uses_timer:
        lines.extend(_extras(spec, stock, boards, derating, lines, next_ref, notes))

    # Mark timing parts whose line cannot cover every use on every board.
    need = demand(lines)
    lines = [
        replace(bl, in_stock=False) if bl.line_id is not None and by_id[bl.line_id].quantity < need[bl.line_id]
        else bl
        for bl in lines
    ]
    if spec.uses_timer and spec.chip == "cmos":
        notes.append(
            "CMOS timer: the control pin is left open (one CMOS 555 data sheet says it need not be "
            "decoupled); fit 10 nF to ground if your part's data sheet asks for it."
        )
    if any(bl.dielectric in POLARIZED for bl in lines if bl.kind == "capacitor"):
        notes.append("Polarized capacitors: fit the + lead towards the more positive node.")
    if spec.uses_timer or any(bl.kind == "capacitor" for bl in lines):
        notes.extend(CAUTIONS)
    return Bom(search_id=search_id, option=option_rank, boards=boards, spec=spec,
               lines=tuple(lines), notes=tuple(notes))


def _extras(
    spec: CircuitSpec,
    stock: Sequence[StockLine],
    boards: int,
    derating: Callable[[str], float],
    so_far: list[BomLine],
    next_ref: Callable[[str], str],
    notes: list[str],
) -> list[BomLine]:
    chip = "CMOS" if spec.chip == "cmos" else "bipolar"
    out: list[BomLine] = [BomLine(
        ref="U1", role=ROLE_IC, kind="ic", value=None, per_board=1, total=boards, in_stock=False,
        description=f"555 timer, {chip}",
    )]
    if spec.connection == "diode":
        schottky = spec.diode_vf is not None and spec.diode_vf < 0.45
        what = "small-signal Schottky diode" if schottky else "small-signal silicon diode, 1N4148 class"
        vf = f"; Vf about {spec.diode_vf:g} V as searched" if spec.diode_vf is not None else ""
        out.append(BomLine(
            ref="D1", role=ROLE_DIODE, kind="diode", value=None, per_board=1, total=boards,
            in_stock=False, description=what,
            note=f"across RB, anode at DIS, cathode at THR/TRIG{vf}",
        ))

    wanted: list[tuple[str, float, Callable[[float], bool], Sequence[str], Sequence[str], str]] = []
    if spec.chip != "cmos":
        wanted.append((ROLE_CV, CV_CAPACITOR_F, _is(CV_CAPACITOR_F), CERAMIC + FILM, POLARIZED,
                       "CV (pin 5) to ground"))
    wanted.append((ROLE_DECOUPLE, DECOUPLING_F, _is(DECOUPLING_F), CERAMIC + FILM, POLARIZED,
                   "VCC to ground, close to the IC"))
    if spec.chip != "cmos":
        lo, hi = RESERVOIR_RANGE_F
        wanted.append((ROLE_RESERVOIR, lo, _within(lo, hi), POLARIZED + CERAMIC, (),
                       "VCC to ground, close to the IC; 10-100 µF"))

    taken = demand(so_far)
    visited = {bl.location for bl in so_far if bl.line_id is not None}
    for role, nominal, fits, prefer, exclude, where in wanted:
        line, unknown_rating = _pick_extra(stock, taken, boards, spec.vcc, derating, fits, prefer,
                                           exclude, visited)
        ref = next_ref("capacitor")
        if line is None:
            need_v = ""
            if spec.vcc is not None:
                diel = "electrolytic" if role == ROLE_RESERVOIR else "X7R"
                need_v = f"; rated at least {math.ceil(spec.vcc / derating(diel) * 10) / 10:g} V"
            out.append(BomLine(
                ref=ref, role=role, kind="capacitor", value=nominal, per_board=1, total=boards,
                in_stock=False, note=f"{where}{need_v}",
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
            ref=ref, role=role, kind="capacitor", value=line.value, per_board=1, total=boards,
            in_stock=True, line_id=line.id, tol_minus=line.tol_minus, tol_plus=line.tol_plus,
            location=line.location, package=line.package, rating=line.rating,
            dielectric=line.dielectric, note=note, description=where,
        ))
    return out


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
    drawer resistors then capacitors, by value."""
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
            package=s.package, quantity=qty, on_hand=s.quantity, refs=tuple(refs[line_id]),
        ))
    kind_order = {"resistor": 0, "capacitor": 1}
    return [
        PickStop(loc, tuple(sorted(items, key=lambda it: (kind_order.get(it.kind, 2), it.value, it.line_id))))
        for loc, items in sorted(stops.items(), key=lambda kv: natural_key(kv[0]))
    ]


def to_obtain(bom: Bom) -> list[BomLine]:
    """Parts the stock does not supply (the IC, the diode, extras with no fitting line)."""
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


# ---------------------------------------------------------------------------------------------
# Formats
# ---------------------------------------------------------------------------------------------

#: A spreadsheet treats a cell starting with one of these as a formula (or strips it into one).
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r", "\n")


def neutralize_cell(text: str) -> str:
    """Make a text cell safe to open in a spreadsheet: a cell that begins with =, +, -, @, a tab,
    CR or LF is prefixed with a single quote so it is shown as text, never evaluated. Numbers this
    module writes are positive and never pass through here."""
    if text and text.startswith(_FORMULA_START):
        return "'" + text
    return text


def _unit(kind: str) -> str:
    from selector.core.notation import FARAD, OHM

    return OHM if kind == "resistor" else FARAD if kind == "capacitor" else ""


def value_text(bl: BomLine) -> str:
    from selector.core.notation import format_value

    if bl.value is None:
        return bl.description
    return format_value(bl.value, _unit(bl.kind))


def tolerance_text(bl: BomLine) -> str:
    from selector.core.notation import format_tolerance

    if bl.tol_minus is None or bl.tol_plus is None:
        return ""
    return format_tolerance(bl.tol_minus, bl.tol_plus)


def rating_text(bl: BomLine) -> str:
    if bl.rating is None:
        return ""
    from selector.core.notation import VOLT, WATT, format_value

    return format_value(bl.rating, WATT if bl.kind == "resistor" else VOLT)


def _number(x: Optional[float]) -> str:
    return "" if x is None else repr(float(x))


CSV_COLUMNS = ("ref", "role", "network", "kind", "value", "value_si", "tolerance", "package",
               "rating", "dielectric", "location", "line_id", "per_board", "total", "in_stock",
               "note")


def to_rows(bom: Bom) -> list[dict[str, str]]:
    """The BOM as text cells (what CSV and Markdown show), in ``CSV_COLUMNS`` order."""
    rows = []
    for bl in bom.lines:
        note = bl.note
        if bl.line_id is None:
            note = "not in stock" + (f"; {bl.note}" if bl.note else "")
        elif not bl.in_stock:
            note = "short in stock" + (f"; {bl.note}" if bl.note else "")
        rows.append({
            "ref": bl.ref, "role": bl.role, "network": bl.network, "kind": bl.kind,
            "value": value_text(bl), "value_si": _number(bl.value), "tolerance": tolerance_text(bl),
            "package": bl.package, "rating": rating_text(bl), "dielectric": bl.dielectric,
            "location": bl.location, "line_id": "" if bl.line_id is None else str(bl.line_id),
            "per_board": str(bl.per_board), "total": str(bl.total),
            "in_stock": "yes" if bl.in_stock else "no", "note": note,
        })
    return rows


def to_csv(bom: Bom) -> str:
    """RFC 4180 CSV (CRLF line ends, header row), every text cell neutralised against formula
    injection. The caller writes it as UTF-8 with a byte-order mark to a file (see the CLI)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow(CSV_COLUMNS)
    for row in to_rows(bom):
        w.writerow([neutralize_cell(row[c]) for c in CSV_COLUMNS])
    return buf.getvalue()


def md_cell(text: str) -> str:
    """A Markdown table cell: backslashes and pipes escaped, line breaks folded to spaces."""
    text = re.sub(r"[\r\n]+", " ", text).strip()
    return text.replace("\\", "\\\\").replace("|", "\\|")


MD_COLUMNS = ("ref", "role", "network", "value", "tolerance", "package", "rating", "dielectric",
              "location", "line_id", "per_board", "total", "in_stock", "note")


def to_markdown(bom: Bom, stops: Sequence[PickStop] = ()) -> str:
    """A Markdown document: the BOM table, the pick list by drawer, then the notes and cautions."""
    from selector.core.notation import format_value

    out = [f"## BOM: search {bom.search_id}, option {bom.option}, {bom.boards} board"
           f"{'s' if bom.boards != 1 else ''}", ""]
    out.append("| " + " | ".join(MD_COLUMNS) + " |")
    out.append("|" + "|".join("---" for _ in MD_COLUMNS) + "|")
    for row in to_rows(bom):
        out.append("| " + " | ".join(md_cell(row[c]) for c in MD_COLUMNS) + " |")
    if stops:
        out += ["", "## Pick list", "", "| location | line_id | value | take | refs |", "|---|---|---|---|---|"]
        for stop in stops:
            for it in stop.items:
                take = f"{it.quantity}" + (f" (short by {it.missing})" if it.missing else "")
                out.append("| " + " | ".join(md_cell(x) for x in (
                    stop.location or "(no location)", str(it.line_id), format_value(it.value, _unit(it.kind)),
                    take, " ".join(it.refs))) + " |")
    if bom.notes:
        out.append("")
        out += [f"- {md_cell(n)}" for n in bom.notes]
    return "\n".join(out) + "\n"


def to_json(bom: Bom) -> dict[str, Any]:
    """``{"search", "option", "boards", "lines": [{"ref", "role", "kind", "value", "tolerance",
    "line_id", "location", "per_board", "total", "in_stock"}]}`` in SI units."""
    return {
        "search": bom.search_id,
        "option": bom.option,
        "boards": bom.boards,
        "lines": [
            {
                "ref": bl.ref, "role": bl.role, "kind": bl.kind, "value": bl.value,
                "tolerance": bl.tolerance, "line_id": bl.line_id, "location": bl.location,
                "per_board": bl.per_board, "total": bl.total, "in_stock": bl.in_stock,
            }
            for bl in bom.lines
        ],
    }


__all__ = [
    "Bom", "BomLine", "CircuitSpec", "PickItem", "PickStop", "Shortage", "OptionOutdatedError",
    "OptionShapeError", "assemble_bom", "demand", "pick_list", "to_obtain", "shortages",
    "neutralize_cell", "md_cell", "to_csv", "to_markdown", "to_json", "to_rows", "natural_key",
    "CAUTIONS", "ROLE_TIMING_C", "ROLE_IC", "ROLE_DIODE", "ROLE_CV", "ROLE_DECOUPLE",
    "ROLE_RESERVOIR", "ROLE_NETWORK",
]
