"""The fuzz tests' view of an in-process CLI run: ``invoke`` is conftest's ``run_cli`` (the one
in-process runner: real exit codes, separate stdout/stderr), seen as an ``Outcome`` that also says
whether an exception escaped the command. ``snapshot`` reads everything a command could change in
a SQLite stock database, with the plain sqlite3 module."""

from __future__ import annotations

import sqlite3
from dataclasses import dataclass
from pathlib import Path

from conftest import run_cli


@dataclass
class Outcome:
    code: int
    stdout: str
    stderr: str
    exception: BaseException | None

    @property
    def crashed(self) -> bool:
        """An exception other than the normal exit escaped the command (a traceback for a user)."""
        return self.exception is not None and not isinstance(self.exception, SystemExit)

    def error_lines(self) -> list[str]:
        return [ln for ln in self.stderr.splitlines() if ln.strip()]


def invoke(*args: str, db: str | Path, input: str | None = None) -> Outcome:
    r = run_cli(*args, db=db, input=input)
    return Outcome(r.returncode, r.stdout, r.stderr, r.exception)


def snapshot(path: str | Path) -> list[str]:
    """Every row of every table (SQL text), in a stable order."""
    con = sqlite3.connect(path)
    try:
        return list(con.iterdump())
    finally:
        con.close()
