"""The schema as SQLAlchemy Core tables: the one place that declares every table, column, type,
constraint and index of the stock database. The Alembic revisions in ``migrations/`` create and
upgrade the schema; these tables must match the head revision (tests/store/test_migrations.py runs
alembic's autogenerate comparison against this metadata).

Core only: importing this module does not import ``sqlalchemy.orm``. The hot path of a search
(reading the stock lines, saving the search and its options) works on these tables directly; the
ORM classes in ``models.py`` are mapped onto the same Table objects, for the use cases that want
objects (imports, pulls, undo, the ledger)."""

from __future__ import annotations

from datetime import datetime, timezone

from sqlalchemy import (
    Boolean,
    CheckConstraint,
    Column,
    DateTime,
    Float,
    ForeignKey,
    Index,
    Integer,
    MetaData,
    String,
    Table,
    Text,
    func,
)

# Named constraints so Alembic batch operations can drop/recreate them by name.
NAMING = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}

metadata = MetaData(naming_convention=NAMING)
"""Every table of the stock database (models.Base.metadata is this object)."""


def utcnow() -> datetime:
    return datetime.now(timezone.utc).replace(tzinfo=None)


KIND_CHECK = "kind IN ('resistor', 'capacitor', 'trimmer', 'ic', 'diode')"
"""The kinds a stock line may have (core/types.py KINDS; migration 0004 writes the same text)."""

VALUE_CHECK = "(kind IN ('ic', 'diode') AND value = 0) OR (kind NOT IN ('ic', 'diode') AND value > 0)"
"""An IC or a diode is named by its part text and has no value (0); every other kind has a value
above zero (migration 0004 writes the same text)."""

IDENTITY_UNKNOWN_RATING = -1.0
"""Stands for "no rating" (and "no turns", "no rating current") in the identity index: a real
rating, turn count or current is above zero (import validation and CHECKs), so it can never be
mistaken for one. NULLs are distinct in a plain unique index on both backends, so the index uses
COALESCE(column, -1) instead of the nullable column."""


stock_lines = Table(
    "stock_lines", metadata,
    Column("id", Integer, primary_key=True),
    Column("kind", String(16), nullable=False),
    Column("value", Float, nullable=False),  # ohms or farads
    Column("tol_minus", Float, nullable=False),  # fraction below nominal
    Column("tol_plus", Float, nullable=False),  # fraction above nominal
    Column("quantity", Integer, nullable=False, default=0),
    Column("location", String(64), nullable=False, default=""),
    Column("package", String(64), nullable=False, default=""),
    Column("rating", Float, nullable=True),  # W (resistor, trimmer), V (capacitor,
    #                                          diode: forward drop at rating_current)
    Column("dielectric", String(32), nullable=False, default=""),
    Column("polarized", Boolean, nullable=False, default=False),
    Column("note", Text, nullable=False, default=""),
    Column("part", String(64), nullable=False, default="", server_default=""),  # "NE555P"
    Column("turns", Integer, nullable=True),  # trimmer: turns end to end
    Column("rating_current", Float, nullable=True),  # A (diode's forward drop)
    Column("reorder_at", Integer, nullable=True),  # low at or below this
    Column("created_at", DateTime, nullable=False, default=utcnow),
    Column("updated_at", DateTime, nullable=False, default=utcnow, onupdate=utcnow),
    CheckConstraint("quantity >= 0", name="quantity_nonneg"),
    CheckConstraint(KIND_CHECK, name="kind_known"),
    CheckConstraint(VALUE_CHECK, name="value_positive"),
    CheckConstraint("tol_minus >= 0 AND tol_minus < 1 AND tol_plus >= 0", name="tolerance_sane"),
    CheckConstraint("turns IS NULL OR turns >= 1", name="turns_positive"),
    CheckConstraint("rating_current IS NULL OR rating_current > 0", name="rating_current_positive"),
    CheckConstraint("reorder_at IS NULL OR reorder_at >= 0", name="reorder_at_nonneg"),
)
"""One stock line: a part value with its attributes, in one location, with a quantity."""

_s = stock_lines.c
Index(
    "uq_stock_lines_identity",
    _s.kind, _s.value, _s.tol_minus, _s.tol_plus, _s.location, _s.package,
    func.coalesce(_s.rating, IDENTITY_UNKNOWN_RATING), _s.dielectric,
    _s.part, func.coalesce(_s.turns, -1),
    func.coalesce(_s.rating_current, IDENTITY_UNKNOWN_RATING),
    unique=True,
)
"""The identity of a stock line (services/stock.py merges on exactly these): at most one line
per identity, whatever several benches import at once."""


movements = Table(
    "movements", metadata,
    Column("id", Integer, primary_key=True),
    Column("line_id", ForeignKey("stock_lines.id", ondelete="RESTRICT"), nullable=False, index=True),
    Column("delta", Integer, nullable=False),
    Column("reason", String(16), nullable=False),  # import, adjust, set, kit, pull, undo
    Column("reference", String(255), nullable=False, default=""),
    Column("pull_id", ForeignKey("pulls.id", ondelete="RESTRICT"), nullable=True, index=True),
    Column("created_at", DateTime, nullable=False, default=utcnow),
)
"""One ledger row: a signed quantity change of one stock line, with its reason."""


searches = Table(
    "searches", metadata,
    Column("id", Integer, primary_key=True),
    Column("mode", String(16), nullable=False),  # value, astable, monostable, rc
    Column("target_json", Text, nullable=False),  # the JSON "target" object
    Column("params_json", Text, nullable=False),  # chip, vcc, diode_vf, boards, ...
    Column("created_at", DateTime, nullable=False, default=utcnow),
)
"""One run of ``find``: what was asked and with which settings."""


search_options = Table(
    "search_options", metadata,
    Column("id", Integer, primary_key=True),
    Column("search_id", ForeignKey("searches.id", ondelete="CASCADE"), nullable=False, index=True),
    Column("rank", Integer, nullable=False),
    Column("connection", String(32), nullable=False, default=""),
    Column("error", Float, nullable=False),
    Column("data_json", Text, nullable=False),
)
"""One numbered option of a saved search; ``data_json`` is the option exactly as ``--json``
prints it (networks with their parts and line ids)."""


pulls = Table(
    "pulls", metadata,
    Column("id", Integer, primary_key=True),
    Column("search_id", ForeignKey("searches.id", ondelete="RESTRICT"), nullable=False),
    Column("option_rank", Integer, nullable=False),
    Column("boards", Integer, nullable=False, default=1),
    Column("created_at", DateTime, nullable=False, default=utcnow),
    Column("undone_at", DateTime, nullable=True),
)
"""Taking an option's parts out of stock; its ledger rows point back here."""
