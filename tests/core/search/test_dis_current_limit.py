"""Issue 10, item 2: the DIS pin's current in an astable.

When DIS turns on it takes the capacitor's discharge through RB, at most (2VCC/3)/RB at the
start, plus RA's current VCC/RA (facts.md §6, derived). Their sum must stay within the family's
DIS figure: 15 mA for a bipolar 555 (the current its DIS saturation is specified at, [S1] bipolar
555 data sheet, which names no other DIS maximum than the package dissipation; keeping to the
tested current is common practice) and 10 mA for CMOS data sheet C ([S6]). Figures written out
here, not taken from the code under test.
"""

from __future__ import annotations

import dataclasses
import math

import pytest

from selector.core.errors import NothingFeasible
from selector.core.search import Target, resolve_limits, search_timing
from selector.core.types import StockLine

LN2 = math.log(2.0)
VCC = 9.0
SINK = 15e-3  # [S1]


def _res(i, v):
    return StockLine(i, "resistor", v, 0.01, 0.01, 1)


def _cap(v):
    return StockLine(100, "capacitor", v, 0.05, 0.05, 1, dielectric="film")


def test_family_figures():
    assert resolve_limits("standard", "bipolar", VCC, 0.62).dis_sink_a == SINK
    assert resolve_limits("diode", "cmos", 5.0, 0.62).dis_sink_a == 10e-3   # [S6]


@pytest.mark.parametrize("connection", ["standard", "diode"])
def test_just_inside_offered_just_outside_not(connection):
    ra, inside, outside, c = 1.5e3, 680.0, 650.0, 100e-9
    # RA = 1.5 kΩ takes 6 mA, leaving 9 mA: RB ≥ 6 V/9 mA = 667 Ω
    assert 2 * VCC / 3 / inside + VCC / ra < SINK < 2 * VCC / 3 / outside + VCC / ra
    lim = resolve_limits(connection, "bipolar", VCC, 0.62)
    free = dataclasses.replace(lim, dis_sink_a=math.inf)
    r = [_res(1, ra), _res(2, inside), _res(3, outside)]
    # a target the outside RB meets best (t_low = ln2·RB·C picks RB; t_high from the search itself
    # is not needed: take the no-limit search's best option's own t_high)
    tl = LN2 * outside * c
    base = search_timing(r, [_cap(c)], Target("astable", t_high=2 * tl, t_low=tl), (connection,),
                         {connection: free}, max_parts=1, pool=10)
    assert round(base.options[0].networks["RB"].value) == round(outside)
    res = search_timing(r, [_cap(c)], Target("astable", t_high=2 * tl, t_low=tl), (connection,),
                        {connection: lim}, max_parts=1, pool=10)
    rbs = {round(o.networks["RB"].value) for o in res.options}
    assert round(inside) in rbs and round(outside) not in rbs


def test_nothing_left_names_the_limit():
    lim = resolve_limits("standard", "bipolar", VCC, 0.62)
    r = [_res(1, 1.5e3), _res(2, 650.0)]
    with pytest.raises(NothingFeasible) as err:
        search_timing(r, [_cap(100e-9)], Target.astable(3000.0, 0.7), ("standard",),
                      {"standard": lim}, max_parts=1, pool=5)
    assert "DIS pin current" in str(err.value) and "15 mA" in str(err.value)
