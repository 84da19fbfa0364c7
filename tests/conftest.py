"""Shared fixtures. Two database fixtures (DESIGN.md): ``memory_engine`` (a ready engine per
test) and ``db_url`` / ``db_path`` (a fresh, empty database for CLI, concurrency and migration
tests). Every engine is disposed.

Both are parametrised over the two backends through the ``backend`` fixture, so each
database test runs once on SQLite and once on PostgreSQL (the same test function). The
PostgreSQL half needs ``SELECTOR_TEST_PG_URL`` (a role allowed to CREATE DATABASE; see
DEVELOPERS.md) and skips with that reason without it. A test that is about SQLite itself (file
damage, WAL, locks) uses ``sqlite_only`` or the ``sqlite_path`` / ``sqlite_url`` fixtures."""

from __future__ import annotations

import logging
import os
import subprocess
import sys
import time
import traceback
import uuid
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


PG_URL_ENV = "SELECTOR_TEST_PG_URL"
BACKENDS = ("sqlite", "postgresql")

sqlite_only = pytest.mark.parametrize("backend", ["sqlite"])
"""Mark for a test about SQLite itself: it runs on the SQLite backend only."""


@pytest.fixture(params=BACKENDS)
def backend(request) -> str:
    """The database backend of this test run: "sqlite" or "postgresql"."""
    return request.param


class _PgServer:
    """The PostgreSQL server behind SELECTOR_TEST_PG_URL: makes and drops one database per test."""

    def __init__(self, url: str):
        import sqlalchemy as sa
        from sqlalchemy.pool import NullPool

        self.url = sa.engine.make_url(url)
        self.admin = sa.create_engine(self.url, isolation_level="AUTOCOMMIT", poolclass=NullPool)
        self.template: str | None = None
        self.made: list[str] = []

    def _exec(self, sql: str) -> None:
        import sqlalchemy as sa

        # DROP ... WITH (FORCE) may not end an autovacuum worker that is visiting the database (it
        # runs as the superuser: "must be a member of the role whose process is being terminated");
        # the worker leaves within moments, so try again a few times (.ci/run turns autovacuum off).
        for attempt in range(20):
            try:
                with self.admin.connect() as conn:
                    conn.execute(sa.text(sql))
                return
            except sa.exc.ProgrammingError as e:
                if "must be a member of the role" not in str(e) or attempt == 19:
                    raise
                time.sleep(0.25)

    def new_database(self, *, at_head: bool = False) -> str:
        """A fresh database; ``at_head``: a copy of one migrated once per session (fast)."""
        name = f"selector_t_{os.getpid()}_{uuid.uuid4().hex[:10]}"
        if at_head:
            if self.template is None:
                from selector.store.db import open_engine

                self.template = f"selector_tpl_{os.getpid()}_{uuid.uuid4().hex[:6]}"
                self._exec(f'CREATE DATABASE "{self.template}"')
                open_engine(self.url_of(self.template)).dispose()
            self._exec(f'CREATE DATABASE "{name}" TEMPLATE "{self.template}"')
        else:
            self._exec(f'CREATE DATABASE "{name}"')
        self.made.append(name)
        return self.url_of(name)

    def url_of(self, name: str) -> str:
        return self.url.set(database=name).render_as_string(hide_password=False)

    def drop(self, url: str) -> None:
        import sqlalchemy as sa

        name = sa.engine.make_url(url).database
        self._exec(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')
        self.made.remove(name)

    def close(self) -> None:
        for name in list(self.made) + ([self.template] if self.template else []):
            self._exec(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')
        self.admin.dispose()


@pytest.fixture(scope="session")
def pg_server():
    url = os.environ.get(PG_URL_ENV)
    if not url:
        pytest.skip(f"PostgreSQL half: set {PG_URL_ENV} to a PostgreSQL URL (a role that may create "
                    "databases) to run it; see DEVELOPERS.md")
    server = _PgServer(url)
    try:
        yield server
    finally:
        server.close()


@pytest.fixture
def db_url(backend: str, tmp_path: Path, request) -> str:
    """The URL of a fresh, empty database (the schema is made by the first open_engine)."""
    if backend == "sqlite":
        yield f"sqlite:///{tmp_path / 'stock.db'}"
        return
    server = request.getfixturevalue("pg_server")
    url = server.new_database()
    try:
        yield url
    finally:
        server.drop(url)


@pytest.fixture
def db_path(backend: str, db_url: str, tmp_path: Path):
    """What ``--db`` gets for this test's database: the file Path on SQLite, the URL (str) on
    PostgreSQL (``--db`` takes either)."""
    return tmp_path / "stock.db" if backend == "sqlite" else db_url


def url_of(target) -> str:
    """The database URL for a ``db_path`` value (a file Path, or already a URL)."""
    text = str(target)
    return text if "://" in text else f"sqlite:///{text}"


def stock_lines(target) -> dict:
    """The stock lines of the database at ``target`` (a ``db_path`` value), keyed by line id."""
    from selector.store.db import load_stock, open_engine, transaction

    engine = open_engine(url_of(target))
    try:
        with transaction(engine) as s:
            return {ln.id: ln for ln in load_stock(s)}
    finally:
        engine.dispose()


@pytest.fixture
def stocked(cli, db_path):
    """``db_path`` with sample_stock.csv imported through the CLI (the import must succeed)."""
    r = cli("stock", "import", str(SAMPLE), db=db_path)
    assert r.returncode == 0, r.stderr
    return db_path


def plain_engine(target):
    """An engine without selector's hooks or schema check, to look at the raw rows."""
    import sqlalchemy as sa

    return sa.create_engine(url_of(target), poolclass=sa.pool.NullPool)


@pytest.fixture
def sqlite_path(tmp_path: Path) -> Path:
    """A database file path for tests about SQLite files themselves (not parametrised)."""
    return tmp_path / "stock.db"


@pytest.fixture
def sqlite_url(sqlite_path: Path) -> str:
    return f"sqlite:///{sqlite_path}"


@pytest.fixture
def memory_engine(backend: str, request):
    """A ready engine at the head schema: in-memory SQLite, or a fresh PostgreSQL database."""
    from selector.store.db import open_engine

    url = "sqlite://"
    server = None
    if backend == "postgresql":
        server = request.getfixturevalue("pg_server")
        url = server.new_database(at_head=True)
    engine = open_engine(url)
    try:
        yield engine
    finally:
        engine.dispose()
        if server is not None:
            server.drop(url)


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
    exception: BaseException | None = None  # in-process only: what escaped the command, if anything


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


def modules_after_commands(db, commands, modules) -> list[tuple[int, list[bool]]]:
    """Run ``commands`` (argument tuples) one after another in ONE fresh interpreter on the
    database ``db`` and return, per command, (exit code, [whether each of ``modules`` is imported
    by then]): what a command pays at start-up, which an in-process run cannot see."""
    code = (
        "import sys\n"
        "from selector.cli.app import app\n"
        f"for args in {[list(map(str, a)) for a in commands]!r}:\n"
        "    code = 0\n"
        "    try:\n"
        f"        app(['--db', {str(db)!r}, *args])\n"
        "    except SystemExit as e:\n"
        "        code = e.code\n"
        f"    print('\\nPROBE', code, *[int(m in sys.modules) for m in {list(modules)!r}])\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO, timeout=300)
    assert out.returncode == 0, out.stderr
    rows = [ln.split()[1:] for ln in out.stdout.splitlines() if ln.startswith("PROBE ")]
    assert len(rows) == len(commands), out.stdout[-800:]
    return [(int(r[0]), [x == "1" for x in r[1:]]) for r in rows]


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
    return CliResult(args=argv, returncode=result.exit_code, stdout=result.stdout, stderr=stderr,
                     exception=result.exception)


@pytest.fixture
def cli():
    """The command, run in this process (see ``run_cli``)."""
    return run_cli


@pytest.fixture
def cli_process():
    """The command as a separate process (see ``run_cli_process``)."""
    return run_cli_process
