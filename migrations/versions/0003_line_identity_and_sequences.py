"""One stock line per identity (a unique index), and every id sequence past its table's ids.

The identity is what the import merges on (services/stock.py): kind, value, tolerance, location,
package, rating and dielectric. ``rating`` may be NULL, and NULLs never collide in a unique index,
so the index holds ``COALESCE(rating, -1)`` (a real rating is above zero). Lines that already share
an identity (concurrent imports on PostgreSQL before this revision could make them) are merged
first: the lowest id keeps the line, the others' quantities and ledger rows move onto it, so the
ledger still sums to the stock.

PostgreSQL only: revision 0002 as first written rebuilt ``movements`` with a fresh sequence
starting at 1 while the rows kept their ids, so the next ledger row collided with an old one.
Every table's sequence is moved past its highest id (harmless where it already is).

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02
"""

from __future__ import annotations

from typing import Sequence, Union

import sqlalchemy as sa
from alembic import op

revision: str = "0003"
down_revision: Union[str, Sequence[str], None] = "0002"
branch_labels: Union[str, Sequence[str], None] = None
depends_on: Union[str, Sequence[str], None] = None

_IDENTITY = ("kind", "value", "tol_minus", "tol_plus", "location", "package", "rating", "dielectric")
_TABLES = ("stock_lines", "movements", "searches", "search_options", "pulls")


def _merge_duplicate_lines(conn) -> None:
    rows = conn.execute(sa.text(
        f"SELECT id, quantity, {', '.join(_IDENTITY)} FROM stock_lines ORDER BY id")).all()
    keep: dict[tuple, int] = {}
    for row in rows:
        line_id, quantity, *ident = row
        key = tuple(-1.0 if (name == "rating" and v is None) else v for name, v in zip(_IDENTITY, ident))
        first = keep.setdefault(key, line_id)
        if first == line_id:
            continue
        params = {"keep": first, "dup": line_id, "q": quantity}
        conn.execute(sa.text("UPDATE movements SET line_id = :keep WHERE line_id = :dup"), params)
        conn.execute(sa.text("UPDATE stock_lines SET quantity = quantity + :q WHERE id = :keep"), params)
        conn.execute(sa.text("DELETE FROM stock_lines WHERE id = :dup"), params)


def _sequences_past_max_ids(conn) -> None:
    for table in _TABLES:
        conn.execute(sa.text(
            f"SELECT setval(pg_get_serial_sequence('{table}', 'id'),"
            f" COALESCE((SELECT MAX(id) FROM {table}), 0) + 1, false)"))


def upgrade() -> None:
    conn = op.get_bind()
    _merge_duplicate_lines(conn)
    op.create_index(
        "uq_stock_lines_identity", "stock_lines",
        ["kind", "value", "tol_minus", "tol_plus", "location", "package",
         sa.text("coalesce(rating, -1.0)"), "dielectric"],
        unique=True,
    )
    if conn.dialect.name == "postgresql":
        _sequences_past_max_ids(conn)


def downgrade() -> None:
    op.drop_index("uq_stock_lines_identity", table_name="stock_lines")
