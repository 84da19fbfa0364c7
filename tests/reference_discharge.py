"""The 555 timing laws with the discharge switch's resistance RD written out, for tests only.

    RD_BIPOLAR                 bipolar 555 discharge switch: DIS 180 mV typ at 15 mA [S1] → 12 Ω
    t_low_rd(ra, rb, c, rd)    astable t_low, seconds
    width_rd(r, c, rd)         monostable pulse width, seconds

Import it as `from reference_discharge import t_low_rd` (pytest puts tests/ on sys.path).
"""

from __future__ import annotations

import math

RD_BIPOLAR = 0.180 / 15e-3   # bipolar 555 discharge switch: DIS 180 mV typ at 15 mA [S1] → 12 Ω


def t_low_rd(ra, rb, c, rd=RD_BIPOLAR):
    """t_low with the discharge switch RD: C falls through RB + RA∥RD toward d = VCC·RD/(RA+RD)
    (Thevenin of VCC–RA–RD at DIS; derived, tests/reference/test_discharge_reference.py), from
    2VCC/3 to VCC/3; RA → ∞ gives the data sheet's ln2·(RB+RD)·C [S2]."""
    d = rd / (ra + rd)
    return (rb + ra * rd / (ra + rd)) * c * math.log((2 / 3 - d) / (1 / 3 - d))


def width_rd(r, c, rd=RD_BIPOLAR):
    """Monostable width from the level the closed switch holds C at, VCC·RD/(R+RD): R·C·ln(3R/(R+RD))."""
    return r * c * math.log(3 * r / (r + rd))
