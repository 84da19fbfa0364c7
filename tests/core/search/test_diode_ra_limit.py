"""Issue 10, item 2: in the diode-steered connection RA alone carries the threshold current.

At the upper threshold the DIS node sits at 2VCC/3 + Vf, so RA has only VCC/3 − Vf across it and
must still pass the threshold input current: RA ≤ (VCC/3 − Vf)/I_th (derived like facts.md §6's
R ≤ VCC/(3·I_th)). I_th = 0.25 µA max: [S1] bipolar 555 data sheet (facts.md §6). That is the
oscillation ceiling; the search applies the tighter accuracy ceiling (the threshold current moves
t_high by at most 1 %): with the diode conducting C charges through RA toward VCC − Vf, and a
constant sink I lowers that asymptote by RA·I, so t_high ∝ ln((a − RA·I)/(b − RA·I)) with
a = 2VCC/3 − Vf, b = VCC/3 − Vf; 1 % longer at RA·I = (q·b − a)/(q − 1), q = (a/b)^1.01 (derived;
checked against a scipy ODE with the Shockley diode in tests/reference/test_threshold_current_ceiling.py).
The figures below are written out here, not taken from the code under test.
"""

from __future__ import annotations

import dataclasses
import math

import pytest

from selector.core.errors import NothingFeasible
from selector.core.search import Target, resolve_limits, search_timing
from selector.core.types import StockLine

I_TH = 0.25e-6   # [S1] threshold current, max
VF = 0.65        # the Vf at 1 mA the search is given


def _accuracy_ra(vcc, vf, share=0.01):
    a, b = 2 * vcc / 3 - vf, vcc / 3 - vf
    q = (a / b) ** (1 + share)
    return (q * b - a) / (q - 1) / I_TH


def test_max_ra_figure():
    from selector.core.circuits.base import Settings
    from selector.core.circuits.diode import CIRCUIT

    # oscillation ceiling, 5 V: (5/3 − 0.65)/0.25 µA = 4.07 MΩ (the issue: "about 4 MΩ")
    osc = CIRCUIT.max_ra(Settings("bipolar", 5.0, VF))
    assert osc == pytest.approx((5.0 / 3 - VF) / I_TH, rel=1e-12)
    assert 4.0e6 < osc < 4.1e6
    # the accuracy ceiling the search applies: 62.9 kΩ at 5 V
    lim = resolve_limits("diode", "bipolar", 5.0, VF)
    assert lim.max_ra_ohm == pytest.approx(_accuracy_ra(5.0, VF), rel=1e-12)
    assert 62.8e3 < lim.max_ra_ohm < 62.9e3
    # the standard connection has no such limit (RA + RB both carry it: the total limit)
    assert math.isinf(resolve_limits("standard", "bipolar", 5.0, VF).max_ra_ohm)


def _res(i, v, q=1):
    return StockLine(i, "resistor", v, 0.01, 0.01, q)


def _cap(i, v):
    return StockLine(100 + i, "capacitor", v, 0.05, 0.05, 1, dielectric="film")


def test_just_inside_offered_just_outside_not():
    # an ideal discharge switch here (RD = 0), so t_low = ln2·RB·C exactly [S2, S3]; the
    # discharge-switch law has its own checks (tests/reference/test_discharge_reference.py)
    lim = dataclasses.replace(resolve_limits("diode", "bipolar", 5.0, VF), discharge_ohms=0.0)
    inside, outside, rb = 62.0e3, 64.0e3, 20e3   # 62.9 kΩ limit between them (RA + RB inside 91.5 kΩ)
    c = 1e-9
    # t_high of the outside RA by an scipy integration of the circuit (tests/reference_diode.py),
    # not by the code under test
    pytest.importorskip("scipy")
    from reference_diode import ode_t_high

    th = ode_t_high(outside, rb, 5.0, VF, lim.extra["diode_n"], c)
    target = Target("astable", t_high=th, t_low=math.log(2) * rb * c)
    r = [_res(1, inside), _res(2, outside), _res(3, rb)]
    res = search_timing(r, [_cap(1, c)], target, ("diode",), {"diode": lim}, max_parts=1, pool=10)
    ras = {round(o.networks["RA"].value) for o in res.options}
    assert round(inside) in ras and round(outside) not in ras
    # without the limit the 64 kΩ RA is the exact hit: the limit is what removed it
    free = dataclasses.replace(lim, max_ra_ohm=math.inf)
    res2 = search_timing(r, [_cap(1, c)], target, ("diode",), {"diode": free}, max_parts=1, pool=10)
    assert round(res2.options[0].networks["RA"].value) == round(outside)
    assert abs(res2.options[0].error) < 1e-9


def test_nothing_left_names_the_limit():
    # the DIS-current limit (tested in test_dis_current_limit.py) would exclude RB = 10 Ω first;
    # lifted here so only the RA limit is left to name
    lim = dataclasses.replace(resolve_limits("diode", "bipolar", 5.0, VF), dis_sink_a=math.inf)
    # RB = 10 Ω cannot serve as RA (the 1 kΩ minimum RA), so RA must be the 64 kΩ part
    r = [_res(1, 64e3), _res(2, 10.0)]
    target = Target("astable", t_high=4e-3, t_low=1e-8)
    with pytest.raises(NothingFeasible) as err:
        search_timing(r, [_cap(1, 1e-7)], target, ("diode",), {"diode": lim}, max_parts=1, pool=5)
    assert "maximum RA" in str(err.value) and "threshold current" in str(err.value)
