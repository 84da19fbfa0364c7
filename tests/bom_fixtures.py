"""Hand-made stock and saved searches for the BOM / pull tests (invented demo scenario: a repair
bench with a few drawers). Saved options are written as literal JSON in the shape `find … --json`
prints, so these tests do not depend on the search code."""

from __future__ import annotations

import json
from typing import Any, Optional

import sqlalchemy as sa

from selector.store.db import apply_movement, open_engine, transaction
from selector.store.models import MovementRow, PullRow, SearchOptionRow, SearchRow, StockLineRow

# id: (kind, value, tol_minus, tol_plus, quantity, location, package, rating, dielectric, note)
BENCH_STOCK: dict[int, tuple] = {
    1: ("resistor", 10e3, 0.05, 0.05, 100, "A1", "axial", 0.25, "", "carbon film"),
    2: ("resistor", 4.7e3, 0.01, 0.01, 50, "A10", "axial", 0.25, "", "metal film"),
    3: ("resistor", 1e3, 0.05, 0.05, 20, "A2", "axial", 0.25, "", ""),
    4: ("capacitor", 10e-9, 0.05, 0.05, 40, "B1", "radial", 50.0, "C0G", ""),
    5: ("capacitor", 100e-9, 0.10, 0.10, 30, "B2", "radial", 50.0, "X7R", ""),
    6: ("capacitor", 47e-6, 0.20, 0.20, 10, "C1", "radial", 25.0, "electrolytic", ""),
    7: ("capacitor", 22e-6, 0.20, 0.20, 10, "C1", "radial", 10.0, "electrolytic", "low voltage"),
    8: ("capacitor", 100e-9, 0.10, 0.10, 5, "B3", "box", 63.0, "film-PET", ""),
}


def add_stock(engine, lines: dict[int, tuple]) -> None:
    """Insert stock lines with quantity 0, then bring each to its quantity through the ledger
    (reason "import"), so the ledger sums to the stock from the start. A tuple may go on with
    part, rating_current and reorder_at (for ic / diode lines and reorder levels)."""
    with transaction(engine) as s:
        for line_id, spec in lines.items():
            kind, value, tm, tp, qty, loc, pkg, rating, diel, note = spec[:10]
            part, rating_current, reorder_at = (tuple(spec[10:]) + ("", None, None)[len(spec) - 10:])[:3]
            s.add(StockLineRow(id=line_id, kind=kind, value=value, tol_minus=tm, tol_plus=tp, quantity=0,
                               location=loc, package=pkg, rating=rating, dielectric=diel,
                               polarized=diel in ("electrolytic", "tantalum"), note=note, part=part,
                               rating_current=rating_current, reorder_at=reorder_at))
        s.flush()
        if s.get_bind().dialect.name == "postgresql":  # explicit ids do not move the sequence
            s.execute(sa.text("SELECT setval(pg_get_serial_sequence('stock_lines', 'id'), MAX(id)) FROM stock_lines"))
        for line_id, spec in lines.items():
            if spec[4]:
                apply_movement(s, line_id, spec[4], "import", "test fixture")


def part(line_id: int, value: float, count: int, location: str) -> dict:
    return {"line_id": line_id, "value": value, "count": count, "location": location}


def net(value: float, shape: str, *parts: dict) -> dict:
    return {"value": value, "shape": shape, "parts": list(parts)}


def add_search(engine, mode: str, options: list[dict], *, chip: str = "bipolar", vcc: float = 9.0,
               diode_vf: Optional[float] = None, boards: int = 1, connection: str = "auto") -> int:
    """Save a search with the given option dicts (ranks 1, 2, … in list order); returns its id."""
    params = {"chip": chip, "vcc": vcc, "diode_vf": diode_vf, "boards": boards, "max_parts": 2,
              "accept": 0.05, "distribution": "uniform", "seed": 1, "connection": connection, "top": 10}
    with transaction(engine) as s:
        row = SearchRow(mode=mode, target_json=json.dumps({"mode": mode}), params_json=json.dumps(params))
        s.add(row)
        s.flush()
        for rank, opt in enumerate(options, start=1):
            data = dict(opt, rank=rank)
            s.add(SearchOptionRow(search_id=row.id, rank=rank, connection=data.get("connection", ""),
                                  error=float(data.get("error", 0.0)), data_json=json.dumps(data)))
        return row.id


def astable_standard() -> dict:
    """RA = 4.7 kΩ (A10); RB = 10 kΩ + 1 kΩ in series (A1, A2); C = 10 nF C0G (B1)."""
    return {
        "connection": "standard", "error": 0.01, "predicted": {}, "range": {}, "yield": 0.9,
        "networks": {
            "C": net(10e-9, "single", part(4, 10e-9, 1, "B1")),
            "RB": net(11e3, "series", part(1, 10e3, 1, "A1"), part(3, 1e3, 1, "A2")),
            "RA": net(4.7e3, "single", part(2, 4.7e3, 1, "A10")),
        },
    }


def astable_diode() -> dict:
    """RA = 10 kΩ (A1); RB = 4.7 kΩ (A10); C = 100 nF PET film (B3)."""
    return {
        "connection": "diode", "error": -0.02, "predicted": {}, "range": {}, "yield": 0.8,
        "networks": {
            "RA": net(10e3, "single", part(1, 10e3, 1, "A1")),
            "RB": net(4.7e3, "single", part(2, 4.7e3, 1, "A10")),
            "C": net(100e-9, "single", part(8, 100e-9, 1, "B3")),
        },
    }


def monostable_parallel() -> dict:
    """R = 10 kΩ ∥ 10 kΩ (two parts of line 1, A1); C = 47 µF electrolytic (C1)."""
    return {
        "connection": "monostable", "error": 0.003, "predicted": {}, "range": {}, "yield": 0.7,
        "networks": {
            "R": net(5e3, "parallel", part(1, 10e3, 2, "A1")),
            "C": net(47e-6, "single", part(6, 47e-6, 1, "C1")),
        },
    }


def rc_series_pair(line_id: int = 1, value: float = 10e3, location: str = "A1", c_line: int = 5,
                   c_value: float = 100e-9, c_location: str = "B2") -> dict:
    """R = two parts of one line in series; C = one capacitor. An RC option has no extras."""
    return {
        "connection": "rc", "error": 0.0, "predicted": {}, "range": {}, "yield": 1.0,
        "networks": {
            "R": net(2 * value, "series", part(line_id, value, 2, location)),
            "C": net(c_value, "single", part(c_line, c_value, 1, c_location)),
        },
    }


def bench_db(db_url: str, options: list[dict], mode: str = "astable", stock: Optional[dict] = None,
             **kw: Any):
    """A file database holding the bench stock and one saved search; returns the open engine."""
    engine = open_engine(db_url)
    add_stock(engine, BENCH_STOCK if stock is None else stock)
    add_search(engine, mode, options, **kw)
    return engine


def dump(engine) -> dict[str, list[tuple]]:
    """Every row of the tables a pull or undo may touch (timestamps included)."""
    out = {}
    with engine.connect() as conn:
        for table in (StockLineRow.__table__, MovementRow.__table__, PullRow.__table__):
            out[table.name] = [tuple(r) for r in conn.execute(sa.select(table).order_by(table.c.id))]
    return out


def quantities(engine) -> dict[int, int]:
    with engine.connect() as conn:
        return dict(conn.execute(sa.select(StockLineRow.id, StockLineRow.quantity)).all())


def ledger_sums(engine) -> dict[int, int]:
    with engine.connect() as conn:
        rows = conn.execute(sa.select(MovementRow.line_id, sa.func.sum(MovementRow.delta))
                            .group_by(MovementRow.line_id)).all()
    return {i: int(n) for i, n in rows}
