"""What the trimmer pass (core.trim, --trim) costs (prints figures and ratios; asserts nothing).

    PYTHONPATH=. python benchmarks/bench_trim.py            # 5 runs each
    PYTHONPATH=. python benchmarks/bench_trim.py --runs=7

The sample stock (its drawer of trimmers: 1 k, 10 k, 100 k, 500 k, 1 M single-turn, 10 k
25-turn), planned in this process (``services.find_timing.plan_timing``: search,
yield, ranking, and the trimmer pass when it runs). Each figure is min / median CPU seconds
(time.process_time) over the runs after a warm-up; the ratio is with --trim over without. The
load average is printed (the machine may be shared).
"""

from __future__ import annotations

import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))

CASES = (
    ("astable 1.2 kHz 65 %, --max-parts 3", dict(mode="astable", freq_hz=1200.0, duty=0.65, max_parts=3)),
    ("astable 1 Hz 60 %, --max-parts 3", dict(mode="astable", freq_hz=1.0, duty=0.60, max_parts=3)),
    ("monostable 2 s, --max-parts 2", dict(mode="monostable", width_s=2.0, max_parts=2)),
)


def _lines():
    from selector.services.stock import import_stock
    from selector.store.db import load_stock, open_engine, resolve_url, run_in_transaction

    path = Path(tempfile.mkdtemp()) / "bench.db"
    engine = open_engine(resolve_url(str(path)))
    try:
        import_stock(engine, REPO / "sample_stock.csv")
        lines = run_in_transaction(engine, lambda s: load_stock(s), write=False)
    finally:
        engine.dispose()
    return lines


def _time(fn, runs: int) -> list[float]:
    fn()  # warm-up
    out = []
    for _ in range(runs):
        t0 = time.process_time()
        fn()
        out.append(time.process_time() - t0)
    return out


def main(argv: list[str]) -> None:
    from selector.services.find_timing import TimingRequest, plan_timing

    runs = max(5, next((int(a.split("=", 1)[1]) for a in argv if a.startswith("--runs=")), 5))
    print(f"load average at start: {os.getloadavg()}")
    lines = _lines()
    r = [ln for ln in lines if ln.kind == "resistor"]
    c = [ln for ln in lines if ln.kind == "capacitor"]
    t = [ln for ln in lines if ln.kind == "trimmer"]
    for name, fields in CASES:
        plain = TimingRequest(**fields)
        forced = TimingRequest(trim=True, **fields)
        rep = plan_timing(r, c, plain, None, t)
        unasked = sum(1 for o in rep.options if o.get("adjustable"))
        a = _time(lambda: plan_timing(r, c, plain, None, t), runs)
        b = _time(lambda: plan_timing(r, c, forced, None, t), runs)
        n = sum(1 for o in plan_timing(r, c, forced, None, t).options if o.get("adjustable"))
        print(f"{name}: without --trim min {min(a):.2f} s / median {statistics.median(a):.2f} s "
              f"({unasked} trimmer options unasked); with --trim min {min(b):.2f} s / median "
              f"{statistics.median(b):.2f} s ({n} trimmer options); ratio of medians "
              f"{statistics.median(b) / statistics.median(a):.2f}")
    print(f"load average at end: {os.getloadavg()}")


if __name__ == "__main__":
    main(sys.argv[1:])
