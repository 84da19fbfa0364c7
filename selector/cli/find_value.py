"""``find value``: the networks of the stock nearest to one resistor or capacitor value.
Parse, call selector.services.find_value.find_value once, render with selector.render.networks."""

from __future__ import annotations

from enum import Enum
from typing import Optional

import typer

from selector.cli._common import db_arg, handles_errors, json_text, whole
from selector.core.limits import MAX_BOARDS, MAX_TOP


class KindChoice(str, Enum):
    resistor = "resistor"
    capacitor = "capacitor"


def _target(text: str, kind: Optional[str]) -> tuple[float, str]:
    """(SI value, kind): the kind comes from --kind, else from the unit or prefix in the text
    (µF/nF/pF/F or a lower-case RKM letter: capacitor), else resistor."""
    from selector.core.errors import UnparseableValue
    from selector.core.notation import FARAD, OHM, infer_kind, parse_value

    k = kind or infer_kind(text) or "resistor"
    try:
        value = parse_value(text, k, OHM if k == "resistor" else FARAD)
    except UnparseableValue as e:
        raise UnparseableValue(f"VALUE: {e}") from None
    if not value > 0:
        raise UnparseableValue(f'VALUE: "{text}" is not a positive {k} value')
    return value, k


def _filters(kind: str, accept: str, tolerance: Optional[str], dielectric: Optional[str],
             min_rating: Optional[str], location: Optional[str]) -> dict:
    """The repair filters and the acceptance, parsed (one-line errors naming the option)."""
    from selector.core import parts
    from selector.core.errors import UnparseableValue
    from selector.core.notation import VOLT, WATT, parse_fraction, parse_value

    def fraction(text: str, option: str) -> float:
        try:
            return parse_fraction(text)
        except UnparseableValue as e:
            raise UnparseableValue(f"{option}: {e}") from None

    out: dict = {"accept": fraction(accept, "--accept")}
    if tolerance is not None:
        out["max_tolerance"] = fraction(tolerance, "--tolerance")
    if dielectric is not None:
        names = []
        for d in dielectric.split(","):
            try:
                names.append(parts.normalize_dielectric(d))
            except UnparseableValue as e:
                raise UnparseableValue(f"--dielectric: {e}") from None
        out["dielectrics"] = tuple(n for n in names if n)
    if min_rating is not None:
        try:
            out["min_rating"] = parse_value(min_rating, None, WATT if kind == "resistor" else VOLT)
        except UnparseableValue as e:
            raise UnparseableValue(f"--min-rating: {e}") from None
    if location is not None:
        out["locations"] = tuple(x.strip() for x in location.split(",") if x.strip())
    return out


def register(find_app: typer.Typer) -> None:
    """Attach ``value`` to the find group."""

    @find_app.command("value")
    @handles_errors
    def value_command(
        ctx: typer.Context,
        value: str = typer.Argument(..., metavar="VALUE", help="The value you need, e.g. 5k1, 3.3k, 4k7, 150nF, 2u2, 33p."),
        kind: Optional[KindChoice] = typer.Option(None, "--kind", help="resistor or capacitor (default: from the unit; a bare number or 47k is a resistor)."),
        max_parts: int = typer.Option(2, "--max-parts", parser=whole("--max-parts", 1, 3), metavar="N", help="Largest network: 1 (single parts), 2 or 3 parts in series/parallel."),
        top: int = typer.Option(10, "--top", parser=whole("--top", 1, MAX_TOP), metavar="K", help="How many options to show."),
        boards: int = typer.Option(1, "--boards", parser=whole("--boards", 1, MAX_BOARDS), metavar="B", help="Boards to build: every part is needed this many times."),
        allow_polarized_series: bool = typer.Option(False, "--allow-polarized-series", help="Also offer networks with polarized capacitors in series (shown with a caution)."),
        accept: str = typer.Option("5%", "--accept", metavar="PCT", help="A build counts as in spec when its value is within this of VALUE (part tolerances drawn), e.g. 5% or 0.05."),
        tolerance: Optional[str] = typer.Option(None, "--tolerance", metavar="PCT", help="Only parts of at most this tolerance, e.g. 1%."),
        dielectric: Optional[str] = typer.Option(None, "--dielectric", metavar="NAME[,NAME]", help="Capacitors: only these dielectrics, e.g. C0G or film-PP,film-PET."),
        min_rating: Optional[str] = typer.Option(None, "--min-rating", metavar="RATING", help="Only parts rated at least this (every part of a network): watts for resistors (0.5W), volts for capacitors (50V); unknown ratings are left out."),
        location: Optional[str] = typer.Option(None, "--location", metavar="DRAWER[,DRAWER]", help="Only parts from these drawers (case ignored)."),
        all_networks: bool = typer.Option(False, "--all-networks", help="Also offer networks with a token part (one whose share at its joint is below half the largest tolerance there)."),
        as_json: bool = typer.Option(False, "--json", help='Print only JSON: {"target", "options": [{"rank", "value", "error", "min", "max", "shape", "parts", "yield", "why"}], "search"}.'),
    ) -> None:
        """Find the single parts and series/parallel networks in stock nearest to VALUE.

        Ranked by the share of builds within --accept of VALUE (part tolerances count; shares
        within 2 points are equal), then fewer parts, then smaller error; each option shows its
        worst-case range from the part tolerances and where to pick the parts. The search is saved, so `selector bom 1`
        lists the parts of option 1. Shapes in --json: single, series, parallel, series3,
        parallel3, series+parallel = (B ∥ C) + A, parallel+series = (B + C) ∥ A.
        """
        from selector.services.find_value import ValueRequest, find_value
        from selector.store.db import open_engine, resolve_url

        target, k = _target(value, kind.value if kind else None)
        req = ValueRequest(target=target, kind=k, max_parts=max_parts, top=top, boards=boards,
                           allow_polarized_series=allow_polarized_series, all_networks=all_networks,
                           **_filters(k, accept, tolerance, dielectric, min_rating, location))
        req.check()
        engine = open_engine(resolve_url(db_arg(ctx)))
        try:
            report = find_value(engine, req)
        finally:
            engine.dispose()
        if as_json:
            typer.echo(json_text(report.to_json(), indent=2, ensure_ascii=False))
            return
        from rich.console import Console

        from selector.render.networks import print_value_report

        print_value_report(Console(highlight=False), report)
