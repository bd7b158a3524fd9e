"""Pump curve, affinity laws, run-down and inertia estimates."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import G
from esdsurge.physics.pumps import (
    estimate_inertia,
    estimate_motor_inertia,
    estimate_pump_inertia,
    fit_curve,
    flow_at_head,
    pump_head,
    rundown_speed_ratio,
    rundown_time_constant,
    shaft_power,
)

RPM = 2 * math.pi / 60
CURVE = ((0.0, 120.0), (0.1, 115.0), (0.2, 100.0), (0.3, 75.0))


def test_fit_recovers_an_exact_quadratic():
    pts = [(q, 100.0 - 50.0 * q - 1000.0 * q * q) for q in (0.0, 0.05, 0.1, 0.2)]
    # least squares through points on a parabola returns it (numpy.polyfit)
    assert fit_curve(pts) == pytest.approx((100.0, -50.0, -1000.0), abs=1e-9)


def test_fit_is_least_squares():
    q, h = np.array(CURVE).T
    # numpy 2.x numpy.polyfit, degree 2
    assert fit_curve(CURVE) == pytest.approx(tuple(np.polyfit(q, h, 2)[::-1]), rel=1e-12)


@pytest.mark.parametrize(
    ("points", "message"),
    [
        (((0.0, 100.0), (0.1, 90.0)), "at least three"),
        (((0.0, 100.0), (0.1, 105.0), (0.2, 80.0)), "must fall"),
        (((0.0, 100.0), (0.1, 100.0), (0.2, 100.0)), "must fall"),
        (((0.0, 100.0), (0.2, 90.0), (0.1, 80.0)), "increase"),
        (((0.0, 100.0), (0.1, float("nan")), (0.2, 80.0)), "finite"),
    ],
)
def test_fit_rejects_bad_curves(points, message):
    # TERMINAL_FORMAT.md: a curve that is not decreasing in head is rejected
    with pytest.raises(PhysicsRangeError, match=message):
        fit_curve(points)


def test_affinity_laws():
    c = fit_curve(CURVE)
    a = 0.8
    # affinity laws Q ~ N, H ~ N^2 (Wylie & Streeter 1993 ch. 5, from memory)
    assert pump_head(c, 0.15 * a, speed_ratio=a) == pytest.approx(a**2 * pump_head(c, 0.15))


def test_parallel_pumps_share_flow():
    c = fit_curve(CURVE)
    # identical pumps in parallel at the same head share the flow (common practice, no source)
    assert pump_head(c, 0.4, count=2) == pytest.approx(pump_head(c, 0.2))


@given(
    q=st.floats(0.0, 0.35),
    a=st.floats(0.3, 1.2),
    n=st.integers(1, 4),
)
def test_flow_at_head_inverts_pump_head(q, a, n):
    c = fit_curve(CURVE)
    h0, h1, h2 = c
    vertex = -a * h1 / (2 * h2)  # the falling branch is beyond the top of the curve
    total = max(q * a, vertex + 1e-6) * n
    # common practice, no source: inverse on the falling branch
    assert flow_at_head(c, pump_head(c, total, a, n), a, n) == pytest.approx(total, abs=1e-9)


def test_flow_at_head_above_the_curve():
    with pytest.raises(PhysicsRangeError, match="above the top of the pump curve"):
        flow_at_head((100.0, 0.0, -1000.0), 101.0)


def test_rundown_reference_case():
    tau = rundown_time_constant(3.193, 1480 * RPM, 100e3)
    # REFERENCES §8 [DER] / §9 check 17: tau = J w0^2 / P0 = 0.767 s, 0.5 %
    assert tau == pytest.approx(0.767, rel=5e-3)
    # REFERENCES §8: N(1 s) = 642 rpm; N(tau) = 740 rpm (omega0/(1 + t/tau), read), 0.5 %
    assert 1480 * rundown_speed_ratio(1.0, tau) == pytest.approx(642.0, rel=5e-3)
    assert 1480 * rundown_speed_ratio(tau, tau) == pytest.approx(740.0, rel=1e-12)
    assert rundown_speed_ratio(-1.0, tau) == 1.0


def test_rundown_solves_its_equation():
    # J dw/dt = -T0 (w/w0)^2 (REFERENCES §8, from memory): check by finite difference
    j, w0, p0 = 3.0, 150.0, 80e3
    tau = rundown_time_constant(j, w0, p0)
    t = np.array([0.3, 0.3 + 1e-6])
    w = w0 * rundown_speed_ratio(t, tau)
    dwdt = (w[1] - w[0]) / 1e-6
    assert j * dwdt == pytest.approx(-(p0 / w0) * (w[0] / w0) ** 2, rel=1e-4)


def test_thorley_faithfull_inertias():
    p, w = 100e3, 1480 * RPM
    # Thorley & Faithfull (1992), REFERENCES §8 [DER]: pump 0.998 kg m^2 (form read), 0.5 %
    assert estimate_pump_inertia(p, w) == pytest.approx(0.998, rel=5e-3)
    # motor 2.195 kg m^2 (form from memory), 0.5 %
    assert estimate_motor_inertia(p, w) == pytest.approx(2.195, rel=5e-3)
    assert estimate_inertia(p, w) == pytest.approx(3.193, rel=5e-3)


def test_thorley_rpm_forms_agree():
    p_kw, n_rpm = 250.0, 2970.0
    p, w = p_kw * 1e3, n_rpm * RPM
    # REFERENCES §8: rpm forms 1.5e7 (P/N^3)^0.9556 and 118 (P/N)^1.48 (rounded constants)
    assert estimate_pump_inertia(p, w) == pytest.approx(
        1.5e7 * (p_kw / n_rpm**3) ** 0.9556, rel=5e-3
    )
    assert estimate_motor_inertia(p, w) == pytest.approx(118 * (p_kw / n_rpm) ** 1.48, rel=5e-3)


def test_shaft_power():
    # P = rho g Q H / eta (definition)
    assert shaft_power(850.0, 0.5, 80.0, 0.75) == pytest.approx(850 * G * 0.5 * 80 / 0.75)
    with pytest.raises(PhysicsRangeError, match="efficiency"):
        shaft_power(850.0, 0.5, 80.0, 0.0)
