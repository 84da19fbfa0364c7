"""Which stock line can supply a part the BOM needs beyond the timing networks: the timer IC,
the steering diode, the Schmitt-inverter IC (pure; stdlib only).

A circuit names what it needs as a *want* (``Obtain.want``, selector/core/circuits): ``555:bipolar``,
``555:cmos``, ``schmitt:hc``, ``schmitt:4000``, ``diode:silicon`` or ``diode:schottky``. A stock
line is matched by its part text, read without regard to case, spaces, hyphens and underscores
("NE 555-P" reads as "NE555P"). The rule (README "Timer ICs, diodes and trimmers in stock"):

* ``555:<family>``: an ``ic`` line whose text holds ``555`` and a marker of exactly one family.
  CMOS markers: ``C555`` (TLC555, LMC555), ``7555`` (ICM7555), ``TS555``, ``CMOS``. Bipolar
  markers: ``NE555``, ``SA555``, ``SE555``, ``LM555``, ``BIPOLAR``. These part-number prefixes
  are from memory (manufacturers' usual names), not from a cited list. A bare "555" says no
  family and is not matched: a CMOS part in a bipolar build (or the reverse) would change the
  timing terms the search used.
* ``schmitt:hc``: an ``ic`` line holding ``HC14`` but not ``HCT14`` (TTL input levels, other
  thresholds), or ``SCHMITT`` together with ``HC``; ``schmitt:4000``: ``40106``, ``4584``, or
  ``SCHMITT`` together with ``4000``. A "Schmitt hex inverter" naming no family is not matched
  (the families' thresholds differ, and the search used one of them). Part numbers from memory.
* ``diode:<type>``: a ``diode`` line whose stated forward drop (``rating``) is below
  SCHOTTKY_BELOW_V for a Schottky, at or above it for a silicon diode; a line without a stated
  drop is classed by its text: ``SCHOTTKY``, ``BAT``, ``1N5711``, ``1N581``, ``BAS40``, ``BAS70``
  (Schottky) or ``1N4148``, ``1N914``, ``1N4448``, ``BAS16``, ``SILICON`` (silicon), part numbers
  from memory; any other diode line is not matched.

Among the lines that match, the BOM takes one that holds every board's worth (after what the BOM
already takes from it), then one in a drawer already on the pick list, then the lowest line id.
When none holds enough, the one holding the most is taken, so the BOM shows it short and a pull
refuses like for any other short line. A line holding nothing supplies nothing: the part is then
listed to obtain, as before, and the BOM notes which matching line is empty.
"""

from __future__ import annotations

import re
from typing import Iterable, Mapping, Optional, Sequence

from selector.core.types import StockLine

SCHOTTKY_BELOW_V = 0.45
"""A small-signal diode whose forward drop near 1 mA is below this is a Schottky (typically
0.2-0.4 V), at or above it a silicon junction diode (typically 0.6-0.7 V). Common practice; the
diode-steered circuit names its diode with the same threshold."""

_CMOS_555 = ("C555", "7555", "TS555", "CMOS")
_BIPOLAR_555 = ("NE555", "SA555", "SE555", "LM555", "BIPOLAR")
_SCHOTTKY = ("SCHOTTKY", "BAT", "1N5711", "1N581", "BAS40", "BAS70")
_SILICON = ("1N4148", "1N914", "1N4448", "BAS16", "SILICON")

WANTS: tuple[str, ...] = ("555:bipolar", "555:cmos", "schmitt:hc", "schmitt:4000", "diode:silicon",
                          "diode:schottky")
"""Every want this module knows; anything else matches nothing."""


def normalized(text: str) -> str:
    """Upper case without spaces, hyphens or underscores: "ne 555-p" -> "NE555P"."""
    return re.sub(r"[\s\-_]+", "", text).upper()


def _any(text: str, markers: Iterable[str]) -> bool:
    return any(m in text for m in markers)


def timer_family(part: str) -> Optional[str]:
    """"bipolar" or "cmos" for a 555's part text, None when it is no 555 or names no single family."""
    t = normalized(part)
    if "555" not in t:
        return None
    cmos, bipolar = _any(t, _CMOS_555), _any(t, _BIPOLAR_555)
    if cmos == bipolar:
        return None
    return "cmos" if cmos else "bipolar"


def schmitt_family(part: str) -> Optional[str]:
    """"hc" or "4000" for a Schmitt-inverter IC's part text, None when it names neither."""
    t = normalized(part)
    if ("HC14" in t and "HCT14" not in t) or ("SCHMITT" in t and "HC" in t and "HCT" not in t):
        return "hc"
    if "40106" in t or "4584" in t or ("SCHMITT" in t and "4000" in t):
        return "4000"
    return None


def diode_type(line: StockLine) -> Optional[str]:
    """"silicon" or "schottky": by the line's stated forward drop, else by its part text."""
    if line.rating is not None:
        return "schottky" if line.rating < SCHOTTKY_BELOW_V else "silicon"
    t = normalized(line.part)
    schottky, silicon = _any(t, _SCHOTTKY), _any(t, _SILICON)
    if schottky == silicon:
        return None
    return "schottky" if schottky else "silicon"


def matches(want: str, line: StockLine) -> bool:
    """Whether ``line`` is the part ``want`` names (quantity not considered)."""
    what, _, family = want.partition(":")
    if what == "555":
        return line.kind == "ic" and timer_family(line.part) == family
    if what == "schmitt":
        return line.kind == "ic" and schmitt_family(line.part) == family
    if what == "diode":
        return line.kind == "diode" and diode_type(line) == family
    return False


def pick_line(want: str, stock: Sequence[StockLine], taken: Mapping[int, int], need: int,
              visited: Iterable[str] = ()) -> Optional[StockLine]:
    """The stock line to take ``need`` parts of ``want`` from (see the module rule), or None."""
    places = set(visited)
    found = [ln for ln in stock if ln.quantity > taken.get(ln.id, 0) and matches(want, ln)]
    if not found:
        return None
    enough = [ln for ln in found if ln.quantity - taken.get(ln.id, 0) >= need]
    if enough:
        return min(enough, key=lambda ln: (0 if ln.location in places else 1, ln.id))
    return max(found, key=lambda ln: (ln.quantity - taken.get(ln.id, 0), -ln.id))
