"""Run the CLI in this process (typer's CliRunner on selector.cli.app.app): fast enough for fuzzing,
with the real exit codes and separate stdout/stderr. ``snapshot`` reads everything a command could
change in a SQLite stock database, with the plain sqlite3 module."""

from __future__ import annotations

import sqlite3
from dataclasses import dataclass
from pathlib import Path

from typer.testing import CliRunner

from selector.cli.app import app

_RUNNER = CliRunner()


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
    r = _RUNNER.invoke(app, ["--db", str(db), *args], input=input, env={"SELECTOR_DB": None})
    return Outcome(r.exit_code, r.stdout, r.stderr, r.exception)


def snapshot(path: str | Path) -> list[str]:
    """Every row of every table (SQL text), in a stable order."""
    con = sqlite3.connect(path)
    try:
        return list(con.iterdump())
    finally:
        con.close()
