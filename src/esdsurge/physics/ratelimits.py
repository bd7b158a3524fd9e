"""Transfer-rate limits other than surge: static electricity and the carrier's venting.

Static electricity. A product of low electrical conductivity (a *static accumulator*) charges as
it flows; the charge carried into a tank grows with the flow velocity. Two published rule sets
cap the velocity:

* ISGOTT, 5th ed. (2006), section 11.1.7 and its worked example (Fig. 11.2): while loading a
  static accumulator into a ship's tank, the velocity in the tank inlet is kept to **1 m/s**
  until the inlet is covered (the *initial rate*), and the velocity in the loading line to
  **7 m/s** afterwards, taken in the smallest section of the line (the *maximum rate*).
  Section 11.1.7.9: a conductivity above 50 pS/m cannot be assumed unless it is measured.
* IEC TS 60079-32-1:2013, road-tanker filling of low-conductivity liquids: the product of the
  fill-pipe velocity and the fill-pipe bore, v d, is capped by the fuel's sulphur content and its
  conductivity (0.25, 0.38 or 0.5 m^2/s), and in every case v <= 7 m/s. esdsurge applies the same
  table to rail tank cars (the TS allows larger values for rail cars, which were not verified
  for esdsurge: the road values are the conservative side).

Venting. A carrier's tanks breathe out the vapour that the incoming liquid displaces plus the
gas the cargo gives off: the IMO standards for vapour emission control systems (MSC/Circ.585,
para 2.7.2.1) cap the transfer rate at the venting capacity divided by at least 1.25 (the 25 %
allowance for gas evolution, also ISGOTT 5th ed. section 7.3.3).

Why hand-written: these are a few lines of area-times-velocity arithmetic with thresholds from
the texts; no maintained library carries them.

All functions take and return SI floats: diameters [m], velocities [m/s], flows [m^3/s],
conductivities [S/m], sulphur contents as mass fractions [-].
"""

from __future__ import annotations

import math

from esdsurge.errors import PhysicsRangeError

__all__ = [
    "ACCUMULATOR_CONDUCTIVITY",
    "IMO_VENT_FACTOR",
    "ISGOTT_INITIAL_VELOCITY",
    "ISGOTT_MAX_VELOCITY",
    "LOW_SULPHUR",
    "iec_fill_velocity",
    "iec_vd_limit",
    "is_static_accumulator",
    "isgott_initial_rate",
    "isgott_max_rate",
    "velocity_rate",
    "vent_limited_rate",
]

#: Velocity in the tank inlet until the inlet is covered [m/s] (ISGOTT 5th ed. 11.1.7, Fig 11.2).
ISGOTT_INITIAL_VELOCITY = 1.0
#: Highest velocity in the loading line for a static accumulator [m/s] (ISGOTT 5th ed. 11.1.7;
#: also the cap of IEC TS 60079-32-1 for road tankers).
ISGOTT_MAX_VELOCITY = 7.0
#: Conductivity below which a product is a static accumulator [S/m] (50 pS/m: ISGOTT 5th ed.
#: 11.1.7.9, a higher value may not be assumed unless measured).
ACCUMULATOR_CONDUCTIVITY = 50e-12
#: Sulphur content at or below which IEC TS 60079-32-1 treats a fuel as low-sulphur [-] (50 ppm).
LOW_SULPHUR = 50e-6
#: Venting capacity per unit of transfer rate, at least (IMO MSC/Circ.585 para 2.7.2.1).
IMO_VENT_FACTOR = 1.25


def velocity_rate(diameter: float, velocity: float, count: int = 1) -> float:
    """Flow through ``count`` round bores of ``diameter`` at a mean ``velocity``.

    Parameters
    ----------
    diameter : float
        Inside diameter of one bore [m] (> 0).
    velocity : float
        Mean velocity [m/s] (>= 0).
    count : int
        Number of bores in parallel [-] (>= 1).

    Returns
    -------
    float
        Q = count * pi d^2 / 4 * v [m^3/s]

    Examples
    --------
    >>> round(velocity_rate(0.25, 1.0) * 3600, 1)
    176.7
    """
    if not diameter > 0.0:
        raise PhysicsRangeError(f"diameter must be positive, got {diameter} m")
    if not velocity >= 0.0:
        raise PhysicsRangeError(f"velocity must not be negative, got {velocity} m/s")
    if count < 1:
        raise PhysicsRangeError(f"count must be at least 1, got {count}")
    return count * math.pi * diameter * diameter / 4.0 * velocity


def is_static_accumulator(conductivity: float | None) -> bool:
    """Whether a product must be treated as a static accumulator.

    Parameters
    ----------
    conductivity : float or None
        Measured electrical conductivity [S/m], or ``None`` when not known.

    Returns
    -------
    bool
        ``True`` when the conductivity is unknown or below 50 pS/m.

    References
    ----------
    ISGOTT, 5th ed. (2006), 11.1.7.9: a conductivity above 50 pS/m cannot be assumed unless it
    is measured (continuously).

    Examples
    --------
    >>> is_static_accumulator(None), is_static_accumulator(5e-12), is_static_accumulator(1e-6)
    (True, True, False)
    """
    if conductivity is None:
        return True
    if not conductivity >= 0.0:
        raise PhysicsRangeError(f"conductivity must not be negative, got {conductivity} S/m")
    return conductivity < ACCUMULATOR_CONDUCTIVITY


def isgott_max_rate(smallest_diameter: float, velocity: float = ISGOTT_MAX_VELOCITY) -> float:
    """Highest loading rate of a static accumulator: 7 m/s in the smallest section of the line.

    Parameters
    ----------
    smallest_diameter : float
        Inside diameter of the smallest section of the loading line [m].
    velocity : float
        The velocity limit [m/s]; default 7 m/s.

    Returns
    -------
    float
        [m^3/s]

    References
    ----------
    ISGOTT, 5th ed. (2006), 11.1.7 and Fig. 11.2: the smallest section of the worked example is
    the 250 mm hose; "at 7 m/s" the rate to request is printed as 1,281 m^3/h (the book's
    183 m^3/h per m/s implies a bore of about 254.5 mm; the area of a 250.0 mm bore gives
    1237 m^3/h).

    Examples
    --------
    The worked example of ISGOTT Fig. 11.2 (printed 1,281 m^3/h) with the exact area of a
    250 mm bore:

    >>> round(isgott_max_rate(0.250) * 3600)
    1237
    """
    return velocity_rate(smallest_diameter, velocity)


def isgott_initial_rate(
    inlet_diameter: float, inlets: int = 1, velocity: float = ISGOTT_INITIAL_VELOCITY
) -> float:
    """Initial loading rate of a static accumulator: 1 m/s in each tank inlet until covered.

    Parameters
    ----------
    inlet_diameter : float
        Inside diameter of a tank inlet [m].
    inlets : int
        Number of tank inlets loaded at once [-].
    velocity : float
        The velocity limit [m/s]; default 1 m/s.

    Returns
    -------
    float
        [m^3/s]

    References
    ----------
    ISGOTT, 5th ed. (2006), 11.1.7 and Fig. 11.2: two 250 mm tank inlets at 1 m/s, printed as
    183 x 2 = 366 m^3/h (exact area: 2 x 176.7 = 353 m^3/h).

    Examples
    --------
    >>> round(isgott_initial_rate(0.250, 2) * 3600)
    353
    """
    return velocity_rate(inlet_diameter, velocity, inlets)


def iec_vd_limit(conductivity: float | None, sulphur: float | None) -> tuple[float, str]:
    """Largest v d for filling a road tanker with a low-conductivity fuel.

    Parameters
    ----------
    conductivity : float or None
        Product conductivity [S/m], ``None`` when unknown.
    sulphur : float or None
        Sulphur content as a mass fraction [-] (50 ppm = 50e-6), ``None`` when unknown
        (taken as low-sulphur, the stricter column).

    Returns
    -------
    vd : float
        Largest product of fill-pipe velocity and bore [m^2/s].
    basis : str
        The row of the table that applies.

    Notes
    -----
    IEC TS 60079-32-1:2013, road tankers, single-phase low-conductivity fuels:

    ============================== ======================== ========================
    conductivity                   sulphur > 50 ppm         sulphur <= 50 ppm
    ============================== ======================== ========================
    > 50 pS/m                      0.5                      0.5
    > 10 pS/m and <= 50 pS/m       0.5                      0.38
    <= 10 pS/m or unknown          0.38                     0.25
    ============================== ======================== ========================

    References
    ----------
    IEC TS 60079-32-1:2013, Explosive atmospheres - Part 32-1: Electrostatic hazards, guidance;
    road-tanker filling limits (values read from a secondary summary of the TS).

    Examples
    --------
    >>> iec_vd_limit(None, None)[0], iec_vd_limit(20e-12, 1e-3)[0], iec_vd_limit(60e-12, 10e-6)[0]
    (0.25, 0.5, 0.5)
    """
    if conductivity is not None and not conductivity >= 0.0:
        raise PhysicsRangeError(f"conductivity must not be negative, got {conductivity} S/m")
    if sulphur is not None and not 0.0 <= sulphur <= 1.0:
        raise PhysicsRangeError(f"sulphur content must be a fraction 0..1, got {sulphur}")
    low_s = sulphur is None or sulphur <= LOW_SULPHUR
    s_text = (
        "sulphur <= 50 ppm"
        if sulphur is not None and low_s
        else ("sulphur not given (taken <= 50 ppm)" if sulphur is None else "sulphur > 50 ppm")
    )
    if conductivity is None or conductivity <= 10e-12:
        c_text = "conductivity not given" if conductivity is None else "conductivity <= 10 pS/m"
        vd = 0.25 if low_s else 0.38
    elif conductivity <= 50e-12:
        c_text = "conductivity 10-50 pS/m"
        vd = 0.38 if low_s else 0.5
    else:
        c_text = "conductivity > 50 pS/m"
        vd = 0.5
    return vd, f"IEC TS 60079-32-1 v·d ≤ {vd:g} m²/s ({s_text}, {c_text})"


def iec_fill_velocity(
    fill_diameter: float, conductivity: float | None, sulphur: float | None
) -> float:
    """Largest fill-pipe velocity for filling a road tanker (or rail tank car).

    Parameters
    ----------
    fill_diameter : float
        Inside diameter of the fill pipe [m].
    conductivity, sulphur : as for :func:`iec_vd_limit`

    Returns
    -------
    float
        min(vd / d, 7 m/s) [m/s]

    References
    ----------
    IEC TS 60079-32-1:2013 (v d table, and v <= 7 m/s in every case).

    Examples
    --------
    A 100 mm fill pipe, low-sulphur fuel of unknown conductivity (v d <= 0.25 m^2/s):

    >>> round(iec_fill_velocity(0.10, None, None), 2)
    2.5
    """
    if not fill_diameter > 0.0:
        raise PhysicsRangeError(f"fill-pipe diameter must be positive, got {fill_diameter} m")
    vd, _ = iec_vd_limit(conductivity, sulphur)
    return min(vd / fill_diameter, ISGOTT_MAX_VELOCITY)


def vent_limited_rate(vent_capacity: float, factor: float = IMO_VENT_FACTOR) -> float:
    """Highest transfer rate that the carrier's venting can take.

    Parameters
    ----------
    vent_capacity : float
        Venting capacity of the tanks being loaded [m^3/s] (> 0).
    factor : float
        Capacity needed per unit of transfer rate [-]; default 1.25.

    Returns
    -------
    float
        vent_capacity / factor [m^3/s]

    References
    ----------
    IMO, Standards for vapour emission control systems (MSC/Circ.585), para 2.7.2.1: the
    transfer rate must not exceed the venting capacity divided by at least 1.25; ISGOTT, 5th ed.
    (2006), 7.3.3: venting sized for the cargo inflow plus 25 % for gas evolution.

    Examples
    --------
    >>> round(vent_limited_rate(1250.0 / 3600) * 3600, 6)
    1000.0
    """
    if not vent_capacity > 0.0:
        raise PhysicsRangeError(f"venting capacity must be positive, got {vent_capacity} m^3/s")
    if not factor >= 1.0:
        raise PhysicsRangeError(f"the venting factor must be at least 1, got {factor}")
    return vent_capacity / factor
