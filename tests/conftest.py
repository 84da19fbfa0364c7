"""Shared fixtures. Two database fixtures (DESIGN.md): ``memory_engine`` (an in-memory engine per
test) and ``db_url`` (a temporary file database for CLI, concurrency and migration tests).
Every engine is disposed."""

from __future__ import annotations

import logging
import os
import subprocess
import sys
import traceback
import warnings
from dataclasses import dataclass
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent
SAMPLE = REPO / "sample_stock.csv"

# Stable, colour-free CLI output for tests.
os.environ.setdefault("TERMINAL_WIDTH", "200")
os.environ["COLUMNS"] = "200"
os.environ["NO_COLOR"] = "1"
os.environ.pop("FORCE_COLOR", None)


@pytest.fixture
def db_path(tmp_path: Path) -> Path:
    return tmp_path / "stock.db"


@pytest.fixture
def db_url(db_path: Path) -> str:
    return f"sqlite:///{db_path}"


@pytest.fixture
def memory_engine():
    from selector.store.db import open_engine

    engine = open_engine("sqlite://")
    try:
        yield engine
    finally:
        engine.dispose()


# --------------------------------------------------------------------------- running the program
# Tests run the command in this process by default (``run_cli``): a subprocess costs 0.5-0.7 s of
# interpreter start-up and imports per call, an in-process run a few milliseconds. ``run_cli``
# returns what ``run_cli_process`` returns (returncode, stdout, stderr as separate strings) and
# reproduces what a separate process would show: the environment and working folder of the run,
# typer's exit codes and usage errors, the program name in usage lines, Python warnings and
# library log records on stderr, and an unexpected exception as exit code 1 with its traceback on
# stderr (so "no traceback" assertions see it). ``run_cli_process`` starts the real program; use it
# only where a process is the point (wheel install, kill -9, processes running at once, variables
# read once at import time such as TYPER_USE_RICH).

PROG_NAME = "python -m selector"  # what click shows in usage lines for `python -m selector`
# Read once when typer is imported, so an in-process run cannot honour a per-run value.
IMPORT_TIME_ENV = frozenset({"TYPER_USE_RICH", "TERMINAL_WIDTH", "_TYPER_FORCE_DISABLE_TERMINAL",
                             "TYPER_STANDARD_TRACEBACK", "_TYPER_STANDARD_TRACEBACK"})


@dataclass
class CliResult:
    """The part of ``subprocess.CompletedProcess`` that tests read."""

    args: list[str]
    returncode: int
    stdout: str
    stderr: str


def _argv(args, db) -> list[str]:
    return (["--db", str(db)] if db is not None else []) + [str(a) for a in args]


def run_cli_process(*args: str, db: str | Path | None = None, input: str | None = None, env: dict | None = None,
                    cwd: str | Path | None = None) -> subprocess.CompletedProcess:
    """Run ``python -m selector`` in a subprocess (the real program, real exit codes)."""
    full_env = dict(os.environ)
    full_env.pop("SELECTOR_DB", None)
    if env:
        full_env.update(env)
    cmd = [sys.executable, "-m", "selector"] + _argv(args, db)
    return subprocess.run(cmd, capture_output=True, text=True, input=input, env=full_env,
                          cwd=cwd or REPO, timeout=300)


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    sys.stderr.write(warnings.formatwarning(message, category, filename, lineno, line))


class _StderrNow:
    """A stream that writes to whatever ``sys.stderr`` is at the time (CliRunner swaps it)."""

    def write(self, text: str) -> int:
        return sys.stderr.write(text)

    def flush(self) -> None:
        sys.stderr.flush()


def run_cli(*args: str, db: str | Path | None = None, input: str | None = None, env: dict | None = None,
            cwd: str | Path | None = None) -> CliResult:
    """Run the ``selector`` command in this process, as ``run_cli_process`` would run it."""
    from typer.testing import CliRunner

    from selector.cli.app import app

    late = IMPORT_TIME_ENV.intersection(env or {})
    if late:
        raise RuntimeError(f"{sorted(late)} is read at import time; use run_cli_process for this test")
    overrides: dict[str, str | None] = {"SELECTOR_DB": None}
    overrides.update(env or {})
    argv = _argv(args, db)
    # Library log records reach stderr in a process (logging's last-resort handler); pytest's own
    # handlers would swallow them here.
    log_handler = logging.StreamHandler(_StderrNow())
    log_handler.setLevel(logging.WARNING)
    root = logging.getLogger()
    old_cwd = os.getcwd()
    os.chdir(cwd or REPO)
    try:
        with warnings.catch_warnings():
            # A fresh interpreter's filters: shown once per place, deprecations hidden.
            warnings.resetwarnings()
            warnings.simplefilter("default")
            for category in (DeprecationWarning, PendingDeprecationWarning, ImportWarning, ResourceWarning):
                warnings.simplefilter("ignore", category)
            warnings.showwarning = _show_warning
            root.addHandler(log_handler)
            try:
                result = CliRunner().invoke(app, argv, input=input, env=overrides, prog_name=PROG_NAME)
            finally:
                root.removeHandler(log_handler)
    finally:
        os.chdir(old_cwd)
    stderr = result.stderr
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        # What the interpreter prints for an uncaught exception, and its exit code 1.
        stderr += "".join(traceback.format_exception(*result.exc_info))
    return CliResult(args=argv, returncode=result.exit_code, stdout=result.stdout, stderr=stderr)


@pytest.fixture
def cli():
    """The command, run in this process (see ``run_cli``)."""
    return run_cli


@pytest.fixture
def cli_process():
    """The command as a separate process (see ``run_cli_process``)."""
    return run_cli_process
