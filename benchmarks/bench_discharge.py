"""Speed of the two-resistor search (standard and diode-steered, N=2 and N=3) on the large
benchmark stock, with the discharge switch's on-resistance in t_low (issue 10 item 2); prints
figures, nothing is asserted.

    PYTHONPATH=. python benchmarks/bench_discharge.py [--runs=N] [--no-large]

Stock and targets as in bench_timing.py (E96 10 Ω–1 MΩ, E12 100 pF–100 µF, 10 each; bipolar 555
at 9 V; standard 1234.5 Hz / 65.43 %, diode-steered 1234.5 Hz / 34.56 %). CPU seconds of this
process (time.process_time), min / median over the runs after one warm-up. Run it in a checkout
before and after a change to compare.

Measured (2-core machine shared by several people, load average 4-6, 3 Dec 2026), "before" = the
commit before the discharge switch entered t_low (RD 0, t_low from RB alone), "after" = RD of the
bipolar family (12 ohm) with the RA/RB box of kernels.py; N=2 runs interleaved, min / median ms:
    standard N=2  before 63.3 / 72.7, 54.0 / 64.5   after 65.9 / 78.2, 71.2 / 79.1   (1.08-1.23x)
    diode    N=2  before 108 / 130, 93.8 / 105       after 123 / 139, 126 / 148       (1.07-1.41x;
                                                                                   target <= 1.5x)
    standard N=3  before 5.33 / 5.62 s               after 5.46 / 6.14 s
    diode    N=3  before 6.15 / 6.36 s               after 5.85 / 6.66 s
"""

from __future__ import annotations

import sys
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))
sys.path.insert(0, str(REPO / "benchmarks"))

from bench_timing import cpu_runs, stock  # noqa: E402
from selector.core.search import Target, resolve_limits, search_timing  # noqa: E402

TARGETS = {"standard": Target.astable(1234.5, 0.6543), "diode": Target.astable(1234.5, 0.3456)}


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
            rd = lim.discharge_ohms
            n = runs if budget == 2 else max(1, min(runs, 3))
            t_min, t_med, res = cpu_runs(lambda: search_timing(rl, cl, target, (conn,), {conn: lim},
                                                               max_parts=budget, pool=20), n)
            scale, unit = (1e3, "ms") if budget == 2 else (1.0, "s")
            print(f"N={budget} {conn:9s} RD {rd:g} ohm: {t_min * scale:9.2f} / {t_med * scale:9.2f} {unit}"
                  f"  ({n} runs)  best |error| {abs(res.best_error):.4e}", flush=True)


if __name__ == "__main__":
    main()
