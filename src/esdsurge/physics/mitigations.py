"""Surge relief valves and gas-charged accumulators: the relations outside the time loop.

Pure functions of SI values. The time loop itself (the relief valve's lift and flow, the
accumulator's gas law step by step) is in :mod:`esdsurge.engine.chain`.
"""

from __future__ import annotations

import math


def accumulator_charge(
    volume: float,
    precharge_abs: float,
    precharge_temperature: float,
    p_abs: float,
    temperature: float,
) -> tuple[float, float]:
    """Gas volume [m^3] and gas pressure [Pa] of an accumulator at line pressure ``p_abs``.

    The pre-charge ``precharge_abs`` [Pa] given at ``precharge_temperature`` [K] is taken to
    the product ``temperature`` [K] at constant volume (Gay-Lussac's law), then compressed
    slowly, so isothermally (Boyle's law), by the line pressure ``p_abs`` [Pa] as the line is
    filled and brought up to pressure. When the line pressure is at or below the pre-charge
    the vessel holds no liquid and its gas keeps the pre-charge.

    Examples
    --------
    >>> v, p = accumulator_charge(1.0, 5e5, 293.15, 10e5, 293.15)
    >>> round(v, 9), p
    (0.5, 1000000.0)
    >>> v, p = accumulator_charge(1.0, 5e5, 293.15, 4e5, 293.15)
    >>> v, round(p)
    (1.0, 500000)
    """
    p_pre = precharge_abs * temperature / precharge_temperature
    if p_abs <= p_pre:
        return volume, p_pre
    return volume * p_pre / p_abs, p_abs


def polytropic_volume(v0: float, p0: float, p: float, exponent: float) -> float:
    """Gas volume at pressure ``p`` after a polytropic change from ``(p0, v0)``:
    ``p V^n = p0 V0^n`` [m^3] (any consistent units of volume and absolute pressure).

    >>> round(polytropic_volume(1.0, 1e5, 2e5, 1.0), 6)
    0.5
    """
    return v0 * (p0 / p) ** (1.0 / exponent)


def relief_flow(flow_area: float, dp: float, density: float) -> float:
    """Flow through a relief valve of effective area ``flow_area`` [m^2] at the pressure drop
    ``dp`` [Pa] across it: ``Q = A sqrt(2 dp / rho)`` [m^3/s], none against a negative drop
    (the orifice equation, as the valves of :mod:`esdsurge.physics.valves`).

    >>> round(relief_flow(0.01, 2e5, 1000.0), 6)
    0.2
    """
    return flow_area * math.sqrt(2.0 * dp / density) if dp > 0.0 else 0.0
