"""Commands of the 'find' group (placeholder: filled in by its issue)."""

from __future__ import annotations

import typer


def register(find_app: typer.Typer) -> None:
    """Attach this module's commands to the find group."""
