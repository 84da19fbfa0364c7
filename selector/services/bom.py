"""Use case ``bom``: read a saved option, match the extra parts against the current stock, and
return the BOM with its pick list. Read-only; the pull service reuses :func:`bom_in_session`
inside its own transaction so that what is pulled is exactly what the BOM shows at that moment.

Reading goes through Core (the tables of store/tables.py): ``bom`` and ``show`` run as Core units
and never import the ORM; ``pull`` passes its ORM Session, which executes the same statements."""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Optional, Union

import sqlalchemy as sa
from sqlalchemy.engine import Engine

from selector.core import bom as core_bom
from selector.core.errors import OptionOutdated, UnknownSearch
from selector.core.types import StockLine
from selector.store.tables import search_options, searches

if TYPE_CHECKING:
    from sqlalchemy.orm import Session

Unit = Union["Session", sa.Connection]
"""What a unit of work hands a service: an ORM Session, or a Core Connection (core=True)."""


@dataclass(frozen=True)
class SavedOption:
    """One option of a saved search, with what the BOM needs to know about its circuit."""

    search_id: int
    rank: int
    spec: core_bom.CircuitSpec
    data: dict[str, Any]
    boards: int  # the board count the search was run for
    params: dict[str, Any] = field(default_factory=dict)  # the search's settings record, read
    target: dict[str, Any] = field(default_factory=dict)  # the search's target record, read (show)


@dataclass(frozen=True)
class BomReport:
    """A BOM, its pick list and the stock it was matched against."""

    bom: core_bom.Bom
    stops: tuple[core_bom.PickStop, ...]
    stock: tuple[StockLine, ...]
    alternatives: tuple = ()  # the saved option's other variants of the same build (JSON form)

    @property
    def shortages(self) -> list[core_bom.Shortage]:
        return core_bom.shortages(self.bom, self.stock)

    @property
    def alternatives_note(self) -> str:
        """``; the same build from other drawers: ...`` naming each saved alternative's drawers
        and stock lines (empty when the option has none)."""
        names = []
        for alt in self.alternatives:
            lines: list[str] = []
            for net in (alt.get("networks") or {}).values():
                for p in (net or {}).get("parts") or []:
                    where = f"{p.get('location') or '?'} (line {p.get('line_id')})"
                    if where not in lines:
                        lines.append(where)
            if lines:
                names.append(" + ".join(lines))
        if not names:
            return ""
        return "; the same build from other drawers: " + "; or ".join(names)


def _loads(text: str, what: str, search_id: int) -> dict[str, Any]:
    try:
        data = json.loads(text or "{}")
    except ValueError:
        raise UnknownSearch(f"search {search_id} has an unreadable {what}; run the search again")
    if not isinstance(data, dict):
        raise UnknownSearch(f"search {search_id} has an unreadable {what}; run the search again")
    return data


def _float_or_none(x: Any) -> Optional[float]:
    try:
        return None if x is None else float(x)
    except (TypeError, ValueError):
        return None


def load_saved_option(session: Unit, option: int, search_id: Optional[int] = None) -> SavedOption:
    """Option ``option`` (its rank, from 1) of search ``search_id``, or of the latest search.
    Raises UnknownSearch naming what is missing. Core statements: a Session or a Connection."""
    cols = (searches.c.id, searches.c.mode, searches.c.target_json, searches.c.params_json)
    if search_id is None:
        search = session.execute(sa.select(*cols).order_by(searches.c.id.desc()).limit(1)).first()
        if search is None:
            raise UnknownSearch("there is no saved search yet; run `selector find …` first")
    else:
        search = session.execute(sa.select(*cols).where(searches.c.id == search_id)).first()
        if search is None:
            raise UnknownSearch(f"there is no saved search {search_id}")
    opts = search_options.c
    row = session.execute(
        sa.select(opts.rank, opts.connection, opts.data_json)
        .where(opts.search_id == search.id, opts.rank == option).order_by(opts.id).limit(1)
    ).first()
    if row is None:
        ranks = session.execute(
            sa.select(opts.rank).where(opts.search_id == search.id).order_by(opts.rank)
        ).scalars().all()
        has = f"it has options {ranks[0]}-{ranks[-1]}" if ranks else "it has no options"
        raise UnknownSearch(f"search {search.id} has no option {option} ({has})")
    params = _loads(search.params_json, "settings record", search.id)
    data = _loads(row.data_json, f"option {option}", search.id)
    connection = str(data.get("connection") or row.connection or "")
    spec = core_bom.CircuitSpec(
        mode=search.mode,
        connection=connection,
        chip=str(params.get("chip") or "bipolar"),
        vcc=_float_or_none(params.get("vcc")),
        diode_vf=_float_or_none(params.get("diode_vf")),
        options=params.get("options") if isinstance(params.get("options"), dict) else {},
    )
    try:
        boards = max(1, int(params.get("boards") or 1))
    except (TypeError, ValueError):
        boards = 1
    return SavedOption(search_id=search.id, rank=row.rank, spec=spec, data=data, boards=boards,
                       params=params, target=_loads(search.target_json, "target record", search.id))


def safe_derating(dielectric: str) -> float:
    """The store's voltage derating for a dielectric; a dielectric it does not know (a row written
    by hand, outside `stock import`) gets the strictest factor in its table (0.5) rather than an
    error, since it only decides whether an extra capacitor may be used."""
    from selector.core.errors import SelectorError
    from selector.core.parts import voltage_derating

    try:
        return voltage_derating(dielectric)
    except SelectorError:
        return 0.5


def bom_in_session(
    session: Unit, option: int, search_id: Optional[int] = None, boards: Optional[int] = None
) -> BomReport:
    """The BOM of a saved option against the stock as this session sees it (no writes)."""
    from selector.store.db import load_stock

    return bom_of_saved(load_saved_option(session, option, search_id), load_stock(session), boards)


def bom_of_saved(saved: SavedOption, stock: list[StockLine], boards: Optional[int] = None) -> BomReport:
    """The BOM of an option already read (``load_saved_option``) against ``stock`` (``load_stock``)."""
    n = saved.boards if boards is None else boards
    try:
        bom = core_bom.assemble_bom(saved.search_id, saved.rank, saved.spec, saved.data, stock, n,
                                    safe_derating)
    except core_bom.OptionOutdatedError as why:
        what = "is gone" if why.now is None else "now holds another value"
        raise OptionOutdated(
            f"option {saved.rank} of search {saved.search_id} uses stock line {why.line_id}, which {what}; "
            "run the search again"
        )
    except (core_bom.OptionShapeError, KeyError, TypeError, ValueError) as why:
        raise UnknownSearch(
            f"option {saved.rank} of search {saved.search_id} is not in the expected form ({why}); "
            "run the search again"
        )
    alts = saved.data.get("alternatives")
    return BomReport(bom=bom, stops=tuple(core_bom.pick_list(bom, stock)), stock=tuple(stock),
                     alternatives=tuple(a for a in alts if isinstance(a, dict)) if isinstance(alts, list) else ())


def import_before_transaction() -> None:
    """Import what reading a BOM needs (the network records and numpy under them, the chip table,
    notation) before a transaction starts: an import costs tens of milliseconds, far more on a
    loaded machine, and a pull would hold the database's write lock all that time while other
    benches wait."""
    import selector.core.chips  # noqa: F401
    import selector.core.networks  # noqa: F401
    import selector.core.notation  # noqa: F401
    import selector.core.parts  # noqa: F401


def build_bom(
    engine: Engine, option: int, search_id: Optional[int] = None, boards: Optional[int] = None
) -> BomReport:
    """The BOM of option ``option`` of search ``search_id`` (default: the latest search) for
    ``boards`` boards (default: the board count the search was run for). One read transaction."""
    from selector.store.db import run_in_transaction

    import_before_transaction()
    return run_in_transaction(engine, lambda s: bom_in_session(s, option, search_id, boards), write=False,
                              core=True)
