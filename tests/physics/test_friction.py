"""Friction factor and head losses."""

from __future__ import annotations

import math

import pytest
from fluids.friction import Colebrook
from hypothesis import given
from hypothesis import strategies as st

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import G
from esdsurge.physics.friction import (
    RE_LAMINAR,
    RE_TURBULENT,
    darcy_friction_factor,
    head_loss,
    loss_coefficient_head,
    reynolds,
)


@pytest.mark.parametrize(
    ("re", "ed"), [(4000.0, 0.0), (1e5, 1e-4), (6e5, 2.3e-4), (1e7, 1e-3), (5e4, 0.05)]
)
def test_colebrook_matches_fluids(re, ed):
    # fluids 1.3.1, fluids.friction.Colebrook (exact Lambert-W solution)
    assert darcy_friction_factor(re, ed) == pytest.approx(Colebrook(re, ed), rel=1e-12)


def test_moody_chart_value():
    # Moody chart / Colebrook, Re = 1e5, eps/D = 1e-4: f ~ 0.0185 (from memory)
    assert darcy_friction_factor(1e5, 1e-4) == pytest.approx(0.0185, rel=0.01)


@pytest.mark.parametrize(("re", "ed"), [(1e4, 1e-5), (1e5, 1e-4), (1e6, 1e-3), (1e7, 1e-2)])
def test_swamee_jain_agrees(re, ed):
    swamee_jain = 0.25 / math.log10(ed / 3.7 + 5.74 / re**0.9) ** 2
    # Swamee & Jain (1976), J. Hydraul. Div. ASCE 102(HY5): explicit fit to Colebrook within
    # about 1 % for 5e3 < Re < 1e8, 1e-6 < eps/D < 1e-2 (from memory)
    assert darcy_friction_factor(re, ed) == pytest.approx(swamee_jain, rel=0.02)


def test_laminar():
    # Hagen-Poiseuille, f = 64/Re (textbook, e.g. Wylie & Streeter 1993 ch. 1)
    assert darcy_friction_factor(1000.0, 1e-3) == pytest.approx(0.064, rel=1e-12)
    assert darcy_friction_factor(2299.0, 0.0) == pytest.approx(64 / 2299, rel=1e-12)


def test_transition_is_continuous():
    eps = 1e-6
    # common practice, no source: the bridge joins the laminar and Colebrook values
    assert darcy_friction_factor(RE_LAMINAR + eps, 1e-4) == pytest.approx(64 / RE_LAMINAR, 1e-6)
    assert darcy_friction_factor(RE_TURBULENT - eps, 1e-4) == pytest.approx(
        Colebrook(RE_TURBULENT, 1e-4), rel=1e-6
    )
    mid = darcy_friction_factor(3150.0, 1e-4)
    assert 64 / RE_LAMINAR < mid < Colebrook(RE_TURBULENT, 1e-4)


def test_no_flow_is_finite():
    # common practice, no source: Re below 1 is evaluated at Re = 1
    assert darcy_friction_factor(0.0, 1e-4) == 64.0
    assert head_loss(darcy_friction_factor(0.0, 1e-4), 100.0, 0.1, 0.0) == 0.0


def test_bad_inputs():
    with pytest.raises(PhysicsRangeError, match="Reynolds number"):
        darcy_friction_factor(-1.0, 1e-4)
    with pytest.raises(PhysicsRangeError, match="relative roughness"):
        darcy_friction_factor(1e5, -1e-4)
    with pytest.raises(PhysicsRangeError, match="must be positive"):
        reynolds(1.0, 0.0, 1e-6)


def test_reynolds():
    # definition Re = V D / nu; water 20 degC nu = 1.003 mm^2/s (CoolProp 8.0.0, REFERENCES §3.1)
    assert reynolds(-2.0, 0.3048, 1.003e-6) == pytest.approx(2.0 * 0.3048 / 1.003e-6)


def test_darcy_weisbach_value_and_sign():
    h = head_loss(0.02, 1000.0, 0.3, 2.0)
    # Darcy-Weisbach, h = f L V^2 / (2 g D) (textbook)
    assert h == pytest.approx(0.02 * 1000 / 0.3 * 4 / (2 * G), rel=1e-12)
    # common practice, no source: the loss opposes the flow, V|V|
    assert head_loss(0.02, 1000.0, 0.3, -2.0) == pytest.approx(-h)


def test_loss_coefficient_head():
    v = math.sqrt(2 * G)
    # K V|V| / (2 g): one velocity head for K = 1 (textbook)
    assert loss_coefficient_head(1.0, v) == pytest.approx(1.0)
    assert loss_coefficient_head(2.0, -v) == pytest.approx(-2.0)


@given(re=st.floats(RE_TURBULENT, 1e8), ed=st.floats(0.0, 0.01))
def test_friction_falls_with_reynolds(re, ed):
    # Colebrook (1939): at fixed roughness f decreases as Re increases
    assert darcy_friction_factor(re * 1.5, ed) <= darcy_friction_factor(re, ed) * (1 + 1e-12)


@given(re=st.floats(RE_TURBULENT, 1e8), ed=st.floats(0.0, 0.01))
def test_friction_rises_with_roughness(re, ed):
    # Colebrook (1939): at fixed Re f increases with roughness
    assert darcy_friction_factor(re, ed + 1e-4) > darcy_friction_factor(re, ed)
