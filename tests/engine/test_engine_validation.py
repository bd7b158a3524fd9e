"""The engine against closed-form water-hammer results and a laboratory rig.

Each check names its source beside the assertion. Frictionless cases with a given wave speed and
``cavities=False`` are compared with the elastic theory to round-off or within the percentage
stated.
"""

from __future__ import annotations

import numpy as np
import pytest

from esdsurge.engine import simulate
from esdsurge.model import Case, Close, G, Hose, Pipe, Route, Tank, Valve


def _head(run, element: str, end: str = "in") -> np.ndarray:
    """Pressure head at an element's end [m] over the run's samples."""
    p = run.p_in_abs if end == "in" else run.p_out_abs
    return p[0, run.index(element)] / (run.steady[0].fluid.density * G)


def _window(run, t0: float, t1: float) -> np.ndarray:
    return (run.time > t0) & (run.time < t1)


def _close(valve: str, stroke: float) -> Case:
    return Case(name="c", route="r", product="water", events=(Close(element=valve, stroke=stroke),))


def test_instant_closure_gives_joukowsky_square_wave(eng):
    length, a, v0 = 1000.0, 1000.0, 1.0
    route = eng.tank_pipe_valve_tank(100.0, length, 0.5, a, v0)
    run = simulate(route, eng.WATER_20C, _close("valve", 0.0), cavities=False, duration=8.0)
    h = _head(run, "valve")
    rise = a * v0 / G
    period = 4.0 * length / a
    # Joukowsky (1898); Wylie & Streeter, Fluid Transients in Systems (1993) ch. 1-3: an
    # instantaneous stop raises the head by a V0 / g
    assert h.max() - h[0] == pytest.approx(rise, rel=0.01)
    # ibid.: frictionless, the valve head is a square wave of period 4L/a, +aV0/g for the
    # first half period, -aV0/g for the second
    for k in range(2):
        high = _window(run, k * period + 0.05, k * period + period / 2 - 0.05)
        low = _window(run, k * period + period / 2 + 0.05, (k + 1) * period - 0.05)
        assert np.allclose(h[high] - h[0], rise, rtol=0.01)
        assert np.allclose(h[low] - h[0], -rise, rtol=0.01)


def test_first_wave_through_a_junction(eng):
    d1, a1, l1 = 0.4, 1200.0, 600.0
    d2, a2, l2 = 0.25, 900.0, 300.0
    v2 = 1.5
    route = Route(
        name="r",
        elements=(
            Tank(name="upper tank", surface=150.0),
            eng.pipe("wide", l1, d1, a1),
            eng.pipe("narrow", l2, d2, a2),
            eng.valve("valve", eng.flow_area_for(eng.area(d2) * v2, 150.0), d2),
            Tank(name="lower tank", surface=0.0),
        ),
    )
    run = simulate(route, eng.WATER_20C, _close("valve", 0.0), cavities=False, duration=2.0)
    # the grid runs at L/(N dt); the theory is checked at the wave speeds it runs with
    a1u, a2u = run.wave_speed_used[0, 1], run.wave_speed_used[0, 2]
    incident = a2u * v2 / G
    y1, y2 = eng.area(d1) / a1u, eng.area(d2) / a2u
    s = 2.0 * y2 / (y1 + y2)
    r = s - 1.0
    h_junction = _head(run, "narrow", "in")
    h_valve = _head(run, "valve")
    transmitted = h_junction[_window(run, l2 / a2 + 0.03, l2 / a2 + 0.6)] - h_junction[0]
    # Wylie & Streeter (1993) ch. 2, series junction: the transmitted head is
    # s = 2 (A2/a2) / (A1/a1 + A2/a2) of the incident wave (incident from side 2)
    assert np.allclose(transmitted / incident, s, rtol=1e-6)
    # ibid.: the reflected wave is r = s - 1; at the shut valve it doubles, 1 + 2r
    second = h_valve[_window(run, 2 * l2 / a2 + 0.03, 4 * l2 / a2 - 0.03)] - h_valve[0]
    assert np.allclose((second / incident - 1.0) / 2.0, r, rtol=1e-6)


def test_slow_linear_closure_matches_michaud(eng):
    # REFERENCES.md §9 check 2: L = 1000 m, V0 = 2 m/s, t_c = 10 s, a = 1000 m/s
    length, a, v0, tc = 1000.0, 1000.0, 2.0, 10.0
    # the valve takes nearly all the head, so that the flow falls linearly with its area
    route = eng.tank_pipe_valve_tank(20000.0, length, 0.3, a, v0)
    run = simulate(route, eng.WATER_20C, _close("valve", tc), cavities=False, duration=2 * tc)
    h = _head(run, "valve")
    michaud = 2.0 * length * v0 / (G * tc)
    # Michaud (1878) as in REFERENCES.md §1.1 and §9 (40.77 m with g = 9.81, tolerance 1e-3):
    # a linear flow reduction over t_c > 2L/a raises the valve head by 2 L V0 / (g t_c)
    assert michaud == pytest.approx(40.77, rel=1e-3)
    assert h.max() - h[0] == pytest.approx(michaud, rel=0.01)


def test_line_packing_keeps_raising_the_valve_head(eng):
    length, d, a, f, v0 = 5000.0, 0.3, 1000.0, 0.03, 1.5
    route = eng.tank_pipe_valve_tank(150.0, length, d, a, v0, friction_factor=f)
    run = simulate(route, eng.WATER_20C, _close("valve", 0.0), cavities=False, duration=12.0)
    h = _head(run, "valve")
    t = run.time
    after = h[np.searchsorted(t, 0.1)] - h[0]
    before_return = h[np.searchsorted(t, 2 * length / a - 0.1)] - h[0]
    friction_loss = f * length / d * v0**2 / (2 * G)
    # Joukowsky (1898): the first jump is a V0 / g (153 m here)
    assert after == pytest.approx(a * v0 / G, rel=0.01)
    # Wylie & Streeter (1993) ch. 3, line packing: with friction the valve head keeps rising
    # after the closure until the wave returns, by the order of the steady friction loss
    # (57 m here; the magnitude from memory)
    assert 0.5 * friction_loss < before_return - after < 1.2 * friction_loss


def test_upstream_closure_separates_the_column_and_the_collapse_exceeds_joukowsky(eng):
    water = eng.WATER_20C
    length, d, a, v0 = 600.0, 0.3, 1000.0, 1.5
    route = Route(
        name="r",
        elements=(
            Tank(name="upper tank", surface=30.0),
            eng.valve("valve", eng.flow_area_for(eng.area(d) * v0, 30.0), d),
            eng.pipe("line", length, d, a),
            Tank(name="lower tank", surface=0.0),
        ),
    )
    run = simulate(route, water, _close("valve", 0.0), duration=25.0)
    i = run.index("line")
    p_in = run.p_in_abs[0, i]
    # Bergant & Simpson, J. Hydraul. Eng. 125(8) (1999), discrete vapour cavity model: the
    # pressure is held at the vapour pressure, never below
    assert np.nanmin(run.p_min_abs[0]) >= water.vapour_pressure_abs * (1 - 1e-12)
    assert run.envelopes[0].p_min_abs.min() >= water.vapour_pressure_abs * (1 - 1e-12)
    # ibid.: a vapour cavity opens behind the shut valve (chainage 0 of the line) ...
    assert run.cavity_max[0, i] > 0.1
    assert run.x_cavity_max[0, i] == 0.0
    # ... and collapses: the highest pressure follows the largest cavity, and the valve side
    # is well above vapour pressure afterwards
    assert run.t_p_max[0, i] > run.t_cavity_max[0, i]
    assert p_in[run.time > run.t_p_max[0, i]].max() > 10 * water.vapour_pressure_abs
    # Bergant, Simpson & Tijsseling, J. Fluids Struct. 22 (2006): the collapse of a column
    # separation can exceed the Joukowsky rise (16.7 bar against 15.0 bar here, frictionless)
    assert run.p_max_abs[0, i] - p_in[0] > water.density * a * v0


def test_adelaide_rig_first_plateau(eng):
    # REFERENCES.md §2.1: Adelaide copper rig, D = 22.14 mm, e = 1.63 mm, a = 1319 m/s (read);
    # length 37.23 m, rise 2.03 m, fast ball valve closing in about 9 ms (from memory)
    length, d, a, v0 = 37.23, 0.02214, 1319.0, 0.30
    copper = Pipe(
        name="copper pipe",
        length=length,
        inside_diameter=d,
        wall=0.00163,
        youngs_modulus=1.2e11,
        poisson=0.34,
        roughness=1.5e-6,
        wave_speed=a,
        profile=((0.0, 0.0), (length, 2.03)),
    )
    head = 32.0
    route = Route(
        name="r",
        elements=(
            Tank(name="tank 1", surface=2.03 + head),
            copper,
            # the valve takes the head that the pipe does not lose (about 0.28 m of friction)
            eng.valve("ball valve", eng.flow_area_for(eng.area(d) * v0, head - 0.28), d),
            # the valve discharges into a tank whose liquid stands at the valve's level
            Tank(name="tank 2", surface=2.03),
        ),
    )
    run = simulate(route, eng.WATER_15C, _close("ball valve", 0.009), duration=0.5)
    h = _head(run, "ball valve")
    plateau = h[_window(run, 0.015, 2 * length / a - 0.002)] - h[0]
    assert run.rate[0] / eng.area(d) == pytest.approx(v0, rel=0.01)
    # REFERENCES.md §2.1 (derived): the first plateau at the valve is H0 + a V0 / g, +40.3 m
    # for V0 = 0.30 m/s, within a few % (steady friction; the line packing is small)
    assert plateau.mean() == pytest.approx(40.3, rel=0.02)
    assert plateau.max() == pytest.approx(40.3, rel=0.03)


def test_halving_the_time_step_moves_the_peaks_little(eng):
    d = 0.2
    route = Route(
        name="r",
        elements=(
            Tank(name="upper tank", surface=25.0),
            Pipe(
                name="line",
                length=400.0,
                inside_diameter=d,
                wall=0.006,
                youngs_modulus=2.07e11,
                poisson=0.3,
                roughness=4.5e-5,
                profile=((0.0, 0.0), (200.0, 3.0), (400.0, 1.0)),
            ),
            Valve(name="esd valve", valve_type="ball", flow_area=0.5 * eng.area(d), diameter=d),
            Hose(
                name="hose",
                length=12.0,
                inside_diameter=d,
                wave_speed=300.0,
                roughness=1e-4,
                profile=((0.0, 1.0), (12.0, 0.0)),
            ),
            Tank(name="lower tank", surface=2.0),
        ),
    )
    case = _close("esd valve", 3.0)
    runs = [simulate(route, eng.WATER_20C, case, duration=10.0, dt_max=0.004 / k) for k in (1, 2)]
    assert runs[1].dt[0] == pytest.approx(runs[0].dt[0] / 2)
    change = np.abs(runs[0].p_max_abs - runs[1].p_max_abs) / runs[1].p_max_abs
    # common practice, no source: on a converged grid, halving dt moves the peaks by < 2 %
    assert np.nanmax(change) < 0.02
