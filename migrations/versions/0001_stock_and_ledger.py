"""Stock lines and the movements ledger.

Revision ID: 0001
Revises:
Create Date: 2026-12-02
"""

from __future__ import annotations

from typing import Sequence, Union

import sqlalchemy as sa
from alembic import op

revision: str = "0001"
down_revision: Union[str, Sequence[str], None] = None
branch_labels: Union[str, Sequence[str], None] = None
depends_on: Union[str, Sequence[str], None] = None


def upgrade() -> None:
    op.create_table(
        "stock_lines",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("kind", sa.String(length=16), nullable=False),
        sa.Column("value", sa.Float(), nullable=False),
        sa.Column("tol_minus", sa.Float(), nullable=False),
        sa.Column("tol_plus", sa.Float(), nullable=False),
        sa.Column("quantity", sa.Integer(), nullable=False),
        sa.Column("location", sa.String(length=64), nullable=False),
        sa.Column("package", sa.String(length=64), nullable=False),
        sa.Column("rating", sa.Float(), nullable=True),
        sa.Column("dielectric", sa.String(length=32), nullable=False),
        sa.Column("polarized", sa.Boolean(), nullable=False),
        sa.Column("note", sa.Text(), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.Column("updated_at", sa.DateTime(), nullable=False),
        sa.CheckConstraint("quantity >= 0", name=op.f("ck_stock_lines_quantity_nonneg")),
        sa.CheckConstraint("kind IN ('resistor', 'capacitor')", name=op.f("ck_stock_lines_kind_known")),
        sa.CheckConstraint("value > 0", name=op.f("ck_stock_lines_value_positive")),
        sa.CheckConstraint(
            "tol_minus >= 0 AND tol_minus < 1 AND tol_plus >= 0", name=op.f("ck_stock_lines_tolerance_sane")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_stock_lines")),
    )
    op.create_table(
        "movements",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("line_id", sa.Integer(), nullable=False),
        sa.Column("delta", sa.Integer(), nullable=False),
        sa.Column("reason", sa.String(length=16), nullable=False),
        sa.Column("reference", sa.String(length=255), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.ForeignKeyConstraint(
            ["line_id"], ["stock_lines.id"], name=op.f("fk_movements_line_id_stock_lines"), ondelete="RESTRICT"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_movements")),
    )
    op.create_index(op.f("ix_movements_line_id"), "movements", ["line_id"], unique=False)


def downgrade() -> None:
    op.drop_index(op.f("ix_movements_line_id"), table_name="movements")
    op.drop_table("movements")
    op.drop_table("stock_lines")
