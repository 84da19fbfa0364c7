"""Top-level commands ``bom``, ``pull``, ``ledger`` and ``undo``. Thin: parse, call one service,
render. Heavy imports happen inside the commands so ``selector --help`` stays quick."""

from __future__ import annotations

from enum import Enum
from pathlib import Path
from typing import Optional

import typer

from selector.cli._common import db_arg, fail, handles_errors, json_text, whole
from selector.core.limits import MAX_BOARDS, MAX_ID

class Format(str, Enum):
    table = "table"
    csv = "csv"
    markdown = "markdown"
    json = "json"


def _engine(ctx: typer.Context):
    from selector.store.db import open_engine, resolve_url

    return open_engine(resolve_url(db_arg(ctx)))


def _console():
    from rich.console import Console

    return Console(highlight=False)


def _emit(text: str, output: Optional[Path], encoding: str = "utf-8") -> None:
    if output is None:
        typer.echo(text, nl=not text.endswith("\n"))
        return
    try:
        with open(output, "w", encoding=encoding, newline="") as fh:
            fh.write(text)
    except OSError as err:
        fail(f"cannot write {output}: {err.strerror or err}")
    typer.echo(f"Wrote {output}", err=True)


@handles_errors
def bom_command(
    ctx: typer.Context,
    option: int = typer.Argument(..., parser=whole("OPTION", 1, MAX_ID), metavar="OPTION", help="Option number of the search (1 = the first listed)."),
    search: Optional[int] = typer.Option(None, "--search", parser=whole("--search", 1, MAX_ID), metavar="ID", help="Search id (default: the latest search)."),
    boards: Optional[int] = typer.Option(
        None, "--boards", parser=whole("--boards", 1, MAX_BOARDS), metavar="B", help="Number of boards to build (default: the count the search was run for)."
    ),
    fmt: Format = typer.Option(Format.table, "--format", help="Output form: table, csv, markdown or json."),
    output: Optional[Path] = typer.Option(
        None, "--output", "-o", dir_okay=False, help="Write to this file instead of the screen (CSV gets a UTF-8 byte-order mark)."
    ),
) -> None:
    """Bill of materials and pick list for one option of a saved search.

    One row per physical part with its reference designator and role, plus the timer IC, steering
    diode and supply/control-pin capacitors the circuit needs, taken from stock where it has them.
    """
    from selector.core import bom as core_bom
    from selector.services.bom import build_bom

    engine = _engine(ctx)
    try:
        report = build_bom(engine, option, search, boards)
    finally:
        engine.dispose()
    fmt = Format(fmt).value
    if fmt == "json":
        _emit(json_text(core_bom.to_json(report.bom), indent=2, ensure_ascii=False) + "\n", output)
    elif fmt == "csv":
        # Spreadsheets detect UTF-8 (Ω, µ) by the byte-order mark; on the screen it would be noise.
        _emit(core_bom.to_csv(report.bom), output, encoding="utf-8-sig")
    elif fmt == "markdown":
        _emit(core_bom.to_markdown(report.bom, report.stops), output)
    else:
        if output is not None:
            from rich.console import Console

            try:
                with open(output, "w", encoding="utf-8") as fh:
                    _print_bom(Console(file=fh, width=160, highlight=False, no_color=True), report)
            except OSError as err:
                fail(f"cannot write {output}: {err.strerror or err}")
            typer.echo(f"Wrote {output}", err=True)
        else:
            _print_bom(_console(), report)


def _print_bom(console, report) -> None:
    from selector.render.bom import print_bom

    print_bom(console, report)


@handles_errors
def pull_command(
    ctx: typer.Context,
    option: int = typer.Argument(..., parser=whole("OPTION", 1, MAX_ID), metavar="OPTION", help="Option number of the search."),
    search: Optional[int] = typer.Option(None, "--search", parser=whole("--search", 1, MAX_ID), metavar="ID", help="Search id (default: the latest search)."),
    boards: Optional[int] = typer.Option(
        None, "--boards", parser=whole("--boards", 1, MAX_BOARDS), metavar="B", help="Number of boards (default: the count the search was run for)."
    ),
    dry_run: bool = typer.Option(False, "--dry-run", help="Check the stock and show what would be taken; change nothing."),
    as_json: bool = typer.Option(False, "--json", help="Print {\"pull_id\", \"lines\": [{\"line_id\", \"taken\"}]}."),
) -> None:
    """Take an option's parts out of stock, in one step recorded in the ledger.

    Takes every BOM part that comes from stock: the timing networks and the extra capacitors found
    in stock. If any stock line is short, nothing is taken and every short line is named.
    """
    from selector.services.pull import pull_option

    engine = _engine(ctx)
    try:
        result = pull_option(engine, option, search, boards, dry_run=dry_run)
    finally:
        engine.dispose()
    if as_json:
        typer.echo(json_text(result.to_json()))
        return
    from selector.render.bom import print_pull

    print_pull(_console(), result)


@handles_errors
def ledger_command(
    ctx: typer.Context,
    limit: int = typer.Option(50, "--limit", "-n", parser=whole("--limit", 1, MAX_ID), metavar="N", help="Show at most this many movements."),
    line: Optional[int] = typer.Option(None, "--line", parser=whole("--line", 1, MAX_ID), metavar="LINE_ID", help="Only movements of this stock line."),
    pull: Optional[int] = typer.Option(None, "--pull", parser=whole("--pull", 1, MAX_ID), metavar="PULL_ID", help="Only movements of this pull."),
    as_json: bool = typer.Option(False, "--json", help="Print the movements as a JSON list."),
) -> None:
    """List stock movements (the ledger), newest first."""
    from selector.services.pull import list_movements

    engine = _engine(ctx)
    try:
        entries = list_movements(engine, limit=limit, line_id=line, pull_id=pull)
    finally:
        engine.dispose()
    if as_json:
        typer.echo(json_text([e.to_json() for e in entries], ensure_ascii=False))
        return
    from selector.render.bom import print_ledger

    console = _console()
    if not entries:
        console.print("The ledger is empty.")
        return
    print_ledger(console, entries)


@handles_errors
def undo_command(
    ctx: typer.Context,
    pull_id: int = typer.Argument(..., parser=whole("PULL_ID", 1, MAX_ID), metavar="PULL_ID", help="The pull to undo (its id is shown by `pull` and `ledger`)."),
    as_json: bool = typer.Option(False, "--json", help="Print {\"pull_id\", \"lines\": [{\"line_id\", \"restored\"}]}."),
) -> None:
    """Put back exactly what a pull took; a pull can be undone once."""
    from selector.services.pull import undo_pull

    engine = _engine(ctx)
    try:
        result = undo_pull(engine, pull_id)
    finally:
        engine.dispose()
    if as_json:
        typer.echo(json_text(result.to_json()))
        return
    from selector.render.bom import print_undo

    print_undo(_console(), result)


def register(app: typer.Typer) -> None:
    """Attach ``bom``, ``pull``, ``ledger`` and ``undo`` to the root app as top-level commands."""
    app.command("bom")(bom_command)
    app.command("pull")(pull_command)
    app.command("ledger")(ledger_command)
    app.command("undo")(undo_command)
