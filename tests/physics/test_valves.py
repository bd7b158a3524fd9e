"""Valve flow coefficients, inherent characteristics and travel curves."""

from __future__ import annotations

import math

import numpy as np
import pytest
from fluids import fittings
from hypothesis import given
from hypothesis import strategies as st

from esdsurge.errors import PhysicsRangeError
from esdsurge.physics import valves
from esdsurge.physics.valves import (
    KV_PER_CV,
    VALVE_TYPES,
    cv_to_flow_area,
    flow_area_to_cv,
    flow_area_to_k,
    flow_area_to_kv,
    inherent_characteristic,
    installed_flow_ratio,
    k_to_flow_area,
    kv_to_flow_area,
    relative_flow,
    travel_at,
    validate_characteristic,
    validate_travel_curve,
)

INCH = 0.0254
BUILT_IN = [t for t in VALVE_TYPES if t != "custom"]


def test_kv_per_cv():
    # REFERENCES §6.1 [DER]: Kv/Cv = 0.2271247 / sqrt(0.0689476) = 0.86498 (unit arithmetic)
    assert KV_PER_CV == pytest.approx(0.86498, rel=5e-6)
    # IEC 60534-1: Kv = 0.865 Cv (from memory), 0.05 %
    assert KV_PER_CV == pytest.approx(0.865, rel=5e-4)
    # fluids 1.3.1, fluids.fittings.Cv_to_Kv
    assert KV_PER_CV == pytest.approx(fittings.Cv_to_Kv(1.0), rel=1e-9)


def test_cv_and_kv_give_the_same_area():
    # IEC 60534-1 via fluids 1.3.1: Cv 100 is Kv 86.498
    assert cv_to_flow_area(100.0) == pytest.approx(kv_to_flow_area(fittings.Cv_to_Kv(100.0)))


@pytest.mark.parametrize(("k", "d"), [(0.2, 0.3048), (9.0, 0.1), (30.0, 0.0254)])
def test_k_to_kv_agrees_with_fluids(k, d):
    kv = flow_area_to_kv(k_to_flow_area(k, d))
    # fluids 1.3.1 fluids.fittings.K_to_Kv (water 999.297 kg/m^3 at 60 degF, against 1000 here)
    assert kv == pytest.approx(fittings.K_to_Kv(k, d), rel=1e-3)


@pytest.mark.parametrize(("d_in", "cv"), [(6.0, 1950.0), (4.0, 590.0), (10.0, 5000.0)])
def test_crane_k_from_cv(d_in, cv):
    k = flow_area_to_k(cv_to_flow_area(cv), d_in * INCH)
    # Crane TP-410: K = 891 d^4 / Cv^2, d in inches (from memory, REFERENCES §6.1)
    assert k == pytest.approx(891.0 * d_in**4 / cv**2, rel=5e-3)


def test_round_trips():
    a = 0.0123
    # common practice, no source: each conversion inverts exactly
    assert kv_to_flow_area(flow_area_to_kv(a)) == pytest.approx(a, rel=1e-12)
    assert cv_to_flow_area(flow_area_to_cv(a)) == pytest.approx(a, rel=1e-12)
    assert k_to_flow_area(flow_area_to_k(a, 0.2), 0.2) == pytest.approx(a, rel=1e-12)


def test_k_one_is_bore_area():
    # dp = K rho V^2 / 2 with K = 1 is Q = A sqrt(2 dp / rho) (definition)
    assert k_to_flow_area(1.0, 0.2) == pytest.approx(math.pi * 0.01, rel=1e-12)
    with pytest.raises(PhysicsRangeError, match="must be positive"):
        k_to_flow_area(0.0, 0.2)


@pytest.mark.parametrize("valve_type", BUILT_IN)
def test_characteristics_are_valid(valve_type):
    pts = inherent_characteristic(valve_type)
    # common practice, no source: (0, 0) shut, (1, 1) open, monotone
    assert pts[0] == (0.0, 0.0) and pts[-1] == (1.0, 1.0)
    assert validate_characteristic(pts) is None
    assert valve_type in valves.CHARACTERISTIC_SOURCES


def test_butterfly_from_vendor_table():
    pts = dict(inherent_characteristic("butterfly"))
    # REFERENCES §6.2 [DER] from the DN150 manufacturer's Cv table: Cv fraction 0.21 at 50 deg,
    # 0.074 at 30 deg, 0.0015 at 10 deg
    assert pts[50 / 90] == pytest.approx(0.21, abs=0.005)
    assert pts[30 / 90] == pytest.approx(0.074, abs=0.0005)
    assert pts[10 / 90] == pytest.approx(0.0015, abs=0.0001)


def test_butterfly_shape_holds_for_other_sizes():
    # manufacturer's Cv table, DN100/DN200/DN250, 20..80 deg (REFERENCES §6.2, read)
    other = {
        "DN100": (17, 42, 73, 120, 235, 305, 510, 590),
        "DN200": (148, 250, 420, 700, 1300, 1750, 2725, 3250),
        "DN250": (232, 390, 670, 1150, 2150, 2750, 4300, 5000),
    }
    ours = dict(inherent_characteristic("butterfly"))
    for cvs in other.values():
        for deg, cv in zip(range(20, 90, 10), cvs[:-1], strict=True):
            # the DN150 shape used here is within 0.03 of the other sizes' fractions
            assert cv / cvs[-1] == pytest.approx(ours[deg / 90], abs=0.03)


def test_gate_globe_ball_from_k_tables():
    gate, globe, ball = (dict(inherent_characteristic(t)) for t in ("gate", "globe", "ball"))
    # Carvill, Mechanical Engineer's Data Handbook (1993) p.151: gate K open 0.2, 1/2 open 5.6
    assert gate[0.5] == pytest.approx(math.sqrt(0.2 / 5.6), rel=1e-12)
    # plug-disk globe K open 9, 1/2 open 36 (Perry's table, REFERENCES §6.2)
    assert globe[0.5] == pytest.approx(0.5, rel=1e-12)
    # plug cock K 0.05 at 5 deg (taken as open), 17.3 at 40 deg closed (REFERENCES §6.2)
    assert ball[1 - 40 / 90] == pytest.approx(math.sqrt(0.05 / 17.3), rel=1e-12)


def test_custom_and_unknown_types():
    with pytest.raises(PhysicsRangeError, match="no built-in characteristic"):
        inherent_characteristic("custom")
    with pytest.raises(PhysicsRangeError, match="valid: ball, butterfly, gate, globe, custom"):
        inherent_characteristic("needle")


@pytest.mark.parametrize("valve_type", BUILT_IN)
def test_relative_flow_exact_at_points(valve_type):
    pts = inherent_characteristic(valve_type)
    travel = np.array([t for t, _ in pts])
    # common practice, no source: interpolation reproduces the table
    np.testing.assert_allclose(relative_flow(pts, travel), [p for _, p in pts], rtol=1e-12)


def test_relative_flow_interpolation_and_clipping():
    pts = ((0.0, 0.0), (0.5, 0.1), (1.0, 1.0))
    # geometric between positive points, linear from zero (documented choice)
    assert relative_flow(pts, 0.75) == pytest.approx(math.sqrt(0.1))
    assert relative_flow(pts, 0.25) == pytest.approx(0.05)
    assert relative_flow(pts, -0.3) == 0.0
    assert relative_flow(pts, 1.7) == 1.0


@given(
    valve_type=st.sampled_from(BUILT_IN),
    x=st.floats(-0.2, 1.2),
    y=st.floats(-0.2, 1.2),
)
def test_relative_flow_is_monotone(valve_type, x, y):
    pts = inherent_characteristic(valve_type)
    lo, hi = sorted((x, y))
    # common practice, no source: a valve never passes more while more closed
    assert relative_flow(pts, lo) <= relative_flow(pts, hi)
    assert 0.0 <= relative_flow(pts, lo) <= 1.0


@pytest.mark.parametrize(
    ("points", "message"),
    [
        ([(0, 0)], "at least two points"),
        ([(0, 0.1), (1, 1)], "start shut at"),
        ([(0, 0), (1, 0.9)], "end fully open"),
        ([(0, 0), (0.5, 0.5), (0.5, 0.6), (1, 1)], "travel must increase"),
        ([(0, 0), (0.5, 0.6), (0.7, 0.4), (1, 1)], "must not decrease"),
        ([(0, 0), (0.5, float("nan")), (1, 1)], "finite"),
        ([(0, 0), ("a", 1)], "pair"),
    ],
)
def test_validate_characteristic_rejects(points, message):
    problem = validate_characteristic(points)
    # common practice, no source
    assert problem is not None and message in problem


def test_installed_flow_ratio():
    # quasi-steady loss algebra (common practice, no source)
    assert installed_flow_ratio(1.0, 0.2) == pytest.approx(1.0)
    assert installed_flow_ratio(0.0, 0.2) == 0.0
    assert installed_flow_ratio(0.3, 1.0) == pytest.approx(0.3)


STAGED = ((0.0, 1.0), (0.5, 0.3), (1.0, 0.0))


def test_travel_at_staged_curve():
    t = np.array([-1.0, 0.0, 5.0, 10.0, 15.0, 20.0, 25.0])
    # linear between (0 s, 100 %), (10 s, 30 %), (20 s, 0 %): by hand
    expected = [1.0, 1.0, 0.65, 0.3, 0.15, 0.0, 0.0]
    np.testing.assert_allclose(travel_at(STAGED, 20.0, t), expected, rtol=1e-12)
    assert travel_at(STAGED, 20.0, 5.0) == pytest.approx(0.65)


def test_travel_at_linear_and_instant():
    linear = ((0.0, 1.0), (1.0, 0.0))
    # linear closure: travel = 1 - t/stroke (by hand)
    assert travel_at(linear, 30.0, 7.5) == pytest.approx(0.75)
    # stroke 0: shut from t = 0 on
    assert travel_at(linear, 0.0, -1e-9) == 1.0
    assert travel_at(linear, 0.0, 0.0) == 0.0


def test_travel_at_refuses_a_bad_curve():
    with pytest.raises(PhysicsRangeError, match="end shut"):
        travel_at(((0.0, 1.0), (1.0, 0.2)), 10.0, 1.0)
    with pytest.raises(PhysicsRangeError, match="not be negative"):
        travel_at(STAGED, -1.0, 1.0)


@pytest.mark.parametrize(
    ("points", "message"),
    [
        ([(0, 1)], "at least two points"),
        ([(0.1, 1), (1, 0)], "start fully open"),
        ([(0, 0.8), (1, 0)], "start fully open"),
        ([(0, 1), (1, 0.1)], "end shut"),
        ([(0, 1), (0.6, 0.5), (0.4, 0.3), (1, 0)], "must increase"),
        ([(0, 1), (0.3, 0.5), (0.6, 0.7), (1, 0)], "must not open again"),
        ([(0, 1), (0.5, float("inf")), (1, 0)], "finite"),
        ([(0, 1), (1,)], "pair"),
    ],
)
def test_validate_travel_curve_rejects(points, message):
    problem = validate_travel_curve(points)
    # common practice, no source (TERMINAL_FORMAT.md: travel monotone and ending shut)
    assert problem is not None and message in problem


def test_validate_travel_curve_accepts_holds():
    # a pause at constant travel is a valid staged closure (common practice, no source)
    assert validate_travel_curve([(0, 1), (0.2, 0.4), (0.8, 0.4), (1, 0)]) is None
