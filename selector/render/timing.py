"""Rich output for ``find astable|monostable|rc``: the options table, a footer with the formulas,
the chip assumptions and the usual cautions, and a progress bar that only appears when a search
runs longer than about a second."""

from __future__ import annotations

from selector.core.parts import DIODE_N_DEFAULT

import math
import time
from typing import TYPE_CHECKING, Optional

if TYPE_CHECKING:  # rich is imported where it draws, so `find ... --json` never loads it
    from rich.console import Console
    from rich.table import Table

from selector.render.safe import cell

from selector.render.networks import network_text

def _fmt(v: float, unit: str) -> str:
    from selector.core.notation import format_value

    return format_value(v, unit)


def network_cell(net) -> str:
    """The network text, with the capacitor dielectrics after it (they matter for timing)."""
    text = network_text(net)
    if net.kind == "capacitor" and net.dielectrics:
        text += " (" + ", ".join(net.dielectrics) + ")"
    return text


def _pct(x: float, digits: int = 2) -> str:
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "–"
    return f"{x * 100:+.{digits}f} %"


def _predicted_text(mode: str, opt) -> str:
    p = opt.predicted
    if mode == "astable":
        return f"{_fmt(p['frequency_hz'], 'Hz')} {p['duty'] * 100:.1f} %"
    if mode == "monostable":
        return _fmt(p["width_s"], "s")
    return f"τ {_fmt(p['tau_s'], 's')} {_fmt(p['corner_hz'], 'Hz')}"


def _range_text(mode: str, opt) -> str:
    r = opt.range
    if mode == "astable":
        f0, f1 = r["frequency_hz"]
        d0, d1 = r["duty"]
        return f"{_fmt(f0, 'Hz')}–{_fmt(f1, 'Hz')} {d0 * 100:.1f}–{d1 * 100:.1f} %"
    if mode == "monostable":
        w0, w1 = r["width_s"]
        return f"{_fmt(w0, 's')}–{_fmt(w1, 's')}"
    t0, t1 = r["tau_s"]
    c0, c1 = r["corner_hz"]
    return f"τ {_fmt(t0, 's')}–{_fmt(t1, 's')} {_fmt(c0, 'Hz')}–{_fmt(c1, 'Hz')}"


_ERROR_LABELS = {"frequency": "f", "width": "", "tau": "", "corner": ""}


def errors_text(opt) -> str:
    """The nominal errors in the asker's terms: ``f -0.6 % d -1.4 pt`` (astable), ``+0.3 %``;
    an error that rounds to zero prints as ``0.0`` (no sign)."""
    def signed(x: float) -> str:
        text = f"{x:+.1f}"
        return "0.0" if text in ("+0.0", "-0.0") else text

    out = []
    for key, v in opt.errors.items():
        if key == "duty_points":
            out.append(f"d {signed(v * 100)} pt")
        else:
            label = _ERROR_LABELS.get(key, key)
            out.append((label + " " if label else "") + f"{signed(v * 100)} %")
    return " ".join(out)


def _locations(opt) -> str:
    seen: list[str] = []
    for net in opt.found.networks.values():
        for ln, _cnt in net.parts:
            loc = ln.location or "?"
            if loc not in seen:
                seen.append(loc)
    return ", ".join(seen)


def _kind(key: str):
    from selector.core import circuits

    return circuits.get(key)


def _title(report) -> str:
    t, req = report.target, report.request
    if req.mode == "astable" and t["duty"] is None:
        what = f"astable {_fmt(t['frequency_hz'], 'Hz')}, duty set by the circuit"
    elif req.mode == "astable":
        what = f"astable {_fmt(t['frequency_hz'], 'Hz')}, duty {t['duty'] * 100:.1f} % (fraction HIGH)"
    elif req.mode == "monostable":
        what = f"monostable width {_fmt(t['width_s'], 's')}"
    elif "corner_hz" in t:
        what = f"RC corner {_fmt(t['corner_hz'], 'Hz')} (τ {_fmt(t['tau_s'], 's')})"
    else:
        what = f"RC τ {_fmt(t['tau_s'], 's')}"
    sid = f"search {report.search_id}: " if report.search_id is not None else ""
    return f"{sid}{what}"


def options_table(report) -> Table:
    from rich.table import Table

    mode = report.request.mode
    table = Table(title=_title(report), title_justify="left", show_lines=False)
    table.add_column("#", justify="right")
    table.add_column("connection")
    roles = ("RA", "RB", "R", "C")
    present = [r for r in roles if any(r in o.found.networks for o in report.ranked)]
    for r in present:
        table.add_column(r)
    table.add_column("predicted")
    table.add_column("error", justify="right")
    table.add_column("worst case")
    table.add_column("yield", justify="right")
    table.add_column("parts", justify="right")
    table.add_column("why")
    table.add_column("locations")
    for o in report.ranked:
        cells = [str(o.rank), _kind(o.connection).name]
        for r in present:
            net = o.found.networks.get(r)
            cells.append(network_cell(net) if net is not None else "")
        mark = " *" if o.is_best_error else ""
        cells += [_predicted_text(mode, o), errors_text(o) + mark, _range_text(mode, o),
                  f"{o.yield_fraction * 100:.1f} %", str(o.nparts), o.why, _locations(o)]
        table.add_row(*map(cell, cells))
    return table


def reach_lines(report) -> list[str]:
    """When no option is nominally within the acceptance: one line saying so with the closest
    error, and one line of parts to buy that would reach it (when any would)."""
    if getattr(report, "within_acceptance", True) or not report.ranked:
        return []
    closest = min(report.ranked, key=lambda o: o.asked_error)
    out = [f"Nothing in stock within ±{report.request.accept * 100:g} %; closest {errors_text(closest)} "
           f"(option {closest.rank})."]
    if report.suggestions:
        unit = {"resistor": "Ω", "capacitor": "F"}
        bits = [f"{s.role} {_fmt(s.value, unit[s.kind])} ({s.series}, instead of "
                f"{_fmt(s.replaces, unit[s.kind])}): {errors_text(s)}" for s in report.suggestions]
        out.append("To reach it, buy one of: " + "; ".join(bits) + ".")
    else:
        out.append("No single part of a preferred value (E12/E24/E96) would reach it either.")
    return out


def footer_lines(report) -> list[str]:
    from selector.core import chips

    req = report.request
    out = []
    out.append("Formulas: " + "; ".join(_kind(c).formula for c in report.connections)
               + ("; f = 1/(t_high + t_low), duty = t_high/(t_high + t_low) = the fraction of the "
                  "period the output is HIGH." if req.mode == "astable" else "."))
    if req.mode == "astable":
        out.append("Error: f = frequency error (%), d = duty error in points (predicted − target duty); "
                   "* marks the option with the smallest error the stock and limits allow "
                   "(t_high and t_low both closest).")
    else:
        out.append("Error: relative error of the " + ("width" if req.mode == "monostable" else
                   ("corner" if "corner_hz" in report.target else "time constant"))
                   + "; * marks the smallest error the stock and limits allow.")
    acc = f"±{req.accept * 100:g} %"
    kinds = [_kind(c) for c in report.connections]
    if req.mode == "astable" and report.target.get("duty") is None:
        yl = f"frequency within {acc} of target (no duty target)"
    elif req.mode == "astable":
        yl = f"frequency within {acc} of target and duty within {acc} of the target duty (relative)"
    else:
        what = "width" if req.mode == "monostable" else ("corner" if "corner_hz" in report.target else "time constant")
        yl = f"the {what} within {acc} of target"
    spread = list(dict.fromkeys(u.label or u.name for k in kinds for u in k.uncertain(report.limits[k.key])))
    spread_text = "part tolerances only" if not spread else "part tolerances and the spread of " + " and ".join(spread)
    corner_text = " and of each term the yield names" if spread else ""
    out.append(f"Worst case: corners of every part's tolerance band{corner_text}. Yield: share of "
               f"{req.samples:,} simulated builds ({req.distribution} within tolerance, seed {req.seed}) "
               f"with {yl}; {spread_text}.")
    settings = req.settings
    chip_error = kinds[0].chip_error(settings)
    if chip_error is not None:
        lim = next(iter(report.limits.values()))
        bits = [f"{kinds[0].chip_label(settings)} at VCC {req.vcc:g} V", f"R/RA ≥ {_fmt(lim.min_r_ohm, 'Ω')}",
                f"total timing R ≤ {_fmt(lim.max_total_r_ohm, 'Ω')}", f"C ≥ {_fmt(lim.min_c_f, 'F')}"]
        if req.mode == "astable":
            bits.append(f"f ≤ {_fmt(lim.max_freq_hz, 'Hz')}")
            if any(k.uses_diode for k in kinds):
                n = req.settings.options.get("diode_n")
                bits.append(f"diode Vf {req.vf:g} V at 1 mA, n {n if n is not None else DIODE_N_DEFAULT:g}")
                dl = report.limits.get("diode")
                if dl is not None and dl.max_ra_ohm < lim.max_total_r_ohm:
                    bits.append(f"diode-steered RA ≤ {_fmt(dl.max_ra_ohm, 'Ω')} (threshold current)")
        bits.append("resistor power ≤ 50 % of rating, capacitor rating × derating ≥ VCC")
        out.append("Chip: " + "; ".join(bits) + f" ({chip_error}).")
    else:
        out.append(f"Ratings checked at {req.vcc:g} V across the parts (resistor power ≤ 50 % of "
                   "rating, capacitor rating × derating ≥ the voltage).")
    if getattr(report, "leakage_excluded", 0):
        out.append(f"Leakage: {report.leakage_excluded} capacitor network(s) with an electrolytic left out: "
                   "their rated leakage (0.01·C·V or 3 µA) was above 1/10 of the charging current at the "
                   "threshold (common practice); long timings need film capacitors with a large R, "
                   "or a CMOS 555.")
    out.append(f"Ranking: options nominally within ±{req.accept * 50:g} % (half the acceptance; duty "
               "in points against that share of the target duty) first, then yield (within 2 "
               "points counts as equal), then fewer parts, then smaller error.")
    keys: list[str] = []
    for o in report.ranked:
        for k in o.cautions:
            if k not in keys:
                keys.append(k)
    for k in keys:
        text = chips.CAUTIONS.get(k)
        if text:
            out.append("Caution: " + text)
    out.append("Caution: " + chips.CAUTIONS["charged_capacitor"])
    out.append("Caution: " + chips.CAUTIONS["mains"])
    return out


def print_report(report, console: Optional[Console] = None) -> None:
    if console is None:
        from rich.console import Console

        console = Console()
    for line in reach_lines(report):
        console.print(cell(line), highlight=False, markup=False)
    console.print(options_table(report))
    for line in footer_lines(report):
        console.print(line, highlight=False)  # wrapped at the terminal width, like the table
    if report.search_id is not None:
        console.print(f"Saved as search {report.search_id}; `selector bom N` lists the parts of option N.",
                      highlight=False)


class LazyProgress:
    """A progress callback (fraction 0..1) that shows a rich bar only once the work has run for
    ``delay`` seconds, on stderr so ``--json`` output stays clean."""

    def __init__(self, description: str = "searching", delay: float = 1.0):
        self.description = description
        self.delay = delay
        self.start = time.monotonic()
        self._progress = None
        self._task = None

    def __call__(self, fraction: float) -> None:
        if self._progress is None:
            if time.monotonic() - self.start < self.delay or fraction >= 1.0:
                return
            from rich.console import Console
            from rich.progress import Progress

            self._progress = Progress(console=Console(stderr=True), transient=True)
            self._progress.start()
            self._task = self._progress.add_task(self.description, total=1.0)
        self._progress.update(self._task, completed=min(1.0, float(fraction)))

    def close(self) -> None:
        if self._progress is not None:
            self._progress.stop()
            self._progress = None
