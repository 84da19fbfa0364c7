"""Trimmers, ICs and diodes in stock, and a reorder level per stock line.

Kinds: ``trimmer`` (value = end-to-end ohms, ``turns``), ``ic`` and ``diode`` (named by ``part``,
value 0; a diode's ``rating`` is its forward drop in volts at ``rating_current`` amperes).
``reorder_at``: a line is low at or below it (NULL: no level). Existing lines keep every value;
the new columns start empty (``part`` '', the others NULL).

The identity index (0003) gains ``part``, ``turns`` and ``rating_current``, so two different ICs in
one drawer are two lines; NULLs are folded to -1 as for ``rating`` (real values are above zero).

SQLite cannot change a CHECK constraint in place: the table is rebuilt (batch operation, foreign
keys OFF as for 0002). The expression index cannot be reflected by SQLite, so it is dropped
before the rebuild and created again after it. PostgreSQL alters the table in place, and every id
sequence is moved past its table's highest id as 0003 does (harmless where it already is; rows
copied in with explicit ids after 0003 would otherwise collide with the next new row).

Downgrade: refused (nothing changed) while any trimmer, IC or diode line exists, because the
older schema cannot hold them and deleting stock with its ledger would lose history; delete or
export those lines first. Otherwise the new columns are dropped (reorder levels are lost).

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-03
"""

from __future__ import annotations

from typing import Sequence, Union

import sqlalchemy as sa
from alembic import op

revision: str = "0004"
down_revision: Union[str, Sequence[str], None] = "0003"
branch_labels: Union[str, Sequence[str], None] = None
depends_on: Union[str, Sequence[str], None] = None

# Written out here (not imported from the models) so this revision stays what it was when the
# models change later; store/tables.py holds the same texts for head.
_KIND_OLD = "kind IN ('resistor', 'capacitor')"
_KIND_NEW = "kind IN ('resistor', 'capacitor', 'trimmer', 'ic', 'diode')"
_VALUE_OLD = "value > 0"
_VALUE_NEW = "(kind IN ('ic', 'diode') AND value = 0) OR (kind NOT IN ('ic', 'diode') AND value > 0)"
_NEW_CHECKS = (
    ("turns_positive", "turns IS NULL OR turns >= 1"),
    ("rating_current_positive", "rating_current IS NULL OR rating_current > 0"),
    ("reorder_at_nonneg", "reorder_at IS NULL OR reorder_at >= 0"),
)
_IDENTITY_0003 = ["kind", "value", "tol_minus", "tol_plus", "location", "package",
                  sa.text("coalesce(rating, -1.0)"), "dielectric"]
_IDENTITY_0004 = _IDENTITY_0003 + ["part", sa.text("coalesce(turns, -1)"), sa.text("coalesce(rating_current, -1.0)")]


_TABLES = ("stock_lines", "movements", "searches", "search_options", "pulls")


def _sequences_past_max_ids(conn) -> None:
    for table in _TABLES:
        conn.execute(sa.text(
            f"SELECT setval(pg_get_serial_sequence('{table}', 'id'),"
            f" COALESCE((SELECT MAX(id) FROM {table}), 0) + 1, false)"))


def _recreate() -> str:
    """Rebuild the table on SQLite only (it cannot change a CHECK constraint in place)."""
    return "always" if op.get_bind().dialect.name == "sqlite" else "auto"


def upgrade() -> None:
    op.drop_index("uq_stock_lines_identity", table_name="stock_lines")
    with op.batch_alter_table("stock_lines", recreate=_recreate()) as batch_op:
        batch_op.add_column(sa.Column("part", sa.String(length=64), nullable=False, server_default=""))
        batch_op.add_column(sa.Column("turns", sa.Integer(), nullable=True))
        batch_op.add_column(sa.Column("rating_current", sa.Float(), nullable=True))
        batch_op.add_column(sa.Column("reorder_at", sa.Integer(), nullable=True))
        batch_op.drop_constraint(batch_op.f("ck_stock_lines_kind_known"), type_="check")
        batch_op.drop_constraint(batch_op.f("ck_stock_lines_value_positive"), type_="check")
        batch_op.create_check_constraint(batch_op.f("ck_stock_lines_kind_known"), _KIND_NEW)
        batch_op.create_check_constraint(batch_op.f("ck_stock_lines_value_positive"), _VALUE_NEW)
        for name, sql in _NEW_CHECKS:
            batch_op.create_check_constraint(batch_op.f(f"ck_stock_lines_{name}"), sql)
    op.create_index("uq_stock_lines_identity", "stock_lines", _IDENTITY_0004, unique=True)
    if op.get_bind().dialect.name == "postgresql":
        _sequences_past_max_ids(op.get_bind())


def downgrade() -> None:
    conn = op.get_bind()
    counts = conn.execute(sa.text(
        "SELECT kind, COUNT(*) FROM stock_lines WHERE kind NOT IN ('resistor', 'capacitor')"
        " GROUP BY kind ORDER BY kind")).all()
    if counts:
        held = ", ".join(f"{n} {kind} line{'s' if n != 1 else ''}" for kind, n in counts)
        raise RuntimeError(
            f"cannot go below schema revision 0004: the stock holds {held}, which the older schema "
            "cannot store; export and delete them first (nothing was changed)")
    op.drop_index("uq_stock_lines_identity", table_name="stock_lines")
    with op.batch_alter_table("stock_lines", recreate=_recreate()) as batch_op:
        for name, _sql in _NEW_CHECKS:
            batch_op.drop_constraint(batch_op.f(f"ck_stock_lines_{name}"), type_="check")
        batch_op.drop_constraint(batch_op.f("ck_stock_lines_kind_known"), type_="check")
        batch_op.drop_constraint(batch_op.f("ck_stock_lines_value_positive"), type_="check")
        batch_op.create_check_constraint(batch_op.f("ck_stock_lines_kind_known"), _KIND_OLD)
        batch_op.create_check_constraint(batch_op.f("ck_stock_lines_value_positive"), _VALUE_OLD)
        batch_op.drop_column("reorder_at")
        batch_op.drop_column("rating_current")
        batch_op.drop_column("turns")
        batch_op.drop_column("part")
    op.create_index("uq_stock_lines_identity", "stock_lines", _IDENTITY_0003, unique=True)
