"""Pipe friction: Reynolds number, Darcy friction factor, Darcy-Weisbach and minor losses.

The turbulent friction factor is ``fluids.friction.Colebrook`` (exact Lambert-W solution of the
Colebrook equation). Only the laminar branch, the laminar-turbulent bridge and the signed head
losses are written here; they are one-line formulas.

Signed losses follow the flow: a loss term is V|V|, so it opposes the flow in either direction.
"""

from __future__ import annotations

import numpy as np
from fluids.friction import Colebrook

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import G

__all__ = [
    "RE_FLOOR",
    "RE_LAMINAR",
    "RE_TURBULENT",
    "darcy_friction_factor",
    "head_loss",
    "loss_coefficient_head",
    "reynolds",
]

#: Below this Reynolds number the flow is laminar, f = 64/Re.
RE_LAMINAR = 2300.0
#: From this Reynolds number on, the Colebrook equation applies.
RE_TURBULENT = 4000.0
#: Reynolds numbers below this (including no flow) are evaluated at it, so that the friction
#: factor stays finite; the laminar head loss f L V|V| / (2 g D) still vanishes with V.
RE_FLOOR = 1.0


def reynolds(velocity: float, diameter: float, kinematic_viscosity: float) -> float:
    """Reynolds number of a pipe flow (its magnitude).

    Parameters
    ----------
    velocity : float
        Mean velocity [m/s] (either sign).
    diameter : float
        Inside diameter [m].
    kinematic_viscosity : float
        [m^2/s]

    Returns
    -------
    float
        Re = |V| D / nu [-]

    Examples
    --------
    >>> reynolds(2.0, 0.3, 1.0e-6)
    600000.0
    """
    if not (diameter > 0.0 and kinematic_viscosity > 0.0):
        raise PhysicsRangeError(
            f"diameter and kinematic viscosity must be positive, got D={diameter} m, "
            f"nu={kinematic_viscosity} m^2/s"
        )
    return abs(velocity) * diameter / kinematic_viscosity


def darcy_friction_factor(reynolds: float, relative_roughness: float) -> float:
    """Darcy friction factor of a full round pipe.

    Parameters
    ----------
    reynolds : float
        Reynolds number [-] (>= 0).
    relative_roughness : float
        Absolute roughness over inside diameter, eps/D [-] (>= 0).

    Returns
    -------
    float
        Darcy friction factor f [-]

    Notes
    -----
    - Re < 2300: laminar, f = 64/Re (Hagen-Poiseuille). Re below 1 (and no flow) is taken as
      Re = 1, so that f stays finite; the head loss is proportional to f V|V| and so still
      vanishes at rest.
    - Re >= 4000: Colebrook (1939), 1/sqrt(f) = -2 log10( (eps/D)/3.7 + 2.51/(Re sqrt(f)) ),
      solved by ``fluids.friction.Colebrook``.
    - 2300 <= Re < 4000 (transition): f is interpolated linearly in Re between the laminar value
      at 2300 and the Colebrook value at 4000, so that f is continuous in Re (common practice,
      no source; the real transition is not a function of Re alone).

    References
    ----------
    Colebrook, C. F., "Turbulent flow in pipes, with particular reference to the transition
    region between the smooth and rough pipe laws", J. ICE 11(4):133-156 (1939).

    Examples
    --------
    >>> round(darcy_friction_factor(1e5, 1e-4), 5)
    0.01851
    >>> darcy_friction_factor(1000.0, 1e-4)
    0.064
    """
    if not (reynolds >= 0.0) or not np.isfinite(reynolds):
        raise PhysicsRangeError(f"Reynolds number must be finite and >= 0, got {reynolds}")
    if not (0.0 <= relative_roughness < 0.5):
        raise PhysicsRangeError(
            f"relative roughness must lie in [0, 0.5), got {relative_roughness}"
        )
    re = max(float(reynolds), RE_FLOOR)
    if re < RE_LAMINAR:
        return 64.0 / re
    if re >= RE_TURBULENT:
        return float(Colebrook(re, float(relative_roughness)))
    f_lam = 64.0 / RE_LAMINAR
    f_turb = float(Colebrook(RE_TURBULENT, float(relative_roughness)))
    w = (re - RE_LAMINAR) / (RE_TURBULENT - RE_LAMINAR)
    return f_lam + w * (f_turb - f_lam)


def head_loss(friction_factor: float, length: float, diameter: float, velocity: float) -> float:
    """Darcy-Weisbach friction head loss, signed with the flow.

    Parameters
    ----------
    friction_factor : float
        Darcy friction factor [-].
    length : float
        [m]
    diameter : float
        Inside diameter [m].
    velocity : float
        Mean velocity [m/s] (either sign); arrays allowed.

    Returns
    -------
    float
        h_f = f (L/D) V|V| / (2 g) [m], positive in the direction of the flow.

    References
    ----------
    Darcy-Weisbach equation; e.g. Wylie & Streeter, Fluid Transients in Systems (1993), ch. 1.

    Examples
    --------
    >>> round(head_loss(0.02, 1000.0, 0.3, -2.0), 3)
    -13.596
    """
    if not diameter > 0.0:
        raise PhysicsRangeError(f"diameter must be positive, got {diameter} m")
    v = np.asarray(velocity, dtype=float)
    h = friction_factor * (length / diameter) * v * np.abs(v) / (2.0 * G)
    return float(h) if h.ndim == 0 else h


def loss_coefficient_head(k: float, velocity: float) -> float:
    """Head loss of a local resistance with loss coefficient K, signed with the flow.

    Parameters
    ----------
    k : float
        Loss coefficient on ``velocity`` [-].
    velocity : float
        Reference velocity [m/s] (either sign); arrays allowed.

    Returns
    -------
    float
        h = K V|V| / (2 g) [m]

    Examples
    --------
    >>> round(loss_coefficient_head(1.0, 1.0), 5)
    0.05099
    """
    v = np.asarray(velocity, dtype=float)
    h = k * v * np.abs(v) / (2.0 * G)
    return float(h) if h.ndim == 0 else h
