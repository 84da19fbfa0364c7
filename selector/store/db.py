"""The stock database: where it lives, opening it (creating or upgrading the schema through the
Alembic revisions in ``migrations/``), one-transaction units of work, and the two operations every
use case needs: reading the stock lines and changing a quantity through the ledger.

SQLite notes (see /work/shared/reference/ecosystem.md §2-3 for the measurements behind them):
- the DBAPI connection runs with ``isolation_level = None`` and SQLAlchemy emits the BEGIN itself:
  a unit of work that writes starts with ``BEGIN IMMEDIATE`` (it takes the write lock up front, so
  read-modify-write cannot lose updates); a read-only unit (``write=False``) starts with a plain
  deferred ``BEGIN``, which WAL lets run beside a writer in another process without waiting;
- a writer that finds another writer busy waits: SQLite's busy timeout for a few seconds, then
  ``run_in_transaction`` prints one "waiting for another bench" note on stderr and keeps retrying
  until ``$SELECTOR_BUSY_WAIT`` seconds (default ``DEFAULT_BUSY_WAIT_S``) have passed;
- migrations run on a connection with foreign keys OFF (a batch table rebuild with FKs on would
  cascade-delete child rows), followed by ``PRAGMA foreign_key_check``;
- opening a database that is already at ``SCHEMA_HEAD`` costs one small SELECT; alembic is only
  imported when the schema is missing or behind;
- a file whose tables are not ours is refused before anything is written to it (no WAL switch).

Core and ORM: this module imports neither ``sqlalchemy.orm`` nor the ORM classes at load time. A
unit of work yields an ORM Session (``transaction`` / ``run_in_transaction``), or with
``core=True`` a plain Core Connection with exactly the same BEGIN, waiting, replay and error rules;
the search commands (reading the stock, saving the search) and the readers (bom, show, netlist,
simulate, stock list, ledger) work through Core on the tables of ``tables.py`` and so never pay for
importing the ORM (issue 12). ``load_stock`` and ``save_search`` take either kind of unit.

PostgreSQL notes: migrations run under a transaction-scoped advisory lock, so several benches
opening a new database at once queue up and all succeed; imports, kits and pulls take a second
advisory lock so their plan is made from the stock as it is when they write (lock_stock_for_plan);
deadlocks and serialization failures replay the whole unit like a busy SQLite database.
"""

from __future__ import annotations

import json
import os
import time
from contextlib import contextmanager
from pathlib import Path
from typing import TYPE_CHECKING, Callable, Iterator, Optional, TypeVar, Union

import sqlalchemy as sa
from sqlalchemy import event, exc as sa_exc
from sqlalchemy.engine import Engine, make_url
from sqlalchemy.pool import NullPool, StaticPool

from selector.core.errors import DatabaseProblem, InsufficientStock, UnknownStockLine
from selector.core.types import VALUELESS_KINDS, StockLine
from selector.store.tables import movements, search_options, searches, stock_lines, utcnow

if TYPE_CHECKING:  # the ORM is imported only by the units of work that use it
    from sqlalchemy.orm import Session

    from selector.store.models import StockLineRow

T = TypeVar("T")

SCHEMA_HEAD: str = "0004"
"""Revision id of the head migration (tests/store/test_migrations.py compares it with the scripts)."""

KNOWN_REVISIONS: tuple[str, ...] = ("0001", "0002", "0003", "0004")
"""Every revision this version of the program can upgrade from, oldest first."""

TABLES_AT: dict[str, frozenset[str]] = {
    "0001": frozenset({"stock_lines", "movements"}),
    "0002": frozenset({"stock_lines", "movements", "searches", "search_options", "pulls"}),
    "0003": frozenset({"stock_lines", "movements", "searches", "search_options", "pulls"}),
    "0004": frozenset({"stock_lines", "movements", "searches", "search_options", "pulls"}),
}
"""Our tables (besides alembic_version) at each known revision: a database at a known revision
holding any other set of tables is not ours and is refused unchanged."""

MAX_QUANTITY = 10**9  # parts on one line or in one change; far beyond any drawer, far inside int64
_MAX_ID = 2**63 - 1
BUSY_TIMEOUT_MS = 2_000
"""How long SQLite's busy timeout / PostgreSQL's lock_timeout waits for another writer before
run_in_transaction takes over (its note on stderr appears after this long)."""
DEFAULT_BUSY_WAIT_S = 300.0
"""How long a writer waits in all for another bench's write to finish (``$SELECTOR_BUSY_WAIT``)."""
BUSY_WAIT_ENV = "SELECTOR_BUSY_WAIT"
WAITING_NOTE = "waiting for another bench to finish writing to the stock database..."
_BUSY_WORDS = ("database is locked", "database is busy", "database table is locked")
_PG_RETRY_CODES = ("40001", "40P01")  # serialization_failure, deadlock_detected
_PG_MIGRATION_LOCK = 0x5E1EC701  # pg_advisory_xact_lock keys: ours, fixed, distinct
_PG_STOCK_PLAN_LOCK = 0x5E1EC702


# --------------------------------------------------------------------------- where the file is

def default_path() -> Path:
    """The default database file: ``stock.db`` in the user data directory."""
    import platformdirs

    return platformdirs.user_data_path("selector", appauthor=False) / "stock.db"


def resolve_url(db: str | None) -> str:
    """The database URL to use: ``db`` (from ``--db``), else ``$SELECTOR_DB``, else the default
    file. A plain path becomes ``sqlite:///<absolute path>``; a URL (contains ``://``) is kept."""
    if not db:
        db = os.environ.get("SELECTOR_DB") or None
    if not db:
        return f"sqlite:///{default_path()}"
    if "://" in db:
        return db
    return f"sqlite:///{Path(db).expanduser().resolve()}"


def describe(url: str) -> str:
    """A short human name for the database (the file path, or the URL without its password)."""
    try:
        u = make_url(url)
    except sa_exc.ArgumentError:
        return url
    if u.get_backend_name() == "sqlite":
        return u.database if u.database and u.database != ":memory:" else "(in memory)"
    return u.render_as_string(hide_password=True)


def _is_sqlite(u: sa.URL) -> bool:
    return u.get_backend_name() == "sqlite"


def _is_memory(u: sa.URL) -> bool:
    return not u.database or u.database == ":memory:" or u.query.get("mode") == "memory"


# --------------------------------------------------------------------------- engines

def make_engine(url: sa.URL | str, *, foreign_keys: bool = True, pooled: bool = True,
                 busy_timeout_ms: int = BUSY_TIMEOUT_MS) -> Engine:
    """A bare engine with the connection settings described at the top of this module, without
    any schema check (open_engine is what the program uses; this is for migrations and tests)."""
    if isinstance(url, str):
        url = make_url(url)
    if _is_sqlite(url):
        memory = _is_memory(url)
        kwargs: dict = {}
        if memory:
            kwargs = {"poolclass": StaticPool, "connect_args": {"check_same_thread": False}}
        elif not pooled:
            kwargs = {"poolclass": NullPool}
        engine = sa.create_engine(url, **kwargs)

        @event.listens_for(engine, "connect")
        def _on_connect(dbapi_conn, _record):  # pragma: no cover - exercised through every test
            dbapi_conn.isolation_level = None  # SQLAlchemy, not the sqlite3 module, emits BEGIN
            cur = dbapi_conn.cursor()
            try:
                # busy_timeout first: switching a new file to WAL needs a lock another process
                # opening the same new file may hold for a moment.
                cur.execute(f"PRAGMA busy_timeout={int(busy_timeout_ms)}")
                # WAL is a lasting property of the file: never switch another program's database;
                # open_engine then refuses it, unchanged. A file already in WAL (every later
                # connection to ours) needs neither the switch nor the schema read behind it.
                if not memory and str(cur.execute("PRAGMA journal_mode").fetchone()[0]).lower() != "wal" \
                        and _sqlite_verdict(cur)[0] in ("empty", "ours"):
                    cur.execute("PRAGMA journal_mode=WAL")
                cur.execute(f"PRAGMA foreign_keys={'ON' if foreign_keys else 'OFF'}")
            finally:
                cur.close()

        @event.listens_for(engine, "begin")
        def _on_begin(conn):  # pragma: no cover - exercised through every test
            # Writers take the write lock up front; readers start a deferred transaction, which in
            # WAL mode reads a snapshot beside a writer and never waits for it.
            write = conn.get_execution_options().get(WRITE_OPTION, True)
            conn.exec_driver_sql("BEGIN IMMEDIATE" if write else "BEGIN")

        return engine
    engine = sa.create_engine(url, pool_pre_ping=True, **({} if pooled else {"poolclass": NullPool}))

    @event.listens_for(engine, "begin")
    def _on_pg_begin(conn):  # pragma: no cover - exercised through every PostgreSQL test
        # Like SQLite's busy timeout: a lock held by another bench (a row, the plan or migration
        # lock) is waited for this long, then run_in_transaction notes it once and replays the unit.
        conn.exec_driver_sql(f"SET LOCAL lock_timeout = {int(busy_timeout_ms)}")

    return engine


WRITE_OPTION = "selector_write"
"""Execution option read by the SQLite begin hook: False starts a deferred (read-only) transaction."""


def schema_verdict(tables: set[str], revision: Optional[str]) -> tuple[str, str]:
    """Classify a database by its table names (alembic_version and sqlite_* left out) and its
    Alembic revision (None: no alembic_version table). Returns (verdict, detail), verdict one of
    "empty", "ours" (a known revision with exactly our tables), "newer" (a later revision id of
    ours over a superset of our tables) or "foreign" (detail says why, for the error line)."""
    tables = {t for t in tables if t != "alembic_version" and not t.startswith("sqlite_")}
    shown = ", ".join(sorted(tables)[:4]) + (", ..." if len(tables) > 4 else "")
    if revision is None:
        if not tables:
            return "empty", ""
        return "foreign", f"it holds tables ({shown}) but no selector schema"
    if revision == "":
        return "foreign", "its schema version table is empty or ambiguous"
    if revision in TABLES_AT:
        if tables == TABLES_AT[revision]:
            return "ours", ""
        return "foreign", (f"it holds tables ({shown or 'none'}) that do not match selector schema "
                           f"revision {revision}")
    if revision.isdigit() and len(revision) == len(SCHEMA_HEAD) and revision > SCHEMA_HEAD \
            and TABLES_AT[SCHEMA_HEAD] <= tables:
        return "newer", ""
    return "foreign", f"it holds tables ({shown or 'none'}) of another program (schema revision {revision})"


def _sqlite_verdict(cur) -> tuple[str, str]:
    names = {r[0] for r in cur.execute("SELECT name FROM sqlite_master WHERE type = 'table'").fetchall()}
    revision = None
    if "alembic_version" in names:
        rows = cur.execute("SELECT version_num FROM alembic_version").fetchall()
        revision = str(rows[0][0]) if len(rows) == 1 else ""
    return schema_verdict(names, revision)


def _first_line(err: BaseException) -> str:
    orig = getattr(err, "orig", None) or err
    text = str(orig).strip().splitlines()
    return text[0] if text else type(orig).__name__


def _is_busy(err: BaseException) -> bool:
    """SQLite's "database is locked" family, or PostgreSQL's lock_timeout (55P03)."""
    if getattr(getattr(err, "orig", None), "sqlstate", None) == "55P03":
        return True
    return any(w in _first_line(err).lower() for w in _BUSY_WORDS)


def _problem(name: str, err: BaseException) -> DatabaseProblem:
    """Translate a driver error met while opening into one line naming the database."""
    if _is_busy(err):
        return DatabaseProblem(f"the stock database {name} is busy (another selector is using it); try again")
    detail = _first_line(err)
    low = detail.lower()
    if "not a database" in low or "malformed" in low or "encrypted" in low:
        return DatabaseProblem(f"{name} is damaged or is not an SQLite database ({detail})")
    if "unable to open" in low or "readonly" in low or "read-only" in low or "permission" in low:
        return DatabaseProblem(f"cannot open the stock database {name} for writing ({detail})")
    return DatabaseProblem(f"cannot use the stock database {name} ({detail})")


def _check_file_path(u: sa.URL, name: str) -> None:
    path = Path(u.database or "")
    if path.is_dir():
        raise DatabaseProblem(f"{name} is a directory, not a stock database file")
    if not path.parent.is_dir():
        # Only the default data folder is made automatically: a mistyped --db / SELECTOR_DB path
        # must not silently start an empty stock somewhere else.
        if path.resolve() != default_path().resolve():
            raise DatabaseProblem(f"the folder {path.parent} does not exist (for the stock database {name}); "
                                  "create it first or check the path")
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as err:
            raise DatabaseProblem(f"cannot create the folder for the stock database {name} ({err.strerror or err})")
    if path.exists() and not os.access(path, os.R_OK | os.W_OK):
        raise DatabaseProblem(f"cannot open the stock database {name}: no permission to read and write it")


def _schema_state(conn: sa.Connection) -> tuple[str, str, Optional[str]]:
    """(verdict, detail, revision) of the database behind ``conn`` (see schema_verdict)."""
    tables = set(sa.inspect(conn).get_table_names())
    revision = None
    if "alembic_version" in tables:
        rows = conn.execute(sa.text("SELECT version_num FROM alembic_version")).scalars().all()
        revision = str(rows[0]) if len(rows) == 1 else ""
    conn.rollback()
    verdict, detail = schema_verdict(tables, revision)
    return verdict, detail, revision


class _Foreign(Exception):
    pass


def open_engine(url: str, *, busy_timeout_ms: int = BUSY_TIMEOUT_MS) -> Engine:
    """An engine for the stock database at ``url`` with the schema at ``SCHEMA_HEAD``: creates the
    schema in a new or empty database and upgrades an older one. Raises DatabaseProblem (one line
    naming the database) for a damaged, foreign, newer, unreadable or busy database. The in-memory
    URL ``sqlite://`` works (one shared connection, so the schema survives). ``busy_timeout_ms``
    is how long SQLite waits for another writer before reporting the database busy."""
    try:
        u = make_url(url)
    except sa_exc.ArgumentError:
        raise DatabaseProblem(f"{url!r} is neither a file path nor a database URL")
    name = describe(url)
    if _is_sqlite(u) and not _is_memory(u):
        _check_file_path(u, name)
    try:
        engine = make_engine(u, foreign_keys=True, busy_timeout_ms=busy_timeout_ms)
    except ImportError as err:
        extra = " (install it with: pip install 'drawer-selector[postgres]')" if "psycopg" in str(err) else ""
        raise DatabaseProblem(f"cannot use the database URL {name}: its driver is not installed{extra}")
    except (sa_exc.ArgumentError, sa_exc.NoSuchModuleError) as err:
        raise DatabaseProblem(f"cannot use the database URL {name} ({_first_line(err)})")
    try:
        with engine.connect() as conn:
            conn.execution_options(**{WRITE_OPTION: False})  # a reader: never waits for a writer
            verdict, detail, revision = _schema_state(conn)
        if verdict == "foreign":
            raise _Foreign(detail)
        if verdict == "newer":
            raise DatabaseProblem(
                f"{name} has schema revision {revision}, which this selector does not know "
                f"(it expects {SCHEMA_HEAD}); it was probably written by a newer selector"
            )
        if revision == SCHEMA_HEAD:
            return engine
        _migrate_waiting(engine, u, name)
        return engine
    except _Foreign as why:
        engine.dispose()
        raise DatabaseProblem(f"{name} is not a selector stock database: {why}")
    except DatabaseProblem:
        engine.dispose()
        raise
    except sa_exc.DBAPIError as err:
        engine.dispose()
        raise _problem(name, err)


def migrations_dir() -> Path:
    """The Alembic script directory: ``selector.migrations`` in an installed wheel (see
    pyproject.toml), else the top-level ``migrations/`` folder of a source checkout."""
    from importlib.resources import files

    try:
        return Path(str(files("selector.migrations")))
    except ModuleNotFoundError:
        here = Path(__file__).resolve().parent.parent.parent / "migrations"
        if (here / "env.py").is_file():
            return here
        raise DatabaseProblem("this selector installation is missing its schema scripts (selector.migrations)")


def _migrate_waiting(engine: Engine, u: sa.URL, name: str) -> None:
    """_migrate, waiting like a writer (busy_wait_limit) while another process holds the lock."""
    start, noted = time.monotonic(), False
    while True:
        try:
            return _migrate(engine, u, name)
        except sa_exc.DBAPIError as err:
            if not _is_busy(err) or time.monotonic() - start >= busy_wait_limit():
                raise
            if not noted:
                note_on_stderr(WAITING_NOTE)
                noted = True
            time.sleep(0.2)


def _migrate(engine: Engine, u: sa.URL, name: str) -> None:
    """Upgrade to head on a connection with foreign keys OFF, then check every foreign key."""
    from alembic import command
    from alembic.config import Config

    memory = _is_sqlite(u) and _is_memory(u)
    # In memory there is only the one shared connection: switch its FKs off for the migration.
    mig_engine = engine if memory or not _is_sqlite(u) else make_engine(u, foreign_keys=False, pooled=False)
    try:
        with mig_engine.connect() as conn:
            if memory:
                conn.connection.dbapi_connection.execute("PRAGMA foreign_keys=OFF")
            try:
                # Begin here, so alembic sees an external transaction and never commits by itself:
                # the upgrade and the foreign-key check below commit or roll back together.
                conn.begin()
                if not _is_sqlite(u):
                    # Several benches opening a new database at once: one migrates, the others wait
                    # here and then find the schema at head (alembic re-reads the version inside).
                    conn.execute(sa.text("SELECT pg_advisory_xact_lock(:k)"), {"k": _PG_MIGRATION_LOCK})
                cfg = Config()
                cfg.set_main_option("script_location", str(migrations_dir()))
                cfg.attributes["connection"] = conn
                command.upgrade(cfg, "head")
                if _is_sqlite(u):
                    bad = conn.exec_driver_sql("PRAGMA foreign_key_check").fetchall()
                    if bad:
                        conn.rollback()
                        raise DatabaseProblem(
                            f"upgrading {name} would break {len(bad)} reference(s) between tables "
                            f"(first in table {bad[0][0]}); the database was left as it was"
                        )
                conn.commit()
            finally:
                if memory:
                    conn.rollback()
                    conn.connection.dbapi_connection.execute("PRAGMA foreign_keys=ON")
    finally:
        if mig_engine is not engine:
            mig_engine.dispose()


# --------------------------------------------------------------------------- units of work

@contextmanager
def transaction(engine: Engine, *, write: bool = True,
                core: bool = False) -> Iterator[Union["Session", sa.Connection]]:
    """One Session (``core=True``: one Core Connection, and sqlalchemy.orm is not imported), one
    transaction: commit on success, roll back on any exception. ``write=False`` marks a read-only
    unit (on SQLite a deferred BEGIN that never waits for a writer). Both kinds begin through the
    same engine hooks (BEGIN IMMEDIATE / BEGIN; PostgreSQL's lock_timeout) and end alike. Driver
    errors become DatabaseProblem; a busy database or a PostgreSQL deadlock/serialization failure
    becomes _Retry (run_in_transaction replays those)."""
    name = describe(engine.url.render_as_string(hide_password=False))
    bind = engine if write else engine.execution_options(**{WRITE_OPTION: False})
    session: Union["Session", sa.Connection, None] = None
    try:
        if core:  # connects now (a Session connects at its first statement): inside the try
            session = bind.connect()  # begins at its first statement, through the begin hook
        else:
            from sqlalchemy.orm import Session

            session = Session(bind, expire_on_commit=False)
        yield session
        session.commit()
    except sa_exc.DBAPIError as err:
        if session is not None:
            session.rollback()
        if _is_busy(err):
            raise _Retry(name, busy=True) from None
        refused = f"the stock database {name} refused the change ({_first_line(err)})"
        sqlstate = getattr(getattr(err, "orig", None), "sqlstate", None)
        if sqlstate in _PG_RETRY_CODES or (sqlstate == "23505" and "uq_stock_lines_identity" in str(err.orig)):
            # a deadlock, or another bench created the same stock line first: replay the unit,
            # which then plans against that line (lock_stock_for_plan normally prevents both)
            raise _Retry(name, busy=False, message=refused) from None
        raise DatabaseProblem(refused) from None
    except BaseException:
        if session is not None:
            session.rollback()
        raise
    finally:
        if session is not None:
            session.close()


class _Retry(DatabaseProblem):
    """The unit met another writer (SQLite busy, PostgreSQL deadlock): replay it."""

    def __init__(self, name: str, busy: bool, message: Optional[str] = None):
        super().__init__(message or f"the stock database {name} is busy (another bench is writing to it); try again")
        self.name = name
        self.busy = busy


def busy_wait_limit() -> float:
    """Seconds a writer waits in all for other benches (``$SELECTOR_BUSY_WAIT``, default
    DEFAULT_BUSY_WAIT_S; an unreadable or negative value falls back to the default)."""
    text = os.environ.get(BUSY_WAIT_ENV, "").strip()
    try:
        value = float(text) if text else DEFAULT_BUSY_WAIT_S
    except ValueError:
        return DEFAULT_BUSY_WAIT_S
    return value if 0 <= value < 10**7 else DEFAULT_BUSY_WAIT_S


def note_on_stderr(message: str) -> None:
    """The default waiting note: one line on stderr (stdout stays clean for --json)."""
    import sys

    print(message, file=sys.stderr, flush=True)


def run_in_transaction(engine: Engine, fn: Callable[..., T], *, write: bool = True,
                       retries: Optional[int] = None, max_wait_s: Optional[float] = None,
                       on_wait: Optional[Callable[[str], None]] = note_on_stderr,
                       core: bool = False) -> T:
    """Run ``fn(session)`` as one transaction (``write=False``: a read-only unit; ``core=True``:
    ``fn`` gets a Core Connection instead of an ORM Session, see ``transaction``). When another
    bench holds the write lock, the whole unit is replayed until it gets through: the first time,
    ``on_wait`` gets the one-line WAITING_NOTE; after ``max_wait_s`` seconds in all (default
    busy_wait_limit()) or ``retries`` replays, DatabaseProblem says the database stayed busy."""
    limit = busy_wait_limit() if max_wait_s is None else max_wait_s
    start = time.monotonic()
    delay, attempt, noted = 0.05, 0, False
    while True:
        try:
            with transaction(engine, write=write, core=core) as session:
                return fn(session)
        except _Retry as why:
            attempt += 1
            waited = time.monotonic() - start
            if waited >= limit or (retries is not None and attempt > retries):
                raise DatabaseProblem(
                    f"the stock database {why.name} stayed busy for {waited:.0f} s (another bench kept "
                    f"writing to it); nothing was changed, try again later (wait limit: ${BUSY_WAIT_ENV})"
                ) from None
            if why.busy and not noted and on_wait is not None:
                on_wait(WAITING_NOTE)
                noted = True
            time.sleep(min(delay, max(limit - waited, 0.0)))
            delay = min(delay * 2, 0.5)


# --------------------------------------------------------------------------- stock operations

def to_stock_line(row) -> StockLine:
    """The plain record the core works with, from a StockLineRow or a Core row of stock_lines."""
    return StockLine(
        id=row.id,
        kind=row.kind,
        value=row.value,
        tol_minus=row.tol_minus,
        tol_plus=row.tol_plus,
        quantity=row.quantity,
        location=row.location,
        package=row.package,
        rating=row.rating,
        dielectric=row.dielectric,
        polarized=bool(row.polarized),
        note=row.note,
        part=row.part,
        turns=row.turns,
        rating_current=row.rating_current,
        reorder_at=row.reorder_at,
    )


def lock_stock_for_plan(session: Union["Session", sa.Connection]) -> None:
    """Make this unit the only one that plans from the stock and then changes it (imports, kits,
    pulls) until it ends. SQLite: nothing to do, BEGIN IMMEDIATE already admits one writer at a
    time. PostgreSQL: a transaction-scoped advisory lock, taken before the stock is read, so two
    benches importing one file at once cannot both plan "new line" for the same part (the second
    plans against the first one's committed lines; the unique identity index backs this up), and
    a pull's shortage check sees the quantities it will change. Single guarded changes (adjust,
    undo) do not need it."""
    if _dialect_name(session) == "postgresql":
        session.execute(sa.text("SELECT pg_advisory_xact_lock(:k)"), {"k": _PG_STOCK_PLAN_LOCK})


def _dialect_name(session: Union["Session", sa.Connection]) -> str:
    """The backend's name ("sqlite", "postgresql") behind a Session or a Connection."""
    bind = session.get_bind() if hasattr(session, "get_bind") else session
    return bind.dialect.name


def load_stock(session: Union["Session", sa.Connection],
               kind: str | tuple[str, ...] | None = None) -> list[StockLine]:
    """All stock lines (optionally of one kind, or of the kinds in a tuple), ordered by id; a Core
    query, so a Connection from ``transaction(..., core=True)`` serves as well as a Session."""
    stmt = sa.select(stock_lines).order_by(stock_lines.c.id)
    if isinstance(kind, tuple):
        stmt = stmt.where(stock_lines.c.kind.in_(kind))
    elif kind is not None:
        stmt = stmt.where(stock_lines.c.kind == kind)
    if hasattr(session, "flush"):
        session.flush()  # a Session's pending rows first (a Core select does not autoflush)
    return [to_stock_line(r) for r in session.execute(stmt)]


def save_search(session: Union["Session", sa.Connection], mode: str, target: dict, params: dict,
                options: list[tuple[str, dict]]) -> int:
    """Write one search (``mode``, its target and parameters as JSON) and its options, each given
    as (connection, the option exactly as ``--json`` prints it: rank, error, ...); returns the new
    search id. Core inserts (the id comes back through RETURNING / lastrowid on either backend),
    so a Connection from ``transaction(..., core=True)`` serves as well as a Session."""
    search_id = session.execute(
        sa.insert(searches).values(mode=mode, target_json=json.dumps(target), params_json=json.dumps(params))
    ).inserted_primary_key[0]
    if options:
        session.execute(sa.insert(search_options), [
            {"search_id": search_id, "rank": opt["rank"], "connection": connection,
             "error": float(opt["error"]), "data_json": json.dumps(opt)}
            for connection, opt in options])
    return int(search_id)


def line_label(row: Union["StockLineRow", StockLine]) -> str:
    """'stock line 7 (resistor 4.7 kΩ, A1)', 'stock line 9 (ic NE555P, B3)' — how messages name a line."""
    if row.kind in VALUELESS_KINDS:
        where = f", {row.location}" if row.location else ""
        return f"stock line {row.id} ({row.kind} {row.part or '?'}{where})"
    try:
        from selector.core.notation import FARAD, OHM, format_value

        shown = format_value(row.value, FARAD if row.kind == "capacitor" else OHM)
    except Exception:  # notation not available or value odd: fall back to the plain number
        shown = f"{row.value:g}"
    where = f", {row.location}" if row.location else ""
    return f"stock line {row.id} ({row.kind} {shown}{where})"


def apply_movement(
    session: "Session",
    line_id: int,
    delta: int,
    reason: str,
    reference: str = "",
    pull_id: int | None = None,
) -> int:
    """Change the quantity of one stock line by ``delta`` and write the ledger row; returns the new
    quantity. A single guarded UPDATE, so concurrent pulls can never drive stock below zero.
    Raises UnknownStockLine or InsufficientStock (nothing changed). A zero delta writes nothing."""
    if isinstance(delta, bool) or not isinstance(delta, int):
        raise TypeError("delta must be an int")
    if not 0 < line_id <= _MAX_ID:
        raise UnknownStockLine(f"there is no stock line {line_id}")
    if abs(delta) > MAX_QUANTITY:
        raise InsufficientStock(f"a change of {delta:+d} parts is beyond any stock (at most {MAX_QUANTITY})")
    from sqlalchemy.orm.util import identity_key

    from selector.store.models import StockLineRow

    if delta == 0:
        row = session.get(StockLineRow, line_id)
        if row is None:
            raise UnknownStockLine(f"there is no stock line {line_id}")
        return row.quantity
    lines = stock_lines
    session.flush()  # pending ORM changes (e.g. a line added in this unit) go first
    result = session.execute(
        sa.update(lines)
        .where(lines.c.id == line_id, lines.c.quantity + delta >= 0)
        .values(quantity=lines.c.quantity + delta, updated_at=utcnow())
    )
    if result.rowcount == 0:
        row = session.get(StockLineRow, line_id, populate_existing=True)
        if row is None:
            raise UnknownStockLine(f"there is no stock line {line_id}")
        raise InsufficientStock(
            f"{line_label(row)} holds {row.quantity}; a change of {delta:+d} would leave {row.quantity + delta}"
        )
    # Core statements bypass the identity map: make a loaded copy of this line re-read itself.
    loaded = session.identity_map.get(identity_key(StockLineRow, line_id))
    if loaded is not None:
        session.expire(loaded, ["quantity", "updated_at"])
    session.execute(
        sa.insert(movements).values(
            line_id=line_id, delta=delta, reason=reason, reference=reference[:255], pull_id=pull_id
        )
    )
    new_qty = session.execute(sa.select(lines.c.quantity).where(lines.c.id == line_id)).scalar_one()
    return int(new_qty)
