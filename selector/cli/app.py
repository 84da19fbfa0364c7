"""The ``selector`` command. Sub-commands live one group per module and register themselves on
the app through ``register(app)``; every module here imports only typer at import time so that
``selector --help`` stays quick (numpy, sqlalchemy and alembic are imported inside commands)."""

from __future__ import annotations

from typing import Optional

import typer

from selector.cli._params import Group

app = typer.Typer(
    name="selector",
    cls=Group,  # option values converted without importing pydantic where the result is certain
    help="Choose resistor and capacitor networks for 555 and RC timing circuits from the parts in stock.",
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
)


@app.callback()
def _root(
    ctx: typer.Context,
    db: Optional[str] = typer.Option(
        None,
        "--db",
        metavar="PATH_OR_URL",
        help="Stock database: a file path or a SQLAlchemy URL (default: $SELECTOR_DB, else a file in the user data directory).",
    ),
) -> None:
    """Choose resistor and capacitor networks for 555 and RC timing circuits from the parts in stock."""
    ctx.obj = {"db": db}


def _register_all() -> None:
    from selector.cli import bom, find, show, simulate, stock

    stock.register(app)
    find.register(app)
    bom.register(app)
    show.register(app)
    simulate.register(app)


_register_all()


def main() -> None:
    app()


if __name__ == "__main__":  # pragma: no cover
    main()
