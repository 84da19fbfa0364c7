"""``selector show N --svg FILE``: one picture of an option — the timing part's schematic, drawn
with the general-purpose schematic library ``schemdraw`` (the optional extra ``[svg]``; imported
only here), above the predicted capacitor voltage and output with the thresholds marked (drawn by
``render.simulate.waveform_svg``, the same plot ``simulate --svg`` uses).

The schematic is drawn from the circuit kind's wiring sentence (``render.show.connections``): each
network is one symbol labelled with its role and value, between named nets; nets with the same
name are joined (net-label style), so any registered circuit draws without a drawing of its own.
The waveforms are the predicted ones: exponential charge and discharge between the circuit's
thresholds (its ``spice_waveform`` guide levels), with time constants that reproduce the predicted
t_high and t_low (or the width, or τ) exactly."""

from __future__ import annotations

import math
from types import SimpleNamespace
from typing import Any

SVG_NS = "http://www.w3.org/2000/svg"


class MissingExtra(ImportError):
    """An optional package a command needs is not installed."""


def _schemdraw():
    try:
        import schemdraw
        import schemdraw.elements as elm
    except ImportError:
        raise MissingExtra("--svg draws the schematic with schemdraw, which is not installed: "
                           "pip install 'drawer-selector[svg]'") from None
    return schemdraw, elm


def schematic_svg(report) -> str:
    """The timing part's schematic as SVG text (schemdraw's own SVG backend, no matplotlib)."""
    from selector.render.show import connections
    from selector.render.timing import ROLES, network_json_text

    schemdraw, elm = _schemdraw()
    kind = report.kind
    pins = connections(getattr(kind, "wiring", ""), report.mode)
    d = schemdraw.Drawing(canvas="svg", show=False)
    d.config(fontsize=11)
    x0 = 0.0
    if report.uses_timer:
        ic = d.add(elm.Ic555().at((0, 0)))
        names = {"TRG": "TRIG", "THR": "THR", "DIS": "DIS", "CTL": "CTL", "OUT": "OUT", "RST": "RESET",
                 "Vcc": "VCC", "GND": "GND"}
        for pin, net in names.items():
            anchor = getattr(ic, pin)
            side = {"TRG": "left", "THR": "left", "DIS": "left", "CTL": "right", "OUT": "right",
                    "RST": "top", "Vcc": "top", "GND": "bottom"}[pin]
            d.add(elm.Dot(open=True).at(anchor).label(net, loc=side, fontsize=9))
        x0 = 9.0
    y = 3.0
    nets = report.option.get("networks") or {}
    for role in ROLES + ("D",):
        if role not in pins or (role != "D" and role not in nets):
            continue
        a, b = pins[role]
        if role == "D":
            element, text = elm.Diode(), "steering diode"
        else:
            element = elm.Capacitor() if role == "C" else elm.Resistor()
            text = f"{role} = {network_json_text(role, nets[role])}"
        d.add(elm.Dot(open=True).at((x0, y)).label(a, loc="left", fontsize=9))
        d.add(element.right().length(5).label(text, loc="top", fontsize=10))
        d.add(elm.Dot(open=True).label(b, loc="right", fontsize=9))
        y -= 2.6
    return d.get_imagedata("svg").decode("utf-8")


def _series(report) -> SimpleNamespace:
    """Predicted node voltages (capacitor, output or input) over time, with the guide levels."""
    p = report.option.get("predicted") or {}
    vs = report.supply
    levels = sorted(report.levels, key=lambda kv: kv[1])
    n = 400
    if report.mode == "astable":
        lo, hi = (levels[0][1], levels[-1][1]) if len(levels) >= 2 else (vs / 3, 2 * vs / 3)
        th, tl = float(p["t_high_s"]), float(p["t_low_s"])
        tau_h = th / math.log((vs - lo) / (vs - hi))
        tau_l = tl / math.log(hi / lo)
        times, cap, out = [], [], []
        for cycle in range(2):
            t0 = cycle * (th + tl)
            for i in range(n):
                t = th * i / n
                times.append(t0 + t), cap.append(vs - (vs - lo) * math.exp(-t / tau_h)), out.append(vs)
            for i in range(n):
                t = tl * i / n
                times.append(t0 + th + t), cap.append(hi * math.exp(-t / tau_l)), out.append(0.0)
        series = (("v(C), predicted", tuple(cap)), ("output, predicted", tuple(out)))
    elif report.mode == "monostable":
        hi = levels[-1][1] if levels else 2 * vs / 3
        w = float(p["width_s"])
        tau = w / math.log(vs / (vs - hi))
        t0, end = 0.1 * w, 1.4 * w
        times = [end * i / (3 * n) for i in range(3 * n + 1)]
        cap = [vs * (1 - math.exp(-(t - t0) / tau)) if t0 <= t < t0 + w else 0.0 for t in times]
        out = [vs if t0 <= t < t0 + w else 0.0 for t in times]
        series = (("v(C), predicted", tuple(cap)), ("output, predicted", tuple(out)))
    else:
        tau = float(p["tau_s"])
        times = [5 * tau * i / (3 * n) for i in range(3 * n + 1)]
        series = (("v(C), predicted", tuple(vs * (1 - math.exp(-t / tau)) for t in times)),
                  ("input step", tuple(vs for _ in times)))
    return SimpleNamespace(times=tuple(times), series=series, levels=tuple(levels))


def _size(svg_root) -> tuple[float, float]:
    def num(text: str) -> float:
        text = (text or "0").strip()
        for unit, k in (("pt", 4 / 3), ("px", 1.0)):
            if text.endswith(unit):
                return float(text[:-len(unit)]) * k
        return float(text)

    return num(svg_root.get("width")), num(svg_root.get("height"))


def option_svg(report) -> str:
    """One stand-alone SVG: title, schematic, then the predicted waveforms."""
    import xml.etree.ElementTree as ET

    from selector.render.simulate import waveform_svg
    from selector.render.timing import title_of

    ET.register_namespace("", SVG_NS)
    ET.register_namespace("xlink", "http://www.w3.org/1999/xlink")
    schematic = ET.fromstring(schematic_svg(report))
    title = title_of(report.mode, report.target, report.search_id).replace(
        f"search {report.search_id}:", f"option {report.rank} of search {report.search_id}:")
    wave = ET.fromstring(waveform_svg(_series(report), "Predicted waveforms (thresholds dashed)"))
    sw, sh = _size(schematic)
    ww, wh = _size(wave)
    width = max(sw + 40, ww)
    top = 40.0
    height = top + sh + 20 + wh
    root = ET.Element(f"{{{SVG_NS}}}svg", {"width": f"{width:.0f}", "height": f"{height:.0f}",
                                            "viewBox": f"0 0 {width:.0f} {height:.0f}"})
    ET.SubElement(root, f"{{{SVG_NS}}}rect", {"width": "100%", "height": "100%", "fill": "white"})
    head = ET.SubElement(root, f"{{{SVG_NS}}}text", {"x": "20", "y": "24", "font-family": "sans-serif",
                                                      "font-size": "15"})
    head.text = title
    schematic.set("x", "20")
    schematic.set("y", f"{top:.0f}")
    schematic.set("width", f"{sw:.1f}")
    schematic.set("height", f"{sh:.1f}")
    root.append(schematic)
    note = ET.SubElement(root, f"{{{SVG_NS}}}text", {"x": "20", "y": f"{top + sh + 8:.0f}", "font-family": "sans-serif",
                                                      "font-size": "11", "fill": "#555"})
    note.text = "Points with the same name are joined; + = in series, ∥ = in parallel."
    wave.set("x", "0")
    wave.set("y", f"{top + sh + 20:.0f}")
    root.append(wave)
    return ET.tostring(root, encoding="unicode") + "\n"


def write_svg(report, path: Any) -> None:
    text = option_svg(report)
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(text)
