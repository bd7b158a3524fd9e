"""Hand checks: Joukowsky, Michaud, pipeline period, effective closure, junctions."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import G
from esdsurge.physics.handcalc import (
    effective_closure_time,
    joukowsky_head,
    joukowsky_pressure,
    junction_coefficients,
    michaud_head,
    pipeline_period,
    surge_head_estimate,
)
from esdsurge.physics.valves import (
    inherent_characteristic,
    installed_flow_ratio,
    relative_flow,
    travel_at,
)


def test_joukowsky_head():
    # REFERENCES §1.2D / §9 check 1: a = 1319 m/s, dV = 0.30 m/s -> 40.34 m (g = 9.81 there,
    # standard g here), 1e-3
    assert joukowsky_head(1319.0, 0.30) == pytest.approx(40.34, rel=1e-3)
    # REFERENCES §1.2D: dV = 0.20 m/s -> 26.89 m
    assert joukowsky_head(1319.0, 0.20) == pytest.approx(26.89, rel=1e-3)
    # REFERENCES §2.3 [DER]: a = 1000 m/s, V0 = 1.98 m/s -> 201.8 m
    assert joukowsky_head(1000.0, 1.98) == pytest.approx(201.8, rel=1e-3)


@pytest.mark.parametrize(
    ("rho", "a", "per_m_s", "at_7"),
    [(998.2, 1295.9, 12.94, 90.6), (683.8, 1082.7, 7.40, 51.8)],
    ids=["water", "n-heptane"],
)
def test_joukowsky_pressure_dn300(rho, a, per_m_s, at_7):
    # REFERENCES §1.2C: rho a per 1 m/s and Joukowsky for dV = 7 m/s [bar], printed to 3 digits
    assert joukowsky_pressure(rho, a, 1.0) / 1e5 == pytest.approx(per_m_s, abs=0.006)
    assert joukowsky_pressure(rho, a, 7.0) / 1e5 == pytest.approx(at_7, abs=0.06)


def test_pipeline_period():
    # REFERENCES §1.2C: 2L/a, L = 1 km, water in DN300 (a = 1295.9 m/s) -> 1.543 s
    assert pipeline_period(1000.0, 1295.9) == pytest.approx(1.543, abs=5e-4)
    # series line: 2 sum(L_i/a_i) (Wylie & Streeter 1993, from memory)
    assert pipeline_period([1000.0, 30.0], [1200.0, 250.0]) == pytest.approx(
        2 * (1000 / 1200 + 30 / 250)
    )
    with pytest.raises(PhysicsRangeError, match="one speed per length"):
        pipeline_period([1.0, 2.0], [1000.0])


def test_michaud():
    # REFERENCES §1.2D / §9 check 2: L = 1000 m, V0 = 2 m/s, t_c = 10 s -> 40.77 m
    # (g = 9.81 there), 1e-3
    assert michaud_head(1000.0, 2.0, 10.0) == pytest.approx(40.77, rel=1e-3)
    with pytest.raises(PhysicsRangeError, match="closure time"):
        michaud_head(1000.0, 2.0, 0.0)


def test_surge_estimate_regimes():
    a, v, length = 1000.0, 2.0, 1000.0  # 2L/a = 2 s
    # REFERENCES §9 check 2: t_c = 10 s > 2L/a is the slow regime, Michaud
    assert surge_head_estimate(a, v, length, 10.0) == pytest.approx(michaud_head(length, v, 10.0))
    # Joukowsky for a rapid closure, t_c <= 2L/a (REFERENCES §1.1)
    assert surge_head_estimate(a, v, length, 1.5) == pytest.approx(a * v / G)
    assert surge_head_estimate(a, v, length, 0.0) == pytest.approx(a * v / G)
    # the two agree at t_c = 2L/a (algebra of REFERENCES §1.1)
    assert michaud_head(length, v, 2.0) == pytest.approx(joukowsky_head(a, v))


@given(
    a=st.floats(100.0, 1500.0),
    v=st.floats(0.01, 10.0),
    length=st.floats(1.0, 5000.0),
    tc=st.floats(0.0, 200.0),
)
def test_surge_estimate_never_exceeds_joukowsky(a, v, length, tc):
    # REFERENCES §1.1: Michaud applies only to slow closures, where it is below Joukowsky
    assert surge_head_estimate(a, v, length, tc) <= joukowsky_head(a, v) * (1 + 1e-12)


def test_effective_closure_of_linear_and_staged_histories():
    t = np.linspace(0.0, 20.0, 201)
    # linear fall over 20 s: t_eff = 20 s (definition, Michaud's linear deceleration)
    assert effective_closure_time(t, 5.0 * (1 - t / 20.0)) == pytest.approx(20.0)
    # staged: 20 % of the flow lost in 15 s, the last 80 % in 5 s -> steepest rate 0.16 Q0/s
    q = np.interp(t, [0.0, 15.0, 20.0], [1.0, 0.8, 0.0])
    assert effective_closure_time(t, q) == pytest.approx(1.0 / 0.16)
    assert effective_closure_time([0.0, 1.0], [1.0, 1.0]) == float("inf")
    with pytest.raises(PhysicsRangeError, match="times must increase"):
        effective_closure_time([0.0, 0.0], [1.0, 0.5])


@pytest.mark.parametrize("valve_type", ["ball", "butterfly"])
def test_quarter_turn_valve_stops_flow_late(valve_type):
    stroke, share = 30.0, 0.05
    t = np.linspace(0.0, stroke, 3001)
    phi = relative_flow(inherent_characteristic(valve_type), travel_at(((0, 1), (1, 0)), stroke, t))
    q = installed_flow_ratio(phi, share)
    t_eff = effective_closure_time(t, q)
    # ISGOTT 5th ed. §16 (REFERENCES §4.7, read): the effective closure time is much shorter
    # than the spindle travel, most of the flow being lost in the last quarter of the travel
    assert t_eff < 0.5 * stroke
    assert q[np.searchsorted(t, 0.75 * stroke)] < 0.5


def test_junction_limits():
    # Wylie & Streeter (1993) ch. 1 (from memory): same pipe -> no reflection
    assert junction_coefficients(0.1, 1200.0, 0.1, 1200.0) == pytest.approx((1.0, 0.0))
    # dead end: head doubles, full positive reflection
    assert junction_coefficients(0.1, 1200.0, 0.0, 1200.0) == pytest.approx((2.0, 1.0))
    # into a reservoir-like large pipe: the head wave is cancelled
    s, r = junction_coefficients(0.01, 1200.0, 1e6, 1200.0)
    assert s == pytest.approx(0.0, abs=1e-6) and r == pytest.approx(-1.0, abs=1e-6)


@given(
    area1=st.floats(1e-4, 2.0),
    a1=st.floats(100.0, 1500.0),
    area2=st.floats(1e-4, 2.0),
    a2=st.floats(100.0, 1500.0),
)
def test_junction_conserves_head_and_flow(area1, a1, area2, a2):
    s, r = junction_coefficients(area1, a1, area2, a2)
    incident = 1.0
    # continuity of head at the junction (Wylie & Streeter 1993, ch. 1)
    assert incident + r * incident == pytest.approx(s * incident)
    # continuity of flow: dQ = (g A / a) dH for waves travelling downstream, opposite sign
    # for the reflected wave
    q1 = G * area1 / a1 * (incident - r * incident)
    q2 = G * area2 / a2 * s * incident
    assert q1 == pytest.approx(q2, rel=1e-9)
