"""Text from users (notes, locations, references, the text quoted in an error) made safe for a
terminal, in one place: every table cell and every error line goes through here.

Control characters are removed: C0 (ESC, BEL, CR, LF, NUL, ...), DEL and C1 (U+0080-U+009F). An
ESC sequence in a note could otherwise recolour, retitle or clear a technician's terminal; a CR
could overwrite what a line says. A tab becomes one space. Cells are rich ``Text`` objects, so a
bracket in a note (``[red]``, ``[/x]``) is shown as written, never read as rich markup.
"""

from __future__ import annotations

from typing import Any

from selector.core.cells import without_controls


def printable(text: Any) -> str:
    """``text`` without control characters (a tab becomes a space)."""
    return without_controls(str(text))


def cell(value: Any, style: str = "") -> Any:
    """A table cell for any value: its text made printable, as a rich Text (never markup)."""
    from rich.text import Text

    if isinstance(value, Text):
        return Text(printable(value.plain), style=value.style or style)
    return Text(printable("" if value is None else str(value)), style=style)
