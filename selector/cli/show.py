"""``selector show N``: one option of a saved search in full (``--svg FILE`` for a picture).
Thin: parse, call selector.services.show.show_option once, render with selector.render.show."""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from selector.cli._common import db_arg, fail, handles_errors, whole
from selector.core.limits import MAX_ID


@handles_errors
def show_command(
    ctx: typer.Context,
    option: int = typer.Argument(..., parser=whole("OPTION", 1, MAX_ID), metavar="OPTION", help="Option number of the search (1 = the first listed)."),
    search: Optional[int] = typer.Option(None, "--search", parser=whole("--search", 1, MAX_ID), metavar="ID", help="Search id (default: the latest search)."),
    svg: Optional[Path] = typer.Option(None, "--svg", metavar="FILE", dir_okay=False, help="Also write a picture: the schematic and the predicted waveforms (needs the [svg] extra)."),
) -> None:
    """One option in full: networks, parts, drawers and pins; predictions with every error, worst
    case and yield; alternatives; the output drawn to scale; BOM preview; cautions."""
    from rich.console import Console

    from selector.render.show import print_show
    from selector.services.show import show_option
    from selector.store.db import open_engine, resolve_url

    engine = open_engine(resolve_url(db_arg(ctx)))
    try:
        report = show_option(engine, option, search)
    finally:
        engine.dispose()
    if svg is not None:
        from selector.render.picture import MissingExtra, write_svg

        try:
            write_svg(report, svg)
        except MissingExtra as e:
            fail(str(e))
        except OSError as err:
            fail(f"cannot write {svg}: {err.strerror or err}")
    print_show(Console(highlight=False), report)
    if svg is not None:
        typer.echo(f"Wrote {svg}", err=True)


def register(app: typer.Typer) -> None:
    app.command("show")(show_command)
