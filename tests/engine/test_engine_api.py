"""The engine's interface: batches and variants, the grid, pumps, events, the demo terminal."""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from esdsurge.engine import Variant, default_duration, simulate
from esdsurge.engine.grid import choose_time_step
from esdsurge.errors import InputError
from esdsurge.model import Case, Close, Coupling, Hose, Pump, Release, Route, Tank, Trip, Valve
from esdsurge.physics import pumps

DEMO = Path(__file__).resolve().parents[2] / "terminals" / "jetty.yaml"


def _line_with_hose(eng) -> Route:
    """Tank, pump (no trip: a rate can be throttled at its discharge), pipe, valve, hose, tank."""
    d = 0.2
    return Route(
        name="r",
        elements=(
            Tank(name="upper tank", surface=5.0),
            Pump(name="pump", curve=((0.0, 40.0), (0.05, 37.0), (0.1, 28.0))),
            eng.pipe("line", 300.0, d, 1100.0, friction_factor=0.02),
            Valve(name="esd valve", valve_type="ball", flow_area=0.5 * eng.area(d), diameter=d),
            Hose(name="hose", length=15.0, inside_diameter=d, wave_speed=300.0, roughness=1e-4),
            Tank(name="lower tank", surface=5.0),
        ),
    )


def _close(stroke: float = 2.0) -> Case:
    return Case(
        name="c", route="r", product="water", events=(Close(element="esd valve", stroke=stroke),)
    )


def test_importing_the_engine_compiles_nothing():
    code = "import sys, esdsurge.engine; print('numba' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_batch_members_are_the_runs_they_would_be_alone(eng):
    route, case = _line_with_hose(eng), _close()
    variants = [
        Variant(),
        Variant(stroke_scale=2.0),
        Variant(wave_speed_scale=(("hose", 0.5),)),
        Variant(rate=0.02),
    ]
    batch = simulate(route, eng.WATER_20C, case, variants=variants, duration=6.0)
    for b, v in enumerate(variants):
        alone = simulate(route, eng.WATER_20C, case, variants=[v], duration=6.0)
        assert alone.dt[0] == batch.dt[b]
        np.testing.assert_array_equal(alone.p_max_abs[0], batch.p_max_abs[b])
        np.testing.assert_array_equal(alone.p_in_abs[0], batch.p_in_abs[b])
        np.testing.assert_array_equal(alone.volume_through[0], batch.volume_through[b])


def test_variants_change_what_they_say(eng):
    route, case = _line_with_hose(eng), _close()
    run = simulate(
        route,
        eng.WATER_20C,
        case,
        variants=[
            Variant(),
            Variant(strokes=(("esd valve", 8.0),)),
            Variant(wave_speed_scale=(("hose", 0.5), ("line", 1.1))),
            Variant(friction_scale=2.0),
            Variant(rate=0.02),
            Variant(characteristic_power=2.0),
        ],
        duration=10.0,
    )
    line, valve_, hose = run.index("line"), run.index("esd valve"), run.index("hose")
    # a slower stroke: a lower peak at the valve, more volume through it
    assert run.p_max_abs[1, valve_] < run.p_max_abs[0, valve_]
    assert run.volume_through[1, valve_] > run.volume_through[0, valve_]
    # wave speeds asked for, by kind and by name
    assert run.wave_speed[2, hose] == pytest.approx(150.0)
    assert run.wave_speed[2, line] == pytest.approx(1210.0)
    # friction: the steady state is solved again with twice the factor, so the flow drops
    assert run.steady[3].element("line").friction_factor == pytest.approx(0.04)
    assert abs(run.rate[3]) < abs(run.rate[0])
    # the rate asked for
    assert run.rate[4] == pytest.approx(0.02)
    # a characteristic raised to a power > 1 throttles earlier: less volume through
    assert run.volume_through[5, valve_] < run.volume_through[0, valve_]


def test_time_step_keeps_the_wave_speed_adjustment_small():
    travel = [1.26, 0.024, 0.033, 0.079, 0.08]
    dt, n = choose_time_step(
        travel, min_reaches=[1, 8, 1, 1, 1], dt_max=0.02, max_nodes=2000, tolerance=0.02
    )
    adjustment = np.asarray(travel) / (n * dt) - 1.0
    # the requirement: within a few percent, the resolution floors kept
    assert np.max(np.abs(adjustment)) <= 0.02
    assert n[1] >= 8
    assert np.sum(n + 1) <= 2000
    # a single line is exact
    dt, n = choose_time_step([2.0], min_reaches=[1], dt_max=0.1, max_nodes=500, tolerance=0.0)
    assert dt == pytest.approx(0.1) and n.tolist() == [20]


def test_run_reports_its_grid(eng):
    run = simulate(_line_with_hose(eng), eng.WATER_20C, _close(), duration=3.0)
    line, hose = run.index("line"), run.index("hose")
    assert run.reaches[0, line] >= 1 and run.reaches[0, hose] >= 1
    used = np.array([300.0, 15.0]) / (run.reaches[0, [line, hose]] * run.dt[0])
    np.testing.assert_allclose(run.wave_speed_used[0, [line, hose]], used)
    assert np.nanmax(np.abs(run.wave_speed_adjustment)) <= 0.02
    assert run.reaches[0, run.index("esd valve")] == 0
    assert run.time[-1] == pytest.approx(3.0) and len(run.time) <= 2000


def test_default_duration_covers_the_events_and_ten_periods(eng):
    run = simulate(_line_with_hose(eng), eng.WATER_20C, _close(stroke=20.0))
    period = 2 * (300.0 / 1100.0 + 15.0 / 300.0)
    assert run.duration >= 10 * period - 1e-9
    assert run.duration >= 20.0 + 5 * period - 0.01
    assert default_duration([2.0], [26.0]) == 36.0


def test_volume_through_a_closing_valve_is_the_integral_of_its_flow(eng):
    run = simulate(_line_with_hose(eng), eng.WATER_20C, _close(stroke=4.0), duration=8.0)
    i = run.index("esd valve")
    integral = np.trapezoid(run.q_in[0, i], run.time)
    assert run.volume_through[0, i] == pytest.approx(integral, rel=0.01)
    assert run.q_in[0, i, -1] == 0.0


def _pump_route(eng, check_valve: bool = True) -> Route:
    return eng.pumped_route(0.3, check_valve)


def test_pump_trip_follows_the_analytic_rundown(eng):
    case = Case(name="c", route="r", product="water", events=(Trip(element="pump", at=0.5),))
    run = simulate(_pump_route(eng), eng.WATER_20C, case, rundown="analytic", duration=6.0)
    st = run.steady[0]
    coeffs = pumps.fit_curve(_pump_route(eng).element("pump").curve)
    head = pumps.pump_head(coeffs, st.flow, 1.0, 1)
    power = pumps.shaft_power(eng.WATER_20C.density, st.flow, head, 0.8)
    tau = pumps.rundown_time_constant(1.6, 2980 * 2 * math.pi / 60, power)
    t = run.time
    expected = np.where(t < 0.5, 1.0, 1.0 / (1.0 + np.maximum(t - 0.5, 0.0) / tau))
    # the series is interpolated linearly between time steps: away from the trip instant it
    # is off by at most dt^2/8 max|s''| = dt^2 / (4 tau^2)
    away = np.abs(t - 0.5) > 2 * run.dt[0]
    bound = run.dt[0] ** 2 / (4 * tau**2)
    # REFERENCES.md §8 (Thorley 2004, from memory): w(t) = w0 / (1 + t/tau), tau = J w0^2 / P0
    np.testing.assert_allclose(run.pump_speed[0, 0][away], expected[away], rtol=0, atol=bound)


def test_torque_rundown_starts_as_the_analytic_one_and_keeps_slowing(eng):
    case = Case(name="c", route="r", product="water", events=(Trip(element="pump", at=0.0),))
    runs = [
        simulate(_pump_route(eng), eng.WATER_20C, case, rundown=mode, duration=20.0)
        for mode in ("analytic", "torque")
    ]
    s_a, s_t = runs[0].pump_speed[0, 0], runs[1].pump_speed[0, 0]
    k = np.searchsorted(runs[0].time, 0.05)
    # both start from J dw/dt = -P0/w0 at the operating point (REFERENCES.md §8)
    assert s_t[k] == pytest.approx(s_a[k], rel=0.01)
    assert np.all(np.diff(s_t) <= 1e-12)
    assert 0.0 <= s_t[-1] < 0.3


def test_check_valve_holds_against_the_higher_tank(eng):
    case = Case(name="c", route="r", product="water", events=(Trip(element="pump", at=0.0),))
    with_check = simulate(_pump_route(eng, True), eng.WATER_20C, case, duration=20.0)
    without = simulate(_pump_route(eng, False), eng.WATER_20C, case, duration=20.0)
    i = with_check.index("pump")
    # the check valve shuts on reverse flow and stays shut while the pump cannot open it
    assert with_check.q_in[0, i].min() >= -1e-12
    assert with_check.q_in[0, i, -1] == 0.0
    assert without.q_in[0, i].min() < -0.01


def test_release_shuts_the_coupling_over_its_closing_time(eng):
    d = 0.2
    route = Route(
        name="r",
        elements=(
            Tank(name="upper tank", surface=20.0),
            eng.pipe("line", 200.0, d, 1100.0, friction_factor=0.02),
            Coupling(name="coupling", closing_time=3.0, flow_area=0.8 * eng.area(d), diameter=d),
            Hose(name="hose", length=10.0, inside_diameter=d, wave_speed=300.0, roughness=1e-4),
            Tank(name="lower tank", surface=2.0),
        ),
    )
    case = Case(name="c", route="r", product="water", events=(Release(element="coupling", at=1.0),))
    run = simulate(route, eng.WATER_20C, case, duration=6.0)
    q = run.q_in[0, run.index("coupling")]
    t = run.time
    assert np.all(q[t < 1.0] > 0.0)
    assert np.all(q[t > 4.0 + 1e-9] == 0.0)
    assert q[np.searchsorted(t, 3.0)] > 0.0


def test_an_event_on_the_wrong_kind_is_refused(eng):
    case = Case(name="c", route="r", product="water", events=(Trip(element="esd valve"),))
    with pytest.raises(InputError, match="'trip' needs a pump"):
        simulate(_line_with_hose(eng), eng.WATER_20C, case, duration=1.0)


def test_a_tripped_pump_needs_its_speed(eng):
    route = _pump_route(eng)
    els = list(route.elements)
    els[1] = Pump(name="pump", curve=els[1].curve)
    case = Case(name="c", route="r", product="water", events=(Trip(element="pump"),))
    with pytest.raises(InputError, match="needs the rated speed"):
        simulate(Route(name="r", elements=tuple(els)), eng.WATER_20C, case, duration=1.0)


@pytest.mark.skipif(not DEMO.exists(), reason="demo terminal missing")
def test_every_demo_case_runs():
    from esdsurge.terminal import load

    terminal = load(str(DEMO))
    for case in terminal.cases:
        fluid = terminal.products[case.product]
        run = simulate(
            terminal.routes[case.route], fluid, case, atmosphere_abs=terminal.atmosphere_abs
        )
        assert np.all(np.isfinite(run.p_max_abs)) and np.all(np.isfinite(run.p_in_abs))
        assert np.min(run.p_min_abs) >= fluid.vapour_pressure_abs * (1 - 1e-9)
        assert abs(run.initial_mismatch[0]) < 1e-6
        assert np.nanmax(np.abs(run.wave_speed_adjustment)) <= 0.02
        moved = np.abs(run.volume_through[0]).max() + run.cavity_max.max()
        assert abs(run.volume_balance_error[0]) < 0.01 * moved
        for i, e in enumerate(run.steady[0].elements):
            assert run.p_in_abs[0, i, 0] == pytest.approx(e.p_in_abs, abs=1.0)
            assert run.p_out_abs[0, i, 0] == pytest.approx(e.p_out_abs, abs=1.0)


def test_the_run_starts_at_the_steady_state_and_stays_there_without_events(eng):
    route = _line_with_hose(eng)
    quiet = Case(name="c", route="r", product="water")
    run = simulate(route, eng.WATER_20C, quiet, duration=3.0)
    st = run.steady[0]
    for i, e in enumerate(st.elements):
        # every element's end pressures at t = 0 are the steady state's, and nothing moves
        assert run.p_in_abs[0, i, 0] == pytest.approx(e.p_in_abs, abs=1.0)
        assert run.p_out_abs[0, i, 0] == pytest.approx(e.p_out_abs, abs=1.0)
        assert np.ptp(run.p_in_abs[0, i]) < 1.0
        assert np.ptp(run.q_in[0, i]) < 1e-9
