"""The ranking rules of issue 11, as properties over random stocks (hypothesis).

Every expected figure is computed here from the JSON of the options and from the standard
astable law t_high = ln2·(RA+RB)·C, t_low = ln2·RB·C (555 data sheets, e.g. TI NE555 SLFS022,
"astable operation"; t_low with the discharge switch's 12 Ω written out in t_low_rd), never read
from the ranking code:
- an option whose nominal errors are all within HALF the acceptance (duty judged in points against
  the same figure x the target duty) ranks above every option that is not;
- within that grouping, an option more than 2 points of yield better ranks higher; among yields
  within 2 points, fewer parts come first (so a 100 % 4-part build never beats a 99 % 2-part one);
- the option with the smallest search error the stock allows is listed and its `why` is `closest`
  (checked against a plain exhaustive enumeration of every 1-part RA, RB, C);
- every row has a `why` of two or three words.
"""

from __future__ import annotations

import itertools
import math

from hypothesis import HealthCheck, assume, given, settings, strategies as st

from reference_discharge import t_low_rd  # RD 12 Ω, bipolar DIS 180 mV at 15 mA [S1]
from selector.core.ranking import RankedOption, rank
from selector.core.types import StockLine
from selector.services.find_timing import TimingRequest, plan_timing

LN2 = math.log(2.0)
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063 E12


@st.composite
def stocks(draw):
    nr = draw(st.integers(2, 6))
    nc = draw(st.integers(1, 3))
    r_lines, c_lines = [], []
    for i in range(nr):
        v = draw(st.sampled_from(E12)) * 10.0 ** draw(st.integers(3, 5))  # 1 kΩ .. 820 kΩ
        tol = draw(st.sampled_from((0.01, 0.05)))
        r_lines.append(StockLine(i + 1, "resistor", v, tol, tol, draw(st.integers(1, 4)),
                                 location=f"R{i}", rating=0.25))
    for j in range(nc):
        v = draw(st.sampled_from(E12)) * 10.0 ** draw(st.integers(-9, -7))  # 1 nF .. 820 nF
        tol = draw(st.sampled_from((0.02, 0.05, 0.1)))
        c_lines.append(StockLine(100 + j, "capacitor", v, tol, tol, draw(st.integers(1, 4)),
                                 location=f"C{j}", rating=50.0, dielectric="film-PET"))
    freq = draw(st.floats(50.0, 5000.0))
    duty = draw(st.floats(0.55, 0.85))
    accept = draw(st.sampled_from((0.02, 0.05, 0.1)))
    max_parts = draw(st.integers(1, 2))
    return r_lines, c_lines, freq, duty, accept, max_parts


def _plan(case, top=6):
    r_lines, c_lines, freq, duty, accept, max_parts = case
    req = TimingRequest(mode="astable", freq_hz=freq, duty=duty, connection="standard",
                        max_parts=max_parts, top=top, accept=accept)
    try:
        return plan_timing(r_lines, c_lines, req)
    except Exception as e:  # nothing inside the limits on this stock: not a ranking question
        assert type(e).__name__ == "NothingFeasible", e
        return None


def _net_value(net, kind):
    """A network's value from its parts, by the textbook laws (facts.md §10): resistors in series
    add, in parallel their conductances add; capacitors the other way round. The stocks here
    allow at most 2 parts, so the shape is single, series or parallel."""
    xs = [p["value"] for p in net["parts"] for _ in range(p["count"])]
    adds = (net["shape"] == "series") == (kind == "resistor")
    return sum(xs) if adds or len(xs) == 1 else 1.0 / sum(1.0 / x for x in xs)


def _asked(opt, freq, duty):
    """max(|f/F - 1|, |d - D| / D) (the issue's definition), f and d from the option's parts by
    the standard astable law (module docstring); the option's own prediction must agree."""
    ra, rb = (_net_value(opt["networks"][k], "resistor") for k in ("RA", "RB"))
    c = _net_value(opt["networks"]["C"], "capacitor")
    th, tl = LN2 * (ra + rb) * c, t_low_rd(ra, rb, c)
    f, d = 1.0 / (th + tl), th / (th + tl)
    p = opt["predicted"]
    assert math.isclose(p["frequency_hz"], f, rel_tol=1e-9) and math.isclose(p["duty"], d, rel_tol=1e-9), (p, f, d)
    return max(abs(f / freq - 1.0), abs(d - duty) / duty)


def _nparts(opt):
    return sum(p["count"] for n in opt["networks"].values() for p in n["parts"])


def _pairs(opts):
    """Pairs (upper, lower) of the rows the rule placed (the last row may be the forced best)."""
    placed = opts[:-1] if opts and opts[-1]["why"] == "closest" else opts
    return [(a, b) for i, a in enumerate(placed) for b in placed[i + 1:]]


SETTINGS = settings(max_examples=12, deadline=None, suppress_health_check=list(HealthCheck))


@SETTINGS
@given(stocks())
def test_within_half_the_acceptance_ranks_first(case):
    report = _plan(case)
    assume(report is not None)  # a stock with nothing feasible asks no ranking question
    _r, _c, freq, duty, accept, _mp = case
    opts = report.options
    near = [_asked(o, freq, duty) <= accept / 2 * (1 + 1e-9) for o in opts]
    placed = len(opts) - 1 if opts[-1]["why"] == "closest" else len(opts)
    # every near option placed by the rule sits above every option that is not near
    last_near = max((i for i in range(placed) if near[i]), default=-1)
    first_far = min((i for i in range(placed) if not near[i]), default=placed)
    assert last_near < first_far, [(_asked(o, freq, duty), o["yield"]) for o in opts]
    if any(near):
        assert near[0]


@SETTINGS
@given(stocks())
def test_yields_within_two_points_are_equal_then_fewer_parts(case):
    report = _plan(case)
    assume(report is not None)  # a stock with nothing feasible asks no ranking question
    _r, _c, freq, duty, accept, _mp = case

    def tier(o):
        a = _asked(o, freq, duty)
        return 0 if a <= accept / 2 * (1 + 1e-9) else (1 if a <= accept * (1 + 1e-9) else 2)

    for a, b in _pairs(report.options):
        if tier(a) != tier(b):
            assert tier(a) < tier(b)
            continue
        # an option more than 2 points of yield better is never below
        assert b["yield"] <= a["yield"] + 0.02 + 1e-12, (a["yield"], b["yield"])
        # more parts above fewer only when it has strictly the better yield (another group)
        if tier(a) < 2 and _nparts(a) > _nparts(b):
            assert a["yield"] > b["yield"], (a["yield"], b["yield"], _nparts(a), _nparts(b))


def _reference_best(r_lines, c_lines, freq, duty):
    """Plain exhaustive search over 1-part RA, RB, C (quantities allow RA = RB only with 2 on
    hand): the smallest max(|t_high/T_high - 1|, |t_low/T_low - 1|) inside the limits the test
    stock respects (all R >= 1 kΩ, 0.25 W; bipolar 555 at 9 V): RA + RB at most 164.6 kΩ, where
    the 0.25 µA threshold current [S1] moves t_high by 1 % (a constant sink lowers the asymptote
    by R·I: R·I ≤ (VCC/3)(q − 2)/(q − 1), q = 2^1.01, derived); f <= 20 kHz (20 % of the 100 kHz
    family limit, common practice; the propagation delay is not modelled)."""
    th_t, tl_t = duty / freq, (1 - duty) / freq
    q = 2 ** 1.01
    r_max = 3.0 * (q - 2) / (q - 1) / 0.25e-6
    best = math.inf
    for ra, rb in itertools.product(r_lines, repeat=2):
        if ra.id == rb.id and ra.quantity < 2:
            continue
        if ra.value + rb.value > r_max * (1 + 1e-9):
            continue
        for c in c_lines:
            th, tl = LN2 * (ra.value + rb.value) * c.value, t_low_rd(ra.value, rb.value, c.value)
            if 1.0 / (th + tl) > 20e3 * (1 + 1e-9):
                continue
            e = max(abs(th / th_t - 1), abs(tl / tl_t - 1))
            best = min(best, e)
    return best


@SETTINGS
@given(stocks(), st.integers(1, 4))
def test_the_smallest_error_is_listed_and_marked(case, top):
    r_lines, c_lines, freq, duty, accept, _mp = case
    case = (r_lines, c_lines, freq, duty, accept, 1)
    report = _plan(case, top=top)
    ref = _reference_best(r_lines, c_lines, freq, duty)
    if report is None:
        assert not (ref <= 1.0)  # nothing within the search's 100 % bound either
        return
    marked = [o for o in report.options if o["why"] == "closest"]
    assert len(marked) == 1
    assert math.isclose(abs(marked[0]["error"]), ref, rel_tol=1e-9, abs_tol=1e-12)
    assert len(report.options) <= top


@SETTINGS
@given(stocks())
def test_every_row_says_why_in_two_or_three_words(case):
    report = _plan(case)
    assume(report is not None)  # a stock with nothing feasible asks no ranking question
    for o in report.options:
        assert 1 <= len(o["why"].split()) <= 3 and o["why"]
        # errors in the asker's terms, by hand from the prediction
        _r, _c, freq, duty, _a, _mp = case
        _asked(o, freq, duty)   # the prediction is the standard law's figure for the parts
        assert math.isclose(o["errors"]["frequency"], o["predicted"]["frequency_hz"] / freq - 1,
                            rel_tol=1e-9, abs_tol=1e-12)
        assert math.isclose(o["errors"]["duty_points"], o["predicted"]["duty"] - duty,
                            rel_tol=1e-9, abs_tol=1e-12)


class _Found:
    def __init__(self, nparts, error):
        self.nparts, self.error, self.connection = nparts, error, "standard"


def _opt(nparts, error, y, tier):
    o = RankedOption(_Found(nparts, error), {}, {}, y, 0.0, abs(error))
    o.asked_error, o.tier = abs(error), tier
    return o


def test_no_separate_band_at_100_percent():
    """Issue 11's example: a 4-part 100 % build does not outrank a plain 2-part one at 99.0 %
    (within 2 points); a 2-part one at 96 % does fall behind (4 points)."""
    four = _opt(4, 0.001, 1.0, 0)
    two = _opt(2, 0.004, 0.990, 0)
    low = _opt(2, 0.0005, 0.96, 0)
    shown = rank([four, low, two], 3)
    assert shown[0] is two and shown[1] is four and shown[2] is low
    assert low.why == "closest" and two.why == "fewest parts"


def test_near_target_beats_a_better_yield_outside_half():
    near = _opt(3, 0.02, 0.80, 0)
    far = _opt(2, 0.03, 0.95, 1)
    shown = rank([far, near], 2)
    assert shown[0] is near and near.why == "closest"
