"""Steady state against hand calculations with Darcy–Weisbach and the orifice equation."""

import math

import numpy as np
import pytest

from esdsurge.errors import SteadyStateError
from esdsurge.model import (
    Case,
    Close,
    Fluid,
    G,
    Pipe,
    Pump,
    Route,
    Tank,
    Valve,
)
from esdsurge.steady import quasi_steady_closure, steady_state

WATER = Fluid(
    name="water",
    density=998.2,
    bulk_modulus=2.19e9,
    vapour_pressure_abs=2339.0,
    viscosity=1.0016e-3,
    temperature=293.15,
)
ATM = 101_325.0


def pipe(name, length, d, f=None, z0=0.0, z1=0.0):
    return Pipe(
        name=name,
        length=length,
        inside_diameter=d,
        wall=0.01,
        youngs_modulus=207e9,
        poisson=0.3,
        roughness=4.5e-5,
        profile=((0.0, z0), (length, z1)),
        friction_factor=f,
    )


def valve(name, area):
    return Valve(name=name, valve_type="ball", flow_area=area, diameter=0.3)


def test_gravity_line_matches_darcy_weisbach_with_given_friction_factor():
    # Darcy–Weisbach with a fixed friction factor: dH = (f L / D + 1/(A_eff/A)^2) V^2 / 2g
    # (Darcy–Weisbach head loss; orifice equation Q = A_eff sqrt(2 g dH));
    # common practice, no source
    d, length, f, dh = 0.3, 1000.0, 0.02, 10.0
    area = math.pi * d * d / 4
    a_eff = 0.5 * area
    route = Route(
        name="r",
        elements=(
            Tank(name="a", surface=dh),
            pipe("p", length, d, f),
            valve("v", a_eff),
            Tank(name="b", surface=0.0),
        ),
    )
    case = Case(name="c", route="r", product="water")
    s = steady_state(route, WATER, case, ATM)
    v = math.sqrt(2 * G * dh / (f * length / d + (area / a_eff) ** 2))
    assert s.flow == pytest.approx(v * area, rel=1e-8)
    # pressures at the ends: p = rho g (H - z) on absolute pressure head
    p_end = s.element("p").p_out_abs
    assert p_end == pytest.approx(ATM + WATER.density * G * (dh - f * length / d * v * v / (2 * G)))


def test_rate_is_held_by_throttling_the_pump_and_the_excess_is_reported():
    # pump H = 60 - 100 Q^2 (Q m3/s); friction f L/D V^2/2g; balance by hand;
    # common practice, no source
    d, length, f = 0.3, 1000.0, 0.02
    area = math.pi * d * d / 4
    curve = tuple((q, 60.0 - 100.0 * q * q) for q in (0.0, 0.1, 0.2, 0.3))
    route = Route(
        name="r",
        elements=(
            Tank(name="a", surface=5.0),
            Pump(name="p1", curve=curve, pushes=1),
            pipe("line", length, d, f),
            Tank(name="b", surface=15.0),
        ),
    )
    rate = 0.15
    case = Case(name="c", route="r", product="water", rate=rate)
    s = steady_state(route, WATER, case, ATM)
    assert s.flow == pytest.approx(rate)
    v = rate / area
    hf = f * length / d * v * v / (2 * G)
    expected = (60.0 - 100.0 * rate**2) - (15.0 - 5.0) - hf
    assert s.throttled_head == pytest.approx(expected, rel=1e-6)
    assert s.throttle_at == "p1"
    # unthrottled: 60 - 100 Q^2 = 10 + k Q^2  =>  Q = sqrt(50 / (100 + k))
    k = f * length / d / (2 * G * area * area)
    assert s.natural_flow == pytest.approx(math.sqrt(50.0 / (100.0 + k)), rel=1e-6)
    with pytest.raises(SteadyStateError, match="not reachable.*at most"):
        steady_state(route, WATER, Case(name="c", route="r", product="water", rate=1.0), ATM)


def test_discharge_flows_towards_the_shore():
    curve = tuple((q, 60.0 - 100.0 * q * q) for q in (0.0, 0.1, 0.2, 0.3))
    route = Route(
        name="r",
        elements=(
            Tank(name="shore", surface=10.0),
            pipe("line", 500.0, 0.3, 0.02),
            Pump(name="ship pumps", curve=curve, pushes=-1, count=2),
            Tank(name="ship", surface=0.0),
        ),
    )
    s = steady_state(route, WATER, Case(name="c", route="r", product="water"), ATM)
    assert s.flow < 0
    # the station head is what the two units give at half the flow each (affinity, parallel)
    q1 = abs(s.flow) / 2
    assert s.pump_heads["ship pumps"] == pytest.approx(60 - 100 * q1 * q1, rel=1e-9)


def gravity_closure():
    """A 2 km gravity line of 0.3 m bore over 20 m, shut in 10 s by a ball valve at its end
    (90 % of the bore open): the route, the case and the closing event."""
    d = 0.3
    area = math.pi * d * d / 4
    route = Route(
        name="r",
        elements=(
            Tank(name="a", surface=20.0),
            pipe("p", 2000.0, d, 0.02),
            valve("v", 0.9 * area),
            Tank(name="b", surface=0.0),
        ),
    )
    return (
        route,
        Case(name="c", route="r", product="water"),
        Close(element="v", at=1.0, stroke=10.0),
    )


def test_quasi_steady_closure_falls_to_zero_and_is_monotone():
    d = 0.3
    area = math.pi * d * d / 4
    route, case, ev = gravity_closure()
    t = np.linspace(0, 12, 121)
    q = quasi_steady_closure(route, WATER, case, ATM, ev, t)
    s = steady_state(route, WATER, case, ATM)
    assert q[0] == pytest.approx(s.flow)
    assert q[-1] == 0.0
    assert np.all(np.diff(q) <= 1e-12)
    # every point satisfies the head balance with the valve at its travel: Darcy–Weisbach in the
    # pipe plus the orifice equation through A_eff * phi(travel); common practice, no source
    from esdsurge.physics import valves

    char = valves.inherent_characteristic("ball")
    for tk, qk in zip(t, q, strict=True):
        phi = float(valves.relative_flow(char, valves.travel_at(ev.travel, ev.stroke, tk - ev.at)))
        if phi == 0.0:
            assert qk == 0.0
            continue
        v = qk / area
        a_open = 0.9 * area
        loss = 0.02 * 2000.0 / d * v * v / (2 * G) + qk * qk / (2 * G * (a_open * phi) ** 2)
        assert loss == pytest.approx(20.0, rel=1e-6)


def test_gravity_beyond_the_pump_run_out_still_finds_the_operating_point():
    # the head balance is still solved when gravity alone drives more than the pump's run-out;
    # pump H = 58 - 400 Q^2 (run-out 0.38 m3/s); by hand: 46.7 + 58 - 400 Q^2 = k Q^2;
    # common practice, no source
    curve = tuple((q, 58.0 - 400.0 * q * q) for q in (0.0, 0.1, 0.2, 0.3))
    d, length, f = 0.5, 200.0, 0.02
    area = math.pi * d * d / 4
    route = Route(
        name="r",
        elements=(
            Tank(name="a", surface=51.7),
            Pump(name="p1", curve=curve, pushes=1),
            pipe("line", length, d, f),
            Tank(name="b", surface=5.0),
        ),
    )
    s = steady_state(route, WATER, Case(name="c", route="r", product="water"), ATM)
    k = f * length / d / (2 * G * area * area)
    # past run-out the fitted curve gives negative head; the station adds nothing backwards:
    # the balance is then 46.7 = k Q^2 - pump head (which is below zero past run-out)
    assert s.flow > 0.38
    assert 46.7 + (58.0 - 400.0 * s.flow**2) == pytest.approx(k * s.flow**2, rel=1e-6)


def test_a_line_ending_above_the_liquid_it_fills_discharges_at_the_gas_pressure():
    # Free outfall: the line ends 10 m up in the receiving tank's vapour space, above its
    # liquid at 0 m, so the driving head is 30 m - 10 m = 20 m, not 30 m; Darcy-Weisbach,
    # hf = f (L/D) V^2 / (2 g), gives the flow (White, Fluid Mechanics, 7th ed., eq. 6.10).
    from esdsurge.engine import simulate

    f, length, d = 0.02, 800.0, 0.2
    route = Route(
        name="r",
        elements=(
            Tank(name="upper", surface=30.0),
            pipe("line", length, d, f=f, z0=0.0, z1=10.0),
            Tank(name="lower", surface=0.0),
        ),
    )
    case = Case(name="c", route="r", product="water", events=())
    st = steady_state(route, WATER, case, ATM)
    v = math.sqrt(20.0 * 2.0 * G / (f * length / d))
    assert st.flow == pytest.approx(v * math.pi * d * d / 4.0, rel=1e-6)
    assert st.tank_levels == (30.0, 10.0)
    # the line's end is at the tank's gas pressure (atmospheric), not 10 m of suction
    assert st.elements[1].p_out_abs == pytest.approx(ATM, abs=1e-2)
    run = simulate(route, WATER, case, duration=1.0)
    assert abs(run.initial_mismatch[0]) < 1e-6
    assert run.p_max_abs[0, 2] == pytest.approx(ATM, rel=1e-9)


def test_quasi_steady_closure_of_pumped_routes_matches_brentq_at_each_time():
    # the demo jetty's cases (shore pumps pushing, ship pumps pushing the other way, a throttle):
    # the flows solved for every time at once (scipy's elementwise Chandrupatla) are the roots
    # that scipy's brentq finds time by time on the same head balance (reference library)
    from pathlib import Path

    from scipy.optimize import brentq

    from esdsurge.physics import valves
    from esdsurge.steady import _Balance
    from esdsurge.terminal import load

    t = load(Path(__file__).resolve().parents[2] / "terminals" / "jetty.yaml")
    checked = 0
    for case in t.cases:
        ev = next((e for e in case.events if isinstance(e, Close)), None)
        if ev is None:
            continue
        route, fluid = t.routes[case.route], t.products[case.product]
        state = steady_state(route, fluid, case, t.atmosphere_abs)
        times = ev.at + ev.stroke * np.linspace(0.0, 1.0, 41)
        q = quasi_steady_closure(route, fluid, case, t.atmosphere_abs, ev, times, state)
        bal = _Balance(route, fluid, case, t.atmosphere_abs)
        bal.ff = [
            bal.friction_factor(i, state.flow) if ln.length > 0.0 else None
            for i, ln in enumerate(bal.lines)
        ]
        valve = route.element(ev.element)
        char = valve.characteristic or valves.inherent_characteristic(valve.valve_type)
        k_thr = state.throttled_head / state.flow**2 if state.throttled_head > 0.0 else 0.0
        throttle = (state.throttle_at, k_thr) if state.throttle_at else None
        q0 = state.flow
        for tk, qk in zip(times, q, strict=True):
            rel = float(
                valves.relative_flow(char, valves.travel_at(ev.travel, ev.stroke, tk - ev.at))
            )
            if rel == 0.0:
                assert qk == 0.0
                continue

            def res(x, rel=rel, bal=bal, name=valve.name, throttle=throttle):
                return bal.residual(x, openings={name: rel}, throttle=throttle, fixed_friction=True)

            lo, hi = sorted((0.0, q0 * 1.0000001))
            ref = q0 if res(lo) * res(hi) > 0.0 else brentq(res, lo, hi, xtol=1e-14)
            assert qk == pytest.approx(ref, abs=1e-9)
            checked += 1
    assert checked > 60  # the closing cases, their moving times


def test_quasi_steady_closure_falls_back_on_brentq_where_the_elementwise_solve_fails(monkeypatch):
    # a time whose elementwise solve did not converge is solved alone by brentq: same flows
    from scipy.optimize.elementwise import find_root

    import esdsurge.steady as st

    route, case, ev = gravity_closure()
    t = np.linspace(0, 12, 61)
    good = quasi_steady_closure(route, WATER, case, ATM, ev, t)

    def failing(*args, **kw):
        out = find_root(*args, **kw)
        out.success[::2] = False
        out.x[::2] = np.nan
        return out

    monkeypatch.setattr(st, "find_root", failing)
    again = quasi_steady_closure(route, WATER, case, ATM, ev, t)
    assert np.all(np.isfinite(again))
    np.testing.assert_allclose(again, good, rtol=0, atol=1e-9)
