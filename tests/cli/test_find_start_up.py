"""What a search loads: the SPICE netlist pieces (core.netlist) and the BOM records
(core.bom_records) are reached through the circuits' lazy modules, so ``find … --json`` never
imports them (issue 12: start-up cost), while ``netlist`` and ``bom`` still get them on first use
— the negative control that the probe sees an import."""

from __future__ import annotations

import subprocess
import sys

from conftest import REPO, SAMPLE, run_cli

PIECES = ("selector.core.netlist", "selector.core.bom_records")


def test_a_search_leaves_the_netlist_and_bom_pieces_unloaded(tmp_path):
    db = tmp_path / "s.db"
    assert run_cli("stock", "import", str(SAMPLE), db=db).returncode == 0
    code = (
        "import sys\n"
        "from selector.cli.app import app\n"
        "def run(*args):\n"
        "    try:\n"
        f"        app(['--db', {str(db)!r}, *args])\n"
        "    except SystemExit as e:\n"
        "        print('exit', e.code)\n"
        f"    print('loaded', [m in sys.modules for m in {PIECES!r}])\n"
        "run('find', 'astable', '--freq', '1234', '--duty', '0.62', '--json')\n"
        "run('find', 'monostable', '--width', '150ms', '--json')\n"
        "run('find', 'rc', '--tau', '4.7ms', '--json')\n"
        "run('netlist', '1')\n"
        "run('bom', '1')\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO, timeout=120)
    assert out.returncode == 0, out.stderr
    seen = [ln for ln in out.stdout.splitlines() if ln.startswith(("exit", "loaded"))]
    assert seen[:6] == ["exit 0", "loaded [False, False]"] * 3, out.stdout[-800:]
    assert seen[6] == "exit 0" and seen[7].startswith("loaded [True,"), out.stdout[-800:]  # netlist
    assert seen[8:] == ["exit 0", "loaded [True, True]"], out.stdout[-800:]  # bom
