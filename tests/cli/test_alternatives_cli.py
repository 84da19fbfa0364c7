"""One row per build, end to end (issue 11 item 2): `pull N` / `bom N` take the variant shown, and
when it is short the message names the same build's other drawers (its `alternatives`)."""

from __future__ import annotations

import json


def test_short_pull_names_the_alternatives(cli, stocked):
    r = cli("find", "astable", "--freq", "1.2k", "--duty", "65%", "--json", db=stocked)
    assert r.returncode == 0, r.stderr
    doc = json.loads(r.stdout)
    opt = next(o for o in doc["options"] if o["alternatives"])
    # the BOM lists exactly the shown variant's stock lines
    bom = cli("bom", str(opt["rank"]), "--search", str(doc["search"]), "--format", "json", db=stocked)
    assert bom.returncode == 0, bom.stderr
    assert {p["line_id"] for n in opt["networks"].values() for p in n["parts"]} <= {
        int(x) for x in _line_ids(json.loads(bom.stdout))}
    # 1000 boards: short; nothing taken; the other drawers of the same build are named
    r = cli("pull", str(opt["rank"]), "--search", str(doc["search"]), "--boards", "1000", db=stocked)
    assert r.returncode == 1
    msg = r.stderr.strip()
    assert msg.startswith("Error: not enough stock") and "nothing was taken" in msg
    assert "; the same build from other drawers: " in msg
    first = opt["alternatives"][0]
    for n in first["networks"].values():
        for p in n["parts"]:
            assert f"(line {p['line_id']})" in msg


def _line_ids(doc):
    out = []

    def walk(x):
        if isinstance(x, dict):
            for k, v in x.items():
                if k in ("line_id", "stock_line") and isinstance(v, int):
                    out.append(v)
                else:
                    walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)

    walk(doc)
    return out
