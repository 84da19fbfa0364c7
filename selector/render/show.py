"""``selector show N``: one option in full, for a person at a terminal — each network with its
parts, drawers, stock lines and where it connects; the predictions with every error, the worst
case and the yield and what they include; the alternatives; a drawing of the output to scale; the
BOM preview; the cautions. What is said per circuit (wiring, formula, cautions) comes from the
circuit registry. The picture (``--svg``) is in :mod:`selector.render.picture`."""

from __future__ import annotations

import math
import re
from typing import Any, Mapping, Optional

from selector.render.layout import Col, paragraph, print_lines, table_lines
from selector.render.safe import printable
from selector.render.timing import (ROLES, _span, drawers, error_columns, error_text, errors_of, freq_text,
                                    network_json_text, pct_text, points_text, range_text, time_text, title_of,
                                    yield_text)

_CLAUSE = re.compile(r"^(?:Connections:\s*)?(RA|RB|R|C|timing capacitor)\s+from\s+(.+?)\s+to\s+(.+?)"
                     r"(?:\s+with\s+(.*))?$")
_DIODE = re.compile(r"anode at ([^,]+), cathode at ([^)]+)\)")


def connections(wiring: str, mode: str) -> dict[str, tuple[str, str]]:
    """Role -> (from, to) read from the circuit kind's wiring sentence (``CircuitKind.wiring``),
    plus "D" for a steering diode (anode, cathode). A plain RC (no wiring sentence) is an
    input-to-output R and a C to ground."""
    out: dict[str, tuple[str, str]] = {}
    for clause in (wiring or "").rstrip(".").split(";"):
        m = _CLAUSE.match(clause.strip())
        if not m:
            continue
        role = "C" if m.group(1) == "timing capacitor" else m.group(1)
        out[role] = (m.group(2).replace(" and ", "/"), m.group(3).replace(" and ", "/"))
        d = _DIODE.search(m.group(4) or "")
        if d:
            out["D"] = (d.group(1).strip(), d.group(2).strip())
    if not out and mode == "rc":
        out = {"R": ("IN", "OUT"), "C": ("OUT", "GND")}
    return out


def _kind(report):
    return report.kind


def _settings(report):
    from selector.core.circuits.base import Settings

    p = report.params
    return Settings(str(p.get("chip") or "bipolar"), float(p.get("vcc") or 0.0), p.get("diode_vf"),
                    dict(p.get("options") or {}))


def _tol(ln) -> str:
    from selector.core.notation import format_tolerance

    return format_tolerance(ln.tol_minus, ln.tol_plus)


def network_lines(report, width: int) -> list[str]:
    from selector.core import bom as core_bom

    kind = _kind(report)
    pins = connections(getattr(kind, "wiring", ""), report.mode)
    bom_lines = report.bom.bom.lines
    out: list[str] = ["Networks (+ = in series, ∥ = in parallel, for capacitors too)"]
    for role in ROLES:
        net = (report.option.get("networks") or {}).get(role)
        if net is None:
            continue
        unit_value = network_json_text(role, net)
        head = f"  {role} = {unit_value}"
        if role in pins:
            head += f", from {pins[role][0]} to {pins[role][1]}"
        out += paragraph(head, width, "      ")
        label = core_bom.ROLE_TIMING_C if role == "C" and report.mode != "rc" else role
        mine = [bl for bl in bom_lines if bl.role == label and bl.line_id is not None]
        for bl in mine:
            ln = report.lines.get(bl.line_id)
            bits = [_value(bl.kind, bl.value)]
            if ln is not None:
                bits[0] += " " + _tol(ln)
                if ln.rating is not None:
                    bits.append(_value("rating-" + ln.kind, ln.rating))
                if ln.dielectric:
                    bits.append(printable(ln.dielectric))
                bits.append(f"drawer {printable(ln.location or '?')}, stock line {ln.id} ({ln.quantity} on hand)")
            out += paragraph(f"    {bl.ref}: " + ", ".join(bits), width, "      ")
        formulas = {bl.network for bl in mine if bl.network}
        for f in formulas:
            shape, _, formula = f.partition(": ")
            out += paragraph(f"    wired {formula} ({shape})", width, "      ")
    if "D" in pins:
        out += paragraph(f"  D = steering diode, anode at {pins['D'][0]}, cathode at {pins['D'][1]}", width, "      ")
    wiring = getattr(kind, "wiring", "")
    if wiring:
        out += paragraph(wiring, width, "  ")
    return out


def _value(kind: str, value: Optional[float]) -> str:
    from selector.core.notation import format_value, kind_units

    if value is None:
        return ""
    if kind.startswith("rating-"):  # a stock line's rating: W for resistors and trimmers, V for capacitors
        return format_value(value, kind_units(kind[len("rating-"):])[1])
    return format_value(value, kind_units(kind)[0])


_QUANTITIES = (("frequency_hz", "frequency", "frequency"), ("duty", "duty (HIGH)", "duty_points"),
               ("t_high_s", "t_high", None), ("t_low_s", "t_low", None), ("width_s", "width", "width"),
               ("tau_s", "τ", "tau"), ("corner_hz", "corner", "corner"))
_TARGET_KEY = {"frequency": "frequency_hz", "duty_points": "duty", "width": "width_s", "tau": "tau_s",
               "corner": "corner_hz"}


def _quantity_text(key: str, v: float) -> str:
    if key == "duty":
        return f"{v * 100:.1f} %"
    return freq_text(v) if key.endswith("_hz") else time_text(v)


def prediction_lines(report, width: int) -> list[str]:
    """Each predicted quantity with its error against the target, the worst case and the yield,
    each saying what it includes."""
    mode, target, opt = report.mode, report.target, report.option
    errors = errors_of(mode, target, opt)
    shown = set(error_columns(mode, target))
    rows = []
    for key, label, err_key in _QUANTITIES:
        v = (opt.get("predicted") or {}).get(key)
        if v is None:
            continue
        cells = [label, _quantity_text(key, v), "", ""]
        if err_key in shown and err_key in errors:
            t = target.get(_TARGET_KEY[err_key])
            cells[2] = error_text(err_key, errors[err_key])
            cells[3] = _quantity_text(_TARGET_KEY[err_key], t) if t is not None else ""
        rng = (opt.get("range") or {}).get(key)
        if rng:
            cells.append(_span(_quantity_text(key, rng[0]), _quantity_text(key, rng[1])))
        else:
            cells.append("")
        rows.append(cells)
    out = ["Predicted"]
    out += ["  " + str(line) for line in table_lines(
        [Col("quantity"), Col("predicted", right=True), Col("error", right=True), Col("target", right=True),
         Col("worst case")],
        rows, width - 2)]
    p = report.params
    accept = float(p.get("accept") or 0.05)
    kind = _kind(report)
    spread = []
    if kind is not None:
        try:
            spread = [u.label or u.name for u in kind.uncertain(kind.limits(_settings(report)))]
        except Exception:  # a settings record this version cannot resolve: parts only
            spread = []
    includes = "part tolerances" + ("" if not spread else " and the spread of " + " and ".join(spread))
    if opt.get("adjustable"):
        out += paragraph(f"  After the trimmer is set on target: every corner of every part's tolerance band "
                         f"({includes}) can be set onto the target with travel to spare, so the worst case "
                         "of the adjusted quantity is the target itself and the yield counts every build.",
                         width, "    ")
        if opt.get("why"):
            out += paragraph(f"  Ranked {opt.get('rank')}: {printable(opt['why'])}, after the fixed options "
                             "(trimmer options do not count against --top).", width, "    ")
        return out
    out += paragraph(f"  Worst case: the corners of every part's tolerance band ({includes}).", width, "    ")
    y = opt.get("yield")
    what = "frequency and duty" if mode == "astable" and target.get("duty") is not None else \
        {"astable": "frequency", "monostable": "width"}.get(mode, "corner" if target.get("corner_hz") else "τ")
    text = (f"  Yield {yield_text(y)}: share of simulated builds ({p.get('distribution', 'uniform')} within "
            f"tolerance, seed {p.get('seed', 0)}) with the {what} within ±{accept * 100:g} % of target; "
            f"{includes}")
    if opt.get("yield_parts_only") is not None:
        text += f", the chip's and the supply's spread; parts alone {yield_text(opt['yield_parts_only'])}."
    else:
        chip_error = kind.chip_error(_settings(report)) if kind is not None else None
        text += f" ({chip_error})." if chip_error else "."
    out += paragraph(text, width, "    ")
    if opt.get("why"):
        out += paragraph(f"  Ranked {opt.get('rank')}: {printable(opt['why'])}.", width, "    ")
    return out


def alternative_lines(report, width: int) -> list[str]:
    alts = report.option.get("alternatives") or []
    if not alts:
        return []
    out = paragraph("Alternatives (same values from other drawers or dielectrics; bom and pull use the "
                    "one above)", width)
    for i, alt in enumerate(alts, start=1):
        nets = alt.get("networks") or {}
        items = [f"{role} {network_json_text(role, nets[role])}" for role in ROLES if role in nets]
        where = ", ".join(drawers({"networks": nets}))
        lines_ = sorted({p["line_id"] for n in nets.values() for p in n.get("parts", []) if "line_id" in p})
        text = (f"  {i}. " + "  ".join(items) + f"  drawers {where}"
                + (f" (lines {', '.join(map(str, lines_))})" if lines_ else "")
                + (f", yield {yield_text(alt.get('yield'))}{_sample_note(alt)}" if alt.get("yield") is not None else ""))
        out += paragraph(text, width, "     ")
    return out


def _sample_note(alt: dict) -> str:
    """`` (±0.4 points, 2000 builds)`` for an alternative's yield drawn on fewer builds than its
    option's (two standard errors, as the JSON's yield_standard_error states one); empty otherwise."""
    n, se = alt.get("yield_samples"), alt.get("yield_standard_error")
    if not isinstance(n, int) or not isinstance(se, float) or se != se:
        return ""
    return f" (±{2 * se * 100:.1f} points, {n} builds)"


def waveform_lines(report, width: int) -> list[str]:
    """The output drawn to scale: two periods of an astable (t_high and t_low in proportion), the
    pulse of a monostable after its trigger, the charging curve of an RC."""
    p = report.option.get("predicted") or {}
    span = max(20, min(64, width - 8))
    if report.mode == "astable" and p.get("t_high_s") and p.get("t_low_s"):
        th, tl = p["t_high_s"], p["t_low_s"]
        period = span // 2
        h = min(period - 2, max(2, round(period * th / (th + tl))))
        top = bottom = ""
        for _ in range(2):
            top += "┌" + "─" * (h - 1) + "┐" + " " * (period - h - 1)
            bottom += "┘" + " " * (h - 1) + "└" + "─" * (period - h - 1)
        return ["Output (to scale, two periods)",
                "  OUT  " + top.rstrip(),
                "       " + bottom + "┘",
                f"       HIGH for t_high {time_text(th)}, LOW for t_low {time_text(tl)}"]
    if report.mode == "monostable" and p.get("width_s"):
        lead, pulse = span // 8, span * 5 // 8
        rest = span - lead - pulse
        return ["Output (to scale)",
                "  OUT  " + " " * lead + "┌" + "─" * (pulse - 1) + "┐",
                "       " + "─" * lead + "┘" + " " * (pulse - 1) + "└" + "─" * rest,
                "  TRIG " + "─" * lead + "┐┌" + "─" * (pulse + rest - 1),
                "       " + " " * lead + "└┘",
                f"       HIGH for {time_text(p['width_s'])} from the falling edge of the trigger"]
    if p.get("tau_s"):
        tau = p["tau_s"]
        blocks = "▁▂▃▄▅▆▇█"
        cells = [blocks[min(7, int((1 - math.exp(-5.0 * (i + 0.5) / span)) * 8))] for i in range(span)]
        mark = " " * (span // 5 - 1) + "^"
        return ["Capacitor voltage after a step at the input (to scale, 0 to 5τ)",
                "  v(C) " + "".join(cells),
                "       " + mark + f" τ = {time_text(tau)}: 63 %; 3τ: 95 %; 5τ: 99 %"]
    return []


def bom_preview(report, width: int) -> list[str]:
    rows = []
    for bl in report.bom.bom.lines:
        if bl.value is not None:
            value = _value(bl.kind, bl.value)
        elif bl.part:  # an IC or diode from stock: its part text, kept whole
            value = printable(bl.part).replace(" ", "\u00a0")
        else:
            value = printable(bl.description)
        stock = "no" if bl.line_id is None else ("short" if not bl.in_stock else "yes")
        rows.append([bl.ref, printable(bl.role), value, printable(bl.location),
                     "" if bl.line_id is None else str(bl.line_id), str(bl.total), stock])
    cols = [Col("ref"), Col("role", wrap=True, min_wrap=9), Col("value", wrap=True, min_wrap=7),
            Col("location", wrap=True, min_wrap=8), Col("line", right=True), Col("total", right=True),
            Col("in stock")]
    head = f"BOM preview ({report.bom.bom.boards} board{'s' if report.bom.bom.boards != 1 else ''}; " \
           f"selector bom {report.rank} --search {report.search_id} for the pick list and notes)"
    return paragraph(head, width) + ["  " + str(x) for x in table_lines(cols, rows, width - 2)]


def caution_lines(report, width: int) -> list[str]:
    from selector.core.cautions import CAUTIONS

    out: list[str] = []
    for k in list(report.cautions) + ["charged_capacitor", "mains"]:
        text = CAUTIONS.get(k) or (k if " " in str(k) else "")
        if text:
            out += paragraph("Caution: " + text, width, "  ")
    return out


def show_lines(report, width: int) -> list:
    kind = _kind(report)
    title = title_of(report.mode, report.target, report.search_id)
    title = title.replace(f"search {report.search_id}:", f"Option {report.rank} of search {report.search_id}:")
    s = _settings(report)
    device = ""
    if kind is not None and kind.chip_error(s) is not None:
        device = f", {kind.chip_label(s)} at {s.vcc:g} V"
    elif report.params.get("vcc"):
        device = f", parts rated for {float(report.params['vcc']):g} V"
    out: list = paragraph(title, width)
    out += paragraph(f"{getattr(kind, 'name', report.connection)} connection{device}", width)
    if kind is not None and kind.formula:
        out += paragraph("Formula: " + kind.formula, width, "  ")
    from selector.render.trim import trim_lines

    for block in (network_lines, trim_lines, prediction_lines, alternative_lines, waveform_lines, bom_preview, caution_lines):
        lines = block(report, width)
        if lines:
            out.append("")
            out += lines
    return out


def print_show(console, report) -> None:
    print_lines(console, show_lines(report, console.width))


__all__ = ["connections", "show_lines", "print_show", "pct_text", "points_text", "range_text"]
