"""The safe stroke window: closed-form agreement, the window's ends, empty windows, the search.

The test line is a frictionless pipe from a tank under gas pressure to a valve with a custom
characteristic linear in travel, closed linearly in time. The valve takes almost all of the
steady head (100 bar) and the Joukowsky rise rho a V0 is 2 bar, so the flow through the valve
stays proportional to its effective area to within about 1 %: the flow falls linearly in time,
which is the closure that Michaud's result describes.
"""

import dataclasses
import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from esdsurge.errors import UsageError
from esdsurge.model import Close
from esdsurge.physics.valves import travel_at, validate_travel_curve
from esdsurge.studies.batch import Breach, Point, boundary_estimate, margin_estimate
from esdsurge.studies.check import check
from esdsurge.studies.stroke import (
    closing_event,
    effective_closure,
    fast_stage,
    slow_stage_travel,
    stroke_window,
    stroke_windows,
)
from esdsurge.studies.window import Track, worse_places
from esdsurge.terminal import load

LINE = """
format: 1
terminal: Michaud test line (invented)
site: {{temperature: 20 degC}}
products:
  water: {{builtin: water}}
routes:
  line:
    - tank: head tank
      surface: 0 m
      gas_pressure: 100 barg
    - pipe: test pipe
      length: 1000 m
      inside_diameter: 500 mm
      wall: 12 mm
      wave_speed: 1000 m/s
      friction_factor: 0
      design_pressure: 100.4 barg
    - valve: end valve
      type: custom
      kv: 14.124
      characteristic: [[0, 0], [1, 1]]
    - tank: low tank
      surface: 0 m
cases:
  - name: linear closure
    route: line
    product: water
    events:
      - {{at: 0 s, close: end valve, stroke: 20 s{travel}}}
{extra}
"""

LENGTH = 1000.0
DP_ALLOWED = 0.4e5  # design pressure 100.4 barg over a steady 100 barg at the valve [Pa]


def line(tmp_path, name="line.yaml", extra="", travel=""):
    path = tmp_path / name
    path.write_text(LINE.format(extra=extra, travel=travel), encoding="utf-8")
    return load(str(path))


@pytest.fixture(scope="module")
def michaud(tmp_path_factory):
    terminal = line(tmp_path_factory.mktemp("michaud"))
    window = stroke_window(terminal, terminal.cases[0])
    return terminal, window


def test_fastest_safe_stroke_agrees_with_michaud(michaud):
    terminal, window = michaud
    fluid = terminal.products["water"]
    area = math.pi * 0.5**2 / 4.0
    v0 = window.check.derived.steady.flow / area
    expected = 2.0 * fluid.density * LENGTH * v0 / DP_ALLOWED
    assert expected > 2.0 * LENGTH / 1000.0  # a slow closure: T > 2L/a
    # Michaud (1878), Bull. Soc. Vaudoise Ing. Arch.; in Thorley, Fluid Transients in Pipeline
    # Systems, 2nd ed. (2004): a flow stopped linearly over T > 2L/a raises the pressure at the
    # valve by at most 2 rho L V0 / T, so the fastest stroke for an allowed rise dp is
    # T = 2 rho L V0 / dp
    assert window.nominal.stroke_min == pytest.approx(expected, rel=0.03)
    assert window.nominal.min_breach.element == "test pipe"
    assert window.nominal.min_breach.what == "highest pressure"


def test_limits_hold_at_the_fastest_safe_stroke_and_break_at_95_percent(michaud):
    terminal, window = michaud
    s = window.nominal.stroke_min
    # the definition of the window (common practice, no source): every limit holds at the
    # fastest safe stroke, as `esdsurge check --stroke` judges it ...
    at = check(terminal, stroke=s).cases[0]
    assert at.limits_ok and at.verdict == "pass"
    # ... and one breaks at 95 % of it
    below = check(terminal, stroke=0.95 * s).cases[0]
    assert not below.limits_ok
    assert below.governing == "test pipe"


def test_window_without_a_top_and_its_recommendation(michaud):
    _, window = michaud
    w = window.nominal
    assert not w.empty and w.stroke_max is None and w.max_kind == "none"
    # the recommended setting keeps the stated margin inside the fast end
    assert w.recommended >= w.stroke_min * 1.2 - 1e-9
    assert w.margin_fast == pytest.approx(w.recommended / w.stroke_min - 1.0)
    # effective closure of a valve that takes the whole head, linear in travel: the stroke
    # itself (the flow falls linearly; handcalc.effective_closure_time, Q0 / max|dQ/dt|)
    assert window.effective_closure == pytest.approx(w.recommended, rel=0.02)
    # every sampled stroke from the fastest safe one up keeps the limits
    assert all(p.ok for p in w.points if p.value >= w.stroke_min)
    assert not any(p.ok for p in w.points if p.value < w.stroke_min)


def test_spill_limit_sets_the_slowest_stroke(tmp_path):
    terminal = line(tmp_path, extra="    spill_limit: 0.3 m^3")
    case = terminal.cases[0]
    w = stroke_window(terminal, case).nominal
    assert not w.empty and w.max_kind == "spill"
    assert "spill limit" in w.max_governed_by
    # the spill at the slowest allowed stroke is within the limit, a little longer is not
    # (the definition of the window, common practice, no source)
    assert check(terminal, stroke=w.stroke_max).cases[0].spill <= 0.3
    assert check(terminal, stroke=w.stroke_max + 0.1).cases[0].spill > 0.3
    assert w.stroke_min < w.recommended < w.stroke_max


def test_code_rule_sets_the_slowest_stroke(tmp_path):
    terminal = line(tmp_path, extra="    max_closure_time: 20 s")
    w = stroke_window(terminal, terminal.cases[0]).nominal
    # IGC Code 5.6.4 style rule as given in the case: trigger to shut <= 20 s, valve moves at 0 s
    assert w.stroke_max == pytest.approx(20.0)
    assert w.max_kind == "code"
    assert "max_closure_time" in w.max_governed_by


@pytest.mark.parametrize(
    ("extra", "words"),
    [
        ("    spill_limit: 0.15 m^3", "spill limit"),
        ("    max_closure_time: 8 s", "max_closure_time"),
    ],
)
def test_an_empty_window_is_reported_as_empty(tmp_path, extra, words):
    terminal = line(tmp_path, extra=extra)
    sw = stroke_window(terminal, terminal.cases[0])
    w = sw.nominal
    # surge needs about 10 s; the spill limit (about 7.6 s) or the code rule (8 s) allows less
    assert w.empty and not sw.ok
    assert w.stroke_min is None and w.stroke_max is None and w.recommended is None
    assert words in w.reason
    assert "test pipe" in w.reason
    assert any("staged closure" in o for o in w.opens)


def test_spread_window_is_no_wider_than_the_nominal(tmp_path):
    terminal = line(tmp_path, extra="    spill_limit: 0.4 m^3")
    sw = stroke_window(terminal, terminal.cases[0], spread=True)
    labels = [m.label for m in sw.members]
    assert labels[0] == "nominal" and len(labels) == 7  # no hose on this line
    assert not sw.spread.empty
    assert sw.spread.stroke_min >= sw.nominal.stroke_min
    assert sw.spread.stroke_max <= sw.nominal.stroke_max
    # the recommendation lies inside the window across the band
    assert sw.spread.stroke_min <= sw.spread.recommended <= sw.spread.stroke_max


def test_staged_travel_keeps_its_shape(tmp_path):
    terminal = line(tmp_path, travel=", travel: [[0, 100 %], [0.3, 20 %], [1, 0 %]]")
    case = terminal.cases[0]
    event = closing_event(terminal, case, None)
    assert isinstance(event, Close) and len(event.travel) == 3
    # scaling the stroke scales every stage: the effective closure time scales with it
    # (common practice, no source: the travel points are fractions of the stroke)
    t10 = effective_closure(terminal, case, event, 10.0)
    t20 = effective_closure(terminal, case, event, 20.0)
    assert t20 / t10 == pytest.approx(2.0, rel=0.02)
    sw = stroke_window(terminal, case)
    assert sw.staged and not sw.nominal.empty


# --- the slow stage of a staged closure (--stage slow) -----------------------------------------


@st.composite
def staged_curves(draw):
    """A staged travel curve: (0, 1), one to three interior points, (1, 0)."""
    n = draw(st.integers(1, 3))
    fractions = sorted(draw(st.sets(st.integers(1, 99), min_size=n, max_size=n)))
    travel = sorted(draw(st.lists(st.integers(1, 99), min_size=n, max_size=n)), reverse=True)
    inner = tuple((f / 100.0, x / 100.0) for f, x in zip(fractions, travel, strict=True))
    return ((0.0, 1.0), *inner, (1.0, 0.0))


@settings(max_examples=60, deadline=None)
@given(
    curve=staged_curves(),
    stroke=st.floats(1.0, 120.0),
    slow=st.floats(0.5, 120.0),
)
def test_slow_stage_travel_keeps_the_fast_stage(curve, stroke, slow):
    whole, new = slow_stage_travel(curve, stroke, slow)
    t_fast = fast_stage(curve, stroke)
    # the definition of --stage slow (common practice, no source): the fast stage keeps its
    # duration, the whole stroke is the fast stage and the slow stage
    assert t_fast == pytest.approx(curve[-2][0] * stroke)
    assert whole == pytest.approx(t_fast + slow)
    assert validate_travel_curve(new) is None
    assert len(new) == len(curve) and new[-1] == (1.0, 0.0)
    for (f, x), (g, y) in zip(curve[:-1], new[:-1], strict=True):
        # every point of the fast stage at the same absolute time, with the same travel
        assert g * whole == pytest.approx(f * stroke, rel=1e-12, abs=1e-12)
        assert y == x
    # the shape of the fast stage in time is unchanged: the same travel at every moment of it
    for t in (0.25 * t_fast, 0.5 * t_fast, 0.9 * t_fast, t_fast):
        assert travel_at(new, whole, t) == pytest.approx(travel_at(curve, stroke, t), abs=1e-9)
    # and the last stage runs from the breakpoint's travel to shut, linearly, over ``slow``
    x_b = curve[-2][1]
    for share in (0.0, 0.3, 0.7, 1.0):
        t = t_fast + share * slow
        assert travel_at(new, whole, t) == pytest.approx(x_b * (1.0 - share), abs=1e-9)


def test_slow_stage_travel_of_the_file_is_the_file():
    curve = ((0.0, 1.0), (0.2, 0.6), (0.3, 0.25), (1.0, 0.0))
    whole, new = slow_stage_travel(curve, 20.0, 14.0)
    assert whole == pytest.approx(20.0)
    assert [f for f, _ in new] == pytest.approx([f for f, _ in curve])
    assert [x for _, x in new] == [x for _, x in curve]


def staged_line(tmp_path, name, travel, stroke=20.0, extra=""):
    """The test line with a staged ``travel`` (pairs of fraction and travel open) over
    ``stroke`` [s], written as a file (so that ``check`` reads it like any other)."""
    points = ", ".join(f"[{f!r}, {x * 100.0!r} %]" for f, x in travel)
    text = LINE.format(extra=extra, travel=f", travel: [{points}]").replace(
        "stroke: 20 s", f"stroke: {stroke!r} s"
    )
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return load(str(path))


def michaud_stroke(terminal, case_check):
    """Michaud's fastest linear closure of the whole flow on the test line, 2 rho L V0 / dp [s]
    (Michaud 1878; Thorley, Fluid Transients in Pipeline Systems, 2nd ed., 2004)."""
    area = math.pi * 0.5**2 / 4.0
    v0 = case_check.derived.steady.flow / area
    return 2.0 * terminal.products["water"].density * LENGTH * v0 / DP_ALLOWED


# The flow through the valve is proportional to its travel (see the module docstring), so a
# staged travel is a velocity falling in two linear ramps. In this frictionless line the
# water-hammer equations are linear, so the head at the valve is the sum of the responses to
# the ramp of the fast stage and to the change of slope at its end. Under a linear velocity
# ramp from steady flow, the head at the valve rises for 2L/a to Michaud's 2 L |dV/dt| / g and
# falls back over the next 2L/a, a triangle of period 4L/a (from memory; Michaud 1878 is its
# first peak). 2L/a = 2 s here.
#  * fast stage 8 s (4 periods 2L/a, a zero of the fast stage's triangle): the two triangles
#    rise together, the peak is Michaud's for the slow stage's slope alone, so the slow stage
#    must last x_b T_M (T_M: Michaud's stroke for the whole flow);
#  * fast stage 10 s (5 periods 2L/a, a peak of the fast stage's triangle): the triangles are
#    out of step, the peak is the larger of the two, and the slow stage's extra slope alone must
#    stay within Michaud's: x_b / v - (1 - x_b) / T_f <= 1 / T_M.
STAGED = {
    "in step": ((0.0, 1.0), (0.4, 0.4), (1.0, 0.0)),
    "out of step": ((0.0, 1.0), (0.5, 0.5), (1.0, 0.0)),
}


@pytest.fixture(scope="module", params=sorted(STAGED))
def slow_stage(request, tmp_path_factory):
    travel = STAGED[request.param]
    terminal = staged_line(tmp_path_factory.mktemp("slow"), "line.yaml", travel)
    sw = stroke_window(terminal, terminal.cases[0], stage="slow")
    return request.param, travel, terminal, sw


def test_fastest_safe_slow_stage_agrees_with_michaud_superposed(slow_stage):
    name, travel, terminal, sw = slow_stage
    t_fast = travel[1][0] * 20.0
    x_b = travel[1][1]
    assert sw.stage == "slow" and sw.fast_stage == pytest.approx(t_fast)
    assert sw.searched_file == pytest.approx(20.0 - t_fast)
    t_m = michaud_stroke(terminal, sw.check)
    if name == "in step":
        expected = x_b * t_m
    else:
        expected = x_b / (1.0 / t_m + (1.0 - x_b) / t_fast)
    # superposition of Michaud's ramps, as set out above STAGED (the 0.1 s lattice and the
    # 1 % departure of the flow from the travel within 3 %, as for the whole stroke)
    w = sw.nominal
    assert w.stroke_min == pytest.approx(expected, rel=0.03)
    assert w.min_breach.element == "test pipe"
    # the whole stroke is the fast stage and the slow stage
    assert sw.whole_stroke(w.stroke_min) == pytest.approx(t_fast + w.stroke_min)
    assert w.recommended >= w.stroke_min * 1.2 - 1e-9


def test_fastest_safe_slow_stage_passes_check_and_95_percent_fails(slow_stage, tmp_path):
    _, travel, terminal, sw = slow_stage
    v = sw.nominal.stroke_min
    # the definition of the window (common practice, no source): a file with the fast stage
    # as it was and the slow stage at the fastest safe duration passes `esdsurge check` ...
    whole, curve = slow_stage_travel(travel, 20.0, v)
    at = check(staged_line(tmp_path, "at.yaml", curve, whole)).cases[0]
    assert at.limits_ok and at.verdict == "pass"
    # ... and with the slow stage at 95 % of it a limit breaks
    whole, curve = slow_stage_travel(travel, 20.0, 0.95 * v)
    below = check(staged_line(tmp_path, "below.yaml", curve, whole)).cases[0]
    assert not below.limits_ok
    assert below.governing == "test pipe"


def test_slow_stage_spill_limit_applies_to_the_whole_closure(tmp_path):
    travel = STAGED["in step"]
    terminal = staged_line(tmp_path, "line.yaml", travel, extra="    spill_limit: 0.3 m^3")
    sw = stroke_window(terminal, terminal.cases[0], stage="slow")
    w = sw.nominal
    assert not w.empty and w.max_kind == "spill"
    # the spill through the valve over the whole closure (fast stage included) is within the
    # limit at the slowest allowed slow stage, and not 0.1 s later (common practice, no source)
    spills = []
    for v in (w.stroke_max, w.stroke_max + 0.1):
        whole, curve = slow_stage_travel(travel, 20.0, v)
        spills.append(check(staged_line(tmp_path, "s.yaml", curve, whole)).cases[0].spill)
    assert spills[0] <= 0.3 < spills[1]


def test_slow_stage_code_rule_counts_the_fast_stage(tmp_path):
    travel = STAGED["in step"]
    terminal = staged_line(tmp_path, "line.yaml", travel, extra="    max_closure_time: 15 s")
    sw = stroke_window(terminal, terminal.cases[0], stage="slow")
    w = sw.nominal
    # trigger to shut within 15 s (the case's rule): 8 s of fast stage leave 7 s
    assert w.max_kind == "code"
    assert w.stroke_max == pytest.approx(7.0)
    assert sw.whole_stroke(w.stroke_max) == pytest.approx(15.0)
    assert "fast stage takes 8 s" in w.max_governed_by


def test_slow_stage_without_stages_is_refused(michaud, tmp_path):
    terminal, _ = michaud
    with pytest.raises(UsageError, match="'linear closure'.*'end valve' has no staged travel"):
        stroke_windows(terminal, stage="slow")
    coupled = LINE.format(extra="", travel="").replace(
        "    - valve: end valve",
        "    - coupling: release coupling\n      closing_time: 5 s\n    - valve: end valve",
    )
    coupled = coupled.replace(
        "{at: 0 s, close: end valve, stroke: 20 s}", "{at: 0 s, release: release coupling}"
    )
    path = tmp_path / "coupled.yaml"
    path.write_text(coupled, encoding="utf-8")
    with pytest.raises(UsageError, match="'release coupling' is a coupling .* 'release' event"):
        stroke_windows(load(str(path)), stage="slow")


def test_unknown_valve_is_refused(michaud):
    terminal, _ = michaud
    with pytest.raises(UsageError, match="no close or release event"):
        closing_event(terminal, terminal.cases[0], "head tank")


# --- the search logic on made-up samples (no engine) ------------------------------------------


def _p(v, ok, spill=0.0, peak=0.9, what="highest pressure"):
    b = () if ok else (Breach("hose", "hose", what, "rated working pressure 15.0 barg", ""),)
    return Point(v, ok, spill, peak, 0.0, b, {"hose": (peak - 1.0, -0.5, 0.0)})


def test_window_below_a_longer_stroke_that_fails_again():
    # passing 10..20 s, failing at 5 s and again at 40 s: the window is the passing run, its top
    # set by the failure above it (never assume the surge falls as the stroke grows)
    pts = [_p(5.0, False, peak=1.2), _p(10.0, True), _p(20.0, True), _p(40.0, False, peak=1.1)]
    tr = Track(None, None, 60.0)
    tr.update(pts, lower_scanned=True)
    assert tr.surge_top == 20.0 and tr.surge_fail == 40.0
    assert tr.fast == 10.0 and tr.fast_fail == 5.0
    assert tr.requests  # both ends still to refine
    notes = worse_places(pts, 60.0)
    assert any("20 s keeps every limit but 40 s does not" in n for n in notes)


def test_window_search_waits_for_the_shorter_half_of_the_scan():
    pts = [_p(7.7, True), _p(15.3, True)]
    tr = Track(None, None, 15.3)
    tr.update(pts, lower_scanned=False)
    assert tr.need_lower and tr.fast == 7.7
    tr.update(pts, lower_scanned=True)
    assert not tr.need_lower


def test_no_passing_stroke_is_empty():
    pts = [_p(v, False, peak=1.5) for v in (0.5, 1.0, 2.0, 60.0)]
    tr = Track(None, None, 60.0)
    tr.update(pts, lower_scanned=True)
    assert tr.no_pass and tr.fast is None


def test_rising_peak_with_a_longer_stroke_is_reported():
    pts = [_p(10.0, True, peak=0.70), _p(20.0, True, peak=0.80), _p(30.0, True, peak=0.95)]
    notes = worse_places(pts, 60.0)
    assert notes == ["the highest pressure rises from 70% to 95% of its limit from 10 s to 30 s"]


def test_points_are_compared_by_value_only():
    a = _p(1.0, True)
    assert dataclasses.replace(a, measures={}) == a


def _cav_point(v, margins):
    """A sample at ``v`` with the lowest pressure's margin above the vapour pressure on each
    element [atm] (negative: above it; ``None``: a cavity forms there)."""
    measures = {el: (math.nan, 0.0 if m is None else m, 0.0 if m is not None else 1e-3)
                for el, m in margins.items()}  # fmt: skip
    breaches = tuple(
        Breach(el, "arm", "column separation", "vapour pressure", "")
        for el, m in margins.items()
        if m is None
    )
    return Point(v, not breaches, 1.0, 0.5, 0.0 if not breaches else 1e-3, breaches, measures)


def test_a_cavity_end_is_placed_by_the_margins_carried_on_to_zero():
    # margins at 22 s and 24 s of -0.02 and -0.06 atm reach zero at 21 s (a straight line);
    # of two elements, the cavity that lasts longest (nearest the passing end) places it
    pts = [
        _cav_point(20.0, {"arm": None, "hose": None}),
        _cav_point(22.0, {"arm": -0.02, "hose": -0.05}),
        _cav_point(24.0, {"arm": -0.06, "hose": -0.07}),
    ]
    assert margin_estimate(pts, ["arm"], 20.0, 22.0) == pytest.approx(21.0)
    assert margin_estimate(pts, ["hose"], 20.0, 22.0) is None  # reaches zero at 17 s
    assert margin_estimate(pts, ["arm", "hose"], 20.0, 22.0) == pytest.approx(21.0)
    # the same from above (a longer stroke forms the cavity): zero at 43 s
    top = [
        _cav_point(40.0, {"arm": -0.06}),
        _cav_point(42.0, {"arm": -0.02}),
        _cav_point(44.0, {"arm": None}),
    ]
    assert margin_estimate(top, ["arm"], 44.0, 42.0) == pytest.approx(43.0)
    assert boundary_estimate(top, 44.0, 42.0) == pytest.approx(43.0)


def test_a_cavity_margin_reaching_zero_just_beyond_the_failing_end_samples_beside_it():
    # zero at 19.75 s, an eighth of the bracket beyond its failing end: sample next to 20 s;
    # at 19 s (half the bracket beyond) the line is not trusted
    near = [
        _cav_point(20.0, {"arm": None}),
        _cav_point(22.0, {"arm": -0.09}),
        _cav_point(24.0, {"arm": -0.17}),
    ]
    assert margin_estimate(near, ["arm"], 20.0, 22.0) == 20.0
    far = [
        _cav_point(20.0, {"arm": None}),
        _cav_point(22.0, {"arm": -0.12}),
        _cav_point(24.0, {"arm": -0.2}),
    ]
    assert margin_estimate(far, ["arm"], 20.0, 22.0) is None
    # no passing sample beyond the passing end, or margins that do not grow away from it
    assert margin_estimate(near[:2], ["arm"], 20.0, 22.0) is None
    flat = [near[0], _cav_point(22.0, {"arm": -0.1}), _cav_point(24.0, {"arm": -0.1})]
    assert margin_estimate(flat, ["arm"], 20.0, 22.0) is None
