"""Output for ``find astable|monostable|rc``: the ranked options, a footer of at most four lines at
80 columns (legend, assumptions, the cautions that apply), the long explanation behind
``--explain``, and a progress bar that only appears when a search runs longer than about a second.

Two layouts (DESIGN "Output for people"): from 110 columns, when it fits, one row per option with
the worst case; below, two short lines per option (the networks by role, then predicted / errors /
yield / parts / drawers). Errors are in the asker's terms: frequency in %, duty in points, width,
τ or corner in %; never an internal score. The table is drawn from the option JSON (the same data
``--json`` prints and ``selector show`` reads back), plus the dielectrics of the found networks."""

from __future__ import annotations

import math
import re
from typing import TYPE_CHECKING, Any, Mapping, Optional, Sequence

from selector.core.parts import DIODE_N_DEFAULT

if TYPE_CHECKING:  # rich is imported where it draws, so `find ... --json` never loads it
    from rich.console import Console

from selector.render.layout import WIDE, Col, fits, paragraph, print_lines, table_lines, table_parts, wrap_items
from selector.render.safe import printable

ROLES = ("RA", "RB", "R", "C")


# ----------------------------------------------------------------------------- numbers for people

def freq_text(v: float) -> str:
    from selector.core.notation import format_display

    return format_display(v, "Hz")


def time_text(v: float) -> str:
    from selector.core.notation import format_display

    return format_display(v, "s")


def _fmt(v: float, unit: str) -> str:
    from selector.core.notation import format_display, format_value

    return format_display(v, unit) if unit in ("Hz", "s") else format_value(v, unit)


def pct_text(x: Optional[float]) -> str:
    """A signed error in %: two decimals below 10 %, one above; "0 %" for an exact hit."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "–"
    p = x * 100.0
    if abs(p) < 0.005:
        return "0 %"
    return f"{p:+.2f} %" if abs(p) < 10 else f"{p:+.1f} %"


def points_text(x: Optional[float]) -> str:
    """A duty error in points (predicted − target duty, as a fraction of the period)."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "–"
    p = x * 100.0
    return "0 pt" if abs(p) < 0.05 else f"{p:+.1f} pt"


def yield_text(y: Optional[float]) -> str:
    if y is None or (isinstance(y, float) and math.isnan(y)):
        return "–"
    return f"{y * 100:.1f} %"


def _span(lo_text: str, hi_text: str) -> str:
    """``1.12–1.27 kHz`` when both ends share the unit, else ``990 Hz–1.01 kHz``."""
    a, _, ua = lo_text.rpartition(" ")
    b, _, ub = hi_text.rpartition(" ")
    if ua == ub and a and b:
        return f"{a}–{b} {ua}"
    return f"{lo_text}–{hi_text}"


# ----------------------------------------------------------------------------- one option

def target_duty(target: Mapping[str, Any]) -> Optional[float]:
    return target.get("duty") if target.get("mode", "astable") == "astable" else None


def rc_quantity(target: Mapping[str, Any]) -> str:
    return "corner" if target.get("corner_hz") is not None else "tau"


def errors_of(mode: str, target: Mapping[str, Any], opt: Mapping[str, Any]) -> dict:
    """The option's errors in the asker's terms: its ``errors`` key when the search wrote one,
    else computed here from predicted against target (frequency and width as signed fractions,
    duty as predicted − target duty)."""
    given = opt.get("errors")
    if isinstance(given, Mapping) and given:
        return dict(given)
    p = opt.get("predicted") or {}
    out: dict = {}
    if mode == "astable":
        if p.get("frequency_hz") is not None and target.get("frequency_hz"):
            out["frequency"] = p["frequency_hz"] / target["frequency_hz"] - 1.0
        if target_duty(target) is not None and p.get("duty") is not None:
            out["duty_points"] = p["duty"] - target["duty"]
    elif mode == "monostable":
        if p.get("width_s") is not None and target.get("width_s"):
            out["width"] = p["width_s"] / target["width_s"] - 1.0
    elif rc_quantity(target) == "corner":
        out["corner"] = p["corner_hz"] / target["corner_hz"] - 1.0
    elif target.get("tau_s"):
        out["tau"] = p["tau_s"] / target["tau_s"] - 1.0
    return out


ERROR_COLUMNS = {"frequency": "f error", "duty_points": "duty error", "width": "error", "tau": "error",
                 "corner": "error"}


def error_columns(mode: str, target: Mapping[str, Any]) -> list[str]:
    """Which errors a search shows, in order (keys of the ``errors`` JSON)."""
    if mode == "astable":
        return ["frequency"] + (["duty_points"] if target_duty(target) is not None else [])
    if mode == "monostable":
        return ["width"]
    return [rc_quantity(target)]


def error_text(key: str, value: Optional[float]) -> str:
    return points_text(value) if key == "duty_points" else pct_text(value)


def predicted_text(mode: str, p: Mapping[str, Any]) -> str:
    if mode == "astable":
        return f"{freq_text(p['frequency_hz'])} {p['duty'] * 100:.1f} %"
    if mode == "monostable":
        return time_text(p["width_s"])
    return f"τ {time_text(p['tau_s'])}, {freq_text(p['corner_hz'])}"


def range_text(mode: str, r: Mapping[str, Any]) -> str:
    if mode == "astable":
        f0, f1 = r["frequency_hz"]
        d0, d1 = r["duty"]
        return f"{_span(freq_text(f0), freq_text(f1))}, {d0 * 100:.1f}–{d1 * 100:.1f} %"
    if mode == "monostable":
        w0, w1 = r["width_s"]
        return _span(time_text(w0), time_text(w1))
    t0, t1 = r["tau_s"]
    c0, c1 = r["corner_hz"]
    return f"τ {_span(time_text(t0), time_text(t1))}, {_span(freq_text(c0), freq_text(c1))}"


def option_range_text(mode: str, opt: Mapping[str, Any]) -> str:
    """The worst-case cell of an option; a trimmer option's adjusted quantity reads "set to …"
    (its corners all land on the target once set; an astable's duty keeps its range)."""
    r = opt["range"]
    if not opt.get("adjustable"):
        return range_text(mode, r)
    if mode == "astable":
        d0, d1 = r["duty"]
        return f"set to {freq_text(r['frequency_hz'][0])}, {d0 * 100:.1f}–{d1 * 100:.1f} %"
    if mode == "monostable":
        return f"set to {time_text(r['width_s'][0])}"
    if "corner_hz" in r and r["corner_hz"][0] == r["corner_hz"][1]:
        return f"set to {freq_text(r['corner_hz'][0])}"
    return f"set to τ {time_text(r['tau_s'][0])}"


def network_json_text(key: str, net: Mapping[str, Any]) -> str:
    """A saved network written as its formula reads: ``47 kΩ + 330 kΩ``, ``(10 nF ∥ 10 nF) + 1 nF``."""
    from types import SimpleNamespace

    from selector.core.bom import wiring
    from selector.core.notation import FARAD, OHM, format_value

    kind = "capacitor" if key == "C" else "resistor"
    physical = [SimpleNamespace(value=float(p["value"]), kind=kind)
                for p in net.get("parts") or [] for _ in range(int(p.get("count") or 1))]
    trimmer = net.get("trimmer")
    if not physical:
        return format_value(float(net["value"]), FARAD if kind == "capacitor" else OHM)
    fixed_value = net.get("fixed_value", net.get("value")) if trimmer else net.get("value")
    order, template = wiring(str(net.get("shape") or "single"), physical, fixed_value)
    text = template.format(*[format_value(p.value, FARAD if kind == "capacitor" else OHM) for p in order])
    if isinstance(trimmer, Mapping):  # a fixed network in series with a trimmer set on the bench
        if len(physical) > 1:
            text = f"({text})"
        text += f" + {format_value(float(trimmer['value']), OHM)} trim"
    return text


def drawers(opt: Mapping[str, Any]) -> list[str]:
    seen: list[str] = []
    nets = opt.get("networks") or {}
    trim = opt.get("trim") if isinstance(opt.get("trim"), Mapping) else {}
    for key in ROLES:
        for p in nets.get(key, {}).get("parts", []):
            loc = printable(p.get("location") or "?")
            if loc not in seen:
                seen.append(loc)
        if isinstance(nets.get(key, {}).get("trimmer"), Mapping):
            loc = printable(trim.get("location") or "?")
            if loc not in seen:
                seen.append(loc)
    return seen


def nparts(opt: Mapping[str, Any]) -> int:
    nets = (opt.get("networks") or {}).values()
    return (sum(int(p.get("count") or 1) for net in nets for p in net.get("parts", []))
            + sum(1 for net in nets if isinstance(net.get("trimmer"), Mapping)))


def _dielectrics(ranked_option, role: str) -> tuple:
    if ranked_option is None:
        return ()
    net = ranked_option.found.networks.get(role)
    return tuple(getattr(net, "dielectrics", ()) or ()) if net is not None else ()


def role_texts(opt: Mapping[str, Any], dielectrics: Mapping[str, Sequence[str]] | None = None) -> list[tuple[str, str]]:
    """(role, network text) in role order; capacitor dielectrics after the value (they matter
    for timing)."""
    out = []
    for role in ROLES:
        net = (opt.get("networks") or {}).get(role)
        if net is None:
            continue
        text = network_json_text(role, net)
        diel = (dielectrics or {}).get(role) or ()
        if role == "C" and diel:
            text += " (" + ", ".join(printable(d) for d in diel) + ")"
        out.append((role, text))
    return out


def _kind(key: str):
    from selector.core import circuits

    return circuits.get(key)


def connection_name(key: str) -> str:
    try:
        return _kind(key).name
    except Exception:  # a saved search from a circuit kind this version does not know
        return key


# ----------------------------------------------------------------------------- the options

def title(report) -> str:
    t, mode = report.target, report.request.mode
    return title_of(mode, t, report.search_id)


def title_of(mode: str, t: Mapping[str, Any], search_id: Optional[int]) -> str:
    if mode == "astable" and t.get("duty") is None:
        what = f"astable {freq_text(t['frequency_hz'])}, duty set by the circuit"
    elif mode == "astable":
        what = f"astable {freq_text(t['frequency_hz'])}, duty {t['duty'] * 100:.1f} % (fraction HIGH)"
    elif mode == "monostable":
        what = f"monostable width {time_text(t['width_s'])}"
    elif t.get("corner_hz") is not None:
        what = f"RC corner {freq_text(t['corner_hz'])} (τ {time_text(t['tau_s'])})"
    else:
        what = f"RC τ {time_text(t['tau_s'])}"
    sid = f"search {search_id}: " if search_id is not None else ""
    return f"{sid}{what}"


def _rows(report):
    """(option JSON, ranked option or None) pairs, in rank order."""
    from types import SimpleNamespace

    ranked = report.ranked
    trims = list(getattr(report, "trims", None) or [])
    out = []
    for i, opt in enumerate(report.options):
        if i < len(ranked):
            out.append((opt, ranked[i]))
        elif opt.get("adjustable") and i - len(ranked) < len(trims):  # a trimmer option (core.trim)
            t = trims[i - len(ranked)]
            out.append((opt, SimpleNamespace(found=SimpleNamespace(networks=t.networks), is_best_error=False)))
        else:
            out.append((opt, None))
    return out


def _mark(opt: Mapping[str, Any], ranked_option) -> str:
    best = opt.get("is_best_error")
    if best is None and ranked_option is not None:
        best = ranked_option.is_best_error
    return "*" if best else ""


def _why(opt: Mapping[str, Any]) -> str:
    why = opt.get("why")
    return printable(why) if isinstance(why, str) else ""


def wide_lines(report, width: int) -> Optional[list]:
    """One row per option, or None when it does not fit ``width`` whole."""
    mode, target = report.request.mode, report.target
    rows = _rows(report)
    roles = [r for r in ROLES if any(r in (o.get("networks") or {}) for o, _ in rows)]
    errs = error_columns(mode, target)
    any_why = any(_why(o) for o, _ in rows)
    cols = [Col("#", right=True), Col("connection")] + [Col(r) for r in roles]
    cols += [Col("predicted")] + [Col(ERROR_COLUMNS[k], right=True) for k in errs]
    cols += [Col("worst case"), Col("yield", right=True), Col("parts", right=True), Col("drawers", wrap=True, sep=", ")]
    cols += [Col("why")] if any_why else []
    body = []
    for opt, ro in rows:
        e = errors_of(mode, target, opt)
        texts = dict(role_texts(opt, {r: _dielectrics(ro, r) for r in roles}))
        cells = [f"{opt['rank']}{_mark(opt, ro)}", connection_name(opt["connection"])]
        cells += [texts.get(r, "") for r in roles]
        cells += [predicted_text(mode, opt["predicted"])] + [error_text(k, e.get(k)) for k in errs]
        cells += [option_range_text(mode, opt), yield_text(opt.get("yield")), str(nparts(opt)),
                  ", ".join(drawers(opt))]
        cells += [_why(opt)] if any_why else []
        body.append(cells)
    fixed = [c for c in cols if not c.wrap]
    idx = [i for i, c in enumerate(cols) if not c.wrap]
    if not fits(fixed + [Col("drawers")], [[r[i] for i in idx] + ["D1, D2"] for r in body], width):
        return None
    return table_lines(cols, body, width, title=title(report))


def compact_lines(report, width: int) -> list:
    """Two short lines per option: the networks by role, then predicted / errors / yield /
    parts / drawers (the drawers wrap between names)."""
    from rich.text import Text

    mode, target = report.request.mode, report.target
    rows = _rows(report)
    errs = error_columns(mode, target)
    n = max(len(str(o["rank"])) + len(_mark(o, ro)) for o, ro in rows)
    cols = [Col(" " * n), Col("predicted")] + [Col(ERROR_COLUMNS[k], right=True) for k in errs]
    cols += [Col("yield", right=True), Col("parts", right=True), Col("drawers", wrap=True, min_wrap=6, sep=", ")]
    body = []
    for opt, _ro in rows:
        e = errors_of(mode, target, opt)
        body.append(["", predicted_text(mode, opt["predicted"])] + [error_text(k, e.get(k)) for k in errs]
                    + [yield_text(opt.get("yield")), str(nparts(opt)), ", ".join(drawers(opt))])
    own_line = not fits(cols[:-1] + [Col("drawer")], [r[:-1] + ["D1, D2"] for r in body], width)
    if own_line:  # a narrow terminal: the drawers go on a line of their own
        cols = cols[:-1]
        places = [r.pop() for r in body]
    head, groups = table_parts(cols, body, width, title=title(report))
    if own_line:
        indent = " " * (n + 2)
        for group, where in zip(groups, places):
            group += [Text(indent + s) for s in wrap_items(re.split(r"(?<=,) ", "drawers " + where), width - n - 2, " ")]
    indent = " " * (n + 2)
    first = Text(f"{'#':>{n}}  connection: networks by role")
    out = head[:-2] + [first] + head[-2:]
    for (opt, ro), group in zip(rows, groups):
        items = [f"{connection_name(opt['connection'])}:"]
        items += [f"{role} {text}" for role, text in role_texts(opt, {r: _dielectrics(ro, r) for r in ROLES})]
        why = _why(opt)
        if why:
            items.append(f"({why})")
        lead = f"{opt['rank']}{_mark(opt, ro)}".rjust(n) + "  "
        lines = wrap_items(items, width - len(lead), "  ")
        out.append(Text(lead + lines[0]))
        out += [Text(indent + s) for s in lines[1:]]
        out += group
    return out


def option_lines(report, width: int) -> list:
    if width >= WIDE:
        lines = wide_lines(report, width)
        if lines is not None:
            return lines
    return compact_lines(report, width)


# ----------------------------------------------------------------------------- cannot reach

_ERROR_LABELS = {"frequency": "f", "duty_points": "d", "width": "", "tau": "", "corner": ""}


def errors_text(opt) -> str:
    """The nominal errors in one short phrase, for a sentence: ``f -0.6 % d -1.4 pt`` (astable),
    ``+0.3 %``; an error that rounds to zero prints as ``0.0`` (no sign). ``opt`` is an option
    dict or any object with an ``errors`` mapping (a ranked option, a purchase suggestion)."""
    errors = opt.get("errors") if isinstance(opt, Mapping) else getattr(opt, "errors", None)

    def signed(x: float) -> str:
        text = f"{x:+.1f}"
        return "0.0" if text in ("+0.0", "-0.0") else text

    out = []
    for key, v in dict(errors or {}).items():
        if key == "duty_points":
            out.append(f"d {signed(v * 100)} pt")
        else:
            label = _ERROR_LABELS.get(key, key)
            out.append((label + " " if label else "") + f"{signed(v * 100)} %")
    return " ".join(out)


def reach_lines(report) -> list[str]:
    """When no option is nominally within the acceptance (``report.within_acceptance`` False):
    one line saying so with the closest error, and one line of parts to buy that would reach it
    (``report.suggestions``), or that no single preferred value would."""
    ranked = report.ranked
    if report.within_acceptance or not ranked:
        return []
    closest = min(ranked, key=lambda o: o.asked_error)
    out = [f"Nothing in stock within {_accept_text(report.request.accept)}; closest {errors_text(closest)} "
           f"(option {closest.rank})."]
    suggestions = report.suggestions
    if suggestions:
        unit = {"resistor": "Ω", "capacitor": "F"}
        bits = [f"{s.role} {_fmt(s.value, unit[s.kind])} ({s.series}, instead of "
                f"{_fmt(s.replaces, unit[s.kind])}): {errors_text(s)}" for s in suggestions]
        out.append("To reach it, buy one of: " + "; ".join(bits) + ".")
    else:
        out.append("No single part of a preferred value (E12/E24/E96) would reach it either.")
    return out


# ----------------------------------------------------------------------------- footer

LEAKAGE_TEXT = ("Leakage: {n} capacitor network(s) with an electrolytic left out: their rated leakage "
                "(0.01·C·V or 3 µA) was above 1/10 of the charging current at the threshold (common "
                "practice); long timings need film capacitors with a large R, or a CMOS 555.")
LEAKAGE_SHORT = ("Leakage rule left out {n} electrolytic network(s): long timings need film "
                 "capacitors and a large R, or a CMOS 555 (--explain).")

LEGEND = "+ = in series, ∥ = in parallel (capacitors too: 1 nF + 1 nF = 0.5 nF)"
LEGEND_SHORT = "+ = series, ∥ = parallel (capacitors too: 1 nF + 1 nF = 0.5 nF)"


def _accept_text(accept: float) -> str:
    return f"±{accept * 100:g} %"


def _spread_terms(report, kinds) -> list[str]:
    """What the worst case and the yield draw besides the parts, each named once (two connections
    of one chip share its terms)."""
    return list(dict.fromkeys(u.label or u.name for k in kinds for u in k.uncertain(report.limits[k.key])))


def assumptions(report, width: int = 80) -> str:
    """One line: the device and supply the limits came from, and what the yield counts."""
    req = report.request
    kinds = [_kind(c) for c in report.connections]
    settings = req.settings
    if kinds[0].chip_error(settings) is not None:
        dev = f"{kinds[0].chip_label(settings)} at {req.vcc:g} V"
        if req.mode == "astable" and any(k.uses_diode for k in kinds):
            dev += f", diode {req.vf:g} V at 1 mA"
    else:
        dev = f"parts rated for {req.vcc:g} V"
    spread = _spread_terms(report, kinds)
    what = ", ".join(["part tolerances"] + spread)
    long = f"{dev}; yield = builds within {_accept_text(req.accept)} ({what})."
    if len(long) <= width:
        return long
    return f"{dev}; yield {_accept_text(req.accept)} ({', '.join(['parts'] + spread)})."


def _caution_keys(report) -> list[str]:
    keys: list[str] = []
    for opt, ro in _rows(report):
        for k in (opt.get("cautions") or (getattr(ro, "cautions", None) or [])):
            if k not in keys:
                keys.append(k)
    return keys


def caution_lines(keys: Sequence[str], width: int, budget: int = 2, more: str = "") -> list[str]:
    """The cautions that apply, short, in at most ``budget`` lines: the general one (charged
    capacitors, mains) always, on the last line; the per-option ones before it while they fit,
    else a pointer to ``more`` where the full texts are."""
    from selector.core.cautions import CAUTIONS, SHORT

    general = SHORT["charged_and_mains"]
    texts = []
    for k in keys:
        text = SHORT.get(k) or CAUTIONS.get(k) or (k if " " in k else "")
        if text and text not in texts:
            texts.append(text)
    head = paragraph("Caution: " + general, width)
    room = budget - len(head)
    if not texts or room < 1:
        return head + ([more] if texts and more and room >= 1 else [])
    chosen: list[str] = []
    for i, text in enumerate(texts):
        tail = [more] if more and i < len(texts) - 1 else []
        if len(paragraph("Caution: " + " ".join(chosen + [text] + tail), width)) <= room:
            chosen.append(text)
        else:
            break
    if len(chosen) < len(texts) and more:
        while chosen and len(paragraph("Caution: " + " ".join(chosen + [more]), width)) > room:
            chosen.pop()
        chosen.append(more)
    return head + paragraph("Caution: " + " ".join(chosen), width)


def footer_lines(report, width: int = 80) -> list[str]:
    """At most four lines at 80 columns: legend, assumptions, cautions."""
    best = any(_mark(o, ro) for o, ro in _rows(report))
    star = "; * = closest the stock allows" if best else ""
    legend = LEGEND + star
    if len(legend) > width:
        legend = LEGEND_SHORT + ("; * = closest" if best else "")
    out = paragraph(legend, width)
    out += paragraph(assumptions(report, width), width)
    from selector.render import trim as trim_render

    legend_trim = trim_render.trim_legend(report)
    out += paragraph(legend_trim, width) if legend_trim else []
    more = "More: selector show N." if report.search_id is not None else ""
    out += caution_lines(_caution_keys(report), width, budget=max(1, 4 - len(out)), more=more)
    return out


def explain_lines(report, width: int) -> list[str]:
    """The long explanation (``--explain``): formulas, errors, worst case and yield, the chip's
    limits, the ranking rule and the full caution texts."""
    from selector.core import chips, ranking

    req = report.request
    paras = [LEGEND]
    paras.append("Formulas: " + "; ".join(_kind(c).formula for c in report.connections)
                 + ("; f = 1/(t_high + t_low), duty = t_high/(t_high + t_low) = the fraction of the "
                    "period the output is HIGH." if req.mode == "astable" else "."))
    if req.mode == "astable":
        paras.append("Errors: freq = predicted/target frequency − 1; duty = predicted − target duty, in "
                     "points of the period. The JSON `error` is the larger of the t_high and t_low "
                     "errors; * marks the option with the smallest error the stock and limits allow.")
    else:
        what = "width" if req.mode == "monostable" else ("corner" if "corner_hz" in report.target
                                                           else "time constant")
        paras.append(f"Error: relative error of the {what}; * marks the smallest error the stock and "
                     "limits allow.")
    kinds = [_kind(c) for c in report.connections]
    acc = _accept_text(req.accept)
    if req.mode == "astable" and report.target.get("duty") is None:
        yl = f"frequency within {acc} of target (no duty target)"
    elif req.mode == "astable":
        yl = f"frequency within {acc} of target and duty within {acc} of the target duty (relative)"
    else:
        what = "width" if req.mode == "monostable" else ("corner" if "corner_hz" in report.target
                                                          else "time constant")
        yl = f"the {what} within {acc} of target"
    spread = _spread_terms(report, kinds)
    spread_text = ("part tolerances only" if not spread
                   else "part tolerances and the spread of " + " and ".join(spread))
    paras.append(f"Worst case: corners of every part's tolerance band. Yield: share of "
                 f"{req.samples:,} simulated builds ({req.distribution} within tolerance, seed {req.seed}) "
                 f"with {yl}; {spread_text}.")
    settings = req.settings
    chip_error = kinds[0].chip_error(settings)
    if chip_error is not None:
        lim = next(iter(report.limits.values()))
        bits = [f"{kinds[0].chip_label(settings)} at VCC {req.vcc:g} V", f"R/RA ≥ {_fmt(lim.min_r_ohm, 'Ω')}",
                f"total timing R ≤ {_fmt(lim.max_total_r_ohm, 'Ω')}"
                + (" (threshold current)" if "threshold" in lim.why.get("max_total_r_ohm", "") else ""),
                f"C ≥ {_fmt(lim.min_c_f, 'F')}"]
        if req.mode == "astable":
            bits.append(f"f ≤ {_fmt(lim.max_freq_hz, 'Hz')}")
            if any(k.uses_diode for k in kinds):
                n = settings.options.get("diode_n")
                bits.append(f"diode Vf {req.vf:g} V at 1 mA, n {n if n is not None else DIODE_N_DEFAULT:g}")
                dl = report.limits.get("diode")
                if dl is not None and dl.max_ra_ohm < lim.max_total_r_ohm:
                    bits.append(f"diode-steered RA ≤ {_fmt(dl.max_ra_ohm, 'Ω')} (threshold current)")
            ol = report.limits.get("output-fed")
            if ol is not None and ol.min_r_ohm > lim.min_r_ohm:
                bits.append(f"output-fed R ≥ {_fmt(ol.min_r_ohm, 'Ω')} (output resistance)")
        bits.append("resistor power ≤ 50 % of rating, capacitor rating × derating ≥ VCC")
        paras.append("Chip: " + "; ".join(bits) + f" ({chip_error}).")
    else:
        paras.append(f"Ratings checked at {req.vcc:g} V across the parts (resistor power ≤ 50 % of "
                     "rating, capacitor rating × derating ≥ the voltage).")
    if report.leakage_excluded:
        paras.append(LEAKAGE_TEXT.format(n=report.leakage_excluded))
    paras.append(ranking.RANKING_RULE)
    if any(o.get("adjustable") for o in report.options) or req.trim:
        from selector.core.trim import TRIM_RULE

        paras.append(TRIM_RULE)
    for k in _caution_keys(report):
        text = chips.CAUTIONS.get(k)
        if text:
            paras.append("Caution: " + text)
    paras.append("Caution: " + chips.CAUTIONS["charged_capacitor"])
    paras.append("Caution: " + chips.CAUTIONS["mains"])
    out: list[str] = []
    for p in paras:
        out += paragraph(p, width)
    return out


def print_report(report, console: Optional[Console] = None, explain: bool = False) -> None:
    if console is None:
        from rich.console import Console

        console = Console()
    width = console.width
    lines: list = []
    for line in reach_lines(report):
        lines += paragraph(printable(line), width)
    if report.leakage_excluded and not explain:
        lines += paragraph(LEAKAGE_SHORT.format(n=report.leakage_excluded), width)
    lines += option_lines(report, width)
    lines += explain_lines(report, width) if explain else footer_lines(report, width)
    if report.search_id is not None:
        lines += paragraph(f"Saved as search {report.search_id}; details: selector show N; parts: "
                           "selector bom N.", width)
    print_lines(console, lines)
