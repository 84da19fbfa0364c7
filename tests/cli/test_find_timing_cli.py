"""``selector find astable|monostable|rc`` end to end on sample_stock.csv (run in-process, see conftest.run_cli)."""

from __future__ import annotations

import json
import math

import pytest
import sqlalchemy as sa

from conftest import url_of
from reference_discharge import t_low_rd, width_rd

LN2, LN3 = math.log(2.0), math.log(3.0)

OPTION_KEYS = {"rank", "connection", "error", "predicted", "range", "yield", "networks",
               "yield_parts_only"}  # added by issue 10 (wave-2 JSON contract)
NETWORK_KEYS = {"value", "shape", "parts"}
PART_KEYS = {"line_id", "value", "count", "location"}
TRIMMER_KEYS = {"line_id", "value", "tol_minus", "tol_plus", "setting"}  # issue 14 contract
ADDED_OPTION_KEYS = {"errors", "why", "alternatives", "yield_parts_only",  # issue 11 additions
                     "yield_samples", "yield_standard_error",  # issue 12: the yield's sample and its SE
                     "adjustable"}  # issue 14 (false on a fixed option; no trimmer in this stock)
ADDED_TOP_KEYS = {"search", "within_acceptance", "suggest_buy"}
PARAM_KEYS = {"chip", "vcc", "diode_vf", "boards", "max_parts", "accept", "distribution", "seed",
              "connection", "top"}


def _json(cli, db, *args):
    r = cli("find", *args, "--json", db=db)
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


def _check_shape(doc, roles, predicted_keys):
    assert {"target", "options"} <= set(doc) <= {"target", "options"} | ADDED_TOP_KEYS
    assert doc["options"], "no options"
    for i, opt in enumerate(doc["options"], start=1):
        trim = opt.get("adjustable") is True  # issue 14: a fixed network + a trimmer from stock
        assert OPTION_KEYS <= set(opt) <= OPTION_KEYS | ADDED_OPTION_KEYS | ({"trim"} if trim else set())
        assert opt["rank"] == i
        assert set(opt["networks"]) == set(roles)
        trimmed = [net for net in opt["networks"].values() if "trimmer" in net]
        assert len(trimmed) == (1 if trim else 0)
        for net in opt["networks"].values():
            if "trimmer" in net:
                assert set(net) == NETWORK_KEYS | {"trimmer", "fixed_value"}
                assert set(net["trimmer"]) == TRIMMER_KEYS
                continue
            assert set(net) == NETWORK_KEYS
            assert net["parts"]
            for p in net["parts"]:
                assert set(p) == PART_KEYS and p["count"] >= 1
        assert set(opt["predicted"]) == set(predicted_keys)
        assert set(opt["range"]) == set(predicted_keys)
        for k in predicted_keys:
            lo, hi = opt["range"][k]
            assert lo <= opt["predicted"][k] * (1 + 1e-12) and opt["predicted"][k] <= hi * (1 + 1e-12)
        assert 0.0 <= opt["yield"] <= 1.0
        # a listed option's yield is the full Monte Carlo (issue contract: at least 10 000 builds);
        # its standard error is the binomial one, sqrt(y(1 - y)/n) (textbook, worked here by hand)
        y, n = opt["yield"], opt["yield_samples"]
        if trimmed:  # set on the bench: a yield by construction, no Monte Carlo behind it
            assert (y, n, opt["yield_standard_error"]) == (1.0, 0, 0.0)
            continue
        assert n >= 10_000
        assert opt["yield_standard_error"] == pytest.approx((y * (1 - y) / n) ** 0.5, rel=1e-12, abs=1e-15)
        for alt in opt["alternatives"]:
            assert alt["yield_samples"] >= 1000
            assert alt["yield_standard_error"] == pytest.approx(
                (alt["yield"] * (1 - alt["yield"]) / alt["yield_samples"]) ** 0.5, rel=1e-12, abs=1e-15)


def test_astable_table_on_the_sample_stock(cli, stocked):
    r = cli("find", "astable", "--freq", "1.2k", "--duty", "65%", "--explain", db=stocked)
    assert r.returncode == 0, r.stderr
    out = r.stdout
    assert "search 1: astable 1.2 kHz" in out
    assert "standard" in out
    assert "t_high = ln2·(RA+RB)·C" in out
    assert "fraction of the period the output is HIGH" in out
    assert "discharge electrolytics" in out and "local codes and qualified practice" in out
    assert "Traceback" not in r.stderr


def test_astable_json_shape_and_physics(cli, stocked):
    doc = _json(cli, stocked, "astable", "--freq", "1.2k", "--duty", "65%")
    _check_shape(doc, {"RA", "RB", "C"}, {"frequency_hz", "duty", "t_high_s", "t_low_s"})
    t = doc["target"]
    assert t["frequency_hz"] == pytest.approx(1200.0) and t["duty"] == pytest.approx(0.65)
    for opt in doc["options"]:
        n = opt["networks"]
        ra, rb, c = n["RA"]["value"], n["RB"]["value"], n["C"]["value"]
        p = opt["predicted"]
        if opt["connection"] == "standard":
            # bipolar 555 data sheet [S2, S3]: t_high = ln2·(RA+RB)·C, t_low ≈ ln2·RB·C (with RD)
            assert p["t_high_s"] == pytest.approx(LN2 * (ra + rb) * c, rel=1e-12)
        assert p["t_low_s"] == pytest.approx(t_low_rd(ra, rb, c), rel=1e-12)
        assert p["frequency_hz"] == pytest.approx(1 / (p["t_high_s"] + p["t_low_s"]), rel=1e-12)
        eh = p["t_high_s"] / t["t_high_s"] - 1
        el = p["t_low_s"] / t["t_low_s"] - 1
        assert abs(opt["error"]) == pytest.approx(max(abs(eh), abs(el)), rel=1e-9)
    # one of them carries the smallest error of the list
    assert min(abs(o["error"]) for o in doc["options"]) < 0.01


def test_duty_below_half_uses_the_diode_connection(cli, stocked):
    r = cli("find", "astable", "--freq", "500", "--duty", "30%", db=stocked)
    assert r.returncode == 0, r.stderr
    assert "diode-steered" in r.stdout
    doc = _json(cli, stocked, "astable", "--freq", "500", "--duty", "30%")
    assert {o["connection"] for o in doc["options"]} == {"diode"}
    _check_shape(doc, {"RA", "RB", "C"}, {"frequency_hz", "duty", "t_high_s", "t_low_s"})


def test_monostable_table_and_json(cli, stocked):
    r = cli("find", "monostable", "--width", "150ms", "--explain", db=stocked)
    assert r.returncode == 0, r.stderr
    assert "monostable width 150 ms" in r.stdout and "ln3·R·C" in r.stdout
    doc = _json(cli, stocked, "monostable", "--width", "150ms")
    _check_shape(doc, {"R", "C"}, {"width_s"})
    for opt in doc["options"]:
        assert opt["connection"] == "monostable"
        rr, c = opt["networks"]["R"]["value"], opt["networks"]["C"]["value"]
        # monostable width ln3·R·C ≈ 1.1·R·C [S3, S5], from the switch's start level
        assert opt["predicted"]["width_s"] == pytest.approx(width_rd(rr, c), rel=1e-12)


def test_rc_corner_table_and_json(cli, stocked):
    r = cli("find", "rc", "--corner", "1kHz", db=stocked)
    assert r.returncode == 0, r.stderr
    assert "RC corner 1 kHz" in r.stdout
    doc = _json(cli, stocked, "rc", "--corner", "1kHz")
    _check_shape(doc, {"R", "C"}, {"tau_s", "corner_hz"})
    for opt in doc["options"]:
        rr, c = opt["networks"]["R"]["value"], opt["networks"]["C"]["value"]
        # first-order RC corner f = 1/(2πRC) ([S20] Bell Ex 17.1 uses this form)
        assert opt["predicted"]["corner_hz"] == pytest.approx(1 / (2 * math.pi * rr * c), rel=1e-12)
        assert opt["error"] == pytest.approx(opt["predicted"]["corner_hz"] / 1000.0 - 1, rel=1e-9, abs=1e-15)


def test_the_search_is_saved_exactly_as_printed(cli, stocked):
    doc = _json(cli, stocked, "astable", "--freq", "1.2k", "--duty", "65%", "--top", "4", "--boards", "2")
    eng = sa.create_engine(url_of(stocked))
    try:
        with eng.connect() as conn:
            rows = conn.execute(sa.text("SELECT id, mode, target_json, params_json FROM searches")).all()
            assert len(rows) == 1
            sid, mode, target, params = rows[0]
            assert mode == "astable"
            assert json.loads(target) == doc["target"]
            p = json.loads(params)
            assert set(p) == PARAM_KEYS
            assert p["boards"] == 2 and p["top"] == 4 and p["chip"] == "bipolar" and p["vcc"] == 9.0
            opts = conn.execute(sa.text(
                "SELECT rank, connection, error, data_json FROM search_options WHERE search_id = :s "
                "ORDER BY rank"), {"s": sid}).all()
    finally:
        eng.dispose()
    assert len(opts) == len(doc["options"]) <= 4
    for (rank, conn_name, err, data), printed in zip(opts, doc["options"]):
        assert json.loads(data) == printed
        assert rank == printed["rank"] and conn_name == printed["connection"] and err == printed["error"]


def test_bad_options_give_one_line_and_change_nothing(cli, stocked):
    r = cli("find", "astable", "--freq", "1.2k", "--duty", "65%", "--vcc", "20V", db=stocked)
    assert r.returncode == 1
    assert r.stderr.strip() == "Error: VCC 20 V is outside the bipolar 555 range 4.5–16 V"
    r = cli("find", "astable", "--freq", "fast", "--duty", "65%", db=stocked)
    assert r.returncode == 1 and r.stderr.startswith("Error: --freq:") and "Traceback" not in r.stderr
    assert len(r.stderr.strip().splitlines()) == 1
    r = cli("find", "astable", "--freq", "1k", "--duty", "40%", "--connection", "standard", db=stocked)
    assert r.returncode == 1 and "always above 50 %" in r.stderr
    r = cli("find", "rc", db=stocked)
    assert r.returncode == 2 and "exactly one of --tau or --corner" in r.stderr
    eng = sa.create_engine(url_of(stocked))
    try:
        with eng.connect() as conn:
            assert conn.execute(sa.text("SELECT COUNT(*) FROM searches")).scalar() == 0
    finally:
        eng.dispose()


def test_help_lists_the_timing_commands(cli):
    r = cli("find", "--help")
    assert r.returncode == 0
    for name in ("astable", "monostable", "rc"):
        assert name in r.stdout


@pytest.mark.parametrize("command", [("monostable", "--width"), ("rc", "--tau")])
def test_all_networks_reaches_the_monostable_and_rc_searches(cli, db_path, tmp_path, command):
    """47 Ω + 39 kΩ (5 %) with one 1 µF film capacitor: the 47 Ω share, 0.12 %, is below half the
    tolerance (2.5 %; README "No token parts"), so by default the closest R is the 39 kΩ alone;
    with --all-networks the exact 39.047 kΩ series pair is searched too. Targets by hand:
    monostable width = ln3·R·C (555 data sheet), RC τ = R·C."""
    csv = tmp_path / "token.csv"
    csv.write_text("kind,value,tolerance,quantity,location,dielectric\n"
                   "R,47,5%,5,A1,\nR,39k,5%,5,A1,\nC,1u,5%,5,D1,film-PP\n", encoding="utf-8")
    assert cli("stock", "import", str(csv), db=db_path).returncode == 0
    mode, option = command
    r_exact = 39_047.0
    target = (math.log(3.0) if mode == "monostable" else 1.0) * r_exact * 1e-6
    shapes = {}
    for extra in ((), ("--all-networks",)):
        r = cli("find", mode, option, f"{target!r}s", "--json", *extra, db=db_path)
        assert r.returncode == 0, r.stderr
        (closest,) = [o for o in json.loads(r.stdout)["options"] if o["why"] == "closest"]
        shapes[extra] = sorted(p["value"] for p in closest["networks"]["R"]["parts"])
    assert shapes[()] == [39e3]
    assert shapes[("--all-networks",)] == [47.0, 39e3]
