"""The built wheel carries its migrations: installed into a fresh venv and run from a folder outside
the checkout, `selector` creates a new database at the head revision and imports the sample."""

from __future__ import annotations

import os
import shutil
import sqlite3
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
NO_INDEX = ("No matching distribution found", "Could not find a version that satisfies",
            "Network is unreachable", "Temporary failure in name resolution", "Max retries exceeded")

pytestmark = pytest.mark.slow


def _run(cmd, cwd, timeout=600, env=None):
    return subprocess.run([str(c) for c in cmd], cwd=cwd, capture_output=True, text=True, timeout=timeout, env=env)


def _skip_if_offline(result, what: str) -> None:
    if result.returncode != 0:
        text = result.stdout + result.stderr
        if any(m in text for m in NO_INDEX):
            pytest.skip(f"{what}: pip could not reach a package index ({text.strip().splitlines()[-1]})")
        raise AssertionError(f"{what} failed:\n{text}")


def _pip_can_target_python() -> bool:
    """pip >= 22.3 installs into another interpreter's environment with ``--python``."""
    from pip import __version__

    return tuple(int(p) for p in __version__.split(".")[:2] if p.isdigit()) >= (22, 3)


def test_wheel_installs_and_creates_the_schema(tmp_path):
    from selector.store.db import SCHEMA_HEAD

    src = tmp_path / "src"
    src.mkdir()
    for name in ("pyproject.toml", "README.md"):
        if (REPO / name).exists():
            shutil.copy2(REPO / name, src / name)
    for name in ("selector", "migrations"):
        shutil.copytree(REPO / name, src / name, ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
    dist = tmp_path / "dist"
    built = _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", dist, src], cwd=tmp_path)
    _skip_if_offline(built, "building the wheel")
    (wheel,) = dist.glob("*.whl")
    names = set(zipfile.ZipFile(wheel).namelist())
    assert {"selector/migrations/env.py", "selector/migrations/script.py.mako",
            "selector/migrations/versions/0001_stock_and_ledger.py",
            "selector/migrations/versions/0002_searches_and_pulls.py"} <= names

    venv = tmp_path / "venv"
    py = venv / "bin" / "python"
    if _pip_can_target_python():
        # Cheaper (no ensurepip, no second pip start-up): a venv without its own pip, filled by
        # this pip. The wheel and its declared dependencies are still resolved and installed into
        # a venv that sees nothing else.
        made = _run([sys.executable, "-m", "venv", "--without-pip", venv], cwd=tmp_path)
        assert made.returncode == 0, made.stderr
        install = [sys.executable, "-m", "pip", "--python", py, "install", "-q", wheel]
    else:
        made = _run([sys.executable, "-m", "venv", venv], cwd=tmp_path)
        assert made.returncode == 0, made.stderr
        install = [py, "-m", "pip", "install", "-q", wheel]
    installed = _run(install, cwd=tmp_path)
    _skip_if_offline(installed, "installing the wheel")

    outside = tmp_path / "elsewhere"
    outside.mkdir()
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "SELECTOR_DB")}
    dbfile = outside / "x.db"
    listed = _run([venv / "bin" / "selector", "--db", dbfile, "stock", "list"], cwd=outside, env=env)
    assert listed.returncode == 0, listed.stderr
    assert "No stock lines match" in listed.stdout
    with sqlite3.connect(dbfile) as c:
        assert c.execute("SELECT version_num FROM alembic_version").fetchall() == [(SCHEMA_HEAD,)]
    # The installed program really is the installed one, not the checkout.
    where = _run([py, "-c", "import selector, sys; print(selector.__file__)"], cwd=outside, env=env)
    assert str(venv) in where.stdout, where.stdout
    imported = _run([venv / "bin" / "selector", "--db", dbfile, "stock", "import", REPO / "sample_stock.csv"],
                    cwd=outside, env=env)
    assert imported.returncode == 0, imported.stderr
    assert "Imported from sample_stock.csv" in imported.stdout
