"""Mitigations in the engine: surge relief valves, accumulators, staged closure, pump ramp-down.

Every run here keeps the discrete vapour cavity model on (the engine's default).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from esdsurge.engine.simulate import simulate
from esdsurge.model import (
    STANDARD_ATMOSPHERE,
    Accumulator,
    Case,
    Close,
    G,
    Ramp,
    Relief,
    Route,
    Tank,
    Trip,
    Valve,
)

D = 0.3
H_UP = 50.0  # upper tank surface [m]
VELOCITY = 2.0  # [m/s]


def _route(eng, extra=(), *, length=1000.0, wave_speed=1000.0, head=H_UP, valve=None):
    """Upper tank -- frictionless line -- [extra] -- valve -- short tail -- lower tank at 0 m."""
    q = eng.area(D) * VELOCITY
    v = valve or eng.valve("valve", eng.flow_area_for(q, head), D)
    return Route(
        name="r",
        elements=(
            Tank(name="up", surface=head),
            eng.pipe("line", length, D, wave_speed),
            *extra,
            v,
            eng.pipe("tail", 10.0, D, wave_speed),
            Tank(name="down", surface=0.0),
        ),
    )


def _case(stroke: float, duration: float, travel=((0.0, 1.0), (1.0, 0.0))) -> Case:
    return Case(
        name="c",
        route="r",
        product="water",
        events=(Close(element="valve", stroke=stroke, travel=travel),),
        duration=duration,
    )


def _relief(eng, set_head: float, area_share: float, **kw) -> Relief:
    rho_g = eng.WATER_20C.density * G
    return Relief(
        name="relief",
        set_pressure_gauge=rho_g * set_head,
        full_open_pressure_gauge=rho_g * set_head * 1.1,
        flow_area=area_share * eng.area(D),
        opening_time=kw.pop("opening_time", 0.05),
        closing_time=kw.pop("closing_time", 0.5),
        **kw,
    )


def test_relief_valve_caps_the_surge_near_set_pressure_plus_accumulation(eng):
    # A fast closure (0.2 s, well inside 2L/a = 2 s) would raise the line by Joukowsky aV/g =
    # 204 m of head; a relief valve set at 90 m (gauge) with 10 % accumulation to full lift
    # must hold the line between its set and full-open pressures (the purpose of a relief
    # valve sized for the flow; common practice, no source). Its full-open flow (0.66 m^3/s
    # at 99 m) is well above the line's 0.14 m^3/s, so it never reaches full lift.
    rho_g = eng.WATER_20C.density * G
    case = _case(0.2, 12.0)
    bare = simulate(_route(eng), eng.WATER_20C, case)
    relief = _relief(eng, 90.0, 0.4)
    run = simulate(_route(eng, (relief,)), eng.WATER_20C, case)
    i = run.index("line")
    peak_bare = (bare.p_max_abs[0, i] - STANDARD_ATMOSPHERE) / rho_g
    peak = (run.p_max_abs[0, i] - STANDARD_ATMOSPHERE) / rho_g
    assert peak_bare > H_UP + 0.9 * 1000.0 * VELOCITY / G  # the surge the valve must stop
    assert 90.0 <= peak <= 99.0
    assert run.branch_time_over_capacity[0, 0] == 0.0
    assert 0.0 < run.branch_state_max[0, 0] < 1.0


def test_relieved_volume_balances_the_flow(eng):
    # No liquid is made or lost at the branch point: what enters the relief valve's point
    # from the shore minus what leaves it towards the closing valve is the relieved volume;
    # and over the whole route, in = out + relieved + stored (conservation of mass).
    case = _case(0.2, 12.0)
    run = simulate(_route(eng, (_relief(eng, 90.0, 0.4),)), eng.WATER_20C, case)
    through = run.volume_through[0]
    relieved = run.branch_volume[0, 0]
    assert relieved > 0.2  # most of the line's 0.14 m^3/s for several seconds
    assert through[run.index("relief")] - through[run.index("valve")] == pytest.approx(
        relieved, rel=1e-6
    )
    assert abs(run.volume_balance_error[0]) < 1e-6 * relieved
    # the sampled branch flow integrates to the same volume (trapezoid over the samples)
    q = run.branch_flow[0, 0]
    assert np.trapezoid(q, run.time) == pytest.approx(relieved, rel=0.01)


def test_relief_valve_that_is_too_small_says_so(eng):
    # A relief valve whose full-open flow (0.033 m^3/s at 99 m) is a quarter of the line's flow
    # is driven to full lift and beyond its full-open pressure: it is over capacity.
    rho_g = eng.WATER_20C.density * G
    case = _case(0.2, 12.0)
    run = simulate(_route(eng, (_relief(eng, 90.0, 0.02),)), eng.WATER_20C, case)
    i = run.index("relief")
    assert run.branch_capacity[0, 0] == pytest.approx(
        0.02 * eng.area(D) * math.sqrt(2.0 * G * 99.0), rel=1e-9
    )
    assert run.branch_time_over_capacity[0, 0] > 0.1
    assert run.branch_state_max[0, 0] == 1.0
    assert (run.p_max_abs[0, i] - STANDARD_ATMOSPHERE) / rho_g > 99.0 + 10.0
    assert run.branch_flow_max[0, 0] > run.branch_capacity[0, 0]


def test_relief_valve_cannot_snap_open(eng):
    # The opening moves at most full travel per opening time: 1 s here.
    case = _case(0.2, 6.0)
    relief = _relief(eng, 90.0, 0.02, opening_time=1.0)
    run = simulate(_route(eng, (relief,)), eng.WATER_20C, case, samples=6001)
    x = run.branch_state[0, 0]
    rate = np.diff(x) / np.diff(run.time)
    assert rate.max() <= 1.0 + 1e-6
    assert x.max() == pytest.approx(1.0)


def test_relief_that_would_be_open_before_the_trigger_is_refused(eng):
    from esdsurge.errors import InputError

    with pytest.raises(InputError, match="would be open before the trigger"):
        simulate(_route(eng, (_relief(eng, 20.0, 0.4),)), eng.WATER_20C, _case(0.2, 2.0))


def _accumulator(volume: float, precharge_abs: float, loss: float = 0.0) -> Accumulator:
    return Accumulator(
        name="accumulator",
        volume=volume,
        precharge_abs=precharge_abs,
        precharge_temperature=293.15,
        exponent=1.2,
        connection_diameter=0.2,
        connection_loss=loss,
    )


def test_accumulator_gas_follows_the_polytropic_law(eng):
    # With no connection loss the gas pressure is the line pressure at the connection, so
    # p V^n stays at its initial value (the polytropic gas law, p V^n = const) while the
    # vessel holds liquid; the initial volume is the pre-charge compressed isothermally
    # (Boyle's law): V0 = V p_pre / p0.
    rho_g = eng.WATER_20C.density * G
    acc = _accumulator(2.0, 3e5)
    run = simulate(_route(eng, (acc,)), eng.WATER_20C, _case(0.5, 30.0))
    j = run.index("accumulator")
    p = run.p_in_abs[0, j]
    vol = run.branch_state[0, 0]
    p0 = rho_g * H_UP + STANDARD_ATMOSPHERE
    assert vol[0] == pytest.approx(2.0 * 3e5 / p0, rel=1e-6)
    held = vol < 2.0 - 1e-9
    assert held.mean() > 0.9
    pvn = p[held] * vol[held] ** 1.2
    assert np.ptp(pvn) / pvn[0] < 2e-3
    assert run.branch_state_min[0, 0] < 0.7 * vol[0]  # the gas was really compressed


def _rigid_column_peak(eng, length, acc, stroke, head, duration):
    """Highest head at the accumulator by rigid-column theory with the gas law.

    The column of length L decelerates under the head difference between the upper tank and
    the accumulator, dQ/dt = g A (H_up - H_s) / L (frictionless rigid column: Wylie &
    Streeter, *Fluid Transients in Systems*, 1993, §1.3 and the air-chamber relations of
    §5.7); the gas follows p V^n = p0 V0^n; the valve passes Q_v = A_v(t) sqrt(2 g H_s)
    to the lower tank; dV/dt = -(Q - Q_v).
    """
    rho_g = eng.WATER_20C.density * G
    a_line = eng.area(D)
    q0 = a_line * VELOCITY
    av0 = eng.flow_area_for(q0, head)
    h_atm = STANDARD_ATMOSPHERE / rho_g
    p0 = rho_g * head + STANDARD_ATMOSPHERE
    v0 = acc.volume * acc.precharge_abs / p0
    c = p0 * v0**acc.exponent

    def h_s(v):  # gauge head at the accumulator
        return c / v**acc.exponent / rho_g - h_atm

    def rhs(t, y):
        q, v = y
        hs = h_s(v)
        av = av0 * max(0.0, 1.0 - t / stroke)
        qv = av * math.sqrt(2.0 * G * max(hs, 0.0))
        return [G * a_line * (head - hs) / length, -(q - qv)]

    sol = solve_ivp(rhs, (0.0, duration), [q0, v0], max_step=0.01, rtol=1e-9, atol=1e-12)
    return float(np.max(h_s(sol.y[1])))


def test_accumulator_on_a_slow_event_matches_rigid_column_theory(eng):
    # A 2000 m line, its valve closing in 20 s (5 pipeline periods), a 4 m^3 accumulator next
    # to the valve: the gas is ~20 times as compliant as the line, so the surge is a mass
    # oscillation of the column on the gas, which rigid-column theory describes. The engine's
    # elastic line and the ODE agree on the highest head within 3 %.
    rho_g = eng.WATER_20C.density * G
    length = 2000.0
    acc = _accumulator(4.0, 3e5)
    run = simulate(
        _route(eng, (acc,), length=length, wave_speed=1200.0), eng.WATER_20C, _case(20.0, 40.0)
    )
    j = run.index("accumulator")
    peak = (run.p_max_abs[0, j] - STANDARD_ATMOSPHERE) / rho_g
    expected = _rigid_column_peak(eng, length, acc, 20.0, H_UP, 40.0)
    assert expected > H_UP + 20.0  # a real surge to compare
    assert peak == pytest.approx(expected, rel=0.03)


def test_staged_closure_of_a_ball_valve_gives_a_lower_peak_than_linear(eng):
    # A ball valve passes most of its flow in the last part of its travel (installed in a line
    # whose friction takes most of the head), so a linear stroke wastes its first half and
    # stops the flow in a fraction of the stroke; closing fast to 45 % travel and then slowly
    # over the rest of the same total time spreads the flow reduction out and lowers the
    # peak (common practice, no source; Wylie & Streeter 1993, §3.5 on valve stroking, from
    # memory).
    rho_g = eng.WATER_20C.density * G
    length, ff, k_open = 2000.0, 0.02, 0.2
    loss = (ff * length / D + k_open) * VELOCITY**2 / (2.0 * G)
    ball = Valve(
        name="valve",
        valve_type="ball",
        flow_area=eng.area(D) / math.sqrt(k_open),
        diameter=D,
    )
    route = Route(
        name="r",
        elements=(
            Tank(name="up", surface=loss),
            eng.pipe("line", length, D, 1000.0, friction_factor=ff),
            ball,
            Tank(name="down", surface=0.0),
        ),
    )
    linear = simulate(route, eng.WATER_20C, _case(8.0, 30.0))
    staged = simulate(
        route, eng.WATER_20C, _case(8.0, 30.0, travel=((0.0, 1.0), (0.2, 0.45), (1.0, 0.0)))
    )
    assert linear.rate[0] == pytest.approx(eng.area(D) * VELOCITY, rel=0.01)
    i = route.index("line")
    lin = (linear.p_max_abs[0, i] - STANDARD_ATMOSPHERE) / rho_g
    stg = (staged.p_max_abs[0, i] - STANDARD_ATMOSPHERE) / rho_g
    assert lin > loss + 50.0  # a real surge to lower
    assert stg < lin - 0.2 * (lin - loss)


def _pumped(eng) -> Route:
    return eng.pumped_route(0.25, sump=2.0)


def test_pump_ramp_down_gives_a_smaller_down_surge_than_a_trip(eng):
    # A trip lets the pump run down on its inertia in about a second and drops the discharge
    # pressure at once; a drive that ramps the speed down over 20 s (10 pipeline periods)
    # lowers it gently (common practice, no source). The ramp follows s0 (1 - t/T) exactly.
    route = _pumped(eng)
    trip = simulate(
        route, eng.WATER_20C, Case(name="t", route="r", product="w", events=(Trip(element="pump"),))
    )
    ramp = simulate(
        route,
        eng.WATER_20C,
        Case(name="r", route="r", product="w", events=(Ramp(element="pump", ramp_time=20.0),)),
        duration=trip.duration,
    )
    i = route.index("line")
    assert trip.p_min_abs[0, i] < ramp.p_min_abs[0, i] - 0.5e5
    s = ramp.pump_speed[0, 0]
    t = ramp.time
    ahead = t < 20.0
    assert np.allclose(s[ahead], s[0] * (1.0 - t[ahead] / 20.0), atol=1e-3)
    assert np.all(s[t >= 20.0] == 0.0)


def test_relief_and_accumulator_side_by_side_conserve_volume(eng):
    # Two branches at one point, beside the closing valve in the same chain: the route's
    # volume balance (in = out + into the branches + stored) still closes.
    case = _case(0.2, 10.0)
    both = (_relief(eng, 90.0, 0.05), _accumulator(0.3, 3e5, loss=1.5))
    run = simulate(_route(eng, both), eng.WATER_20C, case)
    assert run.branches == ("relief", "accumulator")
    assert np.all(np.abs(run.branch_volume[0]) > 1e-4)
    assert abs(run.volume_balance_error[0]) < 1e-6


def test_branches_at_two_points_of_one_chain_are_refused(eng):
    from esdsurge.errors import InputError

    route = _route(eng, (_relief(eng, 90.0, 0.05),))
    els = list(route.elements)
    els.insert(els.index(route.element("valve")) + 1, _accumulator(0.3, 3e5))
    with pytest.raises(InputError, match="branch off at two points"):
        simulate(Route(name="r", elements=tuple(els)), eng.WATER_20C, _case(0.2, 2.0))


def test_a_member_without_the_mitigations_runs_as_if_they_were_not_there(eng):
    # One batch, two members: as designed, and with the relief valve taken out and the ramp
    # turned back into a trip; the second member matches a route built without them.
    from esdsurge.engine.run import Variant

    case = _case(0.2, 6.0)
    with_relief = _route(eng, (_relief(eng, 90.0, 0.4),))
    run = simulate(
        with_relief,
        eng.WATER_20C,
        case,
        variants=[Variant(), Variant(label="bare", without=("relief",))],
        dt_max=0.0005,
    )
    bare = simulate(_route(eng), eng.WATER_20C, case, dt_max=0.0005)
    assert run.dt[0] == run.dt[1] == bare.dt[0]
    i, k = run.index("line"), bare.index("line")
    assert run.p_max_abs[1, i] == pytest.approx(bare.p_max_abs[0, k], rel=1e-9)
    assert run.p_max_abs[0, i] < 0.5 * run.p_max_abs[1, i]
    assert run.branch_volume[1, 0] == 0.0
    route = _pumped(eng)
    ramp = Case(name="r", route="r", product="w", events=(Ramp(element="pump", ramp_time=20.0),))
    trip = Case(name="t", route="r", product="w", events=(Trip(element="pump"),))
    both = simulate(
        route, eng.WATER_20C, ramp, variants=[Variant(), Variant(without=("pump",))], duration=20
    )
    alone = simulate(route, eng.WATER_20C, trip, duration=20)
    j = route.index("line")
    assert both.p_min_abs[1, j] == pytest.approx(alone.p_min_abs[0, j], rel=1e-9)
    assert both.p_min_abs[0, j] > both.p_min_abs[1, j]


def test_a_member_resumed_from_its_state_runs_as_a_whole_run(eng):
    # the relief valve's opening, the accumulator's gas and the volumes into both go on from
    # the kept state through the same steps as a run from the start (a property of the
    # engine, no outside source)
    both = (_relief(eng, 90.0, 0.05), _accumulator(0.3, 3e5, loss=1.5))
    route = _route(eng, both)
    whole = simulate(route, eng.WATER_20C, _case(0.2, 10.0), samples=2)
    part = simulate(route, eng.WATER_20C, _case(0.2, 3.7), samples=2, keep_state=True)
    on = simulate(route, eng.WATER_20C, _case(0.2, 10.0), samples=2, resume=part.states)
    for name in ("p_max_abs", "p_min_abs", "t_p_max", "branch_flow_max", "branch_state_min",
                 "branch_state_max", "branch_time_over_capacity"):  # fmt: skip
        assert np.array_equal(getattr(on, name), getattr(whole, name)), name
    assert np.allclose(on.branch_volume, whole.branch_volume, rtol=1e-12, atol=1e-15)
    assert np.allclose(on.volume_through, whole.volume_through, rtol=1e-12, atol=1e-15)
    assert part.node_updates + on.node_updates == whole.node_updates
