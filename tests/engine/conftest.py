"""Shared builders for the engine tests: small routes in SI, water as the liquid."""

from __future__ import annotations

import math
from types import SimpleNamespace

import pytest

from esdsurge.model import Fluid, G, Pipe, Pump, Route, Tank, Valve

#: Water at 20 degC: density, isentropic bulk modulus, vapour pressure and viscosity
#: (CoolProp 8.0.0 values as listed in REFERENCES.md §3.1, rounded).
WATER_20C = Fluid(
    name="water",
    density=998.2,
    bulk_modulus=2.193e9,
    vapour_pressure_abs=2339.0,
    viscosity=1.002e-3,
    temperature=293.15,
)

#: Water at 15 degC (CoolProp 8.0.0, REFERENCES.md §3.1).
WATER_15C = Fluid(
    name="water 15 C",
    density=999.1,
    bulk_modulus=2.147e9,
    vapour_pressure_abs=1706.0,
    viscosity=1.138e-3,
    temperature=288.15,
)

LINEAR = ((0.0, 0.0), (1.0, 1.0))


def pipe(
    name: str,
    length: float,
    diameter: float,
    wave_speed: float,
    friction_factor: float | None = 0.0,
    profile: tuple = (),
    roughness: float = 4.5e-5,
) -> Pipe:
    """A pipe with a given wave speed (and, by default, no friction)."""
    return Pipe(
        name=name,
        length=length,
        inside_diameter=diameter,
        wall=diameter / 50.0,
        youngs_modulus=2.07e11,
        poisson=0.3,
        roughness=roughness,
        wave_speed=wave_speed,
        friction_factor=friction_factor,
        profile=profile,
    )


def valve(name: str, flow_area: float, diameter: float, characteristic=LINEAR) -> Valve:
    """A valve with a custom (by default linear) characteristic."""
    return Valve(
        name=name,
        valve_type="custom",
        flow_area=flow_area,
        diameter=diameter,
        characteristic=characteristic,
    )


def flow_area_for(flow: float, head: float) -> float:
    """Effective area that passes ``flow`` [m^3/s] with ``head`` [m] across it."""
    return flow / math.sqrt(2.0 * G * head)


def area(diameter: float) -> float:
    return math.pi * diameter**2 / 4.0


def tank_pipe_valve_tank(
    head: float,
    length: float,
    diameter: float,
    wave_speed: float,
    velocity: float,
    friction_factor: float = 0.0,
) -> Route:
    """Upstream tank at ``head`` [m] -- pipe -- valve -- tank at 0 m, sized so that the steady
    velocity is ``velocity`` [m/s]: the valve takes whatever head the pipe does not lose."""
    hf = friction_factor * length / diameter * velocity**2 / (2.0 * G)
    a = flow_area_for(area(diameter) * velocity, head - hf)
    return Route(
        name="r",
        elements=(
            Tank(name="upper tank", surface=head),
            pipe("line", length, diameter, wave_speed, friction_factor),
            valve("valve", a, diameter),
            Tank(name="lower tank", surface=0.0),
        ),
    )


def pumped_route(diameter: float = 0.3, check_valve: bool = True, sump: float = 5.0) -> Route:
    """Tank -- one pump (fitted at 2980 rpm) -- 2000 m line -- valve -- upper tank at 40 m."""
    return Route(
        name="r",
        elements=(
            Tank(name="sump", surface=sump),
            Pump(
                name="pump",
                curve=((0.0, 80.0), (0.1, 76.0), (0.2, 64.0), (0.25, 53.0)),
                rated_speed=2980 * 2 * math.pi / 60,
                inertia=1.6,
                efficiency=0.8,
                check_valve=check_valve,
            ),
            pipe("line", 2000.0, diameter, 1100.0, friction_factor=0.015),
            valve("valve", 0.1, diameter),
            Tank(name="lower tank", surface=40.0),
        ),
    )


@pytest.fixture
def eng() -> SimpleNamespace:
    """The builders above, for the test modules (run with ``--import-mode=importlib``)."""
    return SimpleNamespace(
        WATER_20C=WATER_20C,
        WATER_15C=WATER_15C,
        pipe=pipe,
        valve=valve,
        flow_area_for=flow_area_for,
        area=area,
        tank_pipe_valve_tank=tank_pipe_valve_tank,
        pumped_route=pumped_route,
    )
