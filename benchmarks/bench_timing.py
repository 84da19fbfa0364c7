"""Speed of the exact timing search (prints figures and ratios; not a test, nothing is asserted).

    PYTHONPATH=. python benchmarks/bench_timing.py            # N=2, N=3 (R), exhaustive ratio, CLI
    PYTHONPATH=. python benchmarks/bench_timing.py --full     # also N=3 for both R and C

Stocks are IEC 60063 series (selector.core.eseries): "large" = E96 10 Ω–1 MΩ resistors and E12
100 pF–100 µF capacitors, 10 of each; "small" = E24 10 k–100 k and E6 1 n–100 n. The exhaustive
reference is a plain numpy enumeration of every RA × RB × C written here (with 10 of each line no
RA/RB pair of 1-2-part networks can overdraw a line, so it needs no quantity check).
"""

from __future__ import annotations

import math
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))

from selector.core.eseries import series_values  # noqa: E402
from selector.core.networks import build_index  # noqa: E402
from selector.core.search import Exclusions, Target, resolve_limits, search_timing  # noqa: E402
from selector.core import circuits  # noqa: E402
from selector.core.search.kernels import PowerCheck, _Pass, capacitor_candidates  # noqa: E402
from selector.core.types import StockLine  # noqa: E402

LN2 = math.log(2.0)
TARGET = Target.astable(1234.5, 0.6543)  # an invented target, away from round numbers


def stock(r_series, r_lo, r_hi, c_series, c_lo, c_hi, qty=10):
    rl = [StockLine(i + 1, "resistor", v, 0.01, 0.01, qty, location=f"R{i}")
          for i, v in enumerate(series_values(r_series, r_lo, r_hi))]
    cl = [StockLine(10_000 + i, "capacitor", v, 0.05, 0.05, qty, location=f"C{i}", dielectric="film-PP")
          for i, v in enumerate(series_values(c_series, c_lo, c_hi))]
    return rl, cl


def peak_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def median_ms(fn, n=5):
    ts, out = [], None
    for _ in range(n):
        t0 = time.perf_counter()
        out = fn()
        ts.append((time.perf_counter() - t0) * 1e3)
    return statistics.median(ts), out


def exact_pass(rl, cl, lim, r_parts, c_parts):
    """Build both indexes and run one exact pass (phase 1 + certificate phase 2), from scratch."""
    r = build_index(rl, max_parts=r_parts, kind="resistor")
    c = build_index(cl, max_parts=c_parts, kind="capacitor")
    ex = Exclusions()
    ids = capacitor_candidates(c, lim, ex)
    ps = _Pass(circuits.get("standard"), TARGET, r, c, ids, lim,
               PowerCheck(r, lim.r_power_volts, lim.r_power_derating), ex)
    raw = ps.run2(20)
    return min(abs(x[2]) for x in raw), len(r), len(c)


def plain_networks_np(values, resistor: bool):
    """Every 1-2-part network value (series and parallel, a part may repeat)."""
    v = np.asarray(values, dtype=float)
    i, j = np.triu_indices(v.size)
    s = v[i] + v[j]
    p = v[i] * v[j] / (v[i] + v[j])
    return np.concatenate([v, s, p]) if resistor else np.concatenate([v, p, s])


def exhaustive_best(rl, cl, lim):
    ra = plain_networks_np([x.value for x in rl], True)
    rb = ra
    cs = plain_networks_np([x.value for x in cl], False)
    cs = cs[cs >= lim.min_c_f]
    ra_ok = ra[ra >= lim.min_r_ohm]
    best = math.inf
    for c in cs:
        th = LN2 * (ra_ok[:, None] + rb[None, :]) * c
        tl = LN2 * rb[None, :] * c
        ok = (ra_ok[:, None] + rb[None, :] <= lim.max_total_r_ohm) & (1.0 / (th + tl) <= lim.max_freq_hz)
        e = np.maximum(np.abs(th / TARGET.t_high - 1), np.abs(tl / TARGET.t_low - 1))
        e = np.where(ok, e, np.inf)
        best = min(best, float(e.min()))
    return best, ra_ok.size * rb.size * cs.size


def cli_figures(runs=5):
    py = sys.executable
    env = dict(os.environ, PYTHONPATH=str(REPO), COLUMNS="200")
    with tempfile.TemporaryDirectory() as tmp:
        db = Path(tmp) / "bench.db"
        subprocess.run([py, "-m", "selector", "--db", str(db), "stock", "import", str(REPO / "sample_stock.csv")],
                       check=True, capture_output=True, env=env)
        cmds = {
            "import numpy+sqlalchemy.orm+rich+typer": [py, "-c", "import numpy, sqlalchemy.orm, rich, typer"],
            "selector --help": [py, "-m", "selector", "--help"],
            "selector find astable --freq 1.2k --duty 65%": [py, "-m", "selector", "--db", str(db), "find",
                                                              "astable", "--freq", "1.2k", "--duty", "65%"],
        }
        times = {k: [] for k in cmds}
        for _ in range(runs):  # interleaved, so load changes hit all alike
            for k, cmd in cmds.items():
                t0 = time.perf_counter()
                subprocess.run(cmd, check=True, capture_output=True, env=env)
                times[k].append(time.perf_counter() - t0)
    return {k: statistics.median(v) * 1e3 for k, v in times.items()}


def main() -> None:
    full = "--full" in sys.argv
    lim = resolve_limits("standard", "bipolar", 9.0, 0.65)
    rl, cl = stock("E96", 10, 1e6, "E12", 100e-12, 100e-6)
    print(f"large stock: {len(rl)} resistor lines (E96 10 Ω–1 MΩ), {len(cl)} capacitor lines (E12 100 pF–100 µF), 10 each")
    print(f"target: {TARGET.frequency:g} Hz, duty {TARGET.duty:.4f}, standard connection, bipolar 555 at 9 V")

    exact_pass(rl, cl, lim, 2, 2)  # warm-up (imports, first allocations)
    ms, (best2, nr, nc) = median_ms(lambda: exact_pass(rl, cl, lim, 2, 2))
    print(f"N=2: {nr} resistor and {nc} capacitor networks; build + search + certificate "
          f"{ms:.1f} ms (median of 5), best |error| {best2:.3e}")
    ms_full, res = median_ms(lambda: search_timing(rl, cl, TARGET, ("standard",), {"standard": lim},
                                                   max_parts=2, pool=20), n=3)
    print(f"N=2 full search_timing (also the 1-part pass, pool of 20 with networks): {ms_full:.1f} ms")

    t0 = time.perf_counter()
    res3 = search_timing(rl, cl, TARGET, ("standard",), {"standard": lim}, max_parts=3, c_max_parts=2, pool=20)
    t3 = time.perf_counter() - t0
    print(f"N=3 resistors (149 million networks, never materialised), 1-2-part capacitors: "
          f"{t3:.2f} s, best |error| {abs(res3.best_error):.3e}, peak RSS so far {peak_mb():.0f} MB")
    if full:
        t0 = time.perf_counter()
        res33 = search_timing(rl, cl, TARGET, ("standard",), {"standard": lim}, max_parts=3, pool=20)
        t33 = time.perf_counter() - t0
        print(f"N=3 both: {t33:.1f} s, best |error| {abs(res33.best_error):.3e}, "
              f"capacitor networks {res33.network_counts.get(3)}, peak RSS {peak_mb():.0f} MB")

    srl, scl = stock("E24", 10e3, 100e3, "E6", 1e-9, 100e-9)
    ms_fast, (best_fast, _a, _b) = median_ms(lambda: exact_pass(srl, scl, lim, 2, 2))
    t0 = time.perf_counter()
    best_ex, combos = exhaustive_best(srl, scl, lim)
    t_ex = (time.perf_counter() - t0) * 1e3
    same = abs(best_ex - best_fast) <= 1e-12 + 1e-9 * best_ex
    print(f"small stock ({len(srl)} E24 10 k–100 k, {len(scl)} E6 1 n–100 n), N=2: exhaustive numpy over "
          f"{combos:,} options {t_ex:.0f} ms, fast search {ms_fast:.2f} ms -> {t_ex / ms_fast:.0f}x faster; "
          f"best |error| {best_ex:.6e} vs {best_fast:.6e} ({'identical' if same else 'DIFFERENT'})")

    figs = cli_figures()
    base = figs["import numpy+sqlalchemy.orm+rich+typer"]
    for k, v in figs.items():
        print(f"wall clock, median of 5: {k}: {v:.0f} ms ({v / base:.2f}x the imports)")


if __name__ == "__main__":
    main()
