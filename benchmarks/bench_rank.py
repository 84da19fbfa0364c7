"""Cost of the evaluation and ranking (tolerance corners, Monte Carlo yield, ranking) against the
search, on the sample stock and the large benchmark stock (prints figures and ratios; not a test,
nothing is asserted).

    PYTHONPATH=. python benchmarks/bench_rank.py                      # this tree
    PYTHONPATH=. python benchmarks/bench_rank.py --before=/tmp/old    # also an older tree, same run
    PYTHONPATH=. python benchmarks/bench_rank.py --runs=7             # more runs (at least 5)

``--before=DIR`` names another checkout of the project (e.g. ``git archive main | tar -x -C DIR``);
each tree runs in its own child process (two ``selector`` packages cannot share one), the trees
alternate round by round so load on a shared machine hits both alike, and the ratio before/after
is printed. Each figure is min / median of CPU seconds (time.process_time, this process only) over
>= 5 runs after one warm-up run.

Figures: ``plan`` = ``find_timing.plan_timing`` (search + evaluation + ranking, no database);
``rank`` = ``ranking.evaluate_and_rank`` alone on the options of the same search (what the yield
costs). Sample stock: ``sample_stock.csv`` (imported into a temporary database and read back with
``store.db.load_stock``). Large stock: bench_timing.stock (E96 10 Ω–1 MΩ, E12 100 pF–100 µF, 10 of
each). Targets are invented, away from round numbers.

Measured 3 Dec 2026 (branch mc against main, one run, load average 6.4 on 2 shared CPUs, so
absolute figures are high; min CPU ms, before -> after):
    astable 1234 Hz 62 % (sample)   rank 159.9 -> 68.6 (2.33x)   plan 280.1 -> 183.7 (1.52x)
    astable 567 Hz 35 % (sample)    rank 233.6 -> 109.8 (2.13x)  plan 277.1 -> 157.3 (1.76x)
    monostable 12.3 ms (sample)     rank  50.1 -> 20.9 (2.40x)   plan  44.5 -> 34.3 (1.30x)
    rc tau 4.56 ms (sample)         rank  28.3 -> 13.2 (2.14x)   plan  87.6 -> 62.5 (1.40x)
    astable 65.43 % (large)         rank 203.2 -> 94.0 (2.16x)   plan 297.5 -> 170.6 (1.74x)
    astable 34.56 % (large)         rank 260.6 -> 98.0 (2.66x)   plan 366.9 -> 180.2 (2.04x)
Listed connections and yields identical before/after in every case. The same run with
MALLOC_TRIM_THRESHOLD_=268435456 MALLOC_MMAP_THRESHOLD_=268435456 (glibc keeps freed memory
instead of returning it, so numpy's large temporaries stop costing page faults): rank 114.8 ->
49.0 on the first case, i.e. the allocator setting alone saves about 30 % of both trees' time.
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

CASES = [  # (name, stock, request fields)
    ("astable 1234 Hz 62 % N=2", "sample", dict(mode="astable", freq_hz=1234.0, duty=0.62, max_parts=2)),
    ("astable 567 Hz 35 % N=2", "sample", dict(mode="astable", freq_hz=567.0, duty=0.35, max_parts=2)),
    ("monostable 12.3 ms N=2", "sample", dict(mode="monostable", width_s=0.0123, max_parts=2)),
    ("rc tau 4.56 ms N=2", "sample", dict(mode="rc", tau_s=0.00456, max_parts=2)),
    ("astable 1234.5 Hz 65.43 % N=2", "large", dict(mode="astable", freq_hz=1234.5, duty=0.6543, max_parts=2)),
    ("astable 1234.5 Hz 34.56 % N=2", "large", dict(mode="astable", freq_hz=1234.5, duty=0.3456, max_parts=2)),
]


def _cpu(fn, runs: int):
    fn()  # warm-up
    ts = []
    for _ in range(runs):
        t0 = time.process_time()
        fn()
        ts.append(time.process_time() - t0)
    return min(ts), statistics.median(ts)


def child(code: str, db: str, runs: int, rounds: int) -> None:
    """Time every case with the ``selector`` package of ``code``; print one JSON line per case."""
    sys.path.insert(0, code)
    sys.path.insert(1, str(HERE))
    from selector.core.ranking import evaluate_and_rank
    from selector.core.search import resolve_limits, search_timing
    from selector.services.find_timing import TimingRequest, _target, plan_timing
    from selector.store.db import load_stock, open_engine, transaction

    assert Path(sys.modules["selector"].__file__).resolve().is_relative_to(Path(code).resolve())
    eng = open_engine(f"sqlite:///{db}")
    with transaction(eng, write=False) as s:
        lines = load_stock(s)
    eng.dispose()
    sample = ([ln for ln in lines if ln.kind == "resistor"], [ln for ln in lines if ln.kind == "capacitor"])
    from bench_timing import stock

    large = stock("E96", 10, 1e6, "E12", 100e-12, 100e-6)
    out = {}
    for name, which, fields in CASES:
        rl, cl = sample if which == "sample" else large
        req = TimingRequest(**fields)
        report = plan_timing(rl, cl, req)
        conns = report.connections
        target = _target(req)
        opts = dict(req.settings.options)
        limits = {c: resolve_limits(c, req.chip, req.vcc, req.vf, opts) for c in conns}
        res = search_timing(rl, cl, target, conns, limits, max_parts=req.max_parts, boards=req.boards,
                            pool=2 * max(req.top, 5), all_networks=req.all_networks)

        def rank():
            return evaluate_and_rank(res.options, target, limits, req.accept, req.top, req.distribution,
                                     req.samples, req.seed, folded=res.folded,
                                     stock=list(rl) + list(cl), boards=req.boards)

        out[name] = {"plan": [], "rank": [],
                     "check": [[o.connection, o.yield_fraction, o.yield_parts_only] for o in report.ranked]}
        for _ in range(rounds):
            out[name]["plan"].append(_cpu(lambda: plan_timing(rl, cl, req), runs))
            out[name]["rank"].append(_cpu(rank, runs))
    print(json.dumps(out))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--before", default="")
    ap.add_argument("--child", default="")
    ap.add_argument("--db", default="")
    args = ap.parse_args()
    runs = max(5, args.runs)
    if args.child:
        child(args.child, args.db, runs, 1)
        return
    trees = ([("before", args.before)] if args.before else []) + [("after", str(REPO))]
    print(f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())} on {os.cpu_count()} CPUs; "
          f"min / median CPU ms over {runs} runs after a warm-up")
    with tempfile.TemporaryDirectory() as tmp:
        db = str(Path(tmp) / "sample.db")
        subprocess.run([sys.executable, "-m", "selector", "--db", db, "stock", "import",
                        str(REPO / "sample_stock.csv")], check=True, capture_output=True,
                       env=dict(os.environ, PYTHONPATH=str(REPO)))
        got: dict = {label: {} for label, _ in trees}
        for _round in range(2):  # alternate the trees so both see the same load
            for label, code in trees:
                p = subprocess.run([sys.executable, __file__, f"--child={code}", f"--db={db}", f"--runs={runs}"],
                                   check=True, capture_output=True, text=True,
                                   env=dict(os.environ, PYTHONPATH=code))
                for name, fig in json.loads(p.stdout.strip().splitlines()[-1]).items():
                    prev = got[label].setdefault(name, {"plan": [], "rank": [], "check": fig["check"]})
                    prev["plan"] += fig["plan"]
                    prev["rank"] += fig["rank"]
    for name, _which, _f in CASES:
        print(f"\n{name} ({_which} stock)")
        for what in ("plan", "rank"):
            row = []
            for label, _ in trees:
                figs = got[label][name][what]
                mn = min(f[0] for f in figs) * 1e3
                md = statistics.median(f[1] for f in figs) * 1e3
                row.append((label, mn, md))
            text = "   ".join(f"{label} {mn:7.1f} / {md:7.1f}" for label, mn, md in row)
            if len(row) == 2:
                text += f"   before/after {row[0][1] / row[1][1]:.2f}x (min) {row[0][2] / row[1][2]:.2f}x (median)"
            print(f"  {what:4s} {text}")
        if len(trees) == 2:
            same = got["before"][name]["check"] == got["after"][name]["check"]
            print(f"  listed connections and yields {'identical' if same else 'DIFFER'} before/after")


if __name__ == "__main__":
    main()
