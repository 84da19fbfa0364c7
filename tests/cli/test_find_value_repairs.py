"""`find value` for repairs (issue 11 item 8): filters, ranking by the share of builds within
--accept (part tolerances count), "Saved as search N" and the `search` id in JSON.

Hand figures: a part of tolerance t at value v lies in [v(1-t), v(1+t)]; when that whole band is
inside target·[1-a, 1+a] every build counts, when it is wholly outside none does. The sample stock
(sample_stock.csv, invented demo data) holds a 4.99 kΩ 1 % line (C1) and 1.2 kΩ, 3.9 kΩ 5 % lines."""

from __future__ import annotations

import json

import pytest

from conftest import stock_lines


def _json(cli, db, *args):
    r = cli("find", "value", *args, "--json", db=db)
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


def _nparts(o):
    return sum(p["count"] for p in o["parts"])


def test_a_one_percent_part_beats_an_exact_five_percent_pair(cli, stocked):
    """5.1 kΩ at ±5 %: the band is 4845-5355 Ω. 4.99 kΩ 1 % spans 4940-5040 Ω: every build is in
    spec, with one part. 1.2 kΩ + 3.9 kΩ (5 %) spans 4845-5355 Ω: also every build, but two parts.
    So the single 1 % part ranks first although the pair is exact."""
    doc = _json(cli, stocked, "5k1", "--top", "5")
    first = doc["options"][0]
    assert first["value"] == pytest.approx(4990.0) and _nparts(first) == 1
    assert first["yield"] == 1.0 and first["why"] == "fewest parts"
    exact = next(o for o in doc["options"] if o["why"] == "closest")
    assert exact["error"] == pytest.approx(0, abs=1e-12)


def test_at_a_tight_acceptance_the_single_part_drops(cli, stocked):
    """At ±1 % (5049-5151 Ω): 4.99 kΩ 1 % spans 4940-5040 Ω, wholly below: no build counts, so it
    no longer comes first; 100 Ω + 4.99 kΩ (5089.9 Ω nominal, 5035-5145 Ω) mostly counts."""
    doc = _json(cli, stocked, "5k1", "--top", "10", "--accept", "1%")
    first = doc["options"][0]
    assert not (first["value"] == pytest.approx(4990.0) and _nparts(first) == 1)
    assert first["yield"] > 0.5
    single = [o for o in doc["options"] if o["value"] == pytest.approx(4990.0) and _nparts(o) == 1]
    assert all(o["yield"] == 0.0 for o in single)


def test_ranking_laws_on_the_json(cli, stocked):
    for args in (("5k1",), ("33k", "--max-parts", "3"), ("150nF",), ("0.33uF", "--max-parts", "3")):
        doc = _json(cli, stocked, *args, "--top", "8")
        opts = doc["options"]
        for i, a in enumerate(opts):
            for b in opts[i + 1:]:
                assert b["yield"] <= a["yield"] + 0.02 + 1e-12, args
                if _nparts(a) > _nparts(b):
                    assert a["yield"] > b["yield"], args
            assert 1 <= len(a["why"].split()) <= 3


def test_filters(cli, stocked):
    lines = stock_lines(stocked)
    doc = _json(cli, stocked, "4k7", "--tolerance", "1%", "--top", "5")
    assert doc["options"]
    assert all(max(lines[p["line_id"]].tol_minus, lines[p["line_id"]].tol_plus) <= 0.01 + 1e-12
               for o in doc["options"] for p in o["parts"])
    doc = _json(cli, stocked, "2n2", "--dielectric", "C0G", "--top", "5")
    assert all(lines[p["line_id"]].dielectric == "C0G" for o in doc["options"] for p in o["parts"])
    doc = _json(cli, stocked, "10k", "--location", "b1", "--top", "5")
    assert doc["options"]
    assert all(lines[p["line_id"]].location == "B1" for o in doc["options"] for p in o["parts"])
    doc = _json(cli, stocked, "47", "--min-rating", "0.5W", "--top", "3")
    assert all(lines[p["line_id"]].rating >= 0.5 for o in doc["options"] for p in o["parts"])


def test_filters_that_leave_nothing_and_bad_filters(cli, stocked):
    r = cli("find", "value", "4k7", "--min-rating", "5W", db=stocked)
    assert r.returncode == 1
    assert r.stderr.strip() == "Error: no resistor in stock matches --min-rating 5 W"
    r = cli("find", "value", "4k7", "--dielectric", "C0G", db=stocked)
    assert r.returncode == 1 and r.stderr.strip() == "Error: --dielectric applies to capacitors only"
    r = cli("find", "value", "4n7", "--dielectric", "paper", db=stocked)
    assert r.returncode == 1 and r.stderr.startswith("Error: --dielectric:")
    assert len(r.stderr.strip().splitlines()) == 1
    r = cli("find", "value", "4k7", "--tolerance", "lots", db=stocked)
    assert r.returncode == 1 and r.stderr.startswith("Error: --tolerance:")


def test_saved_as_search_and_its_id_in_json(cli, stocked):
    r = cli("find", "value", "5k1", db=stocked)
    assert r.returncode == 0 and "Saved as search 1;" in r.stdout
    doc = _json(cli, stocked, "5k1")
    assert doc["search"] == 2
    r = cli("bom", "1", "--search", "2", db=stocked)
    assert r.returncode == 0, r.stderr


def test_one_row_per_build(cli, stocked):
    """Issue 11: `find value 0.33uF --max-parts 3` showed one network (1 µF + 1 µF + 1 µF) five
    times from different drawers. Now each build (shape + part values) is one row; its other
    drawers are alternatives."""
    lines = stock_lines(stocked)
    doc = _json(cli, stocked, "0.33uF", "--max-parts", "3", "--top", "8")
    builds = [(o["shape"], round(o["value"], 15),
               tuple(sorted(p["value"] for p in o["parts"] for _ in range(p["count"]))))
              for o in doc["options"]]
    assert len(builds) == len(set(builds))
    # the shown variant of 1 µF x3 is as tight as the tightest 1 µF line that holds three
    triple = next(o for o in doc["options"] if o["shape"] == "series3"
                  and all(p["value"] == pytest.approx(1e-6) for p in o["parts"]))
    widest = max(max(lines[p["line_id"]].tol_minus, lines[p["line_id"]].tol_plus) for p in triple["parts"])
    tightest = min(max(ln.tol_minus, ln.tol_plus) for ln in lines.values()
                   if ln.kind == "capacitor" and ln.value == pytest.approx(1e-6) and ln.quantity >= 3)
    assert widest <= tightest + 1e-12
