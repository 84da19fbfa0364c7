"""What a person reads about trimmer options (``core.trim``): the footer sentence and ``show N``'s
"Setting the trimmer" block with the bench procedure (a trimmer row's worst-case cell is
``render.timing.option_range_text``). Imports no other render module but layout, so the find table
and the detail view can both use it."""

from __future__ import annotations

from typing import Any, Mapping

from selector.render.layout import paragraph


def trim_legend(report) -> str:
    """One sentence on the trimmer options ('' when there are none): which rows, why they were
    added, what their yield means and where the setting is told."""
    from selector.core.trim import YIELD_THRESHOLD

    ranks = [str(o["rank"]) for o in report.options if o.get("adjustable")]
    if not ranks:
        if report.request.trim:
            return ("--trim: no trimmer in stock, with a fixed part of 1-2 parts, covers the target at every "
                    "corner with 10 % of its travel to spare at each end.")
        return ""
    which = ("Option " if len(ranks) == 1 else "Options ") + ", ".join(ranks)
    why = "" if report.request.trim else \
        f" (no fixed option reaches {YIELD_THRESHOLD * 100:.0f} % yield)"
    return f"{which}: fixed part + trimmer, set on the bench{why}; yield after setting; how: selector show N."


_MEASURE = {  # main output -> (what to measure and how, which way more resistance moves it)
    "frequency_hz": ("the frequency at the output with a counter or a scope", "lowers the frequency"),
    "width_s": ("the pulse width at the output with a scope (or a counter in pulse-width mode), "
                "triggering it again after each pulse", "lengthens the pulse"),
    "tau_s": ("the time the capacitor takes to reach 63 % of a voltage step, with a scope",
              "lengthens τ"),
    "corner_hz": ("the frequency where the output is 3 dB down, with a generator and a scope",
                  "lowers the corner"),
}


def trim_lines(report, width: int) -> list[str]:
    """How to set the trimmer of an adjustable option (``core.trim``): the nominal setting, its
    range over every corner, what it moves, and the bench procedure."""
    from selector.core.notation import OHM, format_tolerance, format_value

    opt = report.option
    trim = opt.get("trim") or {}
    role = trim.get("role")
    net = (opt.get("networks") or {}).get(role) if role else None
    t = (net or {}).get("trimmer")
    if not opt.get("adjustable") or not isinstance(t, dict):
        return []
    rv = next((bl.ref for bl in report.bom.bom.lines if bl.line_id == t.get("line_id") and bl.kind == "trimmer"),
              "the trimmer")
    ln = report.lines.get(int(t["line_id"]))
    value = float(t["value"])
    setting = float(t["setting"])
    lo, hi = (float(x) for x in trim.get("setting_range") or (setting, setting))
    ohm = lambda v: format_value(v, OHM)  # noqa: E731
    tol = f" {format_tolerance(ln.tol_minus, ln.tol_plus)}" if ln is not None else ""
    out = paragraph(f"Setting the trimmer ({rv}, {ohm(value)}{tol} end to end, in series with the fixed "
                    f"part of {role})", width, "  ")
    out += paragraph(f"  Set to {ohm(setting)} ≈ {setting / value * 100:.0f} % of travel from the fixed end "
                     "for the nominal build (wire it as a variable resistor: wiper and one end; the other "
                     "end unused or joined to the wiper).", width, "    ")
    out += paragraph(f"  Every tolerance corner of the other parts, the chip terms and the trimmer's own "
                     f"tolerance needs {ohm(lo)} to {ohm(hi)} ({lo / value * 100:.0f}–{hi / value * 100:.0f} % of "
                     f"travel); at least 10 % of the travel is left at each end on every build.", width, "    ")
    how, way = _MEASURE.get(report.main_output, ("the output", "changes the output"))
    moves = trim.get("moves") or []
    res = trim.get("resolution")
    step = ""
    if isinstance(res, (int, float)) and res > 0:
        first = (moves or ["timing"])[0]
        step = f"; the {first} changes about {res * 100:.2g} % per 1 % of travel"
        if ln is not None and ln.turns and ln.turns > 1:
            step += f" ({res * 100 * 100 / ln.turns:.2g} % per turn; {ln.turns} turns end to end)"
    what = " and ".join(moves) if moves else "the timing"
    moved = f"  {rv} moves the {what}"
    if report.mode == "astable" and "duty" in moves:
        d = (opt.get("range") or {}).get("duty")
        if d:
            moved += (f"; it is set for the frequency and the duty follows "
                      f"({d[0] * 100:.1f}–{d[1] * 100:.1f} % over every corner)")
    out += paragraph(moved + step + ".", width, "    ")
    out += paragraph(f"  How to set: power the circuit, measure {how}, and turn {rv} toward the target: more "
                     f"resistance {way}. Stop when the reading is on target; a drop of sealant or paint "
                     "keeps the setting.", width, "    ")
    out += paragraph("  The circuit is powered while you adjust: use an insulated trimming tool, and in "
                     "mains-powered equipment follow the mains caution below.", width, "    ")
    return out

