"""Valves: flow coefficients, inherent characteristics and travel curves in time.

A valve's size is carried as an *effective flow area* A_eff [m^2], defined by

    Q = A_eff * sqrt(2 dp / rho),

so that A_eff = A / sqrt(K) for a loss coefficient K on the bore area A, and the flow
coefficients Kv and Cv (IEC 60534-1) are fixed multiples of it. The opening of a valve is its
*travel* (fraction open, 0 shut .. 1 open); its *inherent characteristic* gives the relative flow
coefficient phi = A_eff(travel) / A_eff(open).

The built-in characteristics are built here from published loss-versus-opening tables (the
sources are given with each table). The unit conversions and the interpolation are a few lines;
fluids offers the conversions (``fluids.fittings.Cv_to_Kv``, ``K_to_Kv``), which the tests use as
a cross-check, but not in the A_eff form used by the engine, nor any interpolation of valve
characteristics, so both are written here.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from esdsurge.errors import PhysicsRangeError

__all__ = [
    "CHARACTERISTIC_SOURCES",
    "KV_PER_CV",
    "RHO_WATER_KV",
    "VALVE_TYPES",
    "cv_to_flow_area",
    "flow_area_to_cv",
    "flow_area_to_k",
    "flow_area_to_kv",
    "inherent_characteristic",
    "installed_flow_ratio",
    "k_to_flow_area",
    "kv_to_flow_area",
    "relative_flow",
    "travel_at",
    "validate_characteristic",
    "validate_travel_curve",
]

VALVE_TYPES: tuple[str, ...] = ("ball", "butterfly", "gate", "globe", "custom")

#: Kv [m^3/h at 1 bar] per Cv [US gal/min at 1 psi]: (0.227124707 m^3/h per gpm) /
#: sqrt(0.0689475729 bar per psi), exact unit arithmetic (IEC 60534-1 quotes Kv = 0.865 Cv).
KV_PER_CV = (3.785411784e-3 * 60.0) / math.sqrt(6894.757293168 / 1e5)

#: Reference water density of the Kv definition [kg/m^3]: IEC 60534-2-1 takes rho/rho0 = 1 for
#: water at 15 degC; 1000 kg/m^3 is used (the choice moves A_eff by under 0.1 %).
RHO_WATER_KV = 1000.0

#: A_eff [m^2] per Kv: Q [m^3/s] = Kv/3600 * sqrt(dp/1e5 * rho0/rho) = A_eff sqrt(2 dp/rho).
_AREA_PER_KV = math.sqrt(RHO_WATER_KV / 2e5) / 3600.0


def kv_to_flow_area(kv: float) -> float:
    """Effective flow area of a valve from its Kv.

    Parameters
    ----------
    kv : float
        Flow coefficient Kv [m^3/h of water at 1 bar loss] (IEC 60534-1).

    Returns
    -------
    float
        A_eff [m^2], with Q = A_eff sqrt(2 dp / rho).

    Notes
    -----
    Q [m^3/h] = Kv sqrt(dp [bar] / (rho/rho0)), rho0 = 1000 kg/m^3 (IEC 60534-1 and
    60534-2-1), so A_eff = Kv sqrt(rho0 / 2e5) / 3600.

    Examples
    --------
    >>> round(kv_to_flow_area(100.0) * 1e3, 5)
    1.96419
    """
    if not kv >= 0.0:
        raise PhysicsRangeError(f"Kv must not be negative, got {kv}")
    return kv * _AREA_PER_KV


def flow_area_to_kv(a: float) -> float:
    """Kv [m^3/h/bar^0.5] of an effective flow area ``a`` [m^2] (inverse of
    :func:`kv_to_flow_area`)."""
    if not a >= 0.0:
        raise PhysicsRangeError(f"flow area must not be negative, got {a} m^2")
    return a / _AREA_PER_KV


def cv_to_flow_area(cv: float) -> float:
    """Effective flow area of a valve from its Cv.

    Parameters
    ----------
    cv : float
        Flow coefficient Cv [US gal/min of water at 1 psi loss] (IEC 60534-1).

    Returns
    -------
    float
        A_eff [m^2]

    Notes
    -----
    Kv = 0.86498 Cv (:data:`KV_PER_CV`), then :func:`kv_to_flow_area`.

    Examples
    --------
    >>> round(cv_to_flow_area(1.0) / kv_to_flow_area(1.0), 5)
    0.86498
    """
    if not cv >= 0.0:
        raise PhysicsRangeError(f"Cv must not be negative, got {cv}")
    return kv_to_flow_area(cv * KV_PER_CV)


def flow_area_to_cv(a: float) -> float:
    """Cv [US gpm/psi^0.5] of an effective flow area ``a`` [m^2]."""
    return flow_area_to_kv(a) / KV_PER_CV


def k_to_flow_area(k: float, diameter: float) -> float:
    """Effective flow area of a loss coefficient K on a bore.

    Parameters
    ----------
    k : float
        Loss coefficient on the velocity in ``diameter`` [-] (> 0).
    diameter : float
        Bore [m].

    Returns
    -------
    float
        A_eff = (pi D^2 / 4) / sqrt(K) [m^2], from dp = K rho V^2 / 2.

    Examples
    --------
    >>> round(k_to_flow_area(1.0, 0.1), 6)
    0.007854
    """
    if not (k > 0.0 and diameter > 0.0):
        raise PhysicsRangeError(
            f"loss coefficient and diameter must be positive, got K={k}, D={diameter} m"
        )
    return math.pi * diameter**2 / 4.0 / math.sqrt(k)


def flow_area_to_k(a: float, diameter: float) -> float:
    """Loss coefficient on the bore ``diameter`` [m] of an effective flow area ``a`` [m^2]:
    K = (A / A_eff)^2 [-]."""
    if not (a > 0.0 and diameter > 0.0):
        raise PhysicsRangeError(
            f"flow area and diameter must be positive, got A_eff={a} m^2, D={diameter} m"
        )
    return (math.pi * diameter**2 / 4.0 / a) ** 2


# --- published loss-versus-opening tables -----------------------------------------------------

#: Butterfly valve, DN150 split-shaft disc: (disc angle [deg], 90 = open; Cv [US gpm/psi^0.5]).
_BUTTERFLY_CV_DN150 = (
    (10.0, 3.0),
    (20.0, 89.0),
    (30.0, 145.0),
    (40.0, 250.0),
    (50.0, 410.0),
    (60.0, 800.0),
    (70.0, 1030.0),
    (80.0, 1650.0),
    (90.0, 1950.0),
)

#: Gate (wedge) valve: (fraction of stem travel open, K).
_GATE_K = ((0.25, 24.0), (0.5, 5.6), (0.75, 1.15), (1.0, 0.2))

#: Plug-disk globe valve: (fraction of stem travel open, K).
_GLOBE_K = ((0.25, 112.0), (0.5, 36.0), (0.75, 13.0), (1.0, 9.0))

#: Plug cock: (closing angle from open [deg], K). The 5 deg value (0.05) is taken as the fully
#: open K: the table shows no loss below it and a full-bore quarter-turn plug is open there.
_PLUG_COCK_K = ((5.0, 0.05), (10.0, 0.29), (20.0, 1.56), (40.0, 17.3), (60.0, 206.0))

#: Where each built-in characteristic comes from.
CHARACTERISTIC_SOURCES: dict[str, str] = {
    "butterfly": "manufacturer's published Cv versus disc angle, DN150 split-shaft butterfly "
    "valve (valmate.com.tw catalogue page, read for esdsurge's references); travel = angle/90, "
    "phi = Cv/Cv(90 deg)",
    "gate": "Carvill, Mechanical Engineer's Data Handbook (Butterworth-Heinemann 1993), p.151: "
    "gate valve K wide open 0.2, 3/4 open 1.15, 1/2 open 5.6, 1/4 open 24; phi = sqrt(K_open/K)",
    "globe": "table of K for partly open valves (plug-disk globe: open 9, 3/4 13, 1/2 36, 1/4 112) "
    "as in Perry's Chemical Engineers' Handbook, 'additional frictional loss through valves' "
    "(attribution from memory; values read from a reproduction); phi = sqrt(K_open/K)",
    "ball": "no published ball-valve loss-versus-travel table was found; the plug-cock K versus "
    "angle of the same table as 'globe' is used (5 deg 0.05, 10 deg 0.29, 20 deg 1.56, 40 deg "
    "17.3, 60 deg 206): a plug cock and a round-port ball valve are both quarter-turn rotary "
    "plugs with a round port; travel = 1 - angle/90, phi = sqrt(K(5 deg)/K)",
}


def _from_k_table(points: Sequence[tuple[float, float]]) -> tuple[tuple[float, float], ...]:
    """(travel, K) with travel 1 = open -> (travel, phi) with (0, 0) and (1, 1) added."""
    k_open = dict(points)[1.0]
    inner = tuple((t, math.sqrt(k_open / k)) for t, k in sorted(points) if t < 1.0)
    return ((0.0, 0.0), *inner, (1.0, 1.0))


def _butterfly() -> tuple[tuple[float, float], ...]:
    cv_open = _BUTTERFLY_CV_DN150[-1][1]
    inner = tuple((deg / 90.0, cv / cv_open) for deg, cv in _BUTTERFLY_CV_DN150[:-1])
    return ((0.0, 0.0), *inner, (1.0, 1.0))


def _ball() -> tuple[tuple[float, float], ...]:
    k_open = _PLUG_COCK_K[0][1]
    inner = tuple(
        (1.0 - deg / 90.0, math.sqrt(k_open / k)) for deg, k in reversed(_PLUG_COCK_K[1:])
    )
    return ((0.0, 0.0), *inner, (1.0, 1.0))


_CHARACTERISTICS: dict[str, tuple[tuple[float, float], ...]] = {
    "ball": _ball(),
    "butterfly": _butterfly(),
    "gate": _from_k_table(_GATE_K),
    "globe": _from_k_table(_GLOBE_K),
}


def inherent_characteristic(valve_type: str) -> tuple[tuple[float, float], ...]:
    """Built-in inherent characteristic of a valve type.

    Parameters
    ----------
    valve_type : str
        ``"ball"``, ``"butterfly"``, ``"gate"`` or ``"globe"``.

    Returns
    -------
    tuple of (float, float)
        Points (travel fraction open [-], relative flow coefficient phi [-]), travel increasing
        from (0, 0) to (1, 1), phi non-decreasing.

    Raises
    ------
    PhysicsRangeError
        For ``"custom"`` (its characteristic comes from the terminal file) or an unknown type.

    Notes
    -----
    phi = A_eff(travel)/A_eff(open) = Cv/Cv_open = sqrt(K_open/K(travel)), with K on the pipe
    velocity. Sources: :data:`CHARACTERISTIC_SOURCES`. Ball: no published ball-valve table was
    found, so the plug-cock table stands in (both are quarter-turn rotary plugs with a round
    port). These are generic curves; a vendor's curve for the actual valve, given as a
    ``custom`` characteristic, is better.

    Examples
    --------
    >>> inherent_characteristic("gate")[0], inherent_characteristic("gate")[-1]
    ((0.0, 0.0), (1.0, 1.0))
    """
    if valve_type in _CHARACTERISTICS:
        return _CHARACTERISTICS[valve_type]
    if valve_type == "custom":
        raise PhysicsRangeError(
            "a 'custom' valve has no built-in characteristic; give its characteristic points"
        )
    raise PhysicsRangeError(f"unknown valve type {valve_type!r}; valid: {', '.join(VALVE_TYPES)}")


def validate_characteristic(points: Sequence[Sequence[float]]) -> str | None:
    """Check a characteristic (travel fraction open, relative flow coefficient).

    Parameters
    ----------
    points : sequence of (float, float)
        (travel [-], phi [-]) pairs.

    Returns
    -------
    str or None
        What is wrong, or ``None`` when the points are usable: at least two finite points,
        travel strictly increasing from 0 to 1, phi non-decreasing from 0 (shut) to 1 (open).

    Examples
    --------
    >>> validate_characteristic([(0, 0), (0.5, 0.2), (1, 1)]) is None
    True
    >>> validate_characteristic([(0, 0), (0.5, 0.6), (0.7, 0.4), (1, 1)])
    'relative flow coefficient must not decrease as travel opens (0.6 at 0.5, then 0.4 at 0.7)'
    """
    try:
        pts = [(float(t), float(p)) for t, p in points]
    except (TypeError, ValueError):
        return "each point must be a pair (travel fraction, relative flow coefficient)"
    if len(pts) < 2:
        return "a characteristic needs at least two points, from (0, 0) to (1, 1)"
    if not all(math.isfinite(t) and math.isfinite(p) for t, p in pts):
        return "characteristic points must be finite numbers"
    if pts[0] != (0.0, 0.0):
        return f"a characteristic must start shut at (0, 0), got {pts[0]}"
    if pts[-1] != (1.0, 1.0):
        return f"a characteristic must end fully open at (1, 1), got {pts[-1]}"
    for (t0, p0), (t1, p1) in zip(pts, pts[1:], strict=False):
        if not t1 > t0:
            return f"travel must increase from point to point ({t0:g}, then {t1:g})"
        if p1 < p0:
            return (
                "relative flow coefficient must not decrease as travel opens "
                f"({p0:g} at {t0:g}, then {p1:g} at {t1:g})"
            )
    return None


def relative_flow(
    characteristic: Sequence[tuple[float, float]], travel: float | np.ndarray
) -> float | np.ndarray:
    """Relative flow coefficient at a travel, interpolated in a characteristic.

    Parameters
    ----------
    characteristic : sequence of (float, float)
        (travel [-], phi [-]) points as checked by :func:`validate_characteristic`.
    travel : float or ndarray
        Travel fraction open [-]; clipped to [0, 1].

    Returns
    -------
    float or ndarray
        phi [-]

    Notes
    -----
    Between two points with phi > 0 the interpolation is linear in log(phi) (geometric): exact
    for an equal-percentage valve, and monotone. On a segment that starts at phi = 0 it is
    linear. Both are exact at the table points and keep phi monotone in travel. Geometric rather
    than plain linear interpolation because these curves are convex: a straight chord would
    overstate the flow near shut, i.e. understate how fast the flow stops.

    Examples
    --------
    >>> relative_flow(((0.0, 0.0), (0.5, 0.1), (1.0, 1.0)), 0.75)
    0.316227766016838
    >>> relative_flow(((0.0, 0.0), (0.5, 0.1), (1.0, 1.0)), 0.25)
    0.05
    """
    pts = np.asarray(characteristic, dtype=float)
    xs, ys = pts[:, 0], pts[:, 1]
    x = np.clip(np.asarray(travel, dtype=float), xs[0], xs[-1])
    i = np.clip(np.searchsorted(xs, x, side="right") - 1, 0, len(xs) - 2)
    x0, x1, y0, y1 = xs[i], xs[i + 1], ys[i], ys[i + 1]
    w = (x - x0) / (x1 - x0)
    positive = (y0 > 0.0) & (y1 > 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        geometric = y0 * np.power(np.where(positive, y1 / y0, 1.0), w)
    phi = np.where(positive, geometric, y0 + w * (y1 - y0))
    return float(phi) if phi.ndim == 0 else phi


def installed_flow_ratio(
    relative_coefficient: float | np.ndarray, valve_share: float
) -> float | np.ndarray:
    """Steady flow through a partly closed valve, relative to the flow when it is open, in a
    line driven by a constant head.

    Parameters
    ----------
    relative_coefficient : float or ndarray
        phi = A_eff/A_eff_open of the valve [-].
    valve_share : float
        The open valve's share of the line's total head loss at the initial flow [-] (0..1].

    Returns
    -------
    float or ndarray
        Q/Q0 = 1 / sqrt(1 - s + s/phi^2) [-] (0 where phi = 0).

    Notes
    -----
    Quasi-steady: total loss (1 - s) H Q^2/Q0^2 + s H Q^2/(phi^2 Q0^2) = H, with s the valve's
    share. This is the installed characteristic that makes a valve pass most of the flow until
    the last part of its travel (common practice, no source beyond the loss algebra).

    Examples
    --------
    >>> round(installed_flow_ratio(0.5, 0.1), 4)
    0.8771
    """
    if not 0.0 < valve_share <= 1.0:
        raise PhysicsRangeError(f"valve share of the loss must lie in (0, 1], got {valve_share}")
    phi = np.asarray(relative_coefficient, dtype=float)
    if np.any(phi < 0.0):
        raise PhysicsRangeError("relative flow coefficient must not be negative")
    safe = np.where(phi > 0.0, phi, 1.0)
    ratio = np.where(phi > 0.0, 1.0 / np.sqrt(1.0 - valve_share + valve_share / safe**2), 0.0)
    return float(ratio) if ratio.ndim == 0 else ratio


def validate_travel_curve(points: Sequence[Sequence[float]]) -> str | None:
    """Check a travel curve (fraction of stroke time, travel fraction open).

    Parameters
    ----------
    points : sequence of (float, float)

    Returns
    -------
    str or None
        What is wrong, or ``None``: at least two finite points, starting fully open at (0, 1),
        ending shut at (1, 0), time fraction strictly increasing, travel never opening again
        (non-increasing).

    Examples
    --------
    >>> validate_travel_curve([(0, 1), (0.5, 0.3), (1, 0)]) is None
    True
    >>> validate_travel_curve([(0, 1), (0.5, 0.3), (1, 0.1)])
    'a travel curve must end shut at (1, 0), got (1.0, 0.1)'
    """
    try:
        pts = [(float(f), float(x)) for f, x in points]
    except (TypeError, ValueError):
        return "each point must be a pair (fraction of stroke time, travel fraction open)"
    if len(pts) < 2:
        return "a travel curve needs at least two points, from (0, 1) to (1, 0)"
    if not all(math.isfinite(f) and math.isfinite(x) for f, x in pts):
        return "travel curve points must be finite numbers"
    if pts[0] != (0.0, 1.0):
        return f"a travel curve must start fully open at (0, 1), got {pts[0]}"
    if pts[-1] != (1.0, 0.0):
        return f"a travel curve must end shut at (1, 0), got {pts[-1]}"
    for (f0, x0), (f1, x1) in zip(pts, pts[1:], strict=False):
        if not f1 > f0:
            return (
                f"fraction of stroke time must increase from point to point ({f0:g}, then {f1:g})"
            )
        if x1 > x0:
            return (
                "travel must not open again during a closure "
                f"({x0:g} at {f0:g}, then {x1:g} at {f1:g})"
            )
    return None


def travel_at(
    travel_curve: Sequence[tuple[float, float]], stroke: float, t: float | np.ndarray
) -> float | np.ndarray:
    """Travel of a closing valve at a time after it starts to move.

    Parameters
    ----------
    travel_curve : sequence of (float, float)
        (fraction of stroke time [-], travel fraction open [-]) from (0, 1) to (1, 0), as checked
        by :func:`validate_travel_curve`.
    stroke : float
        Full travel time from open to shut [s] (>= 0; 0 closes instantly at t = 0).
    t : float or ndarray
        Time since the valve started to move [s].

    Returns
    -------
    float or ndarray
        Travel fraction open [-]: 1 before t = 0, linear between the curve's points, 0 from
        t = stroke on.

    Examples
    --------
    >>> travel_at(((0, 1), (0.5, 0.3), (1, 0)), 20.0, 5.0)
    0.65
    """
    problem = validate_travel_curve(travel_curve)
    if problem is not None:
        raise PhysicsRangeError(problem)
    if not stroke >= 0.0:
        raise PhysicsRangeError(f"stroke time must not be negative, got {stroke} s")
    tt = np.asarray(t, dtype=float)
    if stroke == 0.0:
        out = np.where(tt < 0.0, 1.0, 0.0)
    else:
        pts = np.asarray(travel_curve, dtype=float)
        out = np.interp(tt / stroke, pts[:, 0], pts[:, 1], left=1.0, right=0.0)
    return float(out) if out.ndim == 0 else out
