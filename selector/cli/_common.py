"""Shared plumbing for commands: where the database is, reading whole-number options, JSON
output, and turning domain errors into one ``Error: ...`` line with an exit code (the only place
where that happens)."""

from __future__ import annotations

import functools
import math
import re
import sys
from typing import Any, Callable, Optional, TypeVar

import typer

F = TypeVar("F", bound=Callable[..., Any])


def db_arg(ctx: typer.Context) -> str | None:
    """The --db value given on the command line (None: fall back to $SELECTOR_DB / default)."""
    obj = ctx.find_root().obj or {}
    return obj.get("db")


def _say(message: str) -> None:
    """One ``Error:`` line on stderr, with control characters from user text removed."""
    from selector.render.safe import printable

    typer.echo(f"Error: {printable(str(message))}", err=True)


def fail(message: str, code: int = 1) -> None:
    """Print one error line to stderr and exit."""
    _say(message)
    raise typer.Exit(code)


_WHOLE = re.compile(r"([+-]?)([0-9]+)")  # ASCII digits only


def read_whole(text: Any, name: str, low: int, high: int) -> int:
    """``text`` as a whole number from ``low`` to ``high``, else one usage line (exit 2) naming
    the option and the range. Never converts a 5000-digit text (Python refuses past 4300)."""
    if isinstance(text, int) and not isinstance(text, bool):  # a default value
        value: Optional[int] = text
        shown = str(text)
    else:
        shown = str(text).strip()
        m = _WHOLE.fullmatch(shown)
        value = None
        if m and len(m.group(2).lstrip("0")) <= max(len(str(abs(low))), len(str(abs(high)))):
            value = int(shown)
    if value is None or not low <= value <= high:
        from selector.core.notation import quoted

        fail(f"{name} {quoted(shown)}: expected a whole number from {low} to {high}", code=2)
    return value  # type: ignore[return-value]


def whole(name: str, low: int, high: int) -> Callable[[Any], Optional[int]]:
    """A typer ``parser=`` for a whole-number option or argument within [low, high] (the ranges
    are in selector/core/limits.py and the README); None (an option not given) stays None."""

    def parse(text: Any) -> Optional[int]:
        return None if text is None else read_whole(text, name, low, high)

    parse.__name__ = f"whole_{name.strip('-').replace('-', '_').lower()}"
    return parse


def _finite(obj: Any) -> Any:
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: _finite(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_finite(v) for v in obj]
    return obj


def json_text(obj: Any, **kwargs: Any) -> str:
    """``json.dumps`` that never writes Infinity or NaN (not JSON): a non-finite number, which only
    a database written by an older version can hold, becomes null."""
    import json

    return json.dumps(_finite(obj), allow_nan=False, **kwargs)


def handles_errors(fn: F) -> F:
    """Decorator for command functions: a SelectorError becomes ``Error: <message>`` (plus any
    listed problems, one per line) and its exit code; never a traceback."""

    @functools.wraps(fn)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        from selector.core.errors import SelectorError

        try:
            return fn(*args, **kwargs)
        except SelectorError as exc:
            from selector.render.safe import printable

            _say(str(exc))
            for problem in getattr(exc, "problems", []) or []:
                typer.echo(f"  {printable(problem)}", err=True)
            raise typer.Exit(exc.exit_code)
        except KeyboardInterrupt:
            typer.echo("Error: interrupted; nothing was changed by the unfinished step", err=True)
            raise typer.Exit(130)
        except BrokenPipeError:  # e.g. `selector stock list | head`
            sys.stderr.close()
            raise typer.Exit(0)

    return wrapper  # type: ignore[return-value]
