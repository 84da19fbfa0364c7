"""BOM content, extras matched in stock, pick list, and every output format parsed back.

Expected BOMs below are written out by hand from the option JSON and the bench stock in
bom_fixtures.py (never produced by the code under test). Where an expectation rests on an outside
fact, the source is named beside it (facts.md section and source tag)."""

from __future__ import annotations

import csv
import io
import json
import re

import pytest

from bom_fixtures import (
    BENCH_STOCK, add_search, add_stock, astable_diode, astable_standard, bench_db, monostable_parallel,
    part, rc_series_pair,
)
from selector.core import bom as B
from selector.services.bom import safe_derating
from selector.core.types import StockLine


def stock_lines(extra: dict | None = None, drop: tuple = ()) -> list[StockLine]:
    table = dict(BENCH_STOCK)
    table.update(extra or {})
    return [
        StockLine(id=i, kind=k, value=v, tol_minus=tm, tol_plus=tp, quantity=q, location=loc, package=pkg,
                  rating=r, dielectric=d, polarized=d in ("electrolytic", "tantalum"), note=n)
        for i, (k, v, tm, tp, q, loc, pkg, r, d, n) in sorted(table.items()) if i not in drop
    ]


def build(option, *, mode="astable", connection=None, chip="bipolar", vcc=9.0, diode_vf=None, boards=1,
          stock=None):
    spec = B.CircuitSpec(mode=mode, connection=connection or option.get("connection", ""), chip=chip, vcc=vcc,
                         diode_vf=diode_vf)
    return B.assemble_bom(7, 1, spec, option, stock if stock is not None else stock_lines(), boards,
                          safe_derating)


def summary(bom):
    return [(bl.ref, bl.role, bl.kind, bl.value, bl.line_id, bl.per_board, bl.total, bl.in_stock)
            for bl in bom.lines]


# --------------------------------------------------------------------------- BOM content


def test_standard_astable_bom_for_three_boards():
    bom = build(astable_standard(), boards=3)
    # Hand-written: networks in role order RA, RB, C; a 2-part series RB is two physical parts;
    # then the IC, CV bypass 10 nF [facts §5, S14], 100 nF decoupling (common practice) and the
    # bipolar reservoir 10-100 µF [facts §6, S3]. 47 µF/25 V electrolytic at 9 V: 25 × 0.8 = 20 V
    # ≥ 9 V (0.8 for electrolytics is common practice, facts §8.5).
    assert summary(bom) == [
        ("R1", "RA", "resistor", 4700.0, 2, 1, 3, True),
        ("R2", "RB", "resistor", 10000.0, 1, 1, 3, True),
        ("R3", "RB", "resistor", 1000.0, 3, 1, 3, True),
        ("C1", "timing capacitor", "capacitor", 10e-9, 4, 1, 3, True),
        ("U1", "timer IC", "ic", None, None, 1, 3, False),
        ("C2", "control-pin capacitor", "capacitor", 10e-9, 4, 1, 3, True),
        ("C3", "supply decoupling capacitor", "capacitor", 100e-9, 5, 1, 3, True),
        ("C4", "supply reservoir capacitor", "capacitor", 47e-6, 6, 1, 3, True),
    ]
    assert [bl.network for bl in bom.lines[:3]] == ["", "series: R2 + R3", "series: R2 + R3"]
    assert B.wirings(bom) == [("RB", "series: R2 + R3")]
    assert bom.lines[4].description == "555 timer, bipolar"
    assert B.demand(bom.lines) == {1: 3, 2: 3, 3: 3, 4: 6, 5: 3, 6: 3}
    assert any("discharge electrolytics" in n for n in bom.notes)
    assert any("local electrical codes and qualified practice" in n for n in bom.notes)
    # RA: VCC→DIS, RB: DIS→THR/TRIG, C: THR→GND (facts §1); RESET to VCC when unused (facts §4, S1/S3)
    assert bom.notes[0] == ("Connections: RA from VCC to DIS; RB from DIS to THR and TRIG; timing capacitor "
                            "from THR/TRIG to GND.")
    assert bom.notes[1] == "Tie RESET to VCC when it is not used."


def test_diode_steered_astable_lists_the_diode_and_prefers_ceramic_decoupling():
    bom = build(astable_diode(), diode_vf=0.65, boards=2)
    assert summary(bom) == [
        ("R1", "RA", "resistor", 10000.0, 1, 1, 2, True),
        ("R2", "RB", "resistor", 4700.0, 2, 1, 2, True),
        ("C1", "timing capacitor", "capacitor", 100e-9, 8, 1, 2, True),
        ("U1", "timer IC", "ic", None, None, 1, 2, False),
        ("D1", "steering diode", "diode", None, None, 1, 2, False),
        ("C2", "control-pin capacitor", "capacitor", 10e-9, 4, 1, 2, True),
        # 100 nF X7R (line 5) before the PET film line 8: ceramic first for decoupling.
        ("C3", "supply decoupling capacitor", "capacitor", 100e-9, 5, 1, 2, True),
        ("C4", "supply reservoir capacitor", "capacitor", 47e-6, 6, 1, 2, True),
    ]
    d1 = bom.lines[4]
    # Steering diode across RB, anode at DIS, cathode at the capacitor [facts §2, S8].
    assert "1N4148" in d1.description and "anode at DIS" in d1.note
    schottky = build(astable_diode(), diode_vf=0.3).lines[4]
    assert "Schottky" in schottky.description  # 0.3 V is a Schottky drop [facts §2, S16]


def test_monostable_cmos_has_no_control_pin_or_reservoir_capacitor():
    bom = build(monostable_parallel(), mode="monostable", chip="cmos", boards=4)
    # CMOS: CV "need not be decoupled" [facts §5, S6]; "no crowbarring" [facts §6, S6].
    assert summary(bom) == [
        ("R1", "R", "resistor", 10000.0, 1, 1, 4, True),
        ("R2", "R", "resistor", 10000.0, 1, 1, 4, True),
        ("C1", "timing capacitor", "capacitor", 47e-6, 6, 1, 4, True),
        ("U1", "timer IC", "ic", None, None, 1, 4, False),
        ("C2", "supply decoupling capacitor", "capacitor", 100e-9, 5, 1, 4, True),
    ]
    assert bom.lines[3].description == "555 timer, CMOS"
    assert B.demand(bom.lines) == {1: 8, 6: 4, 5: 4}
    assert any("control pin is left open" in n for n in bom.notes)
    # monostable: R from VCC to DIS/THR, C from THR to GND, trigger on TRIG (facts §4)
    assert bom.notes[0].startswith("Connections: R from VCC to DIS and THR; timing capacitor from THR to GND")
    assert [bl.network for bl in bom.lines[:2]] == ["parallel: R1 ∥ R2"] * 2


def test_rc_and_value_options_are_networks_only():
    rc = build(rc_series_pair(), mode="rc")
    assert not any(n.startswith("Connections") or "RESET" in n for n in rc.notes)
    assert summary(rc) == [
        ("R1", "R", "resistor", 10000.0, 1, 1, 1, True),
        ("R2", "R", "resistor", 10000.0, 1, 1, 1, True),
        ("C1", "C", "capacitor", 100e-9, 5, 1, 1, True),
    ]
    value_option = {"rank": 1, "value": 14.7e3, "error": 0.0, "min": 14.2e3, "max": 15.2e3, "shape": "series",
                    "parts": [part(1, 10e3, 1, "A1"), part(2, 4.7e3, 1, "A10")]}
    v = build(value_option, mode="value", connection="")
    assert summary(v) == [
        ("R1", "network", "resistor", 10000.0, 1, 1, 1, True),
        ("R2", "network", "resistor", 4700.0, 2, 1, 1, True),
    ]


def test_mixed_three_part_networks_are_wired_as_their_value_says():
    # (B ∥ C) + A with B = A = 10 kΩ (line 1) and C = 4.7 kΩ (line 2). The saved JSON only says
    # "line 1 twice, line 2 once"; the lone series part is the one that reproduces the value.
    value = 10e3 * 4.7e3 / (10e3 + 4.7e3) + 10e3  # parallel pair, then in series (Ohm's law)
    opt = {"connection": "rc", "networks": {
        "R": {"value": value, "shape": "series+parallel", "parts": [part(1, 10e3, 2, "A1"), part(2, 4.7e3, 1, "A10")]},
        "C": {"value": 100e-9, "shape": "single", "parts": [part(5, 100e-9, 1, "B2")]}}}
    bom = build(opt, mode="rc")
    assert [(bl.ref, bl.value) for bl in bom.lines[:3]] == [("R1", 10e3), ("R2", 4.7e3), ("R3", 10e3)]
    assert B.wirings(bom) == [("R", "series+parallel: (R1 ∥ R2) + R3")]
    # Capacitors: (B ∥ C) in series with A; B = 10 nF, C = A = 100 nF (parallel C add, series C
    # add reciprocally): 110 nF in series with 100 nF.
    cval = 1 / (1 / 110e-9 + 1 / 100e-9)
    copt = {"connection": "rc", "networks": {
        "R": {"value": 10e3, "shape": "single", "parts": [part(1, 10e3, 1, "A1")]},
        "C": {"value": cval, "shape": "series+parallel", "parts": [part(4, 10e-9, 1, "B1"), part(5, 100e-9, 2, "B2")]}}}
    cbom = build(copt, mode="rc")
    assert [(bl.ref, bl.value) for bl in cbom.lines[1:]] == [("C1", 10e-9), ("C2", 100e-9), ("C3", 100e-9)]
    assert B.wirings(cbom) == [("C", "series+parallel: (C1 ∥ C2) + C3")]
    # (B + C) ∥ A with A = 1 kΩ alone: 20 kΩ ∥ 1 kΩ
    pval = 1 / (1 / 20e3 + 1 / 1e3)
    popt = {"connection": "rc", "networks": {
        "R": {"value": pval, "shape": "parallel+series", "parts": [part(3, 1e3, 1, "A2"), part(1, 10e3, 2, "A1")]},
        "C": {"value": 100e-9, "shape": "single", "parts": [part(5, 100e-9, 1, "B2")]}}}
    pbom = build(popt, mode="rc")
    assert [(bl.ref, bl.value) for bl in pbom.lines[:3]] == [("R1", 10e3), ("R2", 10e3), ("R3", 1e3)]
    assert B.wirings(pbom) == [("R", "parallel+series: (R1 + R2) ∥ R3")]


def test_extra_rating_must_cover_vcc_after_derating():
    # Derating factors: electrolytic 0.8 (common practice), class-2 ceramic 0.5 (common practice),
    # film 0.8 (common practice) — facts §8.5.
    at15 = {bl.role: bl.line_id for bl in build(astable_standard(), vcc=15.0).lines}
    assert at15[B.ROLE_RESERVOIR] == 6  # 25 V × 0.8 = 20 V ≥ 15 V
    at24 = build(astable_standard(), vcc=24.0)
    res = [bl for bl in at24.lines if bl.role == B.ROLE_RESERVOIR][0]
    # 47 µF/25 V gives 20 V < 24 V and 22 µF/10 V gives 8 V: neither; listed as 10 µF.
    assert (res.line_id, res.value, res.in_stock) == (None, 10e-6, False)
    assert "rated at least 30 V" in res.note  # 24 / 0.8
    assert {bl.role: bl.line_id for bl in at24.lines}[B.ROLE_DECOUPLE] == 5  # X7R: 50 × 0.5 = 25 ≥ 24
    at30 = {bl.role: bl.line_id for bl in build(astable_standard(), vcc=30.0).lines}
    assert at30[B.ROLE_DECOUPLE] == 8  # X7R 25 V < 30 V; PET film 63 × 0.8 = 50.4 V ≥ 30 V


def test_extras_never_take_what_the_timing_network_already_needs():
    bom = build(astable_standard(), boards=25)
    roles = {bl.ref: bl for bl in bom.lines}
    # Line 4 (10 nF, 40 on hand): the timing capacitor takes 25, only 15 remain for the CV bypass.
    assert roles["C1"].line_id == 4 and roles["C1"].in_stock
    assert (roles["C2"].role, roles["C2"].line_id, roles["C2"].in_stock) == (B.ROLE_CV, None, False)
    assert roles["R3"].in_stock is False  # line 3 holds 20 < 25
    assert [(s.line_id, s.needed, s.on_hand, s.missing) for s in B.shortages(bom, stock_lines())] == [(3, 25, 20, 5)]
    # reservoir: line 6 holds only 10 < 25, line 7 is under-rated: not in stock
    assert roles["C4"].line_id is None


def test_known_rating_beats_a_better_dielectric_with_unknown_rating():
    extra = {9: ("capacitor", 100e-9, 0.05, 0.05, 50, "B1", "radial", None, "C0G", "")}
    bom = build(astable_standard(), stock=stock_lines(extra))
    dec = [bl for bl in bom.lines if bl.role == B.ROLE_DECOUPLE][0]
    assert dec.line_id == 5
    only_unknown = build(astable_standard(), stock=stock_lines(extra, drop=(5, 8)))
    dec = [bl for bl in only_unknown.lines if bl.role == B.ROLE_DECOUPLE][0]
    assert dec.line_id == 9 and "rating unknown" in dec.note
    assert any("voltage rating is unknown" in n for n in only_unknown.notes)


def test_an_extra_from_a_drawer_already_visited_is_preferred():
    extra = {10: ("capacitor", 100e-9, 0.10, 0.10, 30, "B1", "radial", 50.0, "X7R", "")}
    bom = build(astable_standard(), stock=stock_lines(extra))
    dec = [bl for bl in bom.lines if bl.role == B.ROLE_DECOUPLE][0]
    assert dec.line_id == 10  # same drawer as the timing capacitor (line 4, B1)


def test_pick_list_visits_each_drawer_once_in_natural_order():
    bom = build(astable_standard(), boards=3)
    stops = B.pick_list(bom, stock_lines())
    assert [s.location for s in stops] == ["A1", "A2", "A10", "B1", "B2", "C1"]
    b1 = stops[3]
    assert [(it.line_id, it.quantity, it.refs) for it in b1.items] == [(4, 6, ("C1", "C2"))]
    assert sum(it.quantity for s in stops for it in s.items) == 3 * 7  # 7 stock parts per board
    assert [bl.ref for bl in B.to_obtain(bom)] == ["U1"]


def test_a_changed_or_missing_line_makes_the_option_outdated():
    with pytest.raises(B.OptionOutdatedError) as gone:
        build(astable_standard(), stock=stock_lines(drop=(3,)))
    assert (gone.value.line_id, gone.value.now) == (3, None)
    changed = {3: ("resistor", 1.2e3, 0.05, 0.05, 20, "A2", "axial", 0.25, "", "")}
    with pytest.raises(B.OptionOutdatedError) as other:
        build(astable_standard(), stock=stock_lines(changed))
    assert (other.value.line_id, other.value.now, other.value.expected) == (3, 1.2e3, 1e3)


# --------------------------------------------------------------------------- formats


def test_csv_parses_back_with_the_csv_module():
    bom = build(astable_standard(), boards=2)
    text = B.to_csv(bom)
    assert "\r\n" in text  # RFC 4180 line ends
    rows = list(csv.DictReader(io.StringIO(text, newline="")))
    assert tuple(rows[0].keys()) == B.CSV_COLUMNS
    assert [r["ref"] for r in rows] == ["R1", "R2", "R3", "C1", "U1", "C2", "C3", "C4"]
    assert [float(r["value_si"]) for r in rows if r["value_si"]] == [4700.0, 10000.0, 1000.0, 1e-8, 1e-8, 1e-7, 4.7e-5]
    assert [r["value"] for r in rows[:4]] == ["4.7 kΩ", "10 kΩ", "1 kΩ", "10 nF"]
    assert {r["total"] for r in rows} == {"2"} and {r["per_board"] for r in rows} == {"1"}
    u1 = rows[4]
    assert (u1["line_id"], u1["in_stock"], u1["note"]) == ("", "no", "not in stock")
    assert rows[0]["tolerance"] == "±1 %" and rows[0]["note"] == "metal film"


def test_json_shape_and_values():
    bom = build(astable_diode(), diode_vf=0.65, boards=2)
    data = json.loads(json.dumps(B.to_json(bom)))
    assert set(data) == {"search", "option", "boards", "lines"}
    assert (data["search"], data["option"], data["boards"]) == (7, 1, 2)
    keys = {"ref", "role", "kind", "value", "tolerance", "line_id", "location", "per_board", "total", "in_stock",
            "part"}
    assert all(set(line) == keys for line in data["lines"])
    r1, d1 = data["lines"][0], data["lines"][4]
    assert r1 == {"ref": "R1", "role": "RA", "kind": "resistor", "value": 10000.0,
                  "tolerance": {"minus": 0.05, "plus": 0.05}, "line_id": 1, "location": "A1",
                  "per_board": 1, "total": 2, "in_stock": True, "part": ""}
    assert d1 == {"ref": "D1", "role": "steering diode", "kind": "diode", "value": None, "tolerance": None,
                  "line_id": None, "location": "", "per_board": 1, "total": 2, "in_stock": False, "part": ""}


_UNESCAPED_PIPE = re.compile(r"(?<!\\)\|")


def md_rows(text: str, header_first: str) -> list[dict[str, str]]:
    """Parse the Markdown table whose header starts with ``| header_first |`` (an independent
    reader: split on unescaped pipes, then undo the two escapes)."""
    lines = text.splitlines()
    start = next(i for i, ln in enumerate(lines) if ln.startswith(f"| {header_first} |"))
    cells = lambda ln: [c.strip().replace("\\|", "|").replace("\\\\", "\\") for c in _UNESCAPED_PIPE.split(ln)[1:-1]]
    header = cells(lines[start])
    assert set(lines[start + 1]) <= set("|-")
    out = []
    for ln in lines[start + 2:]:
        if not ln.startswith("|"):
            break
        row = cells(ln)
        assert len(row) == len(header), ln
        out.append(dict(zip(header, row)))
    return out


def test_markdown_rows_parse_back_and_pipes_are_escaped():
    extra = {1: ("resistor", 10e3, 0.05, 0.05, 100, "A|1", "axial", 0.25, "", "back\\slash | note")}
    stock = stock_lines(extra)
    bom = build(astable_standard(), stock=stock, boards=2)
    text = B.to_markdown(bom, B.pick_list(bom, stock))
    rows = md_rows(text, "ref")
    assert [r["ref"] for r in rows] == ["R1", "R2", "R3", "C1", "U1", "C2", "C3", "C4"]
    assert rows[1]["location"] == "A|1" and rows[1]["note"] == "back\\slash | note"
    assert rows[1]["role"] == "RB" and rows[1]["total"] == "2"
    picks = md_rows(text, "location")
    # natural order compares "a" + 2 with "a|" + 1: the shorter text "a" sorts first
    assert [p["location"] for p in picks] == ["A2", "A10", "A|1", "B1", "B2", "C1"]
    assert "- Caution: capacitors can hold a charge" in text


@pytest.mark.parametrize("text, safe", [
    # Formula-injection neutralising: a leading =, +, -, @, tab or CR makes a spreadsheet treat
    # the cell as a formula (OWASP "CSV Injection" guidance, from memory); prefix a single quote.
    ("=HYPERLINK(\"http://x\")", "'=HYPERLINK(\"http://x\")"),
    ("+SUM(A1:A2)", "'+SUM(A1:A2)"),
    ("-2+3", "'-2+3"),
    ("@cmd", "'@cmd"),
    ("\tA1", "'\tA1"),
    ("\rA1", "'\rA1"),
    ("A1", "A1"),
    ("", ""),
    ("drawer =3", "drawer =3"),
])
def test_neutralize_cell(text, safe):
    assert B.neutralize_cell(text) == safe


def test_every_text_field_reaching_the_csv_is_neutralised():
    hostile = {
        # location, package, note on a resistor; dielectric and package on the timing capacitor
        1: ("resistor", 10e3, 0.05, 0.05, 100, "=1+2", "+SUM(A1)", 0.25, "", "-2 spare"),
        4: ("capacitor", 10e-9, 0.05, 0.05, 40, "@A1", "\tradial", 50.0, "=C0G", "\rnote"),
    }
    bom = build(astable_standard(), stock=stock_lines(hostile))
    rows = list(csv.DictReader(io.StringIO(B.to_csv(bom), newline="")))
    for row in rows:
        for col, cell in row.items():
            assert not cell[:1] in ("=", "+", "-", "@", "\t", "\r"), (col, cell)
    r2 = rows[1]
    assert (r2["location"], r2["package"], r2["note"]) == ("'=1+2", "'+SUM(A1)", "'-2 spare")
    c1 = rows[3]
    assert (c1["location"], c1["package"], c1["dielectric"], c1["note"]) == ("'@A1", "'\tradial", "'=C0G", "'\rnote")


def test_an_asymmetric_tolerance_cell_is_kept_as_text():
    # "-20/+80 %" (IEC 60062 letter Z, facts §8.2) starts with "-": a spreadsheet would compute it.
    z5u = {5: ("capacitor", 100e-9, 0.20, 0.80, 30, "B2", "radial", 50.0, "Z5U", "")}
    bom = build(astable_standard(), stock=stock_lines(z5u))
    rows = list(csv.DictReader(io.StringIO(B.to_csv(bom), newline="")))
    dec = [r for r in rows if r["role"] == B.ROLE_DECOUPLE][0]
    assert (dec["line_id"], dec["tolerance"]) == ("5", "'-20/+80 %")
    assert B.to_json(bom)["lines"][6]["tolerance"] == {"minus": 0.20, "plus": 0.80}


# --------------------------------------------------------------------------- through the CLI


@pytest.fixture
def bench(db_url, db_path):
    engine = bench_db(db_url, [astable_standard(), astable_diode()], boards=3, diode_vf=0.65)
    add_search(engine, "monostable", [monostable_parallel()], chip="cmos", boards=2)
    engine.dispose()
    return db_path


def test_cli_bom_table_shows_parts_pick_list_and_cautions(cli, bench):
    r = cli("bom", "1", "--search", "1", db=bench)
    assert r.returncode == 0, r.stderr
    out = r.stdout
    for text in ("BOM: option 1 of search 1, 3 boards", "Pick list", "Wiring: RB = R2 + R3 (series)", "U1",
                 "555 timer, bipolar",
                 "discharge electrolytics", "qualified practice"):
        assert text in out, text
    assert "Traceback" not in r.stderr


def test_cli_bom_json_defaults_to_latest_search_and_its_boards(cli, bench):
    r = cli("bom", "1", "--format", "json", db=bench)
    assert r.returncode == 0, r.stderr
    data = json.loads(r.stdout)
    assert (data["search"], data["option"], data["boards"]) == (2, 1, 2)
    assert [(x["ref"], x["role"], x["total"]) for x in data["lines"]] == [
        ("R1", "R", 2), ("R2", "R", 2), ("C1", "timing capacitor", 2), ("U1", "timer IC", 2),
        ("C2", "supply decoupling capacitor", 2)]


def test_cli_bom_csv_file_has_a_bom_and_parses(cli, bench, tmp_path):
    out = tmp_path / "bom.csv"
    r = cli("bom", "2", "--search", "1", "--boards", "5", "--format", "csv", "--output", str(out), db=bench)
    assert r.returncode == 0, r.stderr
    raw = out.read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf")  # UTF-8 byte-order mark, so spreadsheets read Ω and µ
    rows = list(csv.DictReader(io.StringIO(raw.decode("utf-8-sig"), newline="")))
    assert [(r_["ref"], r_["role"], r_["total"]) for r_ in rows] == [
        ("R1", "RA", "5"), ("R2", "RB", "5"), ("C1", "timing capacitor", "5"), ("U1", "timer IC", "5"),
        ("D1", "steering diode", "5"), ("C2", "control-pin capacitor", "5"),
        ("C3", "supply decoupling capacitor", "5"), ("C4", "supply reservoir capacitor", "5")]
    assert rows[2]["in_stock"] == "yes"  # line 8 holds 5 PET 100 nF


def test_cli_bom_markdown(cli, bench):
    r = cli("bom", "1", "--search", "1", "--format", "markdown", db=bench)
    assert r.returncode == 0, r.stderr
    rows = md_rows(r.stdout, "ref")
    assert [x["ref"] for x in rows] == ["R1", "R2", "R3", "C1", "U1", "C2", "C3", "C4"]
    assert [x["location"] for x in md_rows(r.stdout, "location")] == ["A1", "A2", "A10", "B1", "B2", "C1"]


def test_cli_bom_errors_are_one_clear_line(cli, db_path, bench, tmp_path):
    r = cli("bom", "9", "--search", "1", db=bench)
    assert (r.returncode, r.stderr.strip()) == (1, "Error: search 1 has no option 9 (it has options 1-2)")
    r = cli("bom", "1", "--search", "42", db=bench)
    assert (r.returncode, r.stderr.strip()) == (1, "Error: there is no saved search 42")
    r = cli("bom", "1", "--boards", "0", db=bench)
    assert r.returncode == 2 and "Traceback" not in r.stderr
    empty = tmp_path / "empty.db"  # a database with no search (SQLite on either backend run)
    r = cli("bom", "1", db=empty)
    assert (r.returncode, r.stderr.strip()) == (1, "Error: there is no saved search yet; run `selector find …` first")


def test_cli_bom_outdated_option(cli, db_url, db_path):
    engine = bench_db(db_url, [astable_standard()])
    with engine.begin() as conn:
        conn.exec_driver_sql("UPDATE stock_lines SET value = 1200.0 WHERE id = 3")
    engine.dispose()
    r = cli("bom", "1", db=db_path)
    assert r.returncode == 1
    assert r.stderr.strip() == ("Error: option 1 of search 1 uses stock line 3, which now holds another value; "
                                "run the search again")


def test_add_stock_fixture_keeps_the_ledger_in_step(db_url):
    # guard for the fixtures themselves: the ledger sums to the stock from the start
    from bom_fixtures import ledger_sums, quantities
    from selector.store.db import open_engine

    engine = open_engine(db_url)
    add_stock(engine, BENCH_STOCK)
    assert quantities(engine) == {i: spec[4] for i, spec in BENCH_STOCK.items()}
    assert ledger_sums(engine) == {i: spec[4] for i, spec in BENCH_STOCK.items() if spec[4]}
    engine.dispose()


# --------------------------------------------------------------------------- laws over any text

from hypothesis import given, settings, strategies as st  # noqa: E402

from selector.core.cells import restore_cell, without_controls  # noqa: E402

_text = st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=30)


@settings(max_examples=200, deadline=None)
@given(location=_text, note=_text, package=_text)
def test_any_text_survives_csv_and_never_starts_a_formula(location, note, package):
    stock = stock_lines({2: ("resistor", 4.7e3, 0.01, 0.01, 50, location, package, 0.25, "", note)})
    bom = build(astable_standard(), stock=stock)
    rows = list(csv.DictReader(io.StringIO(B.to_csv(bom), newline="")))
    r1 = rows[0]  # RA comes from line 2
    for original, col in ((location, "location"), (note, "note"), (package, "package")):
        cell = r1[col]
        # never a formula start, except a plain number such as -5 (a spreadsheet reads it as -5)
        assert cell[:1] not in ("=", "+", "-", "@", "\t", "\r", "\n") or float(cell) == float(cell)
        assert restore_cell(cell) == original  # the text mark is the only change (core/cells.py)


@settings(max_examples=200, deadline=None)
@given(location=_text, note=_text)
def test_any_text_survives_a_markdown_cell(location, note):
    stock = stock_lines({2: ("resistor", 4.7e3, 0.01, 0.01, 50, location, "axial", 0.25, "", note)})
    bom = build(astable_standard(), stock=stock)
    row = md_rows(B.to_markdown(bom), "ref")[0]
    fold = lambda t: " ".join(t.splitlines())  # documented: each line boundary becomes one space
    # the reader strips cell padding, so compare without outer whitespace
    # ... and control characters (ESC, BEL, C1) are removed: the Markdown is shown on terminals
    assert row["location"] == without_controls(fold(location)).strip()
    assert row["note"] == without_controls(fold(note)).strip()
