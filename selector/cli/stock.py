"""The ``stock`` group: import, list, export, adjust, set, kit. Thin: parse the options, call one
service in selector/services/stock.py, render with selector/render/stock.py."""

from __future__ import annotations

from enum import Enum
from pathlib import Path
from typing import Optional

import typer

from selector.cli._common import db_arg, fail, handles_errors, json_text, read_whole, whole
from selector.core.limits import MAX_ID, MAX_QUANTITY

stock_app = typer.Typer(
    help="The parts on hand: import a spreadsheet, list, export, adjust counts, add E-series kits.",
    no_args_is_help=True,
)


class KindChoice(str, Enum):
    resistor = "resistor"
    capacitor = "capacitor"
    trimmer = "trimmer"
    ic = "ic"
    diode = "diode"


def _engine(ctx: typer.Context):
    from selector.store.db import open_engine, resolve_url

    return open_engine(resolve_url(db_arg(ctx)))


def _console():
    from rich.console import Console

    return Console(highlight=False)


@stock_app.command("import")
@handles_errors
def import_command(
    ctx: typer.Context,
    file: Path = typer.Argument(..., metavar="FILE", help="CSV with a header row: kind, value (or part), quantity and optionally tolerance, location, package, rating, dielectric, note, part, turns, reorder_at."),
    dry_run: bool = typer.Option(False, "--dry-run", help="Show what would change and write nothing."),
    replace: bool = typer.Option(False, "--replace", help="Set matching lines to the file's quantities instead of adding; lines not in the file are left as they are."),
    verbose: bool = typer.Option(False, "--verbose", help="List every stock line created or changed (a short import is always listed)."),
) -> None:
    """Add the parts listed in a CSV file to stock (one transaction; every change is ledgered).

    The whole file is checked first: any bad row and nothing is imported, with every problem
    listed by row and column. Rows for the same part in the same place are merged.
    """
    from selector.render.stock import print_plan
    from selector.services.stock import import_stock

    engine = _engine(ctx)
    try:
        plan = import_stock(engine, file, replace=replace, dry_run=dry_run)
    finally:
        engine.dispose()
    print_plan(_console(), plan, dry_run=dry_run, verbose=verbose)


def _parse_bound(text: Optional[str], kind: Optional[str], option: str) -> Optional[float]:
    if text is None:
        return None
    from selector.core.errors import UnparseableValue
    from selector.core.notation import FARAD, OHM, infer_kind, parse_value

    if kind in ("ic", "diode"):
        raise UnparseableValue(f"{option} {text}: {'an' if kind == 'ic' else 'a'} {kind} has no value to compare; list them with --kind {kind}")
    k = "resistor" if kind == "trimmer" else kind or infer_kind(text)
    unit = {"resistor": OHM, "capacitor": FARAD}.get(k or "")
    try:
        return parse_value(text, k, unit)
    except UnparseableValue as e:
        raise UnparseableValue(f"{option}: {e}") from None


@stock_app.command("list")
@handles_errors
def list_command(
    ctx: typer.Context,
    kind: Optional[KindChoice] = typer.Option(None, "--kind", metavar="KIND", help="Only this kind: resistor, capacitor, trimmer, ic or diode."),
    location: Optional[str] = typer.Option(None, "--location", help="Only this location (case does not matter)."),
    min_value: Optional[str] = typer.Option(None, "--min", metavar="VALUE", help="Smallest value to show, e.g. 1k or 10n."),
    max_value: Optional[str] = typer.Option(None, "--max", metavar="VALUE", help="Largest value to show, e.g. 100k or 1u."),
    low: bool = typer.Option(False, "--low", help="Only lines at or below their reorder level (reorder_at)."),
    as_json: bool = typer.Option(False, "--json", help="Print a JSON list (SI values, tolerances as fractions)."),
) -> None:
    """Show the stock lines (id, value or part, tolerance, quantity, location, ...)."""
    from selector.render.stock import print_stock
    from selector.services.stock import StockFilter, list_stock, stock_json

    k = kind.value if kind else None
    f = StockFilter(k, location, _parse_bound(min_value, k, "--min"), _parse_bound(max_value, k, "--max"), low)
    engine = _engine(ctx)
    try:
        lines = list_stock(engine, f)
    finally:
        engine.dispose()
    if as_json:
        typer.echo(json_text(stock_json(lines), indent=2, ensure_ascii=False))
    else:
        print_stock(_console(), lines, low_only=low)


@stock_app.command("export")
@handles_errors
def export_command(
    ctx: typer.Context,
    file: str = typer.Argument(..., metavar="FILE", help="CSV file to write ('-' for the screen)."),
) -> None:
    """Write all stock lines to a CSV that `stock import` reads back to the identical stock."""
    from selector.services.stock import export_stock, export_text

    engine = _engine(ctx)
    try:
        if file == "-":
            typer.echo(export_text(engine), nl=False)
            return
        n = export_stock(engine, file)
    finally:
        engine.dispose()
    typer.echo(f"Wrote {n} stock line{'s' if n != 1 else ''} to {file}", err=True)


@stock_app.command("adjust", context_settings={"ignore_unknown_options": True})
@handles_errors
def adjust_command(
    ctx: typer.Context,
    line_id: int = typer.Argument(..., metavar="LINE_ID", parser=whole("LINE_ID", 1, MAX_ID), help="Stock line id (see `stock list`)."),
    delta: str = typer.Argument(..., metavar="DELTA", help="Signed change, e.g. 10 or -3."),
    reference: str = typer.Option("", "--reference", help="Why, for the ledger (e.g. 'counted drawer')."),
) -> None:
    """Add parts to a line or take them out (negative DELTA); refused below zero."""
    from selector.render.stock import print_change
    from selector.services.stock import adjust_line

    d = read_whole(delta, "DELTA", -MAX_QUANTITY, MAX_QUANTITY)
    engine = _engine(ctx)
    try:
        before, after = adjust_line(engine, line_id, d, reference)
    finally:
        engine.dispose()
    print_change(_console(), before, after)


@stock_app.command("set")
@handles_errors
def set_command(
    ctx: typer.Context,
    line_id: int = typer.Argument(..., metavar="LINE_ID", parser=whole("LINE_ID", 1, MAX_ID), help="Stock line id (see `stock list`)."),
    quantity: int = typer.Argument(..., metavar="QTY", parser=whole("QTY", 0, MAX_QUANTITY), help="The counted quantity."),
    reference: str = typer.Option("", "--reference", help="Why, for the ledger (e.g. 'stocktake')."),
) -> None:
    """Set a line's quantity after counting it; the difference goes into the ledger."""
    from selector.render.stock import print_change
    from selector.services.stock import set_line

    engine = _engine(ctx)
    try:
        before, after = set_line(engine, line_id, quantity, reference)
    finally:
        engine.dispose()
    print_change(_console(), before, after)


@stock_app.command("kit")
@handles_errors
def kit_command(
    ctx: typer.Context,
    series: str = typer.Argument(..., metavar="SERIES", help="IEC 60063 series: E3, E6, E12, E24, E48, E96 or E192."),
    kind: KindChoice = typer.Option(..., "--kind", metavar="KIND", help="resistor or capacitor (kits hold no trimmers, ICs or diodes)."),
    low: str = typer.Option(..., "--from", metavar="VALUE", help="Lowest value, e.g. 10 or 1n."),
    high: str = typer.Option(..., "--to", metavar="VALUE", help="Highest value, e.g. 1M or 1u."),
    qty: int = typer.Option(..., "--qty", parser=whole("--qty", 0, MAX_QUANTITY), metavar="N", help="Parts of each value."),
    location: str = typer.Option(..., "--location", help="Where the kit is kept."),
    tolerance: Optional[str] = typer.Option(None, "--tolerance", help="e.g. 1%, J, ±5 % (default: the series' own for resistors, the dielectric's for capacitors)."),
    dielectric: str = typer.Option("", "--dielectric", help="Capacitors: C0G, X7R, film-PP, electrolytic, ..."),
    rating: Optional[str] = typer.Option(None, "--rating", help="Watts for resistors (1/4W), volts for capacitors (50V)."),
    package: str = typer.Option("", "--package", help="e.g. 0805, axial."),
    dry_run: bool = typer.Option(False, "--dry-run", help="Show what would change and write nothing."),
    verbose: bool = typer.Option(False, "--verbose", help="List every stock line created or changed (a short kit is always listed)."),
) -> None:
    """Add one stock line per series value in a range (an assortment kit), merging with identical lines."""
    from selector.core.errors import UnparseableValue
    from selector.core.notation import FARAD, OHM, parse_rating, parse_tolerance, parse_value
    from selector.render.stock import print_plan
    from selector.services.stock import add_kit, check_kit_kind, kit_rows

    k = check_kit_kind(kind.value)
    unit = OHM if k == "resistor" else FARAD

    def read(text: str, option: str, fn):
        try:
            return fn(text)
        except UnparseableValue as e:
            raise UnparseableValue(f"{option}: {e}") from None

    lo = read(low, "--from", lambda t: parse_value(t, k, unit))
    hi = read(high, "--to", lambda t: parse_value(t, k, unit))
    if lo > hi:
        fail(f"--from {low} is above --to {high}", code=2)
    tol = read(tolerance, "--tolerance", lambda t: parse_tolerance(t, k, lo)) if tolerance else None
    rat = read(rating, "--rating", lambda t: parse_rating(t, k)) if rating else None
    rows = kit_rows(series, k, lo, hi, qty, location.strip(), tolerance=tol, dielectric=dielectric,
                    rating=rat, package=package.strip())
    reference = f"{series.upper()} {low}-{high}"
    engine = _engine(ctx)
    try:
        plan = add_kit(engine, rows, reference, dry_run=dry_run)
    finally:
        engine.dispose()
    print_plan(_console(), plan, dry_run=dry_run, verb="kit", verbose=verbose)


def register(app: typer.Typer) -> None:
    """Attach the stock group to the root app."""
    app.add_typer(stock_app, name="stock")
