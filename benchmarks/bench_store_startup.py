"""What the store layer costs a read-mostly command (prints figures; not a test, nothing asserted).

    PYTHONPATH=. python benchmarks/bench_store_startup.py            # 7 runs
    PYTHONPATH=. python benchmarks/bench_store_startup.py --runs=9

Whole processes, CPU seconds (user + system of the child, resource.RUSAGE_CHILDREN), min / median
over >= 5 runs after one uncounted warm-up round, all commands interleaved so load changes hit
all alike. Beside the import floor of issue 12 (``numpy, sqlalchemy, rich.table, typer``) it times
the floor plus ``sqlalchemy.orm`` and plus the declarative models, so the share the ORM would add
to a command is visible, and ``find astable … --json`` / ``show 1`` / ``bom 1`` on the sample stock.
The last lines say whether ``find … --json`` imports ``sqlalchemy.orm`` at all (``-X importtime``).
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
FLOOR = "import numpy, sqlalchemy, rich.table, typer"
FIND = ["find", "astable", "--freq", "1234", "--duty", "0.62", "--max-parts", "2", "--json"]


def main() -> None:
    runs = 7
    for a in sys.argv[1:]:
        if a.startswith("--runs="):
            runs = max(5, int(a.split("=", 1)[1]))
    py = sys.executable
    with tempfile.TemporaryDirectory() as tmp:
        env = dict(os.environ, PYTHONPATH=str(REPO), COLUMNS="200", PYTHONPYCACHEPREFIX=str(Path(tmp) / "pyc"))
        env.pop("PYTHONDONTWRITEBYTECODE", None)  # an installed program has its bytecode cached
        db = Path(tmp) / "bench.db"
        sel = [py, "-m", "selector", "--db", str(db)]
        subprocess.run(sel + ["stock", "import", str(REPO / "sample_stock.csv")], check=True,
                       capture_output=True, env=env)
        subprocess.run(sel + FIND, check=True, capture_output=True, env=env)  # search 1 for show/bom
        cmds = {
            "floor": [py, "-c", FLOOR],
            "floor + sqlalchemy.orm": [py, "-c", FLOOR + ", sqlalchemy.orm"],
            "floor + store.models": [py, "-c", FLOOR + ", selector.store.models"],
            "find astable --json": sel + FIND,
            "show 1": sel + ["show", "1"],
            "bom 1": sel + ["bom", "1"],
        }
        cpu = {k: [] for k in cmds}
        for i in range(runs + 1):
            for k, cmd in cmds.items():
                r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
                subprocess.run(cmd, check=True, capture_output=True, env=env)
                r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
                if i:  # round 0 is the warm-up (and fills the bytecode cache)
                    cpu[k].append((r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime))
        floor = statistics.median(cpu["floor"])
        print(f"CPU seconds, min / median of {runs} runs; load average {os.getloadavg()[0]:.2f} "
              f"on {os.cpu_count()} CPUs")
        for k, ts in cpu.items():
            med = statistics.median(ts)
            extra = "" if k == "floor" else f"  = {med / floor:.2f}x floor ({(med - floor) * 1e3:+.0f} ms)"
            print(f"  {k:24s} {min(ts) * 1e3:6.0f} / {med * 1e3:6.0f} ms{extra}")
        out = subprocess.run([py, "-X", "importtime"] + sel[1:] + FIND, capture_output=True, text=True, env=env)
        mods = {line.rsplit("|", 1)[-1].strip() for line in out.stderr.splitlines() if "|" in line}
        for mod in ("sqlalchemy.orm", "selector.store.models", "selector.store.tables"):
            print(f"  find astable --json imports {mod}: {'yes' if mod in mods else 'no'}")


if __name__ == "__main__":
    main()
