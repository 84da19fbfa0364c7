"""Commands of the 'bom' group (placeholder: filled in by its issue)."""

from __future__ import annotations

import typer


def register(app: typer.Typer) -> None:
    """Attach this module's commands to the root app."""
