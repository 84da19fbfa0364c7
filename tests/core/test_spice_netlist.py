"""The SPICE netlist text and the reading of ngspice's printed measurements (no ngspice needed).

The wiring checks do not trust the netlist writer's own arithmetic: they read the element lines
back and solve the resistor (or capacitor) graph by plain nodal analysis with numpy, then compare
with the series/parallel laws written out by hand in each test.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.core import spice
from selector.core.errors import SimulationFailed

CMOS5 = spice.chip_model("cmos", 5.0, 5.0, 0.0)
BIP9 = spice.chip_model("bipolar", 9.0, 7.6, 0.1)


def net(label, *values, shape=None, tol=None):
    shape = shape or ("single" if len(values) == 1 else "series")
    parts = tuple(spice.Part(v, line_id=i + 1, tol_minus=tol, tol_plus=tol) for i, v in enumerate(values))
    return spice.Network(label, shape, parts)


def astable(connection="standard", ra=(10e3,), rb=(47e3,), c=(10e-9,), ra_shape=None, rb_shape=None,
            c_shape=None, chip=BIP9, tol=None):
    th = math.log(2) * (sum(ra) + sum(rb)) * sum(c)   # rough, only sizes the run
    tl = math.log(2) * sum(rb) * sum(c)
    return spice.Circuit(connection, {"RA": net("RA", *ra, shape=ra_shape, tol=tol),
                                      "RB": net("RB", *rb, shape=rb_shape, tol=tol),
                                      "C": net("C", *c, shape=c_shape, tol=tol)},
                         chip, expected={"t_high_s": th, "t_low_s": tl})


# ----------------------------------------------------------------------------- plain reference
def top_level_elements(text: str, letter: str) -> list[tuple[str, str, str, float]]:
    """(name, node1, node2, value) of the top-level elements whose name starts with ``letter``
    (everything inside .subckt … .ends is skipped)."""
    out, inside = [], False
    for line in text.splitlines():
        low = line.strip().lower()
        if low.startswith(".subckt"):
            inside = True
        elif low.startswith(".ends"):
            inside = False
        elif not inside and line[:1].upper() == letter:
            f = line.split()
            out.append((f[0], f[1], f[2], float(f[3])))
    return out


def equivalent(text: str, letter: str, a: str, b: str) -> float:
    """Equivalent resistance (letter R) or capacitance (letter C) between nodes a and b of the
    netlist's top-level elements of that letter: nodal analysis, 1 A into a, b grounded."""
    elems = top_level_elements(text, letter)
    nodes = sorted({n for _, n1, n2, _ in elems for n in (n1, n2)} - {b})
    idx = {n: i for i, n in enumerate(nodes)}
    g = np.zeros((len(nodes), len(nodes)))
    for _, n1, n2, v in elems:
        y = 1.0 / v if letter == "R" else v   # capacitors combine like conductances
        for p, q in ((n1, n2), (n2, n1)):
            if p in idx:
                g[idx[p], idx[p]] += y
                if q in idx:
                    g[idx[p], idx[q]] -= y
    keep = [i for i, n in enumerate(nodes) if np.any(g[i])]
    g = g[np.ix_(keep, keep)]
    kept = [nodes[i] for i in keep]
    rhs = np.zeros(len(kept))
    rhs[kept.index(a)] = 1.0
    v = np.linalg.solve(g, rhs)[kept.index(a)]
    return float(v) if letter == "R" else float(1.0 / v)


# ----------------------------------------------------------------------------- wiring
def test_series_resistors_are_two_elements_joined_at_one_node():
    nl = spice.build_netlist(astable(ra=(10e3, 4.7e3)))
    ra = [e for e in top_level_elements(nl.text, "R") if e[0].startswith("RRA")]
    assert len(ra) == 2
    assert ra[0][1] == "vcc" and ra[1][2] == "dis" and ra[0][2] == ra[1][1]
    assert equivalent(nl.text, "R", "vcc", "dis") == pytest.approx(14.7e3, rel=1e-12)  # 10k + 4.7k


def test_parallel_capacitors_share_both_nodes_and_start_empty():
    nl = spice.build_netlist(astable(c=(100e-9, 47e-9), c_shape="parallel"))
    cs = top_level_elements(nl.text, "C")
    assert [(n1, n2) for _, n1, n2, _ in cs] == [("cap", "0"), ("cap", "0")]
    assert all("IC=0" in ln for ln in nl.text.splitlines() if ln.startswith("CC_"))
    assert equivalent(nl.text, "C", "cap", "0") == pytest.approx(147e-9, rel=1e-12)  # facts §11.3


SHAPES_BY_HAND = {
    # the series/parallel laws written out by hand, parts in the networks module's physical order
    "series3": lambda a, b, c: a + b + c,
    "parallel3": lambda a, b, c: 1 / (1 / a + 1 / b + 1 / c),
    "series+parallel": lambda b, c, a: 1 / (1 / b + 1 / c) + a,        # (B ∥ C) + A
    "parallel+series": lambda b, c, a: 1 / (1 / (b + c) + 1 / a),      # (B + C) ∥ A
}

values = st.floats(min_value=10.0, max_value=1e7, allow_nan=False, allow_infinity=False)


@pytest.mark.parametrize("shape", sorted(SHAPES_BY_HAND))
@settings(max_examples=25, deadline=None)
@given(x=values, y=values, z=values)
def test_three_part_shapes_wire_to_their_law(shape, x, y, z):
    c = astable(rb=(x, y, z), rb_shape=shape)
    text = spice.build_netlist(c).text
    assert len([e for e in top_level_elements(text, "R") if e[0].startswith("RRB")]) == 3
    assert equivalent(text, "R", "dis", "cap") == pytest.approx(SHAPES_BY_HAND[shape](x, y, z), rel=1e-9)


@pytest.mark.parametrize("shape", sorted(SHAPES_BY_HAND))
def test_three_part_capacitor_shapes_use_capacitor_laws(shape):
    x, y, z = 100e-9, 47e-9, 22e-9
    text = spice.build_netlist(astable(c=(x, y, z), c_shape=shape)).text
    # for capacitors the joints swap roles: series adds reciprocals, parallel adds
    dual = {"series3": 1 / (1 / x + 1 / y + 1 / z), "parallel3": x + y + z,
            "series+parallel": 1 / (1 / (x + y) + 1 / z), "parallel+series": 1 / (1 / x + 1 / y) + z}
    assert equivalent(text, "C", "cap", "0") == pytest.approx(dual[shape], rel=1e-12)


def test_repeated_line_in_an_unsymmetric_shape_is_ordered_by_its_value():
    # (22k ∥ 10k) + 22k = 28.875 k; expanding the distinct lines in order would give
    # (22k ∥ 22k) + 10k = 21 k instead.
    p22, p10 = spice.Part(22e3, line_id=1), spice.Part(10e3, line_id=2)
    target = 1 / (1 / 22e3 + 1 / 10e3) + 22e3
    order = spice.physical_order("series+parallel", "R", (p22, p22, p10), target)
    rb = spice.Network("RB", "series+parallel", order, value=target)
    c = astable()
    c = spice.Circuit("standard", {**c.networks, "RB": rb}, c.chip, expected=c.expected)
    assert equivalent(spice.build_netlist(c).text, "R", "dis", "cap") == pytest.approx(28875.0, rel=1e-12)


def test_parts_that_do_not_make_the_recorded_value_are_refused():
    p = spice.Part(1e3)
    with pytest.raises(SimulationFailed, match="do not add up"):
        spice.physical_order("series3", "R", (p, p, p), 5e3)


def test_unknown_shape_is_refused_with_its_name():
    c = astable()
    bad = spice.Network("RA", "zigzag", (spice.Part(1e3), spice.Part(2e3)))
    with pytest.raises(SimulationFailed, match="zigzag"):
        spice.build_netlist(spice.Circuit("standard", {**c.networks, "RA": bad}, c.chip, expected=c.expected))


# ----------------------------------------------------------------------------- the 555 model
def subckt_lines(text: str) -> list[str]:
    lines = text.splitlines()
    start = next(i for i, ln in enumerate(lines) if ln.lower().startswith(".subckt"))
    end = next(i for i, ln in enumerate(lines) if ln.lower().startswith(".ends"))
    return lines[start:end + 1]


@pytest.mark.parametrize("chip, r_div", [(BIP9, 5e3), (CMOS5, 100e3)])
def test_model_divider_is_three_equal_resistors(chip, r_div):
    # [S12] bipolar model netlists / [S14]: 3 × 5 kΩ; CMOS about 100 kΩ each (from memory)
    body = subckt_lines(spice.build_netlist(astable(chip=chip)).text)
    div = [ln.split() for ln in body if ln.startswith("Rdiv")]
    assert [(d[1], d[2]) for d in div] == [("vcc", "cv"), ("cv", "lo"), ("lo", "gnd")]
    assert {float(d[3]) for d in div} == {r_div}


def test_model_pins_in_data_sheet_order_and_output_levels_from_the_family():
    text = spice.build_netlist(astable(chip=BIP9)).text
    head = next(ln for ln in text.splitlines() if ln.lower().startswith(".subckt"))
    assert head.split()[2:] == ["gnd", "trig", "out", "rst", "cv", "thr", "dis", "vcc"]
    out = next(ln for ln in subckt_lines(text) if ln.startswith("Bout"))
    assert out.endswith("? 7.6 : 0.1")
    # standard connection: TRIG and THRES on the capacitor, RESET tied to VCC
    inst = next(ln for ln in text.splitlines() if ln.startswith("X555")).split()
    assert inst[1:9] == ["0", "cap", "out", "vcc", "ctl", "cap", "dis", "vcc"]


def test_diode_option_has_a_diode_across_rb_dropping_the_given_vf():
    c = astable("diode", ra=(10e3,), rb=(10e3,), chip=CMOS5)
    c = spice.Circuit("diode", c.networks, c.chip, diode_vf=0.6, expected=c.expected)
    text = spice.build_netlist(c).text
    d = next(ln for ln in text.splitlines() if ln.startswith("DSTEER")).split()
    assert d[1:3] == ["dis", "cap"]   # anode at DIS, cathode at the capacitor
    model = next(ln for ln in text.splitlines() if ln.startswith(".model SELDIODE"))
    isat = float(re.search(r"IS=([0-9.eE+-]+)", model).group(1))
    n = float(re.search(r"N=([0-9.eE+-]+)", model).group(1))
    # Shockley law (textbook): I = IS·(exp(V/(n·kT/q)) − 1) at ngspice's default 27 °C; --diode-vf is
    # the drop at 1 mA (the law the prediction uses), with the default ideality 1.9
    vt = 1.380649e-23 * 300.15 / 1.602176634e-19
    assert isat * (math.exp(0.6 / (n * vt)) - 1) == pytest.approx(1e-3, rel=1e-4)
    assert n == pytest.approx(1.9)


def test_monostable_has_a_trigger_pulse_shorter_than_the_width():
    c = spice.Circuit("monostable", {"R": net("R", 100e3), "C": net("C", 1e-6)}, BIP9,
                      expected={"width_s": 0.11})
    text = spice.build_netlist(c).text
    pulse = next(ln for ln in text.splitlines() if ln.startswith("VTRIG"))
    v1, v2, td, tr, tf, pw = (float(x) for x in re.search(r"PULSE\(([^)]*)\)", pulse).group(1).split()[:6])
    assert (v1, v2) == (9.0, 0.0) and 0 < pw < 0.11 and td > 0


def test_netlist_carries_a_safety_caution_and_ends():
    text = spice.build_netlist(astable()).text
    assert "Caution" in text and text.rstrip().endswith(".end")


# ----------------------------------------------------------------------------- measurements
# Golden text: printed by ngspice 39.3 (Debian) for the RC netlist below, `ngspice -b rc.cir`.
#   VIN in 0 DC 0 AC 1 PULSE(0 5 1.56e-05 1.56e-08 1.56e-08 0.0156 0.156)
#   R1 in cap 12000 / C1 cap 0 1.3e-08 IC=0, control block: tran + meas, ac + meas,
#   plus a deliberately impossible "meas tran m_bad WHEN v(cap)=7 RISE=1".
NGSPICE_OUTPUT = """\
Note: No compatibility mode selected!
Circuit: * rc
Doing analysis at TEMP = 27.000000 and TNOM = 27.000000
Using transient initial conditions
No. of Data Rows : 6225
m_t63               =  1.716078e-04
Error: measure  m_bad  when(WHEN) : out of interval
 meas tran m_bad when v(cap)=7 rise=1 failed!
No. of Data Rows : 801
m_fc                =  1.020224e+03
Total analysis time (seconds) = 0.028
"""


def test_parse_reads_values_and_names_the_failed_measure():
    found, failed = spice.parse_measurements(NGSPICE_OUTPUT)
    assert found == {"m_t63": 1.716078e-04, "m_fc": 1.020224e3}
    assert failed == {"m_bad"}


def test_missing_astable_measure_is_an_error_not_a_number():
    c = astable()
    found = {"m_f1": 1e-3, "m_r1": 1.3e-3, "m_f2": 1.7e-3}   # only one cycle, five were asked
    with pytest.raises(SimulationFailed, match="could not measure"):
        spice.reduce_measurements(c, found, 5)


def test_astable_reduction_skips_the_first_cycle():
    # crossing times laid out by hand: first high 1.0 ms (longer), then low 0.3 ms, high 0.4 ms
    falls = [1.0e-3 + k * 0.7e-3 for k in range(4)]
    rises = [1e-9] + [f + 0.3e-3 for f in falls[:3]]         # the rise at power-up is not a cycle
    found = {f"m_f{k + 1}": v for k, v in enumerate(falls)} | {f"m_r{k + 1}": v for k, v in enumerate(rises)}
    got = spice.reduce_measurements(astable(), found, 3)
    assert got["t_low_s"] == pytest.approx(0.3e-3) and got["t_high_s"] == pytest.approx(0.4e-3)
    assert got["frequency_hz"] == pytest.approx(1 / 0.7e-3) and got["duty"] == pytest.approx(4 / 7)


def test_difference_is_signed_relative():
    d = spice.difference({"frequency_hz": 1000.0, "duty": 0.5}, {"frequency_hz": 990.0, "duty": 0.51})
    assert d == pytest.approx({"frequency_hz": -0.01, "duty": 0.02})


# ----------------------------------------------------------------------------- corners
def test_corners_move_every_part_by_its_own_tolerance():
    c = astable(ra=(10e3,), rb=(47e3,), c=(10e-9,), tol=0.05)
    corners = {name: cc for name, _d, cc in spice.corner_circuits(c)}
    assert set(corners) == {"all -tol", "all +tol", "duty max", "duty min"}
    v = lambda cc, k: cc.networks[k].parts[0].value
    assert v(corners["all -tol"], "C") == pytest.approx(9.5e-9)
    assert v(corners["all +tol"], "RA") == pytest.approx(10.5e3)
    assert (v(corners["duty max"], "RA"), v(corners["duty max"], "RB"), v(corners["duty max"], "C")) == \
        pytest.approx((10.5e3, 44.65e3, 10e-9))


def test_corners_need_known_tolerances():
    with pytest.raises(SimulationFailed, match="tolerance"):
        spice.corner_circuits(astable(tol=None))


# Golden text: the first lines of `wrdata wave.txt v(cap) v(out)` (with `set wr_singlescale`)
# written by ngspice 39.3 for a 9 V bipolar standard astable, RA 10k, RB 47k, C 10 nF.
WRDATA = """\
 3.25000000e-09  5.13150738e-05  7.60000000e+00 
 3.36900051e-09  5.31940025e-05  7.60000000e+00 
 3.60700152e-09  5.69518592e-05  7.60000000e+00 
"""


def test_waveform_columns_are_read_in_order():
    times, cols = spice.parse_waveform(WRDATA)
    assert times == [3.25e-09, 3.36900051e-09, 3.60700152e-09]
    assert cols[0][2] == 5.69518592e-05 and cols[1] == [7.6, 7.6, 7.6]


def test_waveform_request_adds_a_dump_and_keeps_the_measures():
    text = spice.build_netlist(astable(), 3, waveform=True).text
    assert f"wrdata {spice.WAVE_FILE} v(cap) v(out)" in text and ".meas tran m_f4" in text
    assert spice.build_netlist(astable(), 3).text.count(".control") == 0


def test_svg_plot_is_well_formed_with_one_trace_per_node():
    import xml.etree.ElementTree as ET

    from selector.render.simulate import waveform_svg
    from selector.services.simulate import Waveform

    t = [i * 1e-5 for i in range(5000)]
    square = [5.0 if (i // 700) % 2 == 0 else 0.0 for i in range(5000)]
    ramp = [1.0 + (i % 700) / 350.0 for i in range(5000)]
    svg = waveform_svg(Waveform(tuple(t), (("v(C)", tuple(ramp)), ("v(OUT)", tuple(square))),
                                (("1/3 VCC", 5 / 3), ("2/3 VCC", 10 / 3))), "test <plot>")
    root = ET.fromstring(svg)
    lines = root.findall("{http://www.w3.org/2000/svg}polyline")
    assert len(lines) == 2
    # decimated to at most 4 points per pixel column, yet both levels of the square wave kept
    ys = {float(p.split(",")[1]) for p in lines[1].get("points").split()}
    assert len(lines[1].get("points").split()) <= 4 * 820 and len(ys) == 2
