"""The one table of network shapes: how 1-3 parts are joined, what value that gives, how it is
written for people, wired in SPICE and listed in the BOM. Every other module reads it from here.

A structure is a part index (into a network's ``physical`` tuple) or ``(joint, (children...))``
with joint "series" or "parallel". Resistors in series add, capacitors in parallel add; the other
joint adds reciprocals. Shape names are our own; ``+`` means in series, ``∥`` in parallel, for
capacitors too.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Optional, Sequence, Union

Structure = Union[int, tuple]

SERIES_SIGN = "+"
PARALLEL_SIGN = "∥"
SIGN = {"series": SERIES_SIGN, "parallel": PARALLEL_SIGN}


@dataclass(frozen=True)
class Shape:
    """One way of joining parts. For the 3-part shapes: ``outer`` joins a single part to a pair
    joined by ``inner``; ``symmetric`` when every part plays the same role (then the id code's
    canonical copy has the lowest line single); ``code3`` is its code in a 3-part network id."""

    name: str
    parts: int
    structure: Structure
    outer: str = ""
    inner: str = ""
    symmetric: bool = True
    code3: Optional[int] = None

    def written(self, texts: Sequence[str]) -> str:
        """The network written out from one text per part, e.g. "(10 kΩ ∥ 10 kΩ) + 1 kΩ"."""
        return write(self.structure, texts)

    @property
    def template(self) -> str:
        """The written form with ``{i}`` placeholders (BOM wiring: "(R1 ∥ R2) + R3")."""
        return self.written(["{%d}" % i for i in range(self.parts)])

    @property
    def spice_tree(self) -> Structure:
        """The structure as a SPICE sub-tree: a part index or ("s"|"p", children...)."""
        return spice_tree(self.structure)


SHAPES: dict[str, Shape] = {s.name: s for s in (
    Shape("single", 1, 0),
    Shape("series", 2, ("series", (0, 1))),
    Shape("parallel", 2, ("parallel", (0, 1))),
    # 3-part shapes, in the order of their code in an id; the pair comes first, as written
    Shape("series3", 3, ("series", (0, 1, 2)), "series", "series", True, 0),
    Shape("parallel3", 3, ("parallel", (0, 1, 2)), "parallel", "parallel", True, 1),
    Shape("series+parallel", 3, ("series", (("parallel", (0, 1)), 2)), "series", "parallel", False, 2),
    Shape("parallel+series", 3, ("parallel", (("series", (0, 1)), 2)), "parallel", "series", False, 3),
)}

SHAPES3: tuple[Shape, ...] = tuple(sorted((s for s in SHAPES.values() if s.code3 is not None),
                                          key=lambda s: s.code3))


def adds(kind: str, joint: str) -> bool:
    """True when this joint adds the values themselves (resistors in series, capacitors in
    parallel); False when it adds reciprocals."""
    from selector.core.types import NETWORK_KINDS

    if kind not in NETWORK_KINDS:
        raise ValueError(f"unknown part kind {kind!r}")
    return (joint == "series") == (kind == "resistor")


def value(structure: Structure, values: Sequence[float], kind: str) -> float:
    """The value law: the effective value of ``values`` (one per part) joined as ``structure``."""
    if isinstance(structure, int):
        return float(values[structure])
    joint, children = structure
    vals = [value(c, values, kind) for c in children]
    return sum(vals) if adds(kind, joint) else 1.0 / sum(1.0 / v for v in vals)


def write(structure: Structure, texts: Sequence[str], top: bool = True) -> str:
    """Write a structure with one text per part; a nested joint in parentheses."""
    if isinstance(structure, int):
        return texts[structure]
    joint, children = structure
    text = f" {SIGN[joint]} ".join(write(c, texts, False) for c in children)
    return text if top else f"({text})"


def spice_tree(structure: Structure) -> Structure:
    if isinstance(structure, int):
        return structure
    joint, children = structure
    return ("s" if joint == "series" else "p",) + tuple(spice_tree(c) for c in children)
