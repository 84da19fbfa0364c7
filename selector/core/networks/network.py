"""One concrete network of 1-3 stock parts (for display, BOM and Monte Carlo): its parts, its
structure from the shapes table and the value law applied to many draws at once."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from selector.core.networks.shapes import Structure, adds
from selector.core.types import StockLine


@dataclass(frozen=True)
class Network:
    """One concrete network of 1-3 parts, for display, BOM and Monte Carlo."""

    kind: str
    value: float
    vmin: float
    vmax: float
    shape: str
    parts: tuple[tuple[StockLine, int], ...]  # distinct stock lines with counts
    physical: tuple[StockLine, ...]  # one entry per physical part, in combine() order
    structure: Structure = field(default=0)  # e.g. ("series", (("parallel", (0, 1)), 2))

    @property
    def nparts(self) -> int:
        return len(self.physical)

    @property
    def usage(self) -> dict[int, int]:
        """line_id -> number of parts taken from that line."""
        return {line.id: count for line, count in self.parts}

    def combine(self, part_values: np.ndarray) -> np.ndarray:
        """Effective value for many draws: ``part_values`` has shape (len(physical), n), one row
        per physical part; returns shape (n,), by the same laws as ``value``."""
        pv = np.asarray(part_values, dtype=float)
        if pv.ndim == 1:
            pv = pv[:, None]
        if pv.shape[0] != len(self.physical):
            raise ValueError(f"expected {len(self.physical)} rows of part values, got {pv.shape[0]}")

        def ev(node: Structure) -> np.ndarray:
            if isinstance(node, int):
                return pv[node]
            joint, children = node
            vals = [ev(c) for c in children]
            if adds(self.kind, joint):
                return np.sum(vals, axis=0)
            return 1.0 / np.sum([1.0 / v for v in vals], axis=0)

        return ev(self.structure)

    def in_series(self) -> tuple[bool, ...]:
        """For each physical part: does a series joint sit anywhere above it?"""
        flags = [False] * len(self.physical)

        def walk(node: Structure, under_series: bool) -> None:
            if isinstance(node, int):
                flags[node] = under_series
                return
            joint, children = node
            for c in children:
                walk(c, under_series or joint == "series")

        walk(self.structure, False)
        return tuple(flags)

    @property
    def polarized_in_series(self) -> bool:
        """A polarized part sits in a series joint (capacitors: show a caution)."""
        return any(line.polarized and s for line, s in zip(self.physical, self.in_series()))

    @property
    def dielectrics(self) -> tuple[str, ...]:
        """Distinct dielectric names of the parts (empty names left out), in part order."""
        seen: list[str] = []
        for line in self.physical:
            d = (line.dielectric or "").strip()
            if d and d not in seen:
                seen.append(d)
        return tuple(seen)
