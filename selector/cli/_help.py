"""Plain help text, without rich: typer's rich help formatter costs about as much start-up time as
the rest of ``selector --help`` together (rich.console, rich.markdown, typer.rich_utils), so every
command of ours prints click's plain layout instead, with three changes so that it reads at 80
columns as DESIGN.md asks:

- a command list shows each command's first sentence in full (click would cut it with "..." at
  about 45 characters);
- words are never split, not at a hyphen either ("schmitt-inverter" stays whole);
- a bracketed note such as ``[default: 9V]`` and a quoted command stay on one line.

``install`` in ``_params`` applies this to the whole command tree."""

from __future__ import annotations

import re
import textwrap
from typing import Any, Sequence

try:  # typer >= 0.2x carries its own click
    from typer._click.core import Context
    from typer._click.formatting import HelpFormatter, iter_rows, measure_table, term_len
except ImportError:  # pragma: no cover - an older typer runs on the click package
    from click.core import Context
    from click.formatting import HelpFormatter, iter_rows, measure_table, term_len

_NBSP = "\u00a0"  # a space textwrap does not break at; put back after wrapping
_KEPT_WHOLE = re.compile(r"\[[^\[\]\n]{1,40}\]|`[^`\n]{1,40}`|\([^()\n]{1,24}\)")  # [default: 9V], `ngspice -b FILE`, (a - b)
_SENTENCE_END = re.compile(r"(?<=[.!?])\s+(?=[A-Z`(])")


def first_sentence(text: str) -> str:
    """The first sentence of a help text (its first paragraph when that has no sentence end)."""
    paragraph = " ".join(text.strip().split("\n\n", 1)[0].split())
    return _SENTENCE_END.split(paragraph, 1)[0]


def _wrap(text: str, width: int, initial: str = "", subsequent: str = "") -> list[str]:
    """Lines of ``text`` at most ``width`` wide where words allow: no word split, blank-line
    paragraphs kept, a short ``[...]`` note or a `quoted command` kept on one line."""
    out: list[str] = []
    wrapper = textwrap.TextWrapper(width=max(width, 10), initial_indent=initial, subsequent_indent=subsequent,
                                   break_long_words=False, break_on_hyphens=False)
    for i, para in enumerate(p for p in re.split(r"\n\s*\n", text.strip()) if p.strip()):
        if i:
            out.append("")
        glued = _KEPT_WHOLE.sub(lambda m: m.group(0).replace(" ", _NBSP), " ".join(para.split()))
        out.extend(line.replace(_NBSP, " ") for line in wrapper.wrap(glued))
    return out


class PlainFormatter(HelpFormatter):
    """click's help formatter with wrapping that never splits a word or a ``[...]`` note."""

    def write_text(self, text: str) -> None:
        indent = " " * self.current_indent
        self.write("\n".join(_wrap(text, self.width, indent, indent)))
        self.write("\n")

    def write_dl(self, rows: Sequence[tuple[str, str]], col_max: int = 30, col_spacing: int = 2) -> None:
        rows = list(rows)
        widths = measure_table(rows)
        first_col = min(widths[0], col_max) + col_spacing
        for first, second in iter_rows(rows, len(widths)):
            self.write(f"{'':>{self.current_indent}}{first}")
            if not second:
                self.write("\n")
                continue
            if term_len(first) <= first_col - col_spacing:
                self.write(" " * (first_col - term_len(first)))
            else:
                self.write("\n" + " " * (first_col + self.current_indent))
            lines = _wrap(second, max(self.width - first_col - 2, 10)) or [""]
            self.write(lines[0] + "\n")
            for line in lines[1:]:
                self.write(f"{'':>{first_col + self.current_indent}}{line}\n" if line else "\n")


class PlainContext(Context):
    formatter_class = PlainFormatter


def apply(command: Any) -> None:
    """Plain help for one command or group (not its sub-commands)."""
    if hasattr(command, "rich_markup_mode"):
        command.rich_markup_mode = None  # typer: click's formatter, plain error lines
    command.context_class = PlainContext
    if not getattr(command, "short_help", None) and getattr(command, "help", None):
        command.short_help = first_sentence(command.help)
