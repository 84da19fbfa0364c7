"""Saved searches with their options, pulls, and movements.pull_id pointing at the pull.

Adding a foreign key to an existing SQLite table needs a table rebuild (batch operation); the
program runs it with foreign keys OFF so the rebuild cannot cascade, then checks every key.
PostgreSQL alters the table in place: a rebuild there would give ``movements`` a new id sequence
starting at 1 under rows that already hold ids (revision 0003 repairs databases upgraded by the
first version of this script, which rebuilt on every backend).

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-02
"""

from __future__ import annotations

from typing import Sequence, Union

import sqlalchemy as sa
from alembic import op

revision: str = "0002"
down_revision: Union[str, Sequence[str], None] = "0001"
branch_labels: Union[str, Sequence[str], None] = None
depends_on: Union[str, Sequence[str], None] = None


def _recreate() -> str:
    """Rebuild the table on SQLite only (it cannot add a foreign key in place)."""
    return "always" if op.get_bind().dialect.name == "sqlite" else "auto"


def upgrade() -> None:
    op.create_table(
        "searches",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("mode", sa.String(length=16), nullable=False),
        sa.Column("target_json", sa.Text(), nullable=False),
        sa.Column("params_json", sa.Text(), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_searches")),
    )
    op.create_table(
        "search_options",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("search_id", sa.Integer(), nullable=False),
        sa.Column("rank", sa.Integer(), nullable=False),
        sa.Column("connection", sa.String(length=32), nullable=False),
        sa.Column("error", sa.Float(), nullable=False),
        sa.Column("data_json", sa.Text(), nullable=False),
        sa.ForeignKeyConstraint(
            ["search_id"], ["searches.id"], name=op.f("fk_search_options_search_id_searches"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_search_options")),
    )
    op.create_index(op.f("ix_search_options_search_id"), "search_options", ["search_id"], unique=False)
    op.create_table(
        "pulls",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("search_id", sa.Integer(), nullable=False),
        sa.Column("option_rank", sa.Integer(), nullable=False),
        sa.Column("boards", sa.Integer(), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.Column("undone_at", sa.DateTime(), nullable=True),
        sa.ForeignKeyConstraint(
            ["search_id"], ["searches.id"], name=op.f("fk_pulls_search_id_searches"), ondelete="RESTRICT"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_pulls")),
    )
    with op.batch_alter_table("movements", recreate=_recreate()) as batch_op:
        batch_op.add_column(sa.Column("pull_id", sa.Integer(), nullable=True))
        batch_op.create_foreign_key(
            batch_op.f("fk_movements_pull_id_pulls"), "pulls", ["pull_id"], ["id"], ondelete="RESTRICT"
        )
        batch_op.create_index(batch_op.f("ix_movements_pull_id"), ["pull_id"], unique=False)


def downgrade() -> None:
    with op.batch_alter_table("movements", recreate=_recreate()) as batch_op:
        batch_op.drop_index(batch_op.f("ix_movements_pull_id"))
        batch_op.drop_constraint(batch_op.f("fk_movements_pull_id_pulls"), type_="foreignkey")
        batch_op.drop_column("pull_id")
    op.drop_table("pulls")
    op.drop_index(op.f("ix_search_options_search_id"), table_name="search_options")
    op.drop_table("search_options")
    op.drop_table("searches")
