"""Rich tables for ``simulate``: prediction beside simulation, the corners, and the footer."""

from __future__ import annotations

from rich import box
from rich.console import Group
from rich.table import Table
from rich.text import Text

# (key, label, unit for format_value or "%" for a fraction)
_ROWS = (
    ("frequency_hz", "frequency", "Hz"),
    ("duty", "duty (high)", "%"),
    ("t_high_s", "t_high", "s"),
    ("t_low_s", "t_low", "s"),
    ("width_s", "pulse width", "s"),
    ("tau_s", "tau (63.2 %)", "s"),
    ("corner_hz", "corner (-3 dB)", "Hz"),
)

MODEL_NOTE = (
    "ngspice runs selector's own behavioural 555 (3-resistor divider, two comparators, SR latch, "
    "discharge switch, output at the chip family's levels); figures are taken after the first cycle."
)
CAUTION = (
    "Caution: a built timer's capacitors can stay charged after power is off; discharge large ones "
    "through a resistor, and on mains-powered equipment follow local codes and qualified practice."
)


def _fmt(value: float, unit: str) -> str:
    """Five significant digits with an SI prefix: the figures are compared to 0.01 %, finer than
    the 3-digit style of ``notation.format_value``."""
    if unit == "%":
        return f"{100.0 * value:.3f} %"
    if value == 0 or value != value:
        return f"{value:g} {unit}"
    for exp, prefix in ((9, "G"), (6, "M"), (3, "k"), (0, ""), (-3, "m"), (-6, "µ"), (-9, "n"), (-12, "p")):
        if abs(value) >= 10.0 ** exp * 0.99999:
            break
    return f"{value / 10.0 ** exp:.5g} {prefix}{unit}"


def _diff(d: float | None) -> str:
    return "" if d is None else f"{100.0 * d:+.3f} %"


def comparison_table(report) -> Table:
    t = Table(title=(f"Simulation of option {report.rank} of search {report.search_id}: "
                     f"{report.mode}, {report.connection}, {report.chip} 555 at {report.vcc:g} V"
                     if report.connection != "rc" else
                     f"Simulation of option {report.rank} of search {report.search_id}: RC low-pass"),
              title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False)
    for name, kw in (("quantity", {}), ("predicted", {"justify": "right"}),
                     ("ngspice", {"justify": "right"}), ("difference", {"justify": "right"})):
        t.add_column(name, **kw)
    for key, label, unit in _ROWS:
        if key in report.simulated:
            pred = report.predicted.get(key)
            t.add_row(Text(label), Text("" if pred is None else _fmt(pred, unit)),
                      Text(_fmt(report.simulated[key], unit)), Text(_diff(report.difference.get(key))))
    return t


def corners_table(report) -> Table:
    keys = [k for k, _l, _u in _ROWS if report.corners and k in report.corners[0].simulated]
    keys = [k for k in keys if k not in ("t_high_s", "t_low_s")] or keys
    t = Table(title="Worst-case tolerance corners (formula / ngspice)", title_justify="left",
              box=box.SIMPLE_HEAD, pad_edge=False)
    t.add_column("corner")
    t.add_column("parts")
    units = {k: u for k, _l, u in _ROWS}
    labels = {k: lab for k, lab, _u in _ROWS}
    for k in keys:
        t.add_column(f"{labels[k]} formula", justify="right")
        t.add_column(f"{labels[k]} ngspice", justify="right")
        t.add_column("diff", justify="right")
    for c in report.corners:
        row = [Text(c.name), Text(c.description)]
        for k in keys:
            p = c.predicted.get(k)
            row += [Text("" if p is None else _fmt(p, units[k])), Text(_fmt(c.simulated[k], units[k])),
                    Text(_diff(c.difference.get(k)))]
        t.add_row(*row)
    return t


def footer(report) -> Text:
    lines = ["difference = (ngspice - predicted) / predicted.", MODEL_NOTE]
    if report.connection != "rc":
        lines.append(f"Discharge switch on-resistance {report.discharge_ohms:g} ohm (--discharge-ohms to change).")
    if report.diode_vf is not None:
        lines.append(f"Steering diode: exponential model dropping {report.diode_vf:g} V at the mean charging "
                     "current; the prediction uses a constant drop, so expect about 1-3 % on t_high.")
    lines += list(report.warnings)
    lines.append(f"{report.cycles} cycle(s) measured; ngspice and parsing took {report.elapsed_s:.2f} s."
                 if report.connection not in ("rc", "monostable")
                 else f"ngspice and parsing took {report.elapsed_s:.2f} s.")
    lines.append(CAUTION)
    return Text("\n".join(lines))


def report_view(report) -> Group:
    parts = [comparison_table(report)]
    if report.corners:
        parts.append(corners_table(report))
    parts.append(footer(report))
    return Group(*parts)
