"""Plain-text layouts that read at any terminal width (DESIGN "Output for people").

Rules every screen follows through these helpers:
- a value, an error or a yield is ONE unbreakable item: it is never cut with ``…`` and never
  split over two lines (``4.7 kΩ`` keeps its space, but no line break falls inside it);
- words are never split (headers included): only columns marked ``wrap`` (locations, notes,
  lists of drawers) wrap, and only between words or list items;
- when a table does not fit, its optional columns are dropped (highest ``drop`` first) before
  anything is squeezed; a caller that needs every column switches to its compact layout.

Cells are plain strings or rich ``Text`` (to keep a style such as "short" in red); user text is
made printable (``render/safe.py``) before it gets here.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any, Iterable, Optional, Sequence

WIDE = 110
"""At and above this many columns the wide layouts are used (when they fit)."""

GAP = "  "


def cell_len(text: str) -> int:
    from rich.cells import cell_len as _len

    return _len(text)


def plain(value: Any) -> str:
    from rich.text import Text

    if isinstance(value, Text):
        return value.plain
    return "" if value is None else str(value)


@dataclass(frozen=True)
class Col:
    """One column: its header (one word or two short ones), right-justified or not, whether it
    may wrap between words (user text, lists), and when it is dropped at narrow widths (0: never;
    a higher number goes first)."""

    name: str
    right: bool = False
    wrap: bool = False
    drop: int = 0
    min_wrap: int = 8
    sep: str = " "  # where a wrapping cell may break: between words, or between list items (", ")
    hide_empty: bool = False  # left out when no row has anything in it


def wrap_items(items: Sequence[str], width: int, sep: str = " ") -> list[str]:
    """Join ``items`` with ``sep`` into lines at most ``width`` long, breaking only between items
    (an item longer than ``width`` gets a line of its own, whole)."""
    lines: list[str] = []
    cur = ""
    for item in items:
        if not cur:
            cur = item
        elif cell_len(cur) + cell_len(sep) + cell_len(item) <= width:
            cur += sep + item
        else:
            lines.append(cur.rstrip())
            cur = item
    if cur or not lines:
        lines.append(cur)
    return lines


_NBSP = "\u00a0"
_VALUE_SPACE = re.compile(r"(?<=[0-9]) (?=(?:[pnµmkMG]?(?:Ω|F|Hz|s|V|W)|%|min|h|pt|pts|°C)(?![A-Za-z]))")


def keep_values(text: str) -> str:
    """``text`` with the space between a number and its unit made unbreakable (``4.7 kΩ``,
    ``+0.62 %``, ``16.7 min``), so wrapping never separates them."""
    return _VALUE_SPACE.sub(_NBSP, text).replace("≥ ", "≥" + _NBSP).replace("≤ ", "≤" + _NBSP)


def wrap_words(text: str, width: int) -> list[str]:
    """Wrap at spaces, never between a number and its unit; a word longer than ``width`` (a long
    note without spaces) is folded, the one case where nothing else is possible."""
    out: list[str] = []
    for line in wrap_items(keep_values(text).split(" "), width, " "):
        while cell_len(line) > width > 0:
            out.append(line[:width].replace(_NBSP, " "))
            line = line[width:]
        out.append(line.replace(_NBSP, " "))
    return out


def _longest_word(text: str) -> int:
    return max((cell_len(w) for w in keep_values(text).split(" ")), default=0)


def table_lines(cols: Sequence[Col], rows: Iterable[Sequence[Any]], width: int,
                title: Optional[str] = None) -> list:
    """The table as rich ``Text`` lines no longer than ``width`` (see the module rules)."""
    head, body = table_parts(cols, rows, width, title)
    return head + [line for group in body for line in group]


def fits(cols: Sequence[Col], rows: Iterable[Sequence[Any]], width: int) -> bool:
    """Whether the table fits ``width`` with every column and no wrapping at all."""
    rows = [list(r) for r in rows]
    need = sum(max([cell_len(c.name)] + [cell_len(plain(r[i])) for r in rows]) for i, c in enumerate(cols))
    return need + cell_len(GAP) * (len(cols) - 1) <= width


def table_parts(cols: Sequence[Col], rows: Iterable[Sequence[Any]], width: int,
                title: Optional[str] = None) -> tuple[list, list[list]]:
    """(title + header + rule lines, one list of lines per row): :func:`table_lines` in pieces,
    for layouts that put a line of their own before each row."""
    from rich.text import Text

    rows = [list(r) for r in rows]
    keep = [i for i, c in enumerate(cols) if not (c.hide_empty and rows and not any(plain(r[i]) for r in rows))]

    def natural(i: int) -> int:
        return max([cell_len(cols[i].name)] + [cell_len(plain(r[i])) for r in rows])

    def least(i: int) -> int:
        c = cols[i]
        if not c.wrap:
            return natural(i)
        if c.sep != " ":
            words = max([_longest_word(c.name)] + [cell_len(x) + 1 for r in rows for x in plain(r[i]).split(c.sep)])
        else:
            words = max([_longest_word(c.name)] + [_longest_word(plain(r[i])) for r in rows])
        return min(natural(i), max(c.min_wrap, words))

    def total(widths: dict) -> int:
        return sum(widths[i] for i in keep) + cell_len(GAP) * (len(keep) - 1)

    while True:
        widths = {i: natural(i) for i in keep}
        if total(widths) > width:
            for i in keep:  # shrink the wrapping columns, the widest first
                if cols[i].wrap:
                    widths[i] = least(i)
            spare = width - total(widths)
            if spare > 0:  # give room back to the wrapping columns, in order
                for i in keep:
                    if cols[i].wrap and spare > 0:
                        grow = min(spare, natural(i) - widths[i])
                        widths[i] += grow
                        spare -= grow
        droppable = [i for i in keep if cols[i].drop]
        if total(widths) <= width or not droppable:
            break
        keep.remove(max(droppable, key=lambda i: (cols[i].drop, i)))
    if total(widths) > width:  # nothing left to drop: squeeze the wrapping columns to fit
        over = total(widths) - width
        for i in sorted((i for i in keep if cols[i].wrap), key=lambda i: -widths[i]):
            cut = min(over, widths[i] - 4)
            widths[i] -= max(cut, 0)
            over -= max(cut, 0)

    def fit(i: int, value: Any) -> list[Text]:
        text = value if isinstance(value, Text) else Text(plain(value))
        if cols[i].wrap and cell_len(text.plain) > widths[i]:
            sep = cols[i].sep
            if sep == " ":
                pieces = wrap_words(text.plain, widths[i])
            else:
                pieces = []
                for piece in wrap_items([x + sep.rstrip() for x in text.plain.split(sep)], widths[i], " "):
                    pieces += wrap_words(piece, widths[i])
                pieces[-1] = pieces[-1][:-len(sep.rstrip())] if sep.rstrip() and pieces[-1].endswith(sep.rstrip()) else pieces[-1]
            return [Text(s, style=text.style) for s in pieces]
        return [text]

    def join(cells: list[list[Text]]) -> list[Text]:
        height = max(len(c) for c in cells)
        out = []
        for k in range(height):
            line = Text()
            for n, (i, c) in enumerate(zip(keep, cells)):
                piece = c[k] if k < len(c) else Text("")
                pad = widths[i] - cell_len(piece.plain)
                if n:
                    line.append(GAP)
                if cols[i].right:
                    line.append(" " * pad)
                    line.append_text(piece)
                else:
                    line.append_text(piece)
                    if n < len(keep) - 1:
                        line.append(" " * pad)
            line.rstrip()
            out.append(line)
        return out

    head: list = []
    if title:
        head += [Text(s) for s in wrap_words(title, width)]
    head += join([[Text(cols[i].name)] for i in keep])
    head.append(Text("─" * min(width, total(widths))))
    return head, [join([fit(i, r[i]) for i in keep]) for r in rows]


def print_lines(console, lines: Iterable[Any]) -> None:
    """Print prepared lines as they are: no markup, no highlighting, no re-wrapping."""
    from rich.text import Text

    for line in lines:
        text = line if isinstance(line, Text) else Text(str(line))
        console.print(text, highlight=False, markup=False, no_wrap=True, overflow="ignore", crop=False,
                      soft_wrap=True)


def paragraph(text: str, width: int, indent: str = "") -> list[str]:
    """A sentence wrapped between words (never between a number and its unit), its leading
    spaces kept, continuation lines indented by ``indent``."""
    body = text.lstrip(" ")
    lead = text[:len(text) - len(body)]
    words = [w for w in keep_values(body).split(" ") if w]
    lines: list[str] = []
    cur = lead
    for w in words:
        if cur.strip() and cell_len(cur) + 1 + cell_len(w) > width:
            lines.append(cur)
            cur = indent + w
        else:
            cur = (cur + " " + w) if cur.strip() else cur + w
    lines.append(cur)
    return [line.replace(_NBSP, " ") for line in lines]
