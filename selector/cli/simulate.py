"""Top-level commands ``netlist`` and ``simulate``: a saved option as a SPICE netlist, and the
same netlist run in ngspice beside the search's prediction. Thin: parse, call one service, render.
Heavy imports happen inside the commands so ``selector --help`` stays quick."""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from selector.cli._common import db_arg, fail, handles_errors, json_text, whole
from selector.core.limits import MAX_ID


def _engine(ctx: typer.Context):
    from selector.store.db import open_engine, resolve_url

    return open_engine(resolve_url(db_arg(ctx)))


def _ohms(text: Optional[str]) -> Optional[float]:
    """--discharge-ohms read like any resistance (12, 12R, 0.5k), above zero."""
    if text is None:
        return None
    from selector.core.errors import UnparseableValue
    from selector.core.notation import OHM, parse_value

    try:
        value = parse_value(text, "resistor", OHM)
    except UnparseableValue as e:
        raise UnparseableValue(f"--discharge-ohms: {e}") from None
    if not value > 0:
        raise UnparseableValue(f'--discharge-ohms: "{text}" must be above zero')
    return value


_OPTION_HELP = "Option number of the search (1 = the first listed)."
_SEARCH_HELP = "Search id (default: the latest search)."
_CYCLES_HELP = "Astable cycles to measure after the first one (their mean is shown)."
def _rd_help() -> str:
    from selector.cli._choices import DISCHARGE_OHMS  # a checked copy of the chip table (start-up)

    figures = ", ".join(f"{ohms:g} {key}" for key, ohms in DISCHARGE_OHMS)
    return ("On-resistance of the 555's discharge switch in ohms, used by the run and the prediction "
            f"alike (default: the chip family's data-sheet figure: {figures}).")


_RD_HELP = _rd_help()


@handles_errors
def netlist_command(
    ctx: typer.Context,
    option: int = typer.Argument(..., parser=whole("OPTION", 1, MAX_ID), metavar="OPTION", help=_OPTION_HELP),
    search: Optional[int] = typer.Option(None, "--search", parser=whole("--search", 1, MAX_ID), metavar="ID", help=_SEARCH_HELP),
    output: Optional[Path] = typer.Option(None, "--output", "-o", dir_okay=False,
                                          help="Write the netlist to this file instead of the screen."),
    cycles: int = typer.Option(5, "--cycles", parser=whole("--cycles", 1, 200), metavar="N", help=_CYCLES_HELP),
    discharge_ohms: Optional[str] = typer.Option(None, "--discharge-ohms", metavar="OHMS", help=_RD_HELP),
) -> None:
    """Write a SPICE netlist of one saved option (run it with `ngspice -b FILE`).

    Every physical part is its own element, wired as its network is built; the 555 is selector's
    own behavioural model; .meas lines measure what the search predicted.
    """
    from selector.services.simulate import option_netlist

    rd = _ohms(discharge_ohms)
    engine = _engine(ctx)
    try:
        text = option_netlist(engine, option, search, cycles=cycles, discharge_ohms=rd)
    finally:
        engine.dispose()
    if output is None:
        typer.echo(text, nl=False)
        return
    try:
        output.write_text(text, encoding="ascii", errors="replace")
    except OSError as err:
        fail(f"cannot write {output}: {err.strerror or err}")
    typer.echo(f"Wrote {output}", err=True)


@handles_errors
def simulate_command(
    ctx: typer.Context,
    option: int = typer.Argument(..., parser=whole("OPTION", 1, MAX_ID), metavar="OPTION", help=_OPTION_HELP),
    search: Optional[int] = typer.Option(None, "--search", parser=whole("--search", 1, MAX_ID), metavar="ID", help=_SEARCH_HELP),
    cycles: int = typer.Option(5, "--cycles", parser=whole("--cycles", 1, 200), metavar="N", help=_CYCLES_HELP),
    corners: bool = typer.Option(False, "--corners", help="Also simulate the worst-case tolerance corners."),
    as_json: bool = typer.Option(False, "--json", help="Print JSON: predicted, simulated, difference (and corners)."),
    discharge_ohms: Optional[str] = typer.Option(None, "--discharge-ohms", metavar="OHMS", help=_RD_HELP),
    plot: Optional[Path] = typer.Option(None, "--plot", dir_okay=False,
                                        help="Also write an SVG plot of the capacitor and output voltages."),
) -> None:
    """Run one saved option in ngspice and show the measured timing beside the prediction.

    Needs ngspice on PATH. Differences are signed fractions, (ngspice - predicted) / predicted.
    """
    from selector.services.simulate import simulate_option

    rd = _ohms(discharge_ohms)
    engine = _engine(ctx)
    try:
        report = simulate_option(engine, option, search, cycles=cycles, corners=corners,
                                 discharge_ohms=rd, waveform=plot is not None)
    finally:
        engine.dispose()
    if plot is not None:
        from selector.render.simulate import waveform_svg

        title = f"search {report.search_id}, option {report.rank}: {report.connection} (ngspice)"
        try:
            plot.write_text(waveform_svg(report.waveform, title), encoding="utf-8")
        except OSError as err:
            fail(f"cannot write {plot}: {err.strerror or err}")
        typer.echo(f"Wrote {plot}", err=True)
    if as_json:
        typer.echo(json_text(report.to_json(), indent=2))
        return
    from rich.console import Console

    from selector.render.simulate import report_view

    Console(highlight=False).print(report_view(report))


def register(app: typer.Typer) -> None:
    """Attach ``netlist`` and ``simulate`` to the root app as top-level commands."""
    app.command("netlist")(netlist_command)
    app.command("simulate")(simulate_command)
