"""SQLAlchemy 2.x typed ORM classes, mapped onto the Core tables of ``tables.py`` (the one
declaration of the schema: columns, types, constraints, indexes). The schema itself is created and
upgraded only by the Alembic revisions in ``migrations/``; a test runs alembic's autogenerate
comparison of ``Base.metadata`` (= ``tables.metadata``) against the migrated database.

Use cases that change the stock as objects (imports, kits, adjust/set, pulls, undo) use these
classes; the searches and the readers (bom, show, netlist, simulate, stock list/export, ledger)
work on the tables alone and never import this module (nor ``sqlalchemy.orm``)."""

from __future__ import annotations

from datetime import datetime
from typing import Optional

from sqlalchemy.orm import DeclarativeBase, Mapped, relationship

from selector.store import tables
from selector.store.tables import (  # noqa: F401 - kept importable from here
    IDENTITY_UNKNOWN_RATING,
    KIND_CHECK,
    NAMING,
    VALUE_CHECK,
    utcnow,
)


class Base(DeclarativeBase):
    metadata = tables.metadata


class StockLineRow(Base):
    """One stock line: a part value with its attributes, in one location, with a quantity."""

    __table__ = tables.stock_lines

    id: Mapped[int]
    kind: Mapped[str]
    value: Mapped[float]
    tol_minus: Mapped[float]
    tol_plus: Mapped[float]
    quantity: Mapped[int]
    location: Mapped[str]
    package: Mapped[str]
    rating: Mapped[Optional[float]]
    dielectric: Mapped[str]
    polarized: Mapped[bool]
    note: Mapped[str]
    part: Mapped[str]
    turns: Mapped[Optional[int]]
    rating_current: Mapped[Optional[float]]
    reorder_at: Mapped[Optional[int]]
    created_at: Mapped[datetime]
    updated_at: Mapped[datetime]

    movements: Mapped[list["MovementRow"]] = relationship(back_populates="line")


class MovementRow(Base):
    """One ledger row: a signed quantity change of one stock line, with its reason."""

    __table__ = tables.movements

    id: Mapped[int]
    line_id: Mapped[int]
    delta: Mapped[int]
    reason: Mapped[str]
    reference: Mapped[str]
    pull_id: Mapped[Optional[int]]
    created_at: Mapped[datetime]

    line: Mapped[StockLineRow] = relationship(back_populates="movements")


class SearchRow(Base):
    """One run of ``find``: what was asked and with which settings."""

    __table__ = tables.searches

    id: Mapped[int]
    mode: Mapped[str]
    target_json: Mapped[str]
    params_json: Mapped[str]
    created_at: Mapped[datetime]

    options: Mapped[list["SearchOptionRow"]] = relationship(
        back_populates="search", cascade="all, delete-orphan", order_by="SearchOptionRow.rank"
    )


class SearchOptionRow(Base):
    """One numbered option of a saved search; ``data_json`` is the option exactly as ``--json``
    prints it (networks with their parts and line ids)."""

    __table__ = tables.search_options

    id: Mapped[int]
    search_id: Mapped[int]
    rank: Mapped[int]
    connection: Mapped[str]
    error: Mapped[float]
    data_json: Mapped[str]

    search: Mapped[SearchRow] = relationship(back_populates="options")


class PullRow(Base):
    """Taking an option's parts out of stock; its ledger rows point back here."""

    __table__ = tables.pulls

    id: Mapped[int]
    search_id: Mapped[int]
    option_rank: Mapped[int]
    boards: Mapped[int]
    created_at: Mapped[datetime]
    undone_at: Mapped[Optional[datetime]]
