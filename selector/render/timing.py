"""Rich output for ``find astable|monostable|rc``: the options table, a footer with the formulas,
the chip assumptions and the usual cautions, and a progress bar that only appears when a search
runs longer than about a second."""

from __future__ import annotations

import math
import time
from typing import TYPE_CHECKING, Optional

if TYPE_CHECKING:  # rich is imported where it draws, so `find ... --json` never loads it
    from rich.console import Console
    from rich.table import Table

from selector.render.safe import cell

_SHAPE_JOINT = {"series": " + ", "parallel": " ∥ ", "series3": " + ", "parallel3": " ∥ "}


def _fmt(v: float, unit: str) -> str:
    from selector.core.notation import format_value

    return format_value(v, unit)


def network_text(net) -> str:
    """A network written out, e.g. "10 kΩ + 2.2 kΩ", "(4.7 kΩ ∥ 10 kΩ) + 1 kΩ"."""
    try:  # the network engineer's writer, when present
        from selector.render.networks import network_text as shared

        return shared(net)
    except Exception:
        pass
    unit = "Ω" if net.kind == "resistor" else "F"

    def walk(node, top=True):
        if isinstance(node, int):
            return _fmt(net.physical[node].value, unit)
        joint, children = node
        sep = " + " if joint == "series" else " ∥ "
        text = sep.join(walk(c, False) for c in children)
        return text if top else f"({text})"

    return walk(net.structure)


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


def _locations(opt) -> str:
    seen: list[str] = []
    for net in opt.found.networks.values():
        for ln, _cnt in net.parts:
            loc = ln.location or "?"
            if loc not in seen:
                seen.append(loc)
    return ", ".join(seen)


CONNECTION_TEXT = {"standard": "standard", "diode": "diode-steered", "output-fed": "output-fed",
                   "monostable": "monostable", "rc": "RC"}

FORMULAS = {
    "standard": "standard: t_high = ln2·(RA+RB)·C, t_low = ln2·RB·C",
    "diode": ("diode-steered: t_high = RA·C·ln((2·VCC − 3·Vf)/(VCC − 3·Vf)) while the diode across "
              "RB conducts (piecewise through RA+RB when RB is small against RA), t_low = ln2·RB·C"),
    "output-fed": ("output-fed: t_high = R·C·ln((VOH − VCC/3)/(VOH − 2·VCC/3)), "
                   "t_low = R·C·ln((2·VCC/3 − VOL)/(VCC/3 − VOL))"),
    "monostable": "monostable: width = ln3·R·C ≈ 1.1·R·C",
    "rc": "RC: τ = R·C, corner = 1/(2π·R·C)",
}

OPTION_CAUTIONS = {
    "class2": ("Class-2 ceramic (X7R, X5R, Y5V, Z5U) in the timing position: its value moves with "
               "voltage, temperature and age; prefer C0G or film for timing."),
    "cap_rating_unknown": ("A timing capacitor has no voltage rating in stock: check it is rated "
                           "well above VCC before fitting it."),
}


def _title(report) -> str:
    t, req = report.target, report.request
    if req.mode == "astable":
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
    table.add_column("locations")
    for o in report.ranked:
        cells = [str(o.rank), CONNECTION_TEXT.get(o.connection, o.connection)]
        for r in present:
            net = o.found.networks.get(r)
            cells.append(network_cell(net) if net is not None else "")
        mark = " *" if o.is_best_error else ""
        cells += [_predicted_text(mode, o), _pct(o.error, 3) + mark, _range_text(mode, o),
                  f"{o.yield_fraction * 100:.1f} %", str(o.nparts), _locations(o)]
        table.add_row(*map(cell, cells))
    return table


def footer_lines(report) -> list[str]:
    from selector.core import chips

    req = report.request
    out = []
    out.append("Formulas: " + "; ".join(FORMULAS[c] for c in report.connections)
               + ("; f = 1/(t_high + t_low), duty = t_high/(t_high + t_low) = the fraction of the "
                  "period the output is HIGH." if req.mode == "astable" else "."))
    if req.mode == "astable":
        out.append("Error: the larger of the relative errors of t_high and t_low (signed); "
                   "* marks the option with the smallest error the stock and limits allow.")
    else:
        out.append("Error: relative error of the " + ("width" if req.mode == "monostable" else
                   ("corner" if "corner_hz" in report.target else "time constant"))
                   + "; * marks the smallest error the stock and limits allow.")
    acc = f"±{req.accept * 100:g} %"
    if req.mode == "astable":
        yl = f"frequency within {acc} of target and duty within {acc} of the target duty (relative)"
    else:
        what = "width" if req.mode == "monostable" else ("corner" if "corner_hz" in report.target else "time constant")
        yl = f"the {what} within {acc} of target"
    out.append(f"Worst case: corners of every part's tolerance band. Yield: share of "
               f"{req.samples:,} simulated builds ({req.distribution} within tolerance, seed {req.seed}) "
               f"with {yl}; part tolerances only.")
    if req.mode != "rc":
        fam = chips.family(req.chip)
        lim = next(iter(report.limits.values()))
        bits = [f"{fam.label} at VCC {req.vcc:g} V", f"R/RA ≥ {_fmt(lim.min_r_ohm, 'Ω')}",
                f"total timing R ≤ {_fmt(lim.max_total_r_ohm, 'Ω')}", f"C ≥ {_fmt(lim.min_c_f, 'F')}"]
        if req.mode == "astable":
            bits.append(f"f ≤ {_fmt(fam.max_astable_hz, 'Hz')}")
            if "diode" in report.connections:
                bits.append(f"diode Vf {req.vf:g} V")
        bits.append("resistor power ≤ 50 % of rating, capacitor rating × derating ≥ VCC")
        out.append("Chip: " + "; ".join(bits) + f" (chip's own timing error, e.g. "
                   f"{fam.astable_initial_error * 100:g} % typ astable, not included).")
    else:
        out.append(f"Ratings checked at {req.vcc:g} V across the parts (resistor power ≤ 50 % of "
                   "rating, capacitor rating × derating ≥ the voltage).")
    out.append("Ranking: yield first (5-point bands), then score = max(|error|, worst-case "
               "spread/4) in bands 25 % wide, then fewer parts, then |error|.")
    keys: list[str] = []
    for o in report.ranked:
        for k in o.cautions:
            if k not in keys:
                keys.append(k)
    for k in keys:
        text = chips.CAUTIONS.get(k) or OPTION_CAUTIONS.get(k)
        if text:
            out.append("Caution: " + text)
    out.append("Caution: " + chips.CAUTIONS["charged_capacitor"])
    out.append("Caution: " + chips.CAUTIONS["mains"])
    return out


def print_report(report, console: Optional[Console] = None) -> None:
    if console is None:
        from rich.console import Console

        console = Console()
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
