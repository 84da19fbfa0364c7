"""Invented demo stock shared by the ranking tests: E12 resistors 1 k-82 k in two drawers per
value (1 % and 5 %, 250 mW) and E12 capacitors 10 nF-82 nF, 10 of each (IEC 60063 E12 values)."""

from __future__ import annotations

from selector.core.types import StockLine

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063 E12


def e12_demo_stock(capacitors=((0.05, "C0G"),)) -> tuple[list, list]:
    """(resistor lines, capacitor lines); ``capacitors``: the (tolerance, dielectric) drawers each
    capacitor value comes in (50 V)."""
    lines, i = [], 1
    for decade in (1e3, 1e4):
        for m in E12:
            for tol in (0.01, 0.05):
                lines.append(StockLine(i, "resistor", m * decade, tol, tol, 10, location=f"R{i}", rating=0.25))
                i += 1
    for m in E12:
        for tol, diel in capacitors:
            lines.append(StockLine(i, "capacitor", m * 1e-8, tol, tol, 10, location=f"C{i}", rating=50.0,
                                   dielectric=diel))
            i += 1
    return [ln for ln in lines if ln.kind == "resistor"], [ln for ln in lines if ln.kind == "capacitor"]
