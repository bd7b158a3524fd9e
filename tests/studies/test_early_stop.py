"""Early stop of failing members in the searches: the verdict and the spill stay those of the whole
run.

A run's highest pressures only rise, its lowest only fall and its cavities only grow, so a member
beyond a limit fails whatever follows (a property of the envelope the engine keeps, no outside
source). These tests run the same members twice, once with the searches' stop rule and once kept
whole (``keep=True``), and compare what the searches use.
"""

import math
from pathlib import Path

import numpy as np
import pytest

from esdsurge.engine import StopRule, Variant, simulate
from esdsurge.studies.batch import Evaluator
from esdsurge.terminal import load

DEMO = Path(__file__).resolve().parents[2] / "terminals" / "jetty.yaml"

MICHAUD = """
format: 1
terminal: early stop test line (invented)
site: {temperature: 20 degC}
products:
  water: {builtin: water}
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
    spill_limit: 50 m^3
    events:
      - {at: 1 s, close: end valve, stroke: 20 s}
"""


def _both(terminal, case, valve, strokes):
    """The members at ``strokes`` judged with the stop rule and kept whole; the node updates
    of each pass."""
    ev = Evaluator(terminal, case, concurrent=False)
    variants = [Variant(strokes=((valve, s),)) for s in strokes]
    stopped = ev.evaluate(variants)
    n_stopped = ev.node_updates
    whole = ev.evaluate(variants, keep=True)
    return ev, stopped, whole, n_stopped, ev.node_updates - n_stopped


def _same_verdict(stopped, whole, ev, variant):
    assert stopped.limits_ok == whole.limits_ok
    assert stopped.spill == pytest.approx(whole.spill, rel=1e-9, abs=1e-12)
    assert stopped.spill_ok == whole.spill_ok
    assert whole.stopped is None
    if not whole.limits_ok:
        # the breaches found by the stop are among the whole run's, and there is one at least
        broken = {(b.element, b.what) for b in stopped.breaches}
        assert broken and broken <= {(b.element, b.what) for b in whole.breaches}
        assert stopped.stopped is not None
        assert ev.shut_time(variant) <= stopped.stopped < whole.duration
    else:
        assert stopped.stopped is None
        assert stopped.peak_ratio == whole.peak_ratio
        assert stopped.measures == whole.measures


def test_a_surge_over_the_limit_stops_its_member_and_keeps_verdict_and_spill(tmp_path):
    path = tmp_path / "line.yaml"
    path.write_text(MICHAUD, encoding="utf-8")
    t = load(str(path))
    strokes = [2.0, 60.0]  # 2 s breaks the design pressure (Joukowsky 2 bar), 60 s does not
    ev, stopped, whole, n_stop, n_whole = _both(t, t.cases[0], "end valve", strokes)
    assert [o.limits_ok for o in whole] == [False, True]
    assert whole[0].breaches[0].what == "highest pressure"
    for s, o_stop, o_whole in zip(strokes, stopped, whole, strict=True):
        _same_verdict(o_stop, o_whole, ev, Variant(strokes=(("end valve", s),)))
    assert n_stop < n_whole


def test_column_separation_on_the_jetty_stops_its_member_and_keeps_verdict_and_spill():
    t = load(str(DEMO))
    case = t.cases[0]  # loading, shore ESD valve closes (spill limit 6 m3)
    valve = "shore ESD valve"
    strokes = [10.5, 40.0]
    ev, stopped, whole, n_stop, n_whole = _both(t, case, valve, strokes)
    assert [o.limits_ok for o in whole] == [False, True]
    assert any(b.what == "column separation" for b in whole[0].breaches)
    for s, o_stop, o_whole in zip(strokes, stopped, whole, strict=True):
        _same_verdict(o_stop, o_whole, ev, Variant(strokes=((valve, s),)))
    assert n_stop < n_whole


def test_a_bound_never_reached_or_a_late_start_never_stops():
    t = load(str(DEMO))
    case = t.cases[0]
    route, fluid = t.routes[case.route], t.products[case.product]
    v = [Variant(strokes=(("shore ESD valve", 5.0),))]
    kw = {"atmosphere_abs": t.atmosphere_abs, "variants": v, "duration": 15.0}
    whole = simulate(route, fluid, case, **kw)
    names = list(whole.elements)
    unreachable = StopRule(max_abs=tuple((n, 1e9) for n in names), after=(0.0,))
    late = StopRule(no_cavity=tuple(names), cavity=0.0, after=(20.0,))
    soon = StopRule(no_cavity=tuple(names), cavity=0.0, after=(0.0,))
    for rule in (unreachable, late):
        r = simulate(route, fluid, case, stop=rule, **kw)
        assert math.isnan(r.stopped[0])
        assert np.array_equal(r.p_max_abs, whole.p_max_abs)
        assert r.node_updates == whole.node_updates
    # a 5 s stroke forms a cavity: the member stops, and the series after it are not made up
    r = simulate(route, fluid, case, stop=soon, **kw)
    assert 0.0 < r.stopped[0] < 15.0
    late_samples = r.time > r.stopped[0] + 0.01
    assert np.all(np.isnan(r.p_in_abs[0][:, late_samples]))
    assert np.all(np.isfinite(r.p_in_abs[0][:, r.time < r.stopped[0] - 0.01]))
    assert r.node_updates < whole.node_updates


def test_a_stop_rule_naming_an_unknown_element_is_refused():
    t = load(str(DEMO))
    case = t.cases[0]
    with pytest.raises(ValueError, match="no element named 'nowhere'"):
        simulate(
            t.routes[case.route],
            t.products[case.product],
            case,
            atmosphere_abs=t.atmosphere_abs,
            duration=0.1,
            stop=StopRule(max_abs=(("nowhere", 1e6),), after=(0.0,)),
        )


def test_a_member_whose_spill_is_not_needed_stops_at_its_cavity_before_the_valve_shuts():
    """A search that does not need a member's spill (``no_spill``) lets a counted cavity stop
    it before its valve has shut: same verdict, the same cavity breach, less work, and no
    spill (only part of it had passed); a passing member is not touched."""
    t = load(str(DEMO))
    case = t.cases[0]  # loading, shore ESD valve closes: 10.5 s forms a cavity, 40 s does not
    valve = "shore ESD valve"
    variants = [Variant(strokes=((valve, s),)) for s in (10.5, 40.0)]
    ev = Evaluator(t, case, concurrent=False)
    at_shut = ev.evaluate(variants)
    n_shut = ev.node_updates
    early = ev.evaluate(variants, no_spill=[True, True])
    n_early = ev.node_updates - n_shut
    whole = ev.evaluate(variants, keep=True)
    shut = ev.shut_time(variants[0])
    assert [o.limits_ok for o in early] == [o.limits_ok for o in whole] == [False, True]
    cav = {(b.element, b.what) for b in early[0].breaches}
    assert cav and all(what == "column separation" for _, what in cav)
    assert cav <= {(b.element, b.what) for b in whole[0].breaches}
    assert early[0].stopped is not None and early[0].stopped < shut <= at_shut[0].stopped
    assert early[0].spill is None and early[0].spill_ok is None
    assert at_shut[0].spill == pytest.approx(whole[0].spill, rel=1e-9)
    # the passing member runs whole either way, bit for bit
    assert early[1].stopped is None
    assert (early[1].spill, early[1].measures) == (whole[1].spill, whole[1].measures)
    assert n_early < n_shut


def test_the_cavity_time_of_a_stop_rule_never_stops_for_pressure_before_its_after_time(tmp_path):
    """``cavity_after`` lets only a cavity stop a member early: the Michaud line's 2 s closure
    breaks its design pressure without a cavity, and still stops only after its valve shut."""
    path = tmp_path / "line.yaml"
    path.write_text(MICHAUD, encoding="utf-8")
    t = load(str(path))
    ev = Evaluator(t, t.cases[0], concurrent=False)
    v = Variant(strokes=(("end valve", 2.0),))
    out = ev.evaluate([v], no_spill=[True])[0]
    assert not out.limits_ok and out.breaches[0].what == "highest pressure"
    assert out.stopped is not None and out.stopped >= ev.shut_time(v)
    assert out.spill is not None and not math.isnan(out.spill)
