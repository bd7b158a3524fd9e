"""The highest safe transfer rate and the other rate limits of a case."""

import dataclasses

import pytest

from esdsurge.model import Carrier
from esdsurge.studies.check import check
from esdsurge.studies.rate import RateLimit, govern, other_limits, rate_limits
from esdsurge.terminal import load

LINE = """
format: 1
terminal: pumped test line (invented)
products:
  water: {{builtin: water}}
  fuel:
    builtin: diesel
    conductivity: 5 pS/m
    sulphur: 10 ppm
  conductive:
    builtin: methanol
    conductivity: 1000000 pS/m
routes:
  line:
    - tank: supply
      surface: 5 m
    - pump: test pump
      curve: [[0 m^3/h, 60 m], [300 m^3/h, 55 m], [600 m^3/h, 40 m]]
      pushes: to-carrier
      speed: 2960 rpm
      inertia: 0.5 kg*m^2
    - pipe: main
      length: 800 m
      inside_diameter: 300 mm
      wall: 8 mm
      wave_speed: 1000 m/s
      friction_factor: 0.015
      design_pressure: 9 barg
    - hose: fill hose
      length: 5 m
      inside_diameter: 100 mm
      wave_speed: 300 m/s
      rated_working_pressure: 10 barg
    - valve: end valve
      type: ball
      kv: 2000
    - tank: receiver
      surface: 5 m
cases:
  - name: fast closure
    route: line
    product: {product}
    events:
      - {{at: 0 s, trip: test pump}}
      - {{at: 0 s, close: end valve, stroke: 4 s}}
{carrier}
"""

M3H = 1.0 / 3600.0


def terminal(tmp_path, product="water", carrier=""):
    path = tmp_path / "pumped.yaml"
    path.write_text(LINE.format(product=product, carrier=carrier), encoding="utf-8")
    return load(str(path))


@pytest.fixture(scope="module")
def searched(tmp_path_factory):
    t = terminal(tmp_path_factory.mktemp("rate"))
    return t, rate_limits(t, t.cases[0])


def test_highest_rate_holds_and_5_percent_more_does_not(searched):
    t, rc = searched
    rate = rc.surge.rate
    assert rate is not None and 0.0 < rate < rc.reach
    # the definition of the highest safe rate (common practice, no source): the case's ESD as
    # set keeps every limit at it, as `esdsurge check --rate` judges it ...
    assert check(t, rate=rate).cases[0].verdict == "pass"
    # ... and breaks one at 105 % of it
    assert check(t, rate=1.05 * rate).cases[0].verdict == "fail"
    # every rate sampled below it passes, the one just above fails
    assert all(p.ok for p in rc.points if p.value <= rate / M3H + 1e-9)
    fails = [p.value for p in rc.points if not p.ok]
    assert min(fails) - rate / M3H <= max(1.0, 0.005 * rate / M3H) + 1e-9


def test_every_limit_is_reported_and_the_lowest_governs(searched):
    _, rc = searched
    names = [lim.name for lim in rc.limits]
    assert names[:3] == ["surge", "pumps", "static"]
    assert rc.rate_max == min(lim.rate for lim in rc.limits if lim.rate is not None)
    assert rc.governed_by == "surge"
    # the pumps' reach is the natural operating point of the running pump
    assert rc.limits[1].rate == pytest.approx(rc.reach)


def test_static_limit_of_the_smallest_bore(tmp_path):
    t = terminal(tmp_path, product="fuel")
    limits, initial, _ = other_limits(t, t.cases[0], +1)
    static = next(lim for lim in limits if lim.name == "static")
    # ISGOTT 5th ed. 11.1.7: 7 m/s in the smallest section of the line, here the 100 mm hose;
    # 7 m/s x pi/4 x 0.1^2 m^2 = 197.9 m^3/h (area arithmetic)
    assert static.rate / M3H == pytest.approx(197.92, abs=0.01)
    assert "fill hose" in static.basis
    assert initial is None  # no tank inlets given


def test_conductive_product_has_no_isgott_velocity_limit(tmp_path):
    t = terminal(tmp_path, product="conductive")
    limits, _, notes = other_limits(t, t.cases[0], +1)
    # ISGOTT 5th ed. 11.1.7.9: the limits are for static accumulators (< 50 pS/m)
    assert not any(lim.name == "static" for lim in limits)
    assert any("not a static accumulator" in n for n in notes)


def test_carrier_venting_and_initial_rate(tmp_path):
    carrier = (
        "    carrier: {kind: barge, vent_capacity: 1250 m^3/h, inlet_diameter: 250 mm, inlets: 2}"
    )
    t = terminal(tmp_path, product="fuel", carrier=carrier)
    limits, initial, _ = other_limits(t, t.cases[0], +1)
    vent = next(lim for lim in limits if lim.name == "venting")
    # IMO MSC/Circ.585 2.7.2.1: 1250 m^3/h of venting allows 1000 m^3/h
    assert vent.rate / M3H == pytest.approx(1000.0)
    # ISGOTT 5th ed. Fig. 11.2: two 250 mm inlets at 1 m/s, printed 366 m^3/h (4 %)
    assert initial.rate / M3H == pytest.approx(366.0, rel=0.04)
    # discharging, the carrier's venting does not limit the rate
    limits, initial, notes = other_limits(t, t.cases[0], -1)
    assert not any(lim.name == "venting" for lim in limits) and initial is None


def test_road_tanker_fill_pipe_rule(tmp_path):
    t = terminal(tmp_path, product="fuel", carrier="    carrier: {kind: road tanker}")
    limits, _, _ = other_limits(t, t.cases[0], +1)
    static = next(lim for lim in limits if lim.name == "static")
    # IEC TS 60079-32-1 (REFERENCES 5.2): low-sulphur fuel at 5 pS/m, v d <= 0.25 m^2/s; the
    # fill pipe defaults to the last line before the carrier, the 100 mm hose: 2.5 m/s,
    # 70.7 m^3/h
    assert static.rate / M3H == pytest.approx(70.69, abs=0.01)
    assert "IEC TS 60079-32-1" in static.basis
    t2 = dataclasses.replace(t.cases[0], carrier=Carrier(kind="rail car", fill_pipe=0.08))
    limits, _, _ = other_limits(t, t2, +1)
    static = next(lim for lim in limits if lim.name == "static")
    # 0.25 / 0.08 = 3.125 m/s in an 80 mm fill pipe: 56.5 m^3/h
    assert static.rate / M3H == pytest.approx(56.55, abs=0.01)


def test_governing_limit():
    surge = RateLimit("surge", 0.30, "")
    assert govern([surge, RateLimit("pumps", 0.4, ""), RateLimit("venting", 0.2, "")]) == (
        0.2,
        "venting",
    )
    # a surge limit that holds to the pumps' reach gives way to the pumps
    held = RateLimit("surge", 0.4, "", bound="at least")
    assert govern([held, RateLimit("pumps", 0.4, "")]) == (0.4, "pumps")
    # no safe rate at all
    assert govern([RateLimit("surge", None, ""), RateLimit("pumps", 0.4, "")]) == (None, "surge")


def test_reader_takes_the_new_keys(tmp_path):
    carrier = (
        "    carrier: {kind: rail car, vent_capacity: 100 m^3/h, inlet_diameter: 100 mm, "
        "inlets: 2, fill_pipe: 4 in}"
    )
    t = terminal(tmp_path, product="fuel", carrier=carrier)
    c = t.cases[0].carrier
    assert c.kind == "rail car" and c.inlets == 2
    assert c.vent_capacity == pytest.approx(100.0 * M3H)
    assert c.fill_pipe == pytest.approx(0.1016)
    fuel = t.products["fuel"]
    assert fuel.conductivity == pytest.approx(5e-12)
    assert fuel.sulphur == pytest.approx(10e-6)
