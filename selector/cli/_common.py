"""Shared plumbing for commands: where the database is, and turning domain errors into one
``Error: ...`` line with an exit code (the only place where that happens)."""

from __future__ import annotations

import functools
import sys
from typing import Any, Callable, TypeVar

import typer

F = TypeVar("F", bound=Callable[..., Any])


def db_arg(ctx: typer.Context) -> str | None:
    """The --db value given on the command line (None: fall back to $SELECTOR_DB / default)."""
    obj = ctx.find_root().obj or {}
    return obj.get("db")


def fail(message: str, code: int = 1) -> None:
    """Print one error line to stderr and exit."""
    typer.echo(f"Error: {message}", err=True)
    raise typer.Exit(code)


def handles_errors(fn: F) -> F:
    """Decorator for command functions: a SelectorError becomes ``Error: <message>`` (plus any
    listed problems, one per line) and its exit code; never a traceback."""

    @functools.wraps(fn)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        from selector.core.errors import SelectorError

        try:
            return fn(*args, **kwargs)
        except SelectorError as exc:
            typer.echo(f"Error: {exc}", err=True)
            for problem in getattr(exc, "problems", []) or []:
                typer.echo(f"  {problem}", err=True)
            raise typer.Exit(exc.exit_code)
        except KeyboardInterrupt:
            typer.echo("Error: interrupted; nothing was changed by the unfinished step", err=True)
            raise typer.Exit(130)
        except BrokenPipeError:  # e.g. `selector stock list | head`
            sys.stderr.close()
            raise typer.Exit(0)

    return wrapper  # type: ignore[return-value]
