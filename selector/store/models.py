"""SQLAlchemy 2.x typed ORM models. The schema itself is created and upgraded only by the Alembic
revisions in ``migrations/``; these classes must match the head revision (a test runs
``alembic check`` style comparison against them)."""

from __future__ import annotations

from datetime import datetime, timezone
from typing import Optional

from sqlalchemy import (
    Boolean,
    CheckConstraint,
    DateTime,
    Float,
    ForeignKey,
    Index,
    Integer,
    MetaData,
    String,
    Text,
    func,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship

# Named constraints so Alembic batch operations can drop/recreate them by name.
NAMING = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}


def utcnow() -> datetime:
    return datetime.now(timezone.utc).replace(tzinfo=None)


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING)


KIND_CHECK = "kind IN ('resistor', 'capacitor', 'trimmer', 'ic', 'diode')"
"""The kinds a stock line may have (core/types.py KINDS; migration 0004 writes the same text)."""

VALUE_CHECK = "(kind IN ('ic', 'diode') AND value = 0) OR (kind NOT IN ('ic', 'diode') AND value > 0)"
"""An IC or a diode is named by its part text and has no value (0); every other kind has a value
above zero (migration 0004 writes the same text)."""


class StockLineRow(Base):
    """One stock line: a part value with its attributes, in one location, with a quantity."""

    __tablename__ = "stock_lines"
    __table_args__ = (
        CheckConstraint("quantity >= 0", name="quantity_nonneg"),
        CheckConstraint(KIND_CHECK, name="kind_known"),
        CheckConstraint(VALUE_CHECK, name="value_positive"),
        CheckConstraint("tol_minus >= 0 AND tol_minus < 1 AND tol_plus >= 0", name="tolerance_sane"),
        CheckConstraint("turns IS NULL OR turns >= 1", name="turns_positive"),
        CheckConstraint("rating_current IS NULL OR rating_current > 0", name="rating_current_positive"),
        CheckConstraint("reorder_at IS NULL OR reorder_at >= 0", name="reorder_at_nonneg"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    kind: Mapped[str] = mapped_column(String(16), nullable=False)
    value: Mapped[float] = mapped_column(Float, nullable=False)  # ohms or farads
    tol_minus: Mapped[float] = mapped_column(Float, nullable=False)  # fraction below nominal
    tol_plus: Mapped[float] = mapped_column(Float, nullable=False)  # fraction above nominal
    quantity: Mapped[int] = mapped_column(Integer, nullable=False, default=0)
    location: Mapped[str] = mapped_column(String(64), nullable=False, default="")
    package: Mapped[str] = mapped_column(String(64), nullable=False, default="")
    rating: Mapped[Optional[float]] = mapped_column(Float, nullable=True)  # W (resistor, trimmer), V (capacitor,
    #                                                       diode: forward drop at rating_current)
    dielectric: Mapped[str] = mapped_column(String(32), nullable=False, default="")
    polarized: Mapped[bool] = mapped_column(Boolean, nullable=False, default=False)
    note: Mapped[str] = mapped_column(Text, nullable=False, default="")
    part: Mapped[str] = mapped_column(String(64), nullable=False, default="", server_default="")  # "NE555P"
    turns: Mapped[Optional[int]] = mapped_column(Integer, nullable=True)  # trimmer: turns end to end
    rating_current: Mapped[Optional[float]] = mapped_column(Float, nullable=True)  # A (diode's forward drop)
    reorder_at: Mapped[Optional[int]] = mapped_column(Integer, nullable=True)  # low at or below this
    created_at: Mapped[datetime] = mapped_column(DateTime, nullable=False, default=utcnow)
    updated_at: Mapped[datetime] = mapped_column(DateTime, nullable=False, default=utcnow, onupdate=utcnow)

    movements: Mapped[list["MovementRow"]] = relationship(back_populates="line")


IDENTITY_UNKNOWN_RATING = -1.0
"""Stands for "no rating" (and "no turns", "no rating current") in the identity index: a real
rating, turn count or current is above zero (import validation and CHECKs), so it can never be
mistaken for one. NULLs are distinct in a plain unique index on both backends, so the index uses
COALESCE(column, -1) instead of the nullable column."""

Index(
    "uq_stock_lines_identity",
    StockLineRow.kind, StockLineRow.value, StockLineRow.tol_minus, StockLineRow.tol_plus,
    StockLineRow.location, StockLineRow.package,
    func.coalesce(StockLineRow.rating, IDENTITY_UNKNOWN_RATING), StockLineRow.dielectric,
    StockLineRow.part, func.coalesce(StockLineRow.turns, -1),
    func.coalesce(StockLineRow.rating_current, IDENTITY_UNKNOWN_RATING),
    unique=True,
)
"""The identity of a stock line (services/stock.py merges on exactly these): at most one line
per identity, whatever several benches import at once."""


class MovementRow(Base):
    """One ledger row: a signed quantity change of one stock line, with its reason."""

    __tablename__ = "movements"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    line_id: Mapped[int] = mapped_column(
        ForeignKey("stock_lines.id", ondelete="RESTRICT"), nullable=False, index=True
    )
    delta: Mapped[int] = mapped_column(Integer, nullable=False)
    reason: Mapped[str] = mapped_column(String(16), nullable=False)  # import, adjust, set, kit, pull, undo
    reference: Mapped[str] = mapped_column(String(255), nullable=False, default="")
    pull_id: Mapped[Optional[int]] = mapped_column(
        ForeignKey("pulls.id", ondelete="RESTRICT"), nullable=True, index=True
    )
    created_at: Mapped[datetime] = mapped_column(DateTime, nullable=False, default=utcnow)

    line: Mapped[StockLineRow] = relationship(back_populates="movements")


class SearchRow(Base):
    """One run of ``find``: what was asked and with which settings."""

    __tablename__ = "searches"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    mode: Mapped[str] = mapped_column(String(16), nullable=False)  # value, astable, monostable, rc
    target_json: Mapped[str] = mapped_column(Text, nullable=False)  # the JSON "target" object
    params_json: Mapped[str] = mapped_column(Text, nullable=False)  # chip, vcc, diode_vf, boards, ...
    created_at: Mapped[datetime] = mapped_column(DateTime, nullable=False, default=utcnow)

    options: Mapped[list["SearchOptionRow"]] = relationship(
        back_populates="search", cascade="all, delete-orphan", order_by="SearchOptionRow.rank"
    )


class SearchOptionRow(Base):
    """One numbered option of a saved search; ``data_json`` is the option exactly as ``--json``
    prints it (networks with their parts and line ids)."""

    __tablename__ = "search_options"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    search_id: Mapped[int] = mapped_column(
        ForeignKey("searches.id", ondelete="CASCADE"), nullable=False, index=True
    )
    rank: Mapped[int] = mapped_column(Integer, nullable=False)
    connection: Mapped[str] = mapped_column(String(32), nullable=False, default="")
    error: Mapped[float] = mapped_column(Float, nullable=False)
    data_json: Mapped[str] = mapped_column(Text, nullable=False)

    search: Mapped[SearchRow] = relationship(back_populates="options")


class PullRow(Base):
    """Taking an option's parts out of stock; its ledger rows point back here."""

    __tablename__ = "pulls"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    search_id: Mapped[int] = mapped_column(ForeignKey("searches.id", ondelete="RESTRICT"), nullable=False)
    option_rank: Mapped[int] = mapped_column(Integer, nullable=False)
    boards: Mapped[int] = mapped_column(Integer, nullable=False, default=1)
    created_at: Mapped[datetime] = mapped_column(DateTime, nullable=False, default=utcnow)
    undone_at: Mapped[Optional[datetime]] = mapped_column(DateTime, nullable=True)
