"""What a search loads: the SPICE netlist pieces (core.netlist) and the BOM records
(core.bom_records) are reached through the circuits' lazy modules, so ``find … --json`` never
imports them (issue 12: start-up cost), while ``netlist`` and ``bom`` still get them on first use
— the negative control that the probe sees an import."""

from __future__ import annotations

from conftest import SAMPLE, modules_after_commands, run_cli

PIECES = ("selector.core.netlist", "selector.core.bom_records")


def test_a_search_leaves_the_netlist_and_bom_pieces_unloaded(tmp_path):
    db = tmp_path / "s.db"
    assert run_cli("stock", "import", str(SAMPLE), db=db).returncode == 0
    runs = modules_after_commands(db, [("find", "astable", "--freq", "1234", "--duty", "0.62", "--json"),
                                       ("find", "monostable", "--width", "150ms", "--json"),
                                       ("find", "rc", "--tau", "4.7ms", "--json"),
                                       ("netlist", "1"), ("bom", "1")], PIECES)
    assert runs[:3] == [(0, [False, False])] * 3, runs
    assert runs[3][0] == 0 and runs[3][1][0], runs  # netlist loads the netlist pieces
    assert runs[4] == (0, [True, True]), runs  # bom loads the BOM records


JSON_SKIPS = ("numpy.ma", "numpy.polynomial", "selector.render.timing", "rich.console")


def test_a_json_search_leaves_the_table_layout_and_numpy_ma_unloaded(tmp_path):
    # numpy 2's np.unique/np.setdiff1d import numpy.ma (~10 ms), numpy's leggauss numpy.polynomial
    # (~3.5 ms; the nodes are written out in core.timing); the table layout and rich's
    # console are for the table, not --json. Control: the same search as a table loads the last
    # two
    db = tmp_path / "s.db"
    assert run_cli("stock", "import", str(SAMPLE), db=db).returncode == 0
    runs = modules_after_commands(db, [("find", "astable", "--freq", "1234", "--duty", "0.62", "--json"),
                                       ("find", "astable", "--freq", "1234", "--duty", "0.62")], JSON_SKIPS)
    assert runs[0] == (0, [False, False, False, False]), runs
    assert runs[1][0] == 0 and runs[1][1][2:] == [True, True], runs
