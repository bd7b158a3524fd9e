"""Properties of the engine on random small routes (hypothesis)."""

from __future__ import annotations

import math

import numpy as np
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from esdsurge.engine import simulate
from esdsurge.errors import SteadyStateError
from esdsurge.model import Case, Close, Hose, Pump, Route, Tank, Trip, Valve

from_01 = st.floats(0.0, 1.0)


@st.composite
def routes(draw, pipe_builder):
    """A tank, maybe a pump, one to three lines with a valve among them, a tank."""
    n_lines = draw(st.integers(1, 3))
    with_pump = draw(st.booleans())
    up = draw(st.floats(5.0, 40.0))
    els: list = [Tank(name="upper tank", surface=up)]
    if with_pump:
        h0 = draw(st.floats(30.0, 90.0))
        els.append(
            Pump(
                name="pump",
                curve=((0.0, h0), (0.05, 0.95 * h0), (0.1, 0.8 * h0)),
                rated_speed=draw(st.floats(150.0, 320.0)),
                inertia=draw(st.floats(0.2, 3.0)),
                efficiency=0.75,
                check_valve=draw(st.booleans()),
            )
        )
    valve_at = draw(st.integers(0, n_lines))
    z = 0.0
    for i in range(n_lines):
        if i == valve_at:
            d = draw(st.floats(0.05, 0.4))
            els.append(
                Valve(
                    name="valve",
                    valve_type=draw(st.sampled_from(["ball", "butterfly", "gate", "globe"])),
                    flow_area=draw(st.floats(0.1, 1.0)) * math.pi * d * d / 4,
                    diameter=d,
                )
            )
        length = draw(st.floats(5.0, 400.0))
        d = draw(st.floats(0.05, 0.4))
        z_end = draw(st.floats(-8.0, 8.0))
        profile = (
            (0.0, z),
            (length * draw(st.floats(0.2, 0.8)), draw(st.floats(-8.0, 12.0))),
            (length, z_end),
        )
        if draw(st.booleans()):
            els.append(
                pipe_builder(
                    f"line {i}",
                    length,
                    d,
                    draw(st.floats(600.0, 1400.0)),
                    friction_factor=draw(st.floats(0.0, 0.04)),
                    profile=profile,
                )
            )
        else:
            els.append(
                Hose(
                    name=f"line {i}",
                    length=length,
                    inside_diameter=d,
                    wave_speed=draw(st.floats(150.0, 600.0)),
                    roughness=1e-4,
                    profile=profile,
                )
            )
        z = z_end
    if valve_at == n_lines:
        els.append(Valve(name="valve", valve_type="ball", flow_area=0.02, diameter=0.2))
    # the carrier tank covers the end of the line; with a pump it stands higher than the
    # shore tank (the pump, not gravity, drives the flow)
    down = max(z, 0.0) + draw(st.floats(0.5, 12.0))
    if with_pump:
        down = max(down, up + draw(st.floats(1.0, 20.0)))
    else:
        down = min(down, up - 1.0)
        assume(down > max(z, 0.0))
    els.append(Tank(name="lower tank", surface=down))
    events = [
        Close(element="valve", at=draw(from_01), stroke=draw(st.sampled_from([0.0, 0.5, 3.0])))
    ]
    if with_pump:
        events.append(Trip(element="pump", at=draw(from_01)))
    route = Route(name="r", elements=tuple(els))
    return route, Case(name="c", route="r", product="water", events=tuple(events))


@settings(
    max_examples=25,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.filter_too_much],
)
@given(data=st.data())
def test_random_routes_stay_finite_above_vapour_and_balance_their_volume(eng, data):
    water = eng.WATER_20C
    route, case = data.draw(routes(eng.pipe))
    try:
        run = simulate(route, water, case, duration=3.0, max_nodes=200)
    except SteadyStateError:
        assume(False)
        return
    # a steady state already below vapour pressure at a high point is the input's problem
    assume(all(e.p_min_abs > water.vapour_pressure_abs for e in run.steady[0].elements))
    for arr in (run.p_in_abs, run.p_out_abs, run.q_in, run.q_out, run.pump_speed):
        assert np.all(np.isfinite(arr))
    assert np.all(np.isfinite(run.p_max_abs)) and np.all(np.isfinite(run.p_min_abs))
    # Bergant & Simpson, J. Hydraul. Eng. 125(8) (1999), discrete vapour cavity model: the
    # pressure never falls below the vapour pressure (to round-off)
    assert np.min(run.p_min_abs) >= water.vapour_pressure_abs * (1.0 - 1e-9)
    assert np.min(run.envelopes[0].p_min_abs) >= water.vapour_pressure_abs * (1.0 - 1e-9)
    # common practice, no source: volume in - out = change of the volume held (compression,
    # wall stretch, cavities); the discrete error is first order in dt (the cavity volume and
    # a closure within one step), so it is bounded by a few Q dt
    q_max = float(np.max(np.abs(run.q_in)))
    moved = abs(run.volume_through[0, 0]) + abs(run.volume_through[0, -1]) + run.cavity_max.max()
    assert abs(run.volume_balance_error[0]) <= 5.0 * q_max * run.dt[0] + 1e-3 * moved + 1e-9
