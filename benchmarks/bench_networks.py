"""Benchmark of the network engine (selector.core.networks). Prints figures; asserts nothing.

Run from the repository root:  python benchmarks/bench_networks.py [--quick]

Large stock: IEC 60063 E96 resistors 10 Ω-1 MΩ and E12 capacitors 100 pF-100 µF, 10 of each.
Small stock: E24 resistors 1 kΩ-100 kΩ, 10 of each, where a plain numpy exhaustive enumeration
(every combination of 1-3 parts, every shape, then the argmin over all of them) is still
possible; it is timed per query and compared with the index, and the best errors must agree.
"""

from __future__ import annotations

import argparse
import itertools
import os
import resource
import statistics
import sys
import time
import tracemalloc

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

from selector.core.eseries import series_values  # noqa: E402
from selector.core.networks import build_index  # noqa: E402
from selector.core.types import StockLine  # noqa: E402


def stock(kind: str, series: str, lo: float, hi: float, qty: int = 10, tol: float = 0.01) -> list[StockLine]:
    return [StockLine(i + 1, kind, v, tol, tol, qty) for i, v in enumerate(series_values(series, lo, hi))]


def timed(fn, repeat: int) -> tuple[float, object]:
    """Median wall time in ms over `repeat` runs, and the last result."""
    times, out = [], None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append((time.perf_counter() - t0) * 1e3)
    return statistics.median(times), out


def peak_mb(fn) -> float:
    tracemalloc.start()
    tracemalloc.reset_peak()
    fn()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20


def exhaustive_values(values: np.ndarray, kind: str, max_parts: int) -> np.ndarray:
    """Every network value, enumerated plainly with numpy (plenty of each part)."""
    ser = (lambda *xs: sum(xs)) if kind == "resistor" else (lambda *xs: 1 / sum(1 / x for x in xs))
    par = (lambda *xs: 1 / sum(1 / x for x in xs)) if kind == "resistor" else (lambda *xs: sum(xs))
    out = [values]
    if max_parts >= 2:
        i, j = np.triu_indices(len(values))
        out += [ser(values[i], values[j]), par(values[i], values[j])]
    if max_parts >= 3:
        c = np.array(list(itertools.combinations_with_replacement(range(len(values)), 3)))
        x, y, z = values[c[:, 0]], values[c[:, 1]], values[c[:, 2]]
        out += [ser(x, y, z), par(x, y, z)]
        for s, p, q, new in ((x, y, z, np.ones(len(x), bool)), (y, x, z, c[:, 1] != c[:, 0]),
                             (z, x, y, c[:, 2] != c[:, 1])):
            s, p, q = s[new], p[new], q[new]
            out += [ser(s, par(p, q)), par(s, ser(p, q))]
    return np.concatenate(out)


def exhaustive_best(values: np.ndarray, kind: str, max_parts: int, target: float) -> float:
    every = exhaustive_values(values, kind, max_parts)
    return float(np.min(np.abs(np.log(every / target))))


def exhaustive_large_ms(values: np.ndarray, target: float, max_parts: int, rep: int) -> tuple[float, str]:
    """Per-query time of a plain numpy exhaustive enumeration on the large stock: measured for
    N = 2; for N = 3 measured on the combinations whose first line is one of a block of lines
    and scaled by the share of combinations that block holds (holding all ~1.5e8 values at
    once would need gigabytes)."""
    if max_parts == 2:
        ms, _ = timed(lambda: exhaustive_best(values, "resistor", 2, target), rep)
        return ms, "measured"
    n = len(values)
    total = n * (n + 1) * (n + 2) // 6

    def block(first: range) -> tuple[float, int]:
        t0 = time.perf_counter()
        done = 0
        best = np.inf
        for i in first:
            j, k = np.triu_indices(n - i)
            j, k = j + i, k + i
            x = np.full(len(j), values[i])
            y, z = values[j], values[k]
            vals = [x + y + z, 1 / (1 / x + 1 / y + 1 / z)]
            for s_, p, q in ((x, y, z), (y, x, z), (z, x, y)):
                vals += [s_ + p * q / (p + q), 1 / (1 / s_ + 1 / (p + q))]
            best = min(best, float(np.min(np.abs(np.log(np.concatenate(vals) / target)))))
            done += len(j)
        return (time.perf_counter() - t0) * 1e3, done

    ms, done = block(range(0, n, 24))  # every 24th first line: a fair mix of long and short blocks
    two_ms, _ = timed(lambda: exhaustive_best(values, "resistor", 2, target), 1)
    return ms * total / done + two_ms, f"extrapolated from {done:,} of {total:,} combinations"


def section(title: str) -> None:
    print(f"\n== {title}")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="fewer repetitions")
    args = ap.parse_args()
    rep = 3 if args.quick else 7
    rng = np.random.default_rng(20261202)
    print(f"python {sys.version.split()[0]}, numpy {np.__version__}, {os.cpu_count()} CPUs, "
          f"load average {os.getloadavg()[0]:.1f} (figures are wall-clock medians)")

    big = {"resistor": (stock("resistor", "E96", 10, 1e6), 10.0, 1e6),
           "capacitor": (stock("capacitor", "E12", 100e-12, 100e-6, tol=0.1), 100e-12, 100e-6)}
    for kind, (lines, lo, hi) in big.items():
        section(f"large stock: {len(lines)} {kind} lines")
        for n in (2, 3):
            build_ms, index = timed(lambda: build_index(lines, max_parts=n), rep)
            sizes = index.size_by_parts()
            targets = np.exp(rng.uniform(np.log(lo * 2), np.log(hi / 2), 50))
            singles = []
            for t in targets:
                ms, _ = timed(lambda: index.nearest_few(np.array([t]), 10), 1)
                singles.append(ms)
            q_ms = statistics.median(singles)
            batch = np.exp(rng.uniform(np.log(lo * 2), np.log(hi / 2), 1000))
            b_ms, _ = timed(lambda: index.nearest_few(batch, 5), max(1, rep // 3))
            s_ms, _ = timed(lambda: index.nearest_sides(batch, 2), max(1, rep // 3))
            mid = float(np.sqrt(lo * hi))
            w_ms, (off, ids) = timed(lambda: index.between([mid * 0.999], [mid * 1.001]), rep)
            mem = peak_mb(lambda: build_index(lines, max_parts=n).nearest_few(batch, 5))
            if kind == "resistor":
                values = np.array([ln.value for ln in lines])
                ex_ms, how = exhaustive_large_ms(values, float(targets[0]), n, max(1, rep // 3))
                ex_line = (f"     plain numpy exhaustive enumeration: {ex_ms:,.0f} ms per query ({how}); "
                           f"index query is {ex_ms / q_ms:,.0f}x faster, build + query {ex_ms / (build_ms + q_ms):,.1f}x")
            else:
                ex_line = ""
            counts = ", ".join(f"{k}-part {v:,}" for k, v in sizes.items())
            print(f"N={n}: networks {sum(sizes.values()):,} ({counts})")
            print(f"     build {build_ms:.1f} ms; one query (k=10) {q_ms:.2f} ms median; "
                  f"build + one query {build_ms + q_ms:.1f} ms")
            print(f"     1000 targets at once: nearest_few k=5 {b_ms:.0f} ms ({b_ms:.2f} µs/target), "
                  f"nearest_sides k=2 {s_ms:.0f} ms")
            print(f"     between ±0.1 % around {mid:.3g}: {len(ids):,} networks in {w_ms:.2f} ms")
            print(f"     traced peak memory (build + 1000-target query) {mem:.0f} MB")
            if ex_line:
                print(ex_line)

    section("small stock: E24 1 kΩ-100 kΩ, 10 each — index vs plain numpy exhaustive enumeration")
    small = stock("resistor", "E24", 1e3, 100e3)
    values = np.array([ln.value for ln in small])
    targets = np.exp(rng.uniform(np.log(300.0), np.log(250e3), 200))
    for n in (2, 3):
        build_ms, index = timed(lambda: build_index(small, max_parts=n), rep)
        count = sum(index.size_by_parts().values())
        assert len(exhaustive_values(values, "resistor", n)) == count
        ex_ms, _ = timed(lambda: exhaustive_best(values, "resistor", n, float(targets[0])), rep)
        scan_all = exhaustive_values(values, "resistor", n)
        scan_ms, _ = timed(lambda: np.min(np.abs(np.log(scan_all / targets[1]))), rep)
        q = []
        for t in targets[:50]:
            ms, _ = timed(lambda: index.nearest_few(np.array([t]), 1), 1)
            q.append(ms)
        q_ms = statistics.median(q)
        b_ms, got = timed(lambda: index.nearest_few(targets, 1), rep)
        mine = np.abs(np.log(index.values(got[:, 0]) / targets))
        ref = np.array([np.min(np.abs(np.log(scan_all / t))) for t in targets])
        same = bool(np.allclose(mine, ref, rtol=1e-9, atol=1e-15))
        print(f"N={n}: {count:,} networks; exhaustive enumerate+argmin {ex_ms:.2f} ms/query "
              f"(argmin over a prebuilt array alone {scan_ms:.2f} ms); index build {build_ms:.1f} ms, "
              f"query {q_ms:.3f} ms; batch of {len(targets)}: {b_ms / len(targets) * 1e3:.1f} µs/target")
        print(f"     speed ratio per query: {ex_ms / q_ms:,.1f}x (vs exhaustive), "
              f"{ex_ms / (b_ms / len(targets)):,.0f}x (batched); best errors identical on "
              f"{len(targets)} targets: {same}")
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"\nprocess peak RSS {rss:.0f} MB")


if __name__ == "__main__":
    main()
