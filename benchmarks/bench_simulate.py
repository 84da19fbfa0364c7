"""Wall time of one simulation (netlist text + ngspice batch run + parsing), per connection.

Run from the repository root:  python benchmarks/bench_simulate.py [--repeat N]

Prints, for each connection, the median and worst wall time over N runs of a typical option, the
number of timesteps ngspice was allowed, and the command-line figure (``selector simulate 1`` in a
fresh process, Python start-up and database open included). The circuits are made-up examples.
Needs ngspice on PATH.
"""

from __future__ import annotations

import argparse
import math
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from selector.core import spice  # noqa: E402
from selector.services.simulate import find_ngspice, simulate_circuit  # noqa: E402

LN2, LN3 = math.log(2), math.log(3)


def _net(label, *values, shape=None):
    shape = shape or ("single" if len(values) == 1 else "series")
    return spice.Network(label, shape, tuple(spice.Part(v) for v in values))


def cases():
    bip = spice.chip_model("bipolar", 9.0, 7.6, 0.1)
    cmos = spice.chip_model("cmos", 5.0, 5.0, 0.0)
    ra, rb, c = 14.7e3, 47e3, 10e-9
    yield "standard (1.1 kHz, 2-part RA)", spice.Circuit(
        "standard", {"RA": _net("RA", 10e3, 4.7e3), "RB": _net("RB", rb), "C": _net("C", c)}, bip,
        expected={"t_high_s": LN2 * (ra + rb) * c, "t_low_s": LN2 * rb * c})
    yield "diode (2 kHz, 30 %)", spice.Circuit(
        "diode", {"RA": _net("RA", 10e3), "RB": _net("RB", 22e3), "C": _net("C", 10e-9)}, cmos, diode_vf=0.65,
        expected={"t_high_s": 10e3 * 10e-9 * math.log((10 - 1.95) / (5 - 1.95)), "t_low_s": LN2 * 22e3 * 10e-9})
    yield "output-fed (1 kHz)", spice.Circuit(
        "output-fed", {"R": _net("R", 72e3), "C": _net("C", 10e-9)}, cmos,
        expected={"t_high_s": LN2 * 72e3 * 10e-9, "t_low_s": LN2 * 72e3 * 10e-9})
    yield "monostable (0.55 s)", spice.Circuit(
        "monostable", {"R": _net("R", 500e3), "C": _net("C", 1e-6)}, bip, expected={"width_s": LN3 * 0.5})
    yield "rc (tau + AC corner)", spice.Circuit(
        "rc", {"R": _net("R", 1.6e3), "C": _net("C", 100e-9)}, cmos, expected={"tau_s": 1.6e-4})


def steps(circuit, cycles):
    text = spice.build_netlist(circuit, cycles).text
    for line in text.splitlines():
        f = line.split()
        if f and f[0].lower() in (".tran", "tran"):
            return round(float(f[2]) / float(f[4]))
    return 0


def cli_figure() -> float:
    """``selector simulate 1`` end to end on a saved hand-made option (fresh interpreter)."""
    import json

    from selector.store.db import open_engine, transaction
    from selector.store.models import SearchOptionRow, SearchRow

    with tempfile.TemporaryDirectory() as d:
        url = f"sqlite:///{d}/bench.db"
        engine = open_engine(url)
        ra, rb, c = 14.7e3, 47e3, 10e-9
        th, tl = LN2 * (ra + rb) * c, LN2 * rb * c
        data = {"rank": 1, "connection": "standard", "error": 0.0,
                "predicted": {"frequency_hz": 1 / (th + tl), "duty": th / (th + tl), "t_high_s": th, "t_low_s": tl},
                "networks": {"RA": {"value": ra, "shape": "series", "parts": [
                    {"line_id": None, "value": 10e3, "count": 1}, {"line_id": None, "value": 4.7e3, "count": 1}]},
                    "RB": {"value": rb, "shape": "single", "parts": [{"line_id": None, "value": rb, "count": 1}]},
                    "C": {"value": c, "shape": "single", "parts": [{"line_id": None, "value": c, "count": 1}]}}}
        with transaction(engine) as s:
            row = SearchRow(mode="astable", target_json="{}", params_json=json.dumps({"chip": "bipolar", "vcc": 9.0}))
            s.add(row)
            s.flush()
            s.add(SearchOptionRow(search_id=row.id, rank=1, connection="standard", error=0.0, data_json=json.dumps(data)))
        engine.dispose()
        t0 = time.perf_counter()
        r = subprocess.run([sys.executable, "-m", "selector", "--db", url, "simulate", "1"],
                           cwd=ROOT, capture_output=True, text=True)
        dt = time.perf_counter() - t0
        if r.returncode != 0:
            raise SystemExit(f"selector simulate failed: {r.stderr.strip()}")
        return dt


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--cycles", type=int, default=5)
    args = ap.parse_args()
    exe = find_ngspice()
    print(f"ngspice: {exe}; {args.repeat} runs each, {args.cycles} astable cycles measured")
    print(f"{'connection':32s} {'median s':>9s} {'worst s':>8s} {'steps':>8s}")
    for name, circuit in cases():
        times = []
        for _ in range(args.repeat):
            t0 = time.perf_counter()
            simulate_circuit(circuit, exe, args.cycles)
            times.append(time.perf_counter() - t0)
        print(f"{name:32s} {statistics.median(times):9.3f} {max(times):8.3f} {steps(circuit, args.cycles):8d}")
    print(f"selector simulate 1 (fresh process, CLI + DB + ngspice): {cli_figure():.2f} s")


if __name__ == "__main__":
    main()
