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

from esdsurge.errors import UsageError
from esdsurge.model import Close
from esdsurge.studies.batch import Breach, Point
from esdsurge.studies.check import check
from esdsurge.studies.stroke import closing_event, effective_closure, stroke_window
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
