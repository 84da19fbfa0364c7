"""The ``find`` group: ``find value`` (a missing part) lives in find_value.py; ``find astable``,
``find monostable`` and ``find rc`` live in find_timing.py."""

from __future__ import annotations

import typer

find_app = typer.Typer(
    help="Search the stock for networks that hit a target value or timing.",
    no_args_is_help=True,
)


def register(app: typer.Typer) -> None:
    """Attach the find group to the root app."""
    from selector.cli import find_timing, find_value

    find_value.register(find_app)
    find_timing.register(find_app)
    app.add_typer(find_app, name="find")
