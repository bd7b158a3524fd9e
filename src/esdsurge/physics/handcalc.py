"""Hand checks of a surge: Joukowsky, pipeline period, Michaud, effective closure time, and the
transmission of a wave at a change of pipe.

These are the textbook closed forms that an engineer checks a simulation against. Each is one
line of algebra; they are written out (no library offers them) with their sources.

The hand checks are bounds and orders of magnitude, not limits: line packing, reflections,
column separation and cavity collapse can all exceed the Joukowsky rise.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import G

__all__ = [
    "effective_closure_time",
    "joukowsky_head",
    "joukowsky_pressure",
    "junction_coefficients",
    "michaud_head",
    "pipeline_period",
    "surge_head_estimate",
]


def joukowsky_head(wave_speed: float, delta_velocity: float) -> float:
    """Head rise of an instantaneous change of velocity.

    Parameters
    ----------
    wave_speed : float
        a [m/s]
    delta_velocity : float
        Velocity stopped (or reduced by) dV [m/s].

    Returns
    -------
    float
        dH = a dV / g [m]

    References
    ----------
    Joukowsky, N. (1898), transl. O. Simin, Proc. AWWA 24 (1904); Wylie & Streeter, Fluid
    Transients in Systems (1993), ch. 1.

    Examples
    --------
    >>> round(joukowsky_head(1319.0, 0.30), 2)
    40.35
    """
    return wave_speed * delta_velocity / G


def joukowsky_pressure(density: float, wave_speed: float, delta_velocity: float) -> float:
    """Pressure rise of an instantaneous change of velocity, dp = rho a dV [Pa].

    Parameters
    ----------
    density : float
        [kg/m^3]
    wave_speed : float
        [m/s]
    delta_velocity : float
        [m/s]

    References
    ----------
    Joukowsky (1898); Wylie & Streeter (1993), ch. 1.

    Examples
    --------
    >>> round(joukowsky_pressure(998.2, 1295.9, 1.0) / 1e5, 2)
    12.94
    """
    return density * wave_speed * delta_velocity


def pipeline_period(
    length_or_lengths: float | Sequence[float], wave_speeds: float | Sequence[float]
) -> float:
    """Pipeline period: the time a wave takes to run to the far end and back.

    Parameters
    ----------
    length_or_lengths : float or sequence of float
        Length of each element in series [m].
    wave_speeds : float or sequence of float
        Wave speed of each element [m/s] (same length as the lengths).

    Returns
    -------
    float
        T = 2 sum(L_i / a_i) [s]

    References
    ----------
    Wylie & Streeter (1993), ch. 1.

    Examples
    --------
    >>> round(pipeline_period([1000.0, 50.0], [1200.0, 300.0]), 4)
    2.0
    """
    lengths = np.atleast_1d(np.asarray(length_or_lengths, dtype=float))
    speeds = np.atleast_1d(np.asarray(wave_speeds, dtype=float))
    if lengths.shape != speeds.shape:
        raise PhysicsRangeError(
            f"{lengths.size} lengths but {speeds.size} wave speeds: give one speed per length"
        )
    if np.any(lengths < 0.0) or np.any(speeds <= 0.0):
        raise PhysicsRangeError("lengths must be >= 0 and wave speeds > 0")
    return float(2.0 * np.sum(lengths / speeds))


def michaud_head(length: float, velocity: float, closure_time: float) -> float:
    """Head rise of a slow closure that stops the flow linearly in time.

    Parameters
    ----------
    length : float
        Length of the line upstream of the valve [m].
    velocity : float
        Initial velocity V0 [m/s].
    closure_time : float
        Effective closure time t_c [s] (> 0).

    Returns
    -------
    float
        dH = 2 L V0 / (g t_c) [m]; meaningful when t_c > 2L/a.

    References
    ----------
    Michaud, J., Bull. Soc. Vaudoise Ing. Arch. (1878); in Thorley, Fluid Transients in
    Pipeline Systems, 2nd ed. (2004).

    Examples
    --------
    >>> round(michaud_head(1000.0, 2.0, 10.0), 2)
    40.79
    """
    if not closure_time > 0.0:
        raise PhysicsRangeError(f"closure time must be positive, got {closure_time} s")
    return 2.0 * length * velocity / (G * closure_time)


def surge_head_estimate(
    wave_speed: float, velocity: float, length: float, closure_time: float
) -> float:
    """Hand estimate of the head rise of a closure: Joukowsky or Michaud.

    Parameters
    ----------
    wave_speed : float
        a [m/s]
    velocity : float
        Initial velocity V0 [m/s].
    length : float
        L [m]
    closure_time : float
        Effective closure time t_c [s] (>= 0).

    Returns
    -------
    float
        a V0 / g when t_c <= 2L/a (rapid closure), else 2 L V0 / (g t_c); this is the smaller
        of the two [m].

    Notes
    -----
    For a series line of several elements, pass an equivalent line: L = sum(L_i) and
    a = L / sum(L_i/a_i), so that 2L/a is the pipeline period; velocity should then be the
    velocity in the element next to the valve (Joukowsky acts on that element's wave speed and
    velocity first). A rough check only: friction (line packing), reflections and cavities are
    ignored.

    Examples
    --------
    >>> round(surge_head_estimate(1000.0, 2.0, 1000.0, 10.0), 2)
    40.79
    >>> round(surge_head_estimate(1000.0, 2.0, 1000.0, 1.0), 2)
    203.94
    """
    if not closure_time >= 0.0:
        raise PhysicsRangeError(f"closure time must not be negative, got {closure_time} s")
    jouk = joukowsky_head(wave_speed, velocity)
    if closure_time <= 2.0 * length / wave_speed:
        return jouk
    return min(jouk, michaud_head(length, velocity, closure_time))


def effective_closure_time(times: Sequence[float], flows: Sequence[float]) -> float:
    """Effective closure time of a flow history: Q0 / max|dQ/dt|.

    Parameters
    ----------
    times : sequence of float
        [s], increasing.
    flows : sequence of float
        Flow at those times [m^3/s] (quasi-steady, e.g. from the installed valve
        characteristic), starting at the initial flow Q0.

    Returns
    -------
    float
        t_eff = |Q0| / max|dQ/dt| [s] (``inf`` if the flow never changes).

    Notes
    -----
    The time the flow would take to stop if it fell throughout at its steepest rate. Michaud's
    formula assumes a linear fall of the flow, dV/dt = V0/t_c, and the surge it predicts,
    2 L V0/(g t_c) = 2 (L/g) |dV/dt|, is set by the rate of deceleration. A real valve stops
    the flow slowly at first and steeply near the end of its travel, so the steepest rate
    governs: the linear closure with that same rate takes Q0 / max|dQ/dt|. Then
    ``michaud_head(L, V0, t_eff)`` and the comparison of t_eff with 2L/a apply as for a linear
    closure. dQ/dt is taken by finite differences between samples (no smoothing), so sample
    the history finely enough to resolve the steep part.

    Examples
    --------
    Flow falling linearly from 1 to 0 over 10 s:

    >>> effective_closure_time([0.0, 5.0, 10.0], [1.0, 0.5, 0.0])
    10.0
    """
    t = np.asarray(times, dtype=float)
    q = np.asarray(flows, dtype=float)
    if t.ndim != 1 or t.shape != q.shape or t.size < 2:
        raise PhysicsRangeError("give at least two times and as many flows")
    dt = np.diff(t)
    if np.any(dt <= 0.0):
        raise PhysicsRangeError("times must increase")
    rate = float(np.max(np.abs(np.diff(q) / dt)))
    if rate == 0.0:
        return float("inf")
    return abs(float(q[0])) / rate


def junction_coefficients(area1: float, a1: float, area2: float, a2: float) -> tuple[float, float]:
    """Transmission and reflection of a head wave at a junction of two pipes.

    Parameters
    ----------
    area1, a1 : float
        Bore area [m^2] and wave speed [m/s] of the pipe the wave arrives in.
    area2, a2 : float
        Bore area [m^2] and wave speed [m/s] of the pipe beyond the junction.

    Returns
    -------
    tuple of float
        (s, r): transmitted head = s x incident, reflected head = r x incident, with
        s = 2 (A1/a1) / (A1/a1 + A2/a2) and r = s - 1 [-].

    Notes
    -----
    From continuity of head and of flow at the junction (Wylie & Streeter 1993, ch. 1, wave
    reflection and transmission). A dead end (A2 -> 0) gives s = 2, r = 1; a large reservoir
    (A2/a2 -> infinity) gives s = 0, r = -1.

    Examples
    --------
    A wave leaving a steel pipe into a hose of the same bore and a quarter of its wave speed:

    >>> s, r = junction_coefficients(1.0, 1200.0, 1.0, 300.0)
    >>> round(s, 3), round(r, 3)
    (0.4, -0.6)
    """
    if not (area1 > 0.0 and a1 > 0.0 and area2 >= 0.0 and a2 > 0.0):
        raise PhysicsRangeError("areas must be positive (A2 may be 0) and wave speeds positive")
    y1, y2 = area1 / a1, area2 / a2
    s = 2.0 * y1 / (y1 + y2)
    return s, s - 1.0
