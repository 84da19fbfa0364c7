"""Shared fixtures. Two database fixtures (DESIGN.md): ``memory_engine`` (an in-memory engine per
test) and ``db_url`` (a temporary file database for CLI, concurrency and migration tests).
Every engine is disposed."""

from __future__ import annotations

import os
import subprocess
import sys
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


def run_cli(*args: str, db: str | Path | None = None, input: str | None = None, env: dict | None = None,
            cwd: str | Path | None = None) -> subprocess.CompletedProcess:
    """Run ``python -m selector`` in a subprocess (the real program, real exit codes)."""
    full_env = dict(os.environ)
    full_env.pop("SELECTOR_DB", None)
    if env:
        full_env.update(env)
    cmd = [sys.executable, "-m", "selector"]
    if db is not None:
        cmd += ["--db", str(db)]
    cmd += list(args)
    return subprocess.run(cmd, capture_output=True, text=True, input=input, env=full_env,
                          cwd=cwd or REPO, timeout=300)


@pytest.fixture
def cli():
    return run_cli
