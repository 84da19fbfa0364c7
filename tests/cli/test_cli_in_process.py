"""The in-process runner (conftest ``run_cli``) shows what the real program shows: the same exit
code, stdout and stderr as ``python -m selector`` in a subprocess, and it cannot hide a crash,
a warning or a logged problem that a process would print (so "one line, no traceback" checks
elsewhere keep their meaning)."""

from __future__ import annotations

import logging
import os
import warnings

import pytest

from conftest import SAMPLE, run_cli, run_cli_process

# (arguments, environment): a table at 80 columns, machine output, a domain error, a usage error.
SAME = [
    (("stock", "list", "--kind", "capacitor"), {"COLUMNS": "80"}),
    (("find", "value", "4k7", "--json"), None),
    (("stock", "adjust", "99999", "5"), None),
    (("find", "value", "10k", "--top", "abc"), None),
]


@pytest.fixture
def two_shops(tmp_path):
    """Two databases given the same history, one through each runner."""
    a, b = tmp_path / "a.db", tmp_path / "b.db"
    assert run_cli("stock", "import", str(SAMPLE), db=a).returncode == 0
    assert run_cli_process("stock", "import", str(SAMPLE), db=b).returncode == 0
    return a, b


def test_in_process_run_matches_the_real_program(two_shops):
    a, b = two_shops
    for args, env in SAME:
        inside = run_cli(*args, db=a, env=env)
        real = run_cli_process(*args, db=b, env=env)
        assert inside.returncode == real.returncode, (args, inside, real)
        assert inside.stdout.replace(str(a), "DB") == real.stdout.replace(str(b), "DB"), args
        assert inside.stderr.replace(str(a), "DB") == real.stderr.replace(str(b), "DB"), args
    # the four cases really differ in kind
    assert sorted(run_cli(*args, db=a, env=env).returncode for args, env in SAME) == [0, 0, 1, 2]


def test_an_unexpected_exception_is_exit_1_with_its_traceback(tmp_path, monkeypatch):
    import selector.services.stock as service

    def broken(*args, **kwargs):
        raise RuntimeError("a bug the test must see")

    monkeypatch.setattr(service, "list_stock", broken)
    r = run_cli("stock", "list", db=tmp_path / "s.db")
    assert r.returncode == 1
    assert "Traceback (most recent call last)" in r.stderr
    assert r.stderr.rstrip().endswith("RuntimeError: a bug the test must see")


def test_warnings_and_logged_problems_reach_stderr(tmp_path, monkeypatch):
    import selector.services.stock as service

    original = service.list_stock

    def noisy(*args, **kwargs):
        warnings.warn("a warning a user would see", UserWarning)
        logging.getLogger("selector.somewhere").warning("a logged problem a user would see")
        return original(*args, **kwargs)

    monkeypatch.setattr(service, "list_stock", noisy)
    r = run_cli("stock", "list", db=tmp_path / "s.db")
    assert r.returncode == 0
    assert "UserWarning: a warning a user would see" in r.stderr
    assert "a logged problem a user would see" in r.stderr


def test_environment_and_folder_are_the_runs_own(tmp_path, monkeypatch):
    import selector.services.stock as service

    original, seen = service.list_stock, {}

    def spy(*args, **kwargs):
        seen.update(db=os.environ.get("SELECTOR_DB"), columns=os.environ.get("COLUMNS"), cwd=os.getcwd())
        return original(*args, **kwargs)

    monkeypatch.setattr(service, "list_stock", spy)
    monkeypatch.setenv("SELECTOR_DB", str(tmp_path / "never-used.db"))
    before = (os.getcwd(), dict(os.environ))
    r = run_cli("stock", "list", "--json", db=tmp_path / "s.db", env={"COLUMNS": "80"}, cwd=tmp_path)
    assert r.returncode == 0 and r.stdout.strip() == "[]"
    assert seen == {"db": None, "columns": "80", "cwd": str(tmp_path)}  # as run_cli_process sets them
    assert (os.getcwd(), dict(os.environ)) == before


def test_variables_read_at_import_need_a_process():
    with pytest.raises(RuntimeError, match="run_cli_process"):
        run_cli("--help", env={"TYPER_USE_RICH": "0"})
