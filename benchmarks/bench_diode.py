"""Speed of the diode-steered N=2 search with the Shockley diode against the constant-drop model
it replaced (prints figures and the ratio; not a test, nothing is asserted).

    PYTHONPATH=. python benchmarks/bench_diode.py

Stock: the "large" benchmark stock of bench_timing.py (E96 10 Ω–1 MΩ resistors, E12 100 pF–100 µF
capacitors, 10 each). "before" runs the same search with the circuit's model swapped, in this
process, for the constant-drop closed form (timing.diode_times / diode_ideal_ra, the code path
before issue 10); "after" is the Shockley model the search uses now.

Measured (2-core shared machine, 2 Dec 2026): before 48 ms, after 58 ms, 1.21x; a second run
69 ms vs 92 ms, 1.34x (target ≤ 1.5x; the machine is shared, so runs vary).
Chip limits as data (branch limits10, 3 Dec 2026; load average 6–9 on 2 CPUs): "after" 186 ms
before the change, 227 / 288 ms after (wall, noisy); the same search timed by CPU time, old and new
code alternating in one shell: 127 / 147 ms before, 129 / 151 ms after (min, two rounds): no change
beyond noise. The best error moves (6.6e-7 → 1.1e-6) because at 5 V the new accuracy ceilings
(RA ≤ 62.9 kΩ, RA + RB ≤ 91.5 kΩ) leave some of the earlier options out.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))
sys.path.insert(0, str(REPO / "benchmarks"))

from bench_timing import stock  # noqa: E402
from selector.core import timing  # noqa: E402
from selector.core.circuits import diode  # noqa: E402
from selector.core.search import Target, resolve_limits, search_timing  # noqa: E402

TARGET = Target.astable(1234.5, 0.3456)   # an invented target below 50 % duty: diode-steered only


def run(rl, cl, lim):
    return search_timing(rl, cl, TARGET, ("diode",), {"diode": lim}, max_parts=2, pool=20)


def median_s(fn, n=3):
    ts = []
    for _ in range(n):
        t0 = time.perf_counter()
        out = fn()
        ts.append(time.perf_counter() - t0)
    return sorted(ts)[n // 2], out


def main() -> None:
    rl, cl = stock("E96", 10, 1e6, "E12", 100e-12, 100e-6)
    lim = resolve_limits("diode", "bipolar", 5.0, 0.62)
    print(f"large stock: {len(rl)} resistor lines, {len(cl)} capacitor lines; diode-steered, "
          f"{TARGET.frequency:g} Hz, duty {TARGET.duty:.4f}, bipolar 555 at 5 V, N=2")
    kind = diode.Diode
    new = (kind.ra_for_high, kind.times2)
    old = (lambda self, t, rb, c, l: timing.diode_ideal_ra(t, rb, c, l.vcc, l.diode_vf),
           lambda self, ra, rb, c, l: timing.diode_times(ra, rb, c, l.vcc, l.diode_vf))
    kind.ra_for_high, kind.times2 = old
    run(rl, cl, lim)   # warm-up
    t_old, r_old = median_s(lambda: run(rl, cl, lim))
    kind.ra_for_high, kind.times2 = new
    run(rl, cl, lim)
    t_new, r_new = median_s(lambda: run(rl, cl, lim))
    print(f"before (constant drop): {t_old * 1e3:.0f} ms, best |error| {abs(r_old.best_error):.3e}")
    print(f"after (Shockley diode): {t_new * 1e3:.0f} ms, best |error| {abs(r_new.best_error):.3e}")
    print(f"ratio after/before: {t_new / t_old:.2f}x (median of 3 each)")


if __name__ == "__main__":
    main()
