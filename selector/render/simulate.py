"""Rich tables for ``simulate``: prediction beside simulation, the corners, and the footer."""

from __future__ import annotations

from rich import box
from rich.console import Group
from rich.table import Table
from rich.text import Text
from selector.core.cautions import CAUTIONS as CAUTION_TEXTS

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
CAUTION = CAUTION_TEXTS["simulate"]


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
    head = f"Simulation of option {report.rank} of search {report.search_id}: "
    t = Table(title=(head + f"{report.mode}, {report.connection}, {report.device} at {report.vcc:g} V"
                     if report.device else head + "RC low-pass"),
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
    units = {k: u for k, _l, u in _ROWS}
    labels = {k: lab for k, lab, _u in _ROWS}
    t = Table(title="Worst-case tolerance corners: formula / ngspice (difference)", title_justify="left",
              box=box.SIMPLE_HEAD, pad_edge=False)
    t.add_column("corner", no_wrap=True, min_width=8)
    for k in keys:
        t.add_column(labels[k], no_wrap=True)
    for c in report.corners:
        row = [Text(c.name)]
        for k in keys:
            p = c.predicted.get(k)
            cell = ("" if p is None else _fmt(p, units[k]) + " / ") + _fmt(c.simulated[k], units[k])
            if k in c.difference:
                cell += f" ({100.0 * c.difference[k]:+.2f} %)"
            row.append(Text(cell))
        t.add_row(*row)
    return t


def corner_notes(report) -> list[str]:
    return [f"{c.name}: {c.description}" for c in report.corners]


def footer(report) -> Text:
    lines = corner_notes(report) + ["difference = (ngspice - predicted) / predicted.",
                                    report.model_note or MODEL_NOTE]
    if report.has_discharge:
        lines.append(f"Discharge switch on-resistance {report.discharge_ohms:g} ohm, in the prediction too "
                     "(--discharge-ohms to change).")
    if report.diode_vf is not None:
        lines.append(f"Steering diode: Shockley model dropping {report.diode_vf:g} V at 1 mA, the same law "
                     "as the prediction.")
    lines += list(report.warnings)
    lines.append(f"{report.cycles} cycle(s) measured; ngspice and parsing took {report.elapsed_s:.2f} s."
                 if report.mode == "astable"
                 else f"ngspice and parsing took {report.elapsed_s:.2f} s.")
    lines.append(CAUTION)
    return Text("\n".join(lines))


def report_view(report) -> Group:
    parts = [comparison_table(report)]
    if report.corners:
        parts.append(corners_table(report))
    parts.append(footer(report))
    return Group(*parts)


# ----------------------------------------------------------------------------- SVG plot
_COLOURS = ("#1f5fa8", "#b5412b", "#4f7d2f")
_W, _PANEL_H, _LEFT, _RIGHT, _TOP, _GAP = 820, 150, 62, 16, 34, 30


def _decimate(times, values, columns: int) -> list[tuple[float, float]]:
    """Keep the first, minimum, maximum and last point of each pixel column, in time order, so
    square edges stay square and the file stays small."""
    t0, t1 = times[0], times[-1]
    span = (t1 - t0) or 1.0
    buckets: dict[int, list[int]] = {}
    for i, t in enumerate(times):
        buckets.setdefault(min(columns - 1, int((t - t0) / span * columns)), []).append(i)
    keep: list[int] = []
    for idx in buckets.values():
        lo = min(idx, key=lambda i: values[i])
        hi = max(idx, key=lambda i: values[i])
        keep.extend(sorted({idx[0], lo, hi, idx[-1]}))
    return [(times[i], values[i]) for i in keep]


def _tick(t: float) -> str:
    if t == 0:
        return "0"
    for exp, prefix in ((0, ""), (-3, "m"), (-6, "µ"), (-9, "n")):
        if abs(t) >= 10.0 ** exp * 0.999:
            return f"{t / 10.0 ** exp:.3g} {prefix}s"
    return f"{t:.3g} s"


def _esc(s: str) -> str:
    return s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def waveform_svg(waveform, title: str) -> str:
    """A small stand-alone SVG: one panel per node voltage over the simulated time."""
    n = len(waveform.series)
    height = _TOP + n * (_PANEL_H + _GAP) + 10
    plot_w = _W - _LEFT - _RIGHT
    t = waveform.times
    t0, t1 = 0.0, t[-1]
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{_W}" height="{height}" '
           f'viewBox="0 0 {_W} {height}" font-family="sans-serif" font-size="11">',
           '<rect width="100%" height="100%" fill="white"/>',
           f'<text x="{_LEFT}" y="18" font-size="13">{_esc(title)}</text>']
    for k, (label, values) in enumerate(waveform.series):
        y0 = _TOP + k * (_PANEL_H + _GAP)
        vmax = max(max(values), max((v for _n, v in waveform.levels), default=0.0)) * 1.08 or 1.0
        vmin = min(0.0, min(values))

        def px(tt):
            return _LEFT + (tt - t0) / ((t1 - t0) or 1.0) * plot_w

        def py(v):
            return y0 + _PANEL_H - (v - vmin) / (vmax - vmin) * _PANEL_H

        out.append(f'<rect x="{_LEFT}" y="{y0}" width="{plot_w}" height="{_PANEL_H}" fill="none" stroke="#888"/>')
        for frac in (0.0, 0.5, 1.0):
            v = vmin + frac * (vmax - vmin)
            out.append(f'<text x="{_LEFT - 6}" y="{py(v) + 4:.1f}" text-anchor="end">{v:.3g} V</text>')
        if k == 0:
            for name, lvl in waveform.levels:
                out.append(f'<line x1="{_LEFT}" x2="{_LEFT + plot_w}" y1="{py(lvl):.1f}" y2="{py(lvl):.1f}" '
                           'stroke="#999" stroke-dasharray="4 3"/>')
                out.append(f'<text x="{_LEFT + plot_w - 4}" y="{py(lvl) - 3:.1f}" text-anchor="end" '
                           f'fill="#666">{_esc(name)}</text>')
        pts = " ".join(f"{px(a):.1f},{py(b):.1f}" for a, b in _decimate(t, values, plot_w))
        out.append(f'<polyline fill="none" stroke="{_COLOURS[k % len(_COLOURS)]}" stroke-width="1.3" points="{pts}"/>')
        out.append(f'<text x="{_LEFT + 6}" y="{y0 + 14}" fill="{_COLOURS[k % len(_COLOURS)]}">{_esc(label)}</text>')
        for frac in (0.0, 0.25, 0.5, 0.75, 1.0):
            tt = t0 + frac * (t1 - t0)
            anchor = "start" if frac == 0 else "end" if frac == 1 else "middle"
            out.append(f'<text x="{px(tt):.1f}" y="{y0 + _PANEL_H + 14}" text-anchor="{anchor}">{_tick(tt)}</text>')
    out.append("</svg>")
    return "\n".join(out) + "\n"
