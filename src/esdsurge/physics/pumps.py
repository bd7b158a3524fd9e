"""Centrifugal pumps: head curve, affinity laws, run-down after a trip, inertia estimate.

The curve fit is ``numpy.polyfit``; the rest are closed-form relations of a line or two each
(affinity laws, the run-down of a pump whose torque goes with the square of speed, and the
Thorley & Faithfull inertia correlations), which no installed library provides, so they are
written out with their sources.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import G

__all__ = [
    "estimate_inertia",
    "estimate_motor_inertia",
    "estimate_pump_inertia",
    "fit_curve",
    "flow_at_head",
    "pump_head",
    "rundown_speed_ratio",
    "rundown_time_constant",
    "shaft_power",
]

_RPM = 2.0 * math.pi / 60.0  # rad/s per rpm


def fit_curve(points: Sequence[Sequence[float]]) -> tuple[float, float, float]:
    """Least-squares quadratic through the head curve of one pump at rated speed.

    Parameters
    ----------
    points : sequence of (float, float)
        (flow [m^3/s], head [m]) of one pump, flow increasing; at least three points.

    Returns
    -------
    tuple of float
        (h0 [m], h1 [s/m^2], h2 [s^2/m^5]) with H = h0 + h1 Q + h2 Q^2.

    Raises
    ------
    PhysicsRangeError
        Fewer than three points, flow not increasing, head rising between points or not
        falling overall, or a fit that is not falling at the largest flow given.

    Notes
    -----
    ``numpy.polyfit`` of degree 2 (ordinary least squares).

    Examples
    --------
    >>> h0, h1, h2 = fit_curve([(0.0, 100.0), (0.1, 90.0), (0.2, 60.0)])
    >>> round(h0, 6), round(h1, 6), round(h2, 6)
    (100.0, 0.0, -1000.0)
    """
    try:
        pts = np.asarray(points, dtype=float)
    except (TypeError, ValueError) as exc:
        raise PhysicsRangeError("pump curve points must be pairs (flow, head)") from exc
    if pts.ndim != 2 or pts.shape[1] != 2 or len(pts) < 3:
        raise PhysicsRangeError("a pump curve needs at least three (flow, head) points")
    if not np.all(np.isfinite(pts)):
        raise PhysicsRangeError("pump curve points must be finite numbers")
    q, h = pts[:, 0], pts[:, 1]
    if np.any(q < 0.0) or np.any(np.diff(q) <= 0.0):
        raise PhysicsRangeError("pump curve flows must be >= 0 and increase from point to point")
    if np.any(np.diff(h) > 0.0) or not h[-1] < h[0]:
        raise PhysicsRangeError(
            "pump curve head must fall as flow increases (it rises between two points or "
            "does not fall overall)"
        )
    h2, h1, h0 = (float(c) for c in np.polyfit(q, h, 2))
    if not h1 + 2.0 * h2 * q[-1] < 0.0:
        raise PhysicsRangeError(
            "the quadratic fitted to the pump curve is not falling at the largest flow given"
        )
    return h0, h1, h2


def _check_running(speed_ratio: float, count: int) -> None:
    if not speed_ratio >= 0.0:
        raise PhysicsRangeError(f"speed ratio must not be negative, got {speed_ratio}")
    if count < 1:
        raise PhysicsRangeError(f"number of pumps running must be >= 1, got {count}")


def pump_head(
    coeffs: tuple[float, float, float],
    flow: float | np.ndarray,
    speed_ratio: float = 1.0,
    count: int = 1,
) -> float | np.ndarray:
    """Head of identical pumps in parallel at a speed, from the rated-speed quadratic.

    Parameters
    ----------
    coeffs : tuple of float
        (h0, h1, h2) from :func:`fit_curve`.
    flow : float or ndarray
        Total flow through the pumps [m^3/s].
    speed_ratio : float, optional
        Speed over rated speed a = N/N0 [-].
    count : int, optional
        Number of identical pumps running in parallel; they share the flow equally.

    Returns
    -------
    float or ndarray
        H = a^2 h0 + a h1 (Q/n) + h2 (Q/n)^2 [m]

    Notes
    -----
    Affinity laws Q ~ N, H ~ N^2 (e.g. Wylie & Streeter, Fluid Transients in Systems, 1993,
    ch. 5, homologous relations).

    Examples
    --------
    >>> pump_head((100.0, 0.0, -1000.0), 0.2, count=2)
    90.0
    """
    _check_running(speed_ratio, count)
    h0, h1, h2 = coeffs
    q = np.asarray(flow, dtype=float) / count
    h = speed_ratio**2 * h0 + speed_ratio * h1 * q + h2 * q**2
    return float(h) if h.ndim == 0 else h


def flow_at_head(
    coeffs: tuple[float, float, float],
    head: float,
    speed_ratio: float = 1.0,
    count: int = 1,
) -> float:
    """Total flow of identical parallel pumps at a head: the inverse of :func:`pump_head` on the
    falling branch of the curve.

    Parameters
    ----------
    coeffs : tuple of float
        (h0, h1, h2) from :func:`fit_curve`.
    head : float
        Pump head [m].
    speed_ratio : float, optional
        N/N0 [-].
    count : int, optional
        Number of pumps running in parallel.

    Returns
    -------
    float
        Q [m^3/s]. Above the shut-off head the quadratic's falling branch gives a negative flow
        (the extrapolated curve); a check valve, if any, is the caller's business.

    Raises
    ------
    PhysicsRangeError
        When the head is above the top of the curve (no flow gives it).

    Examples
    --------
    >>> round(flow_at_head((100.0, 0.0, -1000.0), 90.0, count=2), 9)
    0.2
    """
    _check_running(speed_ratio, count)
    h0, h1, h2 = coeffs
    a = speed_ratio
    # h2 q^2 + a h1 q + (a^2 h0 - H) = 0
    b, c = a * h1, a * a * h0 - head
    if h2 == 0.0:
        if not b < 0.0:
            raise PhysicsRangeError("the pump curve does not fall with flow")
        return -c / b * count
    disc = b * b - 4.0 * h2 * c
    if disc < 0.0:
        raise PhysicsRangeError(
            f"head {head:.2f} m is above the top of the pump curve at speed ratio {a:g}"
        )
    # At the roots q = (-b +/- sqrt(disc)) / (2 h2) the slope dH/dq = b + 2 h2 q is
    # +/- sqrt(disc): the falling branch is the minus sign, whatever the sign of h2.
    q = (-b - math.sqrt(disc)) / (2.0 * h2)
    return q * count


def rundown_time_constant(inertia: float, rated_speed: float, shaft_power: float) -> float:
    """Time constant of a tripped pump's run-down.

    Parameters
    ----------
    inertia : float
        Pump + motor moment of inertia J [kg m^2].
    rated_speed : float
        Speed before the trip w0 [rad/s].
    shaft_power : float
        Shaft power before the trip P0 [W].

    Returns
    -------
    float
        tau = J w0^2 / P0 [s]

    Notes
    -----
    With hydraulic torque proportional to speed squared and no other loss,
    J dw/dt = -T0 (w/w0)^2 gives w(t) = w0 / (1 + t/tau), tau = J w0 / T0 = J w0^2 / P0
    (see :func:`rundown_speed_ratio`). It ignores the change of torque with flow during the
    transient, so it is a first estimate.

    References
    ----------
    Thorley, A. R. D., Fluid Transients in Pipeline Systems, 2nd ed., Professional Engineering
    Publishing (2004), ch. on pump trip (from memory).

    Examples
    --------
    J = 3.193 kg m^2, 1480 rpm, 100 kW:

    >>> round(rundown_time_constant(3.193, 1480 * 2 * 3.141592653589793 / 60, 100e3), 3)
    0.767
    """
    if not (inertia > 0.0 and rated_speed > 0.0 and shaft_power > 0.0):
        raise PhysicsRangeError(
            "inertia, speed and shaft power must be positive, got "
            f"J={inertia} kg m^2, w0={rated_speed} rad/s, P0={shaft_power} W"
        )
    return inertia * rated_speed**2 / shaft_power


def rundown_speed_ratio(t: float | np.ndarray, tau: float) -> float | np.ndarray:
    """Speed ratio N/N0 of a tripped pump at time ``t`` [s] after the trip: 1/(1 + t/tau)
    (1 before the trip); ``tau`` [s] from :func:`rundown_time_constant`.

    Examples
    --------
    >>> round(1480 * rundown_speed_ratio(1.0, 0.767))
    642
    """
    if not tau > 0.0:
        raise PhysicsRangeError(f"run-down time constant must be positive, got {tau} s")
    tt = np.maximum(np.asarray(t, dtype=float), 0.0)
    r = 1.0 / (1.0 + tt / tau)
    return float(r) if r.ndim == 0 else r


def estimate_pump_inertia(shaft_power: float, rated_speed: float) -> float:
    """Inertia of a centrifugal pump (impeller and entrained liquid included) from its power and
    speed, Thorley & Faithfull (1992).

    Parameters
    ----------
    shaft_power : float
        [W]
    rated_speed : float
        [rad/s]

    Returns
    -------
    float
        I_p = 0.03768 (P / N^3)^0.9556 with P in kW and N in rpm/1000 [kg m^2]

    References
    ----------
    Thorley, A. R. D. & Faithfull, E. M., "Inertias of pumps and their driving motors" (1992);
    reproduced in Thorley, Fluid Transients in Pipeline Systems, 2nd ed. (2004).
    """
    p_kw, n_krpm = _kw_krpm(shaft_power, rated_speed)
    return 0.03768 * (p_kw / n_krpm**3) ** 0.9556


def estimate_motor_inertia(shaft_power: float, rated_speed: float) -> float:
    """Inertia of an electric driving motor, Thorley & Faithfull (1992):
    I_m = 0.0043 (P / N)^1.48, P in kW, N in rpm/1000 [kg m^2]; arguments [W], [rad/s]."""
    p_kw, n_krpm = _kw_krpm(shaft_power, rated_speed)
    return 0.0043 * (p_kw / n_krpm) ** 1.48


def _kw_krpm(shaft_power: float, rated_speed: float) -> tuple[float, float]:
    if not (shaft_power > 0.0 and rated_speed > 0.0):
        raise PhysicsRangeError(
            f"shaft power and speed must be positive, got P={shaft_power} W, w={rated_speed} rad/s"
        )
    return shaft_power / 1e3, rated_speed / _RPM / 1e3


def estimate_inertia(shaft_power: float, rated_speed: float) -> float:
    """Pump + motor inertia from power and speed (Thorley & Faithfull 1992).

    Parameters
    ----------
    shaft_power : float
        Shaft power of one unit [W].
    rated_speed : float
        [rad/s]

    Returns
    -------
    float
        :func:`estimate_pump_inertia` + :func:`estimate_motor_inertia` [kg m^2]

    Notes
    -----
    Correlations fitted to manufacturers' data; expect scatter of tens of percent. A measured
    or vendor inertia is better.

    References
    ----------
    Thorley, A. R. D. & Faithfull, E. M., "Inertias of pumps and their driving motors" (1992);
    in Thorley, Fluid Transients in Pipeline Systems, 2nd ed. (2004).

    Examples
    --------
    100 kW at 1480 rpm (pump about 0.998 kg m^2, motor about 2.19 kg m^2):

    >>> round(estimate_inertia(100e3, 1480 * 2 * 3.141592653589793 / 60), 2)
    3.19
    """
    return estimate_pump_inertia(shaft_power, rated_speed) + estimate_motor_inertia(
        shaft_power, rated_speed
    )


def shaft_power(density: float, flow: float, head: float, efficiency: float) -> float:
    """Shaft power of a pump: P = rho g Q H / eta.

    Parameters
    ----------
    density : float
        [kg/m^3]
    flow : float
        [m^3/s]
    head : float
        [m]
    efficiency : float
        Pump efficiency (0, 1] [-].

    Returns
    -------
    float
        [W]

    Examples
    --------
    >>> round(shaft_power(1000.0, 0.1, 50.0, 0.8))
    61292
    """
    if not 0.0 < efficiency <= 1.0:
        raise PhysicsRangeError(f"efficiency must lie in (0, 1], got {efficiency}")
    return density * G * flow * head / efficiency
