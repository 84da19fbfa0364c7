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


def value_table(kind: str, target: float, options: Sequence["Network"],
                alternatives: Sequence[Sequence["Network"]] | None = None,
                yields: Sequence[float] = (), whys: Sequence[str] = ()) -> "Table":
    """The ranked ``find value`` table."""
    from rich.table import Table

    table = Table(title=f"Networks nearest to {value_text(kind, target)} ({kind}s)", header_style="bold")
    for name, justify in (("#", "right"), ("network", "left"), ("value", "right"), ("error", "right"),
                          ("worst case", "left"), ("in spec", "right"), ("parts", "right"), ("why", "left"),
                          ("pick from", "left")):
        table.add_column(name, justify=justify, overflow="fold")
    alternatives = list(alternatives or [])
    for rank, net in enumerate(options, start=1):
        pick = pick_text(net)
        alts = alternatives[rank - 1] if rank - 1 < len(alternatives) else []
        if alts:
            pick += "; or " + "; or ".join(pick_text(a) for a in alts[:2])
            if len(alts) > 2:
                pick += f" (+{len(alts) - 2} more)"
        from selector.render.safe import cell

        table.add_row(*map(cell, (rank, network_text(net), value_text(kind, net.value),
                                  percent_text(net.value / target - 1.0),
                                  f"{value_text(kind, net.vmin)} … {value_text(kind, net.vmax)}",
                                  f"{yields[rank - 1] * 100:.1f} %" if rank - 1 < len(yields) else "",
                                  net.nparts, whys[rank - 1] if rank - 1 < len(whys) else "", pick)))
    return table


def print_value_report(console: "Console", report) -> None:
    """Table, legend, and the notes and cautions of a ``find value`` report."""
    if report.options:
        console.print(value_table(report.kind, report.target, report.options, report.alternatives,
                                  getattr(report, "yields", ()), getattr(report, "whys", ())))
        console.print(LEGEND)
        console.print(f"In spec: share of {report.request.samples:,} simulated builds (parts uniform within "
                      f"tolerance) within ±{report.request.accept * 100:g} % of the target; ranked by it "
                      "(within 2 points counts as equal), then fewer parts, then error.")
    for note in report.notes:
        console.print(note)
    if report.search_id is not None:
        console.print(f"Saved as search {report.search_id}; `selector bom N` lists the parts of option N.")
