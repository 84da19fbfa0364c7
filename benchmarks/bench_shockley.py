"""Cost of the Shockley steering-diode model (timing.diode_shockley_ideal_ra / diode_shockley_times)
in the two figures of issue 12 it weighs on (prints figures and ratios; not a test, nothing is
asserted).

    PYTHONPATH=. python benchmarks/bench_shockley.py                      # this tree
    PYTHONPATH=. python benchmarks/bench_shockley.py --before=/tmp/old    # also an older tree
    PYTHONPATH=. python benchmarks/bench_shockley.py --runs=9 --rounds=3  # more runs / rounds

Figures (CPU ms of this process, time.process_time, min / median over >= 5 runs after a warm-up):
``search`` = the N=2 diode-steered search on the large benchmark stock (bench_timing.stock and its
LARGE_TARGETS["diode"], bipolar 555 at 9 V, Vf 0.65 V; issue 12 asks <= 50 ms); ``plan`` =
``find_timing.plan_timing`` of ``find astable --freq 1234 --duty 0.62 --max-parts 2`` on
``sample_stock.csv`` (search + 10 000-build Monte Carlo + ranking, standard and diode-steered
connections). ``model`` = the part of each spent inside the two diode functions (a second set of
runs with them wrapped, so the totals above are not slowed by the wrapping).

``--before=DIR`` names another checkout (e.g. ``git archive <commit> | tar -x -C DIR``); each tree
runs in its own child process and the trees alternate round by round, so load on a shared machine
hits both alike.

Measured 3 Dec 2026 (branch s3-diode against 70a89af, the commit before it; 2 CPUs shared with
other work, load average 1.4-3.6, so medians swing by 10-20 ms; two runs of 3 rounds x 9 runs),
min / median CPU ms, before -> after:
    search total   56.3 / 75.3 -> 39.2 / 50.0      47.6 / 64.7 -> 38.5 / 59.4
    search model   21.0 / 29.0 -> 13.2 / 15.8      20.4 / 28.0 ->  9.8 / 13.3
    plan   total  117.1 / 161.7 -> 110.5 / 147.5  115.1 / 166.5 -> 107.3 / 149.8
    plan   model   50.4 / 63.9 -> 33.0 / 45.1      51.4 / 65.3 -> 34.0 / 47.3
The found options (N=2 and N=3 diode searches, large and sample stock) and the ``find --json``
output are the same before and after.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent


def _cpu(fn, runs: int) -> list:
    fn()  # warm-up
    ts = []
    for _ in range(runs):
        t0 = time.process_time()
        fn()
        ts.append(time.process_time() - t0)
    return ts


def child(code: str, db: str, runs: int) -> None:
    """Time both figures with the ``selector`` package of ``code``; print one JSON line."""
    sys.path.insert(0, code)
    sys.path.insert(1, str(HERE))
    from selector.core import timing
    from selector.core.search import resolve_limits, search_timing
    from selector.services.find_timing import TimingRequest, plan_timing
    from selector.store.db import load_stock, open_engine, transaction

    assert Path(sys.modules["selector"].__file__).resolve().is_relative_to(Path(code).resolve())
    from bench_timing import LARGE_TARGETS, stock

    eng = open_engine(f"sqlite:///{db}")
    with transaction(eng, write=False) as s:
        lines = load_stock(s)
    eng.dispose()
    srl = [ln for ln in lines if ln.kind == "resistor"]
    scl = [ln for ln in lines if ln.kind == "capacitor"]
    rl, cl = stock("E96", 10, 1e6, "E12", 100e-12, 100e-6)
    target = LARGE_TARGETS["diode"][0]
    lim = resolve_limits("diode", "bipolar", 9.0, 0.65)
    req = TimingRequest(mode="astable", freq_hz=1234.0, duty=0.62, max_parts=2)
    cases = {
        "search": lambda: search_timing(rl, cl, target, ("diode",), {"diode": lim}, max_parts=2, pool=20),
        "plan": lambda: plan_timing(srl, scl, req),
    }
    out = {name: {"total": _cpu(fn, runs)} for name, fn in cases.items()}
    # the same runs with the two diode functions wrapped: CPU time spent inside them
    inside = [0.0]

    def wrap(fn):
        def wrapped(*a, **k):
            t0 = time.process_time()
            try:
                return fn(*a, **k)
            finally:
                inside[0] += time.process_time() - t0
        return wrapped

    for name in ("diode_shockley_ideal_ra", "diode_shockley_times"):
        setattr(timing, name, wrap(getattr(timing, name)))
    for name, fn in cases.items():
        fn()
        got = []
        for _ in range(runs):
            inside[0] = 0.0
            fn()
            got.append(inside[0])
        out[name]["model"] = got
    print(json.dumps(out))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--runs", type=int, default=7)
    ap.add_argument("--rounds", type=int, default=2)
    ap.add_argument("--before", default="")
    ap.add_argument("--child", default="")
    ap.add_argument("--db", default="")
    args = ap.parse_args()
    runs = max(5, args.runs)
    if args.child:
        child(args.child, args.db, runs)
        return
    trees = ([("before", args.before)] if args.before else []) + [("after", str(REPO))]
    print(f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())} on {os.cpu_count()} CPUs; "
          f"min / median CPU ms over {args.rounds} rounds x {runs} runs after a warm-up")
    got: dict = {label: {} for label, _ in trees}
    with tempfile.TemporaryDirectory() as tmp:
        db = str(Path(tmp) / "sample.db")
        subprocess.run([sys.executable, "-m", "selector", "--db", db, "stock", "import",
                        str(REPO / "sample_stock.csv")], check=True, capture_output=True,
                       env=dict(os.environ, PYTHONPATH=str(REPO)))
        for _round in range(max(1, args.rounds)):
            for label, code in trees:
                p = subprocess.run([sys.executable, __file__, f"--child={code}", f"--db={db}", f"--runs={runs}"],
                                   check=True, capture_output=True, text=True,
                                   env=dict(os.environ, PYTHONPATH=code))
                for name, figs in json.loads(p.stdout.strip().splitlines()[-1]).items():
                    for what, ts in figs.items():
                        got[label].setdefault(name, {}).setdefault(what, []).extend(ts)
    for name in ("search", "plan"):
        print(f"\n{name}")
        for what in ("total", "model"):
            row = []
            for label, _ in trees:
                ts = got[label][name][what]
                row.append((label, min(ts) * 1e3, statistics.median(ts) * 1e3))
            text = "   ".join(f"{label} {mn:7.1f} / {md:7.1f}" for label, mn, md in row)
            if len(row) == 2:
                text += f"   before/after {row[0][1] / row[1][1]:.2f}x (min) {row[0][2] / row[1][2]:.2f}x (median)"
            print(f"  {what:5s} {text}")
    print(f"\nload average {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
