"""``selector show N [--search ID] [--svg FILE]`` on sample_stock.csv: one option in full at 80 and
200 columns, the output drawn to scale, the picture a valid SVG holding the option's part values,
and the agreed option keys (``errors``, ``alternatives``, ``why``) shown when a search saved them.
Part values are written by the test's own 3-digit SI formatter (``test_screen_widths.si``)."""

from __future__ import annotations

import json
import sqlite3
import sys
import xml.etree.ElementTree as ET

import pytest

from conftest import SAMPLE, run_cli
from test_screen_widths import si


@pytest.fixture(scope="module")
def shop(tmp_path_factory):
    db = tmp_path_factory.mktemp("show") / "stock.db"
    assert run_cli("stock", "import", str(SAMPLE), db=db).returncode == 0
    return db


def _run(db, *args, width="80", code=0):
    r = run_cli(*args, db=db, env={"COLUMNS": width})
    assert r.returncode == code, (args, r.stdout[-500:], r.stderr)
    return r


def _search(db, *args):
    r = _run(db, "find", *args, "--json")
    doc = json.loads(r.stdout)
    sid = sqlite3.connect(db).execute("SELECT MAX(id) FROM searches").fetchone()[0]
    return doc, sid


@pytest.mark.parametrize("width", ["80", "200"])
def test_show_an_astable_option_in_full(shop, width):
    doc, sid = _search(shop, "astable", "--freq", "1.2k", "--duty", "65%")
    opt = doc["options"][0]
    out = _run(shop, "show", "1", "--search", str(sid), width=width).stdout
    for line in out.splitlines():
        assert len(line) <= int(width), line
    assert "…" not in out
    assert f"Option 1 of search {sid}" in out
    for role, net in opt["networks"].items():
        for p in net["parts"]:
            assert si(p["value"], "F" if role == "C" else "Ω") in out
            assert f"stock line {p['line_id']}" in out and f"drawer {p['location']}" in out
    if opt["connection"] == "standard":  # pins, from the circuit's wiring (bipolar 555 data sheet)
        assert "from VCC to DIS" in out and "from DIS to THR/TRIG" in out
    f_err = (opt["predicted"]["frequency_hz"] / 1200.0 - 1) * 100
    assert f"{f_err:+.2f} %" in out
    d_pts = (opt["predicted"]["duty"] - 0.65) * 100
    assert (f"{d_pts:+.1f} pt" if abs(d_pts) >= 0.05 else "0 pt") in out
    assert f"Yield {opt['yield'] * 100:.1f} %" in out and "Worst case" in out
    assert "BOM preview" in out and "timer IC" in out
    flat = " ".join(out.split())
    assert "local codes and qualified practice" in flat and "discharge" in flat
    # the output drawn to scale: HIGH columns / period columns ≈ t_high / period (±1 column)
    lines = out.splitlines()
    top = next(ln for ln in lines if ln.lstrip().startswith("OUT"))
    first = top[top.index("┌"):top.index("┐") + 1]
    period = top.index("┌", top.index("┐")) - top.index("┌")
    th, tl = opt["predicted"]["t_high_s"], opt["predicted"]["t_low_s"]
    assert abs((len(first) - 1) / period - th / (th + tl)) <= 1.0 / period + 1e-9


def test_show_monostable_and_rc_draw_their_output(shop):
    doc, _ = _search(shop, "monostable", "--width", "150ms")
    out = _run(shop, "show", "1").stdout
    width = doc["options"][0]["predicted"]["width_s"]
    assert "TRIG" in out and f"HIGH for {si(width, 's')}" in out
    _search(shop, "rc", "--tau", "10ms")
    out = _run(shop, "show", "1").stdout
    assert "v(C)" in out and "τ" in out


def test_show_svg_is_a_picture_with_the_part_values(shop, tmp_path):
    pytest.importorskip("schemdraw")
    doc, sid = _search(shop, "astable", "--freq", "1.2k", "--duty", "65%")
    path = tmp_path / "option.svg"
    r = _run(shop, "show", "1", "--svg", str(path))
    assert f"Wrote {path}" in r.stderr
    root = ET.parse(path).getroot()  # well-formed XML
    assert root.tag == "{http://www.w3.org/2000/svg}svg"
    text = " ".join(t.strip() for t in root.itertext())
    for role, net in doc["options"][0]["networks"].items():
        for p in net["parts"]:
            assert si(p["value"], "F" if role == "C" else "Ω") in text, (role, p)
    assert "2/3 VCC" in text and "1/3 VCC" in text  # the 555 thresholds, marked
    assert "555" in text and "v(C), predicted" in text and "output, predicted" in text
    # the predicted capacitor voltage stays between the thresholds: 1/3 and 2/3 of 9 V
    # (bipolar 555 data sheet: the comparators trip at VCC/3 and 2·VCC/3)


def test_show_svg_without_schemdraw_says_so_in_one_line(shop, tmp_path, monkeypatch):
    _search(shop, "astable", "--freq", "1.2k", "--duty", "65%")
    monkeypatch.setitem(sys.modules, "schemdraw", None)  # import schemdraw now raises ImportError
    r = _run(shop, "show", "1", "--svg", str(tmp_path / "x.svg"), code=1)
    assert r.stderr.strip().splitlines() == [
        "Error: --svg draws the schematic with schemdraw, which is not installed: pip install "
        "'drawer-selector[svg]'"]
    assert not (tmp_path / "x.svg").exists()


def test_show_of_a_missing_option_is_one_line(shop):
    r = _run(shop, "show", "99", "--search", "1", code=1)
    assert len(r.stderr.strip().splitlines()) == 1 and "has no option 99" in r.stderr


def test_show_of_a_value_search_is_one_line_naming_bom(shop, tmp_path):
    # `find value` saves a search with no circuit: show refuses in one line (it used to end in a
    # KeyError traceback) and names the command that does list its parts.
    _run(shop, "find", "value", "39k", "--top", "2")
    sid = sqlite3.connect(shop).execute("SELECT MAX(id) FROM searches").fetchone()[0]
    for extra in ((), ("--svg", str(tmp_path / "x.svg"))):
        r = _run(shop, "show", "1", *extra, code=1)
        assert r.stderr.strip().splitlines() == [
            f"Error: search {sid} is a value search: show needs a timing search (astable, monostable, rc); "
            f"its parts: selector bom 1 --search {sid}"]
        assert "Traceback" not in r.stderr and not (tmp_path / "x.svg").exists()


def test_show_and_find_render_the_agreed_keys_when_saved(shop):
    """The search may save ``errors``, ``why`` and ``alternatives`` (agreed JSON); the screens use
    them as given."""
    doc, sid = _search(shop, "astable", "--freq", "1.2k", "--duty", "65%", "--top", "3")
    con = sqlite3.connect(shop)
    data = json.loads(con.execute("SELECT data_json FROM search_options WHERE search_id = ? AND rank = 1",
                                  (sid,)).fetchone()[0])
    other = doc["options"][1]
    data["errors"] = {"frequency": -0.0123, "duty_points": 0.034}
    data["why"] = "fewest parts"
    data["alternatives"] = [{"networks": other["networks"], "yield": 0.876}]
    con.execute("UPDATE search_options SET data_json = ? WHERE search_id = ? AND rank = 1",
                (json.dumps(data), sid))
    con.commit()
    con.close()
    out = _run(shop, "show", "1", "--search", str(sid)).stdout
    assert "-1.23 %" in out and "+3.4 pt" in out and "fewest parts" in out
    assert "Alternatives" in out and "87.6 %" in out
    for role, net in other["networks"].items():
        for p in net["parts"]:
            assert si(p["value"], "F" if role == "C" else "Ω") in out


@pytest.mark.parametrize("column, what", [("target_json", "target record"), ("params_json", "settings record")])
def test_show_of_a_damaged_saved_search_is_one_line(tmp_path, column, what):
    # A saved search whose target or settings text was damaged (not JSON) is refused in one line
    # naming the search and what to do, before anything is drawn; the show used to read the
    # target with a bare json.loads and end in a traceback.
    db = tmp_path / "s.db"
    assert run_cli("stock", "import", str(SAMPLE), db=db).returncode == 0
    _run(db, "find", "monostable", "--width", "150ms", "--top", "2")
    with sqlite3.connect(db) as c:
        sid = c.execute("SELECT MAX(id) FROM searches").fetchone()[0]
        c.execute(f"UPDATE searches SET {column} = '{{not json' WHERE id = ?", (sid,))
    r = _run(db, "show", "1", code=1)
    assert r.stderr.strip().splitlines() == [f"Error: search {sid} has an unreadable {what}; run the search again"]
