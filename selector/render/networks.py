"""Writing networks for people: ``10 kΩ + 2.2 kΩ`` (in series), ``22 kΩ ∥ 47 kΩ`` (in parallel),
``(10 kΩ ∥ 10 kΩ) + 1 kΩ``; the ``find value`` table (its JSON form is the service's).

``+`` always means "in series" and ``∥`` "in parallel", for capacitors too (two 100 nF in series
are written ``100 nF + 100 nF`` and make 50 nF); the table says so under it."""

from __future__ import annotations

from typing import TYPE_CHECKING, Sequence

if TYPE_CHECKING:  # pragma: no cover
    from rich.console import Console
    from rich.table import Table

    from selector.core.networks import Network


LEGEND = "+ = in series, ∥ = in parallel"


def _unit(kind: str) -> str:
    from selector.core.notation import FARAD, OHM

    return OHM if kind == "resistor" else FARAD


def value_text(kind: str, value: float) -> str:
    from selector.core.notation import format_value

    return format_value(value, _unit(kind))


def network_text(net: "Network") -> str:
    """The network written readably, following its structure: parts in physical order, a
    nested pair in parentheses (``networks.shapes.write``)."""
    from selector.core.networks.shapes import write

    return write(net.structure, [value_text(net.kind, p.value) for p in net.physical])


def pick_text(net: "Network") -> str:
    """Where to take the parts from: ``A4 (line 20) ×2, B1 (line 33)``."""
    out = []
    for line, count in net.parts:
        where = line.location or "no location"
        out.append(f"{where} (line {line.id})" + (f" ×{count}" if count > 1 else ""))
    return ", ".join(out)


def percent_text(fraction: float) -> str:
    """Signed percentage with enough digits to tell near-exact options apart."""
    pct = fraction * 100.0
    if abs(pct) < 1e-9:  # floating-point dust of an exact hit
        return "0 %"
    text = f"{pct:+.2f}" if abs(pct) >= 0.1 else f"{pct:+.2g}"
    return f"{text} %"


def _range(kind: str, lo: float, hi: float) -> str:
    a, b = value_text(kind, lo), value_text(kind, hi)
    na, _, ua = a.rpartition(" ")
    nb, _, ub = b.rpartition(" ")
    return f"{na}–{nb} {ua}" if ua == ub and na and nb else f"{a}–{b}"


def _pick_cell(net: "Network", alts: Sequence["Network"]) -> str:
    pick = pick_text(net)
    if alts:
        pick += "; or " + "; or ".join(pick_text(a) for a in alts[:2])
        if len(alts) > 2:
            pick += f" (+{len(alts) - 2} more)"
    return pick


def value_lines(kind: str, target: float, options: Sequence["Network"],
                alternatives: Sequence[Sequence["Network"]] | None = None, width: int = 80,
                yields: Sequence[float] = (), whys: Sequence[str] = ()) -> list:
    """The ranked ``find value`` options: one row each from 110 columns when it fits, else the
    row without the drawers and a ``pick from`` line under it (wrapped between drawers)."""
    from selector.render.layout import WIDE, Col, fits, table_lines, table_parts, wrap_items
    from selector.render.safe import printable

    alternatives = list(alternatives or [])
    title = f"Networks nearest to {value_text(kind, target)} ({kind}s)"
    rows, picks = [], []
    for rank, net in enumerate(options, start=1):
        alts = alternatives[rank - 1] if rank - 1 < len(alternatives) else []
        row = [str(rank), network_text(net), value_text(kind, net.value),
               percent_text(net.value / target - 1.0), _range(kind, net.vmin, net.vmax)]
        if yields:
            row.append(f"{yields[rank - 1] * 100:.1f} %" if rank - 1 < len(yields) else "")
        rows.append(row + [str(net.nparts)])
        picks.append(printable(_pick_cell(net, alts)))
    why = [printable(whys[i]) if i < len(whys) and whys[i] else "" for i in range(len(rows))]
    cols = [Col("#", right=True), Col("network"), Col("value", right=True), Col("error", right=True),
            Col("worst case")] + ([Col("in spec", right=True)] if yields else []) + [Col("parts", right=True)]
    if any(why):
        cols.append(Col("why"))
        rows = [r + [w] for r, w in zip(rows, why)]
    if width >= WIDE and fits(cols + [Col("pick from")], [r + ["A1 (line 10)"] for r in rows], width):
        return table_lines(cols + [Col("pick from", wrap=True, sep="; ")],
                           [r + [p] for r, p in zip(rows, picks)], width, title=title)
    if any(why) and not fits(cols, rows, width):  # the reason goes before the drawers instead
        cols, rows = cols[:-1], [r[:-1] for r in rows]
        heads = [f"({w}) pick from " if w else "pick from " for w in why]
    else:
        heads = ["pick from "] * len(rows)
    head, groups = table_parts(cols, rows, width, title=title)
    from rich.text import Text

    indent = " " * (max(len(r[0]) for r in rows) + 2)
    out = list(head)
    import re

    for group, head_words, pick in zip(groups, heads, picks):
        out += group
        tokens = re.split(r"(?<=[,;]) ", head_words + pick)  # break only after a drawer
        out += [Text(indent + line) for line in wrap_items(tokens, width - len(indent), " ")]
    return out


def print_value_report(console: "Console", report) -> None:
    """Table, legend, and the notes and cautions of a ``find value`` report."""
    from selector.render.layout import paragraph, print_lines

    width = console.width
    lines: list = []
    if report.options:
        yields = list(getattr(report, "yields", ()) or ())
        lines += value_lines(report.kind, report.target, report.options, report.alternatives, width,
                             yields, list(getattr(report, "whys", ()) or ()))
        lines += paragraph(LEGEND + " (capacitors too: 1 nF + 1 nF = 0.5 nF)", width)
        req = getattr(report, "request", None)
        if yields and req is not None:
            lines += paragraph(f"In spec: share of {req.samples:,} simulated builds (parts uniform within "
                               f"tolerance) within ±{req.accept * 100:g} % of the target; ranked by it "
                               "(within 2 points counts as equal), then fewer parts, then error.", width)
    for note in report.notes:
        lines += paragraph(note, width)
    if getattr(report, "search_id", None) is not None:
        lines += paragraph(f"Saved as search {report.search_id}; `selector bom N` lists the parts of option N.",
                           width)
    print_lines(console, lines)
