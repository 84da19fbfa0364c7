"""The diode-steered astable's t_high integrated with scipy, for tests only (an outside reference:
``solve_ivp`` with the diode voltage found by ``brentq`` at every step; neither the Wright omega
closed form nor the quadrature of the code under test).

Circuit (facts §2 topology [S8]): RA from VCC to DIS, the diode (anode DIS) in parallel with RB from
DIS to the capacitor; while the output is high C charges from VCC/3 to 2VCC/3 with
C·dVc/dt = (VCC − Vc − V)/RA, where (VCC − Vc − V)/RA = Is·(exp(V/(n·Vt)) − 1) + V/RB (Shockley),
Is from Vf at 1 mA.

    ode_t_high(ra, rb, vcc, vf, n, c, sink_a=0.0) -> float   seconds (needs scipy); ``sink_a``
    a constant current drawn from the capacitor node (the threshold input current)
"""

from __future__ import annotations

import math

from selector.core.parts import THERMAL_V


def ode_t_high(ra, rb, vcc, vf, n, c, sink_a=0.0):
    """t_high by scipy: integrate dVc/dt until Vc reaches 2VCC/3 (event), brentq for the diode."""
    from scipy import integrate, optimize

    nvt = n * THERMAL_V
    isat = 1e-3 / math.expm1(vf / nvt)

    def current(vc):
        a = vcc - vc
        g = lambda v: (a - v) / ra - isat * math.expm1(v / nvt) - v / rb  # noqa: E731
        v = optimize.brentq(g, 0.0, a, xtol=1e-15, rtol=1e-14)
        return (a - v) / ra

    def rhs(_t, y):
        return [(current(y[0]) - sink_a) / c]

    def reached(_t, y):
        return y[0] - 2.0 * vcc / 3.0
    reached.terminal = True
    span = 50.0 * (ra + rb) * c
    sol = integrate.solve_ivp(rhs, (0.0, span), [vcc / 3.0], method="DOP853", events=reached,
                              rtol=1e-11, atol=1e-12 * vcc)
    return float(sol.t_events[0][0])
