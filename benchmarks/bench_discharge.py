"""Speed of the two-resistor search (standard and diode-steered, N=2 and N=3) on the large
benchmark stock, with the discharge switch's on-resistance in t_low (issue 10 item 2); prints
figures, nothing is asserted.

    PYTHONPATH=. python benchmarks/bench_discharge.py [--runs=N] [--no-large]

Stock and targets as in bench_timing.py (E96 10 Ω–1 MΩ, E12 100 pF–100 µF, 10 each; bipolar 555
at 9 V; standard 1234.5 Hz / 65.43 %, diode-steered 1234.5 Hz / 34.56 %). CPU seconds of this
process (time.process_time), min / median over the runs after one warm-up. Run it in a checkout
before and after a change to compare (the figures of issue 10 are in the module docstring of
bench_diode.py and in the report).
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))
sys.path.insert(0, str(REPO / "benchmarks"))

from bench_timing import stock  # noqa: E402
from selector.core.search import Target, resolve_limits, search_timing  # noqa: E402

TARGETS = {"standard": Target.astable(1234.5, 0.6543), "diode": Target.astable(1234.5, 0.3456)}


def cpu(fn, runs):
    out = fn()
    ts = []
    for _ in range(runs):
        t0 = time.process_time()
        out = fn()
        ts.append(time.process_time() - t0)
    return min(ts), statistics.median(ts), out


def main() -> None:
    runs = 5
    for a in sys.argv[1:]:
        if a.startswith("--runs="):
            runs = max(1, int(a.split("=", 1)[1]))
    budgets = (2,) if "--no-large" in sys.argv else (2, 3)
    rl, cl = stock("E96", 10, 1e6, "E12", 100e-12, 100e-6)
    for budget in budgets:
        for conn, target in TARGETS.items():
            lim = resolve_limits(conn, "bipolar", 9.0, 0.65)
            rd = getattr(lim, "discharge_ohms", 0.0)
            n = runs if budget == 2 else max(1, min(runs, 3))
            t_min, t_med, res = cpu(lambda: search_timing(rl, cl, target, (conn,), {conn: lim},
                                                          max_parts=budget, pool=20), n)
            scale, unit = (1e3, "ms") if budget == 2 else (1.0, "s")
            print(f"N={budget} {conn:9s} RD {rd:g} ohm: {t_min * scale:9.2f} / {t_med * scale:9.2f} {unit}"
                  f"  ({n} runs)  best |error| {abs(res.best_error):.4e}", flush=True)


if __name__ == "__main__":
    main()
