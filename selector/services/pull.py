"""Use cases ``pull``, ``undo`` and ``ledger``: each one function, one transaction.

A pull takes the WHOLE BOM that comes from stock — the timing networks and the extra capacitors
matched in stock (a technician building the board expects to take everything on the pick list) —
for the given number of boards. The BOM is rebuilt inside the pull's own transaction (which holds
the write lock from its first statement: BEGIN IMMEDIATE), so quantities are checked as they are
at that moment, not as they were when the search ran. If any stock line holds too few, nothing is
taken and the error names every short line. Every change is a ledger row (reason "pull", pull_id
set); undo writes the opposite rows (reason "undo") and marks the pull undone, once only.
The timer IC, steering diode and logic IC come along when the BOM matched them to ic / diode
lines. After a pull, the lines it left at or below their reorder level are listed (``low``).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import datetime
from typing import TYPE_CHECKING, Optional

import sqlalchemy as sa
from sqlalchemy.engine import Engine

from selector.core import bom as core_bom
from selector.core.errors import AlreadyUndone, InsufficientStock, UnknownPull
from selector.core.types import StockLine
from selector.services.bom import BomReport, bom_in_session, import_before_transaction
from selector.store.tables import movements, stock_lines, utcnow

if TYPE_CHECKING:  # pull and undo import the ORM when they run; the ledger reads through Core
    from sqlalchemy.orm import Session


@dataclass(frozen=True)
class PullResult:
    """What a pull took (``pull_id`` None for a dry run)."""

    pull_id: Optional[int]
    search_id: int
    option: int
    boards: int
    taken: tuple[tuple[int, int], ...]  # (line_id, parts taken), by line id
    report: BomReport

    @property
    def low(self) -> list[StockLine]:
        """The lines this pull takes from that are then at or below their reorder level, as they
        are after the pull (or would be, for a dry run), by line id."""
        return low_after(self.report.stock, self.taken)

    def to_json(self) -> dict:
        return {"pull_id": self.pull_id, "lines": [{"line_id": i, "taken": n} for i, n in self.taken],
                "low": [{"line_id": ln.id, "kind": ln.kind, "value": ln.value, "part": ln.part,
                         "location": ln.location, "quantity": ln.quantity, "reorder_at": ln.reorder_at}
                        for ln in self.low]}


def low_after(stock, taken) -> list[StockLine]:
    """Pure: the stock lines that ``taken`` ((line_id, parts) pairs) leaves at or below their
    reorder level, with their quantities after the taking."""
    by_id = {s.id: s for s in stock}
    after = [replace(by_id[i], quantity=by_id[i].quantity - n) for i, n in taken if i in by_id]
    return [ln for ln in after if ln.low]


@dataclass(frozen=True)
class UndoResult:
    pull_id: int
    restored: tuple[tuple[int, int], ...]  # (line_id, parts put back)

    def to_json(self) -> dict:
        return {"pull_id": self.pull_id, "lines": [{"line_id": i, "restored": n} for i, n in self.restored]}


@dataclass(frozen=True)
class LedgerEntry:
    movement_id: int
    at: datetime
    line_id: int
    kind: str
    value: float
    location: str
    delta: int
    reason: str
    reference: str
    pull_id: Optional[int]
    part: str = ""  # an IC's or diode's part text

    def to_json(self) -> dict:
        return {
            "movement_id": self.movement_id, "at": self.at.isoformat(timespec="seconds") + "Z",
            "line_id": self.line_id, "kind": self.kind, "value": self.value, "location": self.location,
            "delta": self.delta, "reason": self.reason, "reference": self.reference, "pull_id": self.pull_id,
            "part": self.part,
        }


def shortage_message(report: BomReport, shortages: list[core_bom.Shortage]) -> str:
    """One line naming every short stock line and how many parts it lacks."""
    from selector.store.db import line_label

    bom = report.bom
    by_id = {s.id: s for s in report.stock}
    boards = f"{bom.boards} board{'s' if bom.boards != 1 else ''}"
    each = "; ".join(
        f"{line_label(by_id[s.line_id])} holds {s.on_hand}, needs {s.needed} ({s.missing} missing)"
        for s in shortages
    )
    return (f"not enough stock for option {bom.option} of search {bom.search_id} for {boards}: {each}; "
            f"nothing was taken{report.alternatives_note}")


def _pull_in_session(
    session: "Session", option: int, search_id: Optional[int], boards: Optional[int], dry_run: bool
) -> PullResult:
    from selector.store.db import apply_movement, lock_stock_for_plan
    from selector.store.models import PullRow

    if not dry_run:
        lock_stock_for_plan(session)  # PostgreSQL: the check below sees what this pull will change
    report = bom_in_session(session, option, search_id, boards)
    bom = report.bom
    short = report.shortages
    if short:
        raise InsufficientStock(shortage_message(report, short))
    plan = sorted(core_bom.demand(bom.lines).items())
    if dry_run:
        return PullResult(None, bom.search_id, bom.option, bom.boards, tuple(plan), report)
    pull = PullRow(search_id=bom.search_id, option_rank=bom.option, boards=bom.boards)
    session.add(pull)
    session.flush()
    reference = f"search {bom.search_id} option {bom.option} x{bom.boards}"
    for line_id, qty in plan:
        # The guarded UPDATE inside apply_movement is a second line of defence: it raises
        # InsufficientStock (rolling the whole pull back) rather than ever going below zero.
        apply_movement(session, line_id, -qty, "pull", reference, pull_id=pull.id)
    return PullResult(pull.id, bom.search_id, bom.option, bom.boards, tuple(plan), report)


def pull_option(
    engine: Engine,
    option: int,
    search_id: Optional[int] = None,
    boards: Optional[int] = None,
    dry_run: bool = False,
) -> PullResult:
    """Take every in-stock part of option ``option`` (of search ``search_id``, default the latest)
    for ``boards`` boards (default: the search's board count) out of stock, in ONE transaction.
    Raises InsufficientStock naming each short line (nothing taken), UnknownSearch, OptionOutdated.
    ``dry_run`` checks everything and returns the plan without writing."""
    from selector.store.db import run_in_transaction

    import_before_transaction()  # not while holding the write lock
    return run_in_transaction(engine, lambda s: _pull_in_session(s, option, search_id, boards, dry_run))


def _undo_in_session(session: "Session", pull_id: int) -> UndoResult:
    from selector.services.stock import move_within_limit
    from selector.store.models import MovementRow, PullRow

    pull = session.get(PullRow, pull_id)
    if pull is None:
        raise UnknownPull(f"there is no pull {pull_id} (see `selector ledger`)")
    # Guarded: only one undo can ever flip undone_at, even if two run at once.
    flipped = session.execute(
        sa.update(PullRow).where(PullRow.id == pull_id, PullRow.undone_at.is_(None)).values(undone_at=utcnow())
        .execution_options(synchronize_session=False)
    ).rowcount
    if flipped == 0:
        session.refresh(pull)
        when = f" at {pull.undone_at.isoformat(timespec='seconds')} UTC" if pull.undone_at else ""
        raise AlreadyUndone(f"pull {pull_id} was already undone{when}; nothing was changed")
    rows = session.scalars(
        sa.select(MovementRow).where(MovementRow.pull_id == pull_id, MovementRow.reason == "pull")
        .order_by(MovementRow.line_id, MovementRow.id)
    ).all()
    back: dict[int, int] = {}
    for m in rows:
        back[m.line_id] = back.get(m.line_id, 0) - m.delta
    reference = f"undo of pull {pull_id}"
    for line_id, qty in sorted(back.items()):
        if qty:
            move_within_limit(session, line_id, qty, "undo", reference, pull_id=pull_id)
    return UndoResult(pull_id, tuple(sorted(back.items())))


def undo_pull(engine: Engine, pull_id: int) -> UndoResult:
    """Put back exactly what pull ``pull_id`` took (ledger rows reason "undo"), in ONE transaction.
    Raises UnknownPull, or AlreadyUndone for a second undo of the same pull."""
    import selector.services.stock  # noqa: F401  (imported before the write lock, not under it)
    from selector.store.db import run_in_transaction

    return run_in_transaction(engine, lambda s: _undo_in_session(s, pull_id))


def list_movements(
    engine: Engine, limit: int = 50, line_id: Optional[int] = None, pull_id: Optional[int] = None
) -> list[LedgerEntry]:
    """The newest ``limit`` ledger rows (newest first), optionally of one line or one pull."""
    from selector.store.db import run_in_transaction

    def work(conn: sa.Connection) -> list[LedgerEntry]:
        m, s = movements.c, stock_lines.c
        stmt = (
            sa.select(m.id, m.created_at, m.line_id, s.kind, s.value, s.location, m.delta, m.reason,
                      m.reference, m.pull_id, s.part)
            .join_from(movements, stock_lines, m.line_id == s.id)
            .order_by(m.id.desc())
            .limit(limit)
        )
        if line_id is not None:
            stmt = stmt.where(m.line_id == line_id)
        if pull_id is not None:
            stmt = stmt.where(m.pull_id == pull_id)
        return [LedgerEntry(*row) for row in conn.execute(stmt)]

    return run_in_transaction(engine, work, write=False, core=True)  # Core: the ledger never imports the ORM
