"""Pipe and hose geometry, wall materials and pressure-wave speed.

Pipe dimensions come from ``fluids.piping`` (ASME B36.10M / B36.19M tables). The wave-speed
relations (Korteweg form with the Wylie & Streeter / Halliwell support factors, and the
compliance form for hoses) are a few lines of algebra that no maintained library exposes in the
form needed here (per anchoring, thin or thick wall, array-friendly), so they are written out.

All quantities are SI: metres, pascals, kilograms per cubic metre, metres per second.
"""

from __future__ import annotations

import difflib
import math

from fluids import piping

from esdsurge.errors import PhysicsRangeError

__all__ = [
    "ANCHORINGS",
    "DEFAULT_ROUGHNESS",
    "MATERIALS",
    "MATERIAL_SOURCES",
    "ROUGHNESS_SOURCES",
    "THIN_WALL_RATIO",
    "WALL_FORMS",
    "anchoring_factor",
    "expansion_from_wave_speed",
    "nps_dimensions",
    "valid_schedules",
    "wave_speed_hose",
    "wave_speed_pipe",
]

#: Wall materials: name -> (Young's modulus [Pa], Poisson's ratio [-]) at ambient temperature.
#: Sources in :data:`MATERIAL_SOURCES`. Plastics are viscoelastic: their short-term modulus
#: governs a surge and varies with grade, temperature and age, so treat it as uncertain.
MATERIALS: dict[str, tuple[float, float]] = {
    "carbon steel": (207e9, 0.30),
    "stainless steel": (195e9, 0.30),
    "ductile iron": (172e9, 0.28),
    "aluminium": (70e9, 0.33),
    "copper": (124e9, 0.34),
    "hdpe": (0.8e9, 0.46),
    "pvc": (2.6e9, 0.46),
}

#: Where each entry of :data:`MATERIALS` comes from.
MATERIAL_SOURCES: dict[str, str] = {
    "carbon steel": "Wylie & Streeter, Fluid Transients in Systems (1993), Table 2.1, mild steel "
    "E 200-212 GPa (from memory); 207 GPa, nu 0.30 as commonly used for line pipe",
    "stainless steel": "ASME B31.3 Table C-6, austenitic stainless steel at 21 degC, "
    "28.3e6 psi = 195 GPa (from memory); nu 0.30",
    "ductile iron": "Wylie & Streeter (1993) Table 2.1, ductile iron 172 GPa, nu 0.28 "
    "(from memory)",
    "aluminium": "Wylie & Streeter (1993) Table 2.1, aluminium alloys 68-73 GPa, nu 0.33 "
    "(from memory)",
    "copper": "Wylie & Streeter (1993) Table 2.1, copper 107-131 GPa, nu 0.34 (from memory); "
    "124 GPa as used for the Adelaide copper rig re-computation",
    "hdpe": "Wylie & Streeter (1993) Table 2.1, polyethylene 0.7-0.8 GPa, nu 0.46 "
    "(from memory); short-term modulus, uncertain",
    "pvc": "Wylie & Streeter (1993) Table 2.1, rigid PVC 2.4-2.75 GPa, nu 0.46 (from memory)",
}

#: Absolute roughness of a new or clean bore [m], by material name of :data:`MATERIALS`.
#: Taken from the tables shipped in ``fluids.friction`` (see :data:`ROUGHNESS_SOURCES`); where
#: the source gives a range, the midpoint is used.
DEFAULT_ROUGHNESS: dict[str, float] = {
    "carbon steel": 7.0e-5,
    "stainless steel": 5.5e-5,
    "ductile iron": 1.25e-4,
    "aluminium": 5.75e-6,
    "copper": 5.75e-6,
    "hdpe": 5.0e-6,
    "pvc": 5.0e-6,
}

#: Where each entry of :data:`DEFAULT_ROUGHNESS` comes from: (table in fluids, entry name).
#: ``HHR``: Idel'chik & Ginevskii, Handbook of Hydraulic Resistance (2007), via
#: ``fluids.friction.HHR_roughness``; ``Farshad``: Farshad & Rieke, SPE Drilling & Completion
#: 21(3) (2006), via ``fluids.friction._Farshad_roughness``.
ROUGHNESS_SOURCES: dict[str, tuple[str, str]] = {
    "carbon steel": ("HHR", "Welded steel tubes, Good condition"),
    "stainless steel": ("Farshad", "Cr13, bare"),
    "ductile iron": ("HHR", "Cast-iron tubes, New, bituminized"),
    "aluminium": (
        "HHR",
        "Seamless tubes made from brass, copper, lead, aluminum, Commercially smooth",
    ),
    "copper": (
        "HHR",
        "Seamless tubes made from brass, copper, lead, aluminum, Commercially smooth",
    ),
    "hdpe": ("Farshad", "Plastic coated"),
    "pvc": ("Farshad", "Plastic coated"),
}

#: How a pipe is held axially: ``joints`` (expansion joints throughout), ``anchored``
#: (anchored throughout, no axial movement), ``upstream`` (anchored at the upstream end only).
ANCHORINGS: tuple[str, ...] = ("joints", "anchored", "upstream")

#: Wall forms of :func:`anchoring_factor`: ``auto`` picks ``thin`` above :data:`THIN_WALL_RATIO`.
WALL_FORMS: tuple[str, ...] = ("auto", "thin", "thick")

#: D/e above which a wall counts as thin (Wylie & Streeter 1993, ch. 2).
THIN_WALL_RATIO = 25.0

#: Schedules of ASME B36.10M (carbon steel) and B36.19M (stainless, suffix S) in fluids.piping.
_B36_SCHEDULES: tuple[str, ...] = (
    "5",
    "10",
    "20",
    "30",
    "40",
    "60",
    "80",
    "100",
    "120",
    "140",
    "160",
    "STD",
    "XS",
    "XXS",
    "5S",
    "10S",
    "40S",
    "80S",
)


def valid_schedules() -> list[str]:
    """Pipe schedules that :func:`nps_dimensions` knows (ASME B36.10M and B36.19M).

    Examples
    --------
    >>> "STD" in valid_schedules() and "40S" in valid_schedules()
    True
    """
    return list(_B36_SCHEDULES)


def _normalise_schedule(schedule: str | int) -> str:
    text = str(schedule).strip().upper().replace(" ", "")
    if text.startswith("SCHEDULE"):
        text = text[len("SCHEDULE") :]
    elif text.startswith("SCH"):
        text = text[len("SCH") :]
    return text.lstrip(".")


def nps_dimensions(nps: float, schedule: str) -> tuple[float, float]:
    """Inside diameter and wall of a standard pipe size.

    Parameters
    ----------
    nps : float
        Nominal pipe size [in] (e.g. ``0.5``, ``12``).
    schedule : str
        Schedule: ``"40"``, ``"STD"``, ``"XS"``, ``"80S"``, ... (a leading ``Sch`` is ignored,
        case does not matter). See :func:`valid_schedules`.

    Returns
    -------
    inside_diameter : float
        [m]
    wall : float
        Wall thickness [m]

    Raises
    ------
    PhysicsRangeError
        Unknown schedule, or a size that the schedule does not list (the message lists the
        valid ones).

    Notes
    -----
    Dimensions from ``fluids.piping.nearest_pipe`` (fluids 1.3), which tabulates ASME
    B36.10M-2004 (welded and seamless wrought steel pipe) and B36.19M-2004 (stainless steel
    pipe) in millimetres.

    References
    ----------
    ASME B36.10M-2004; ASME B36.19M-2004.

    Examples
    --------
    NPS 12 standard weight (ASME B36.10M: OD 323.8 mm, wall 9.53 mm):

    >>> d, e = nps_dimensions(12, "STD")
    >>> round(d * 1000, 2), round(e * 1000, 2)
    (304.74, 9.53)
    """
    sched = _normalise_schedule(schedule)
    if sched not in _B36_SCHEDULES:
        near = difflib.get_close_matches(sched, _B36_SCHEDULES, n=3)
        hint = f" (did you mean {', '.join(near)}?)" if near else ""
        raise PhysicsRangeError(
            f"unknown pipe schedule {schedule!r}{hint}; valid: {', '.join(_B36_SCHEDULES)}"
        )
    sizes = piping.schedule_lookup[sched][0]
    nps_f = float(nps)
    if not any(math.isclose(nps_f, s, rel_tol=0.0, abs_tol=1e-9) for s in sizes):
        listed = ", ".join(f"{s:g}" for s in sizes)
        raise PhysicsRangeError(
            f"NPS {nps_f:g} is not listed for schedule {sched} (ASME B36.10M/B36.19M); "
            f"valid sizes: {listed}"
        )
    _, di, _, wall = piping.nearest_pipe(NPS=nps_f, schedule=sched)
    return float(di), float(wall)


def _check_anchoring(anchoring: str) -> None:
    if anchoring not in ANCHORINGS:
        raise PhysicsRangeError(f"unknown anchoring {anchoring!r}; valid: {', '.join(ANCHORINGS)}")


def anchoring_factor(
    diameter: float,
    wall: float,
    poisson: float,
    anchoring: str,
    *,
    form: str = "auto",
) -> float:
    """Support (anchoring) factor c1 of the pipe wave-speed formula.

    Parameters
    ----------
    diameter : float
        Inside diameter D [m].
    wall : float
        Wall thickness e [m].
    poisson : float
        Poisson's ratio of the wall nu [-].
    anchoring : str
        ``"joints"`` (expansion joints throughout), ``"anchored"`` (anchored throughout
        against axial movement) or ``"upstream"`` (anchored at the upstream end only).
    form : str, optional
        ``"auto"`` (thin-wall form when D/e > 25, thick-wall form otherwise), ``"thin"`` or
        ``"thick"`` to force one form (e.g. to reproduce a source that used one of them).

    Returns
    -------
    float
        c1 [-]

    Notes
    -----
    Thin wall (D/e > 25), Wylie & Streeter (1993) ch. 2:

    - upstream: c1 = 1 - nu/2
    - anchored: c1 = 1 - nu^2
    - joints: c1 = 1

    Thick wall (Halliwell 1963), used in the same formula:

    - upstream: c1 = 2(e/D)(1 + nu) + D(1 - nu/2)/(D + e)
    - anchored: c1 = 2(e/D)(1 + nu) + D(1 - nu^2)/(D + e)
    - joints: c1 = 2(e/D)(1 + nu) + D/(D + e)

    The thick-wall forms tend to the thin ones as e/D -> 0; at D/e = 25 the switch of
    ``form="auto"`` moves c1 by about 8 % for steel, which moves the wave speed by about 1 %.

    References
    ----------
    Wylie, E. B. & Streeter, V. L., Fluid Transients in Systems, Prentice Hall (1993), ch. 2.
    Halliwell, A. R., "Velocity of a water-hammer wave in an elastic pipe", J. Hydraul. Div.
    ASCE 89(HY4) (1963).

    Examples
    --------
    >>> round(anchoring_factor(0.3, 0.003, 0.3, "anchored"), 3)
    0.91
    """
    _check_anchoring(anchoring)
    if form not in WALL_FORMS:
        raise PhysicsRangeError(f"unknown wall form {form!r}; valid: {', '.join(WALL_FORMS)}")
    if not (diameter > 0.0 and wall > 0.0):
        raise PhysicsRangeError(
            f"diameter and wall must be positive, got D={diameter} m, e={wall} m"
        )
    if not (0.0 <= poisson < 0.5):
        raise PhysicsRangeError(f"Poisson's ratio must lie in [0, 0.5), got {poisson}")
    thin_core = {"joints": 1.0, "anchored": 1.0 - poisson**2, "upstream": 1.0 - poisson / 2.0}[
        anchoring
    ]
    thin = form == "thin" or (form == "auto" and diameter / wall > THIN_WALL_RATIO)
    if thin:
        return thin_core
    return 2.0 * (wall / diameter) * (1.0 + poisson) + diameter * thin_core / (diameter + wall)


def wave_speed_pipe(
    bulk_modulus: float,
    density: float,
    diameter: float,
    wall: float,
    youngs_modulus: float,
    poisson: float,
    anchoring: str = "anchored",
    *,
    form: str = "auto",
) -> float:
    """Pressure-wave speed of a liquid in an elastic pipe.

    Parameters
    ----------
    bulk_modulus : float
        Isentropic bulk modulus of the liquid K [Pa].
    density : float
        Liquid density rho [kg/m^3].
    diameter : float
        Inside diameter D [m].
    wall : float
        Wall thickness e [m].
    youngs_modulus : float
        Young's modulus of the wall E [Pa].
    poisson : float
        Poisson's ratio of the wall [-].
    anchoring : str, optional
        ``"anchored"`` (default), ``"joints"`` or ``"upstream"``; see :func:`anchoring_factor`.
    form : str, optional
        Wall form of c1, see :func:`anchoring_factor`.

    Returns
    -------
    float
        Wave speed a [m/s]

    Notes
    -----
    a = sqrt( (K/rho) / (1 + c1 (K/E)(D/e)) ) (Korteweg 1878; Wylie & Streeter 1993 ch. 2),
    c1 from :func:`anchoring_factor`.

    References
    ----------
    Wylie, E. B. & Streeter, V. L., Fluid Transients in Systems, Prentice Hall (1993), ch. 2.

    Examples
    --------
    Thin-wall steel with water (K = 2.19 GPa, rho = 998.2 kg/m^3, E = 207 GPa, nu = 0.3),
    D/e = 100, anchored throughout:

    >>> round(wave_speed_pipe(2.19e9, 998.2, 1.0, 0.01, 207e9, 0.3), 1)
    1057.3
    """
    if not (bulk_modulus > 0.0 and density > 0.0 and youngs_modulus > 0.0):
        raise PhysicsRangeError(
            "bulk modulus, density and Young's modulus must be positive, got "
            f"K={bulk_modulus} Pa, rho={density} kg/m^3, E={youngs_modulus} Pa"
        )
    c1 = anchoring_factor(diameter, wall, poisson, anchoring, form=form)
    stiffness = 1.0 + c1 * (bulk_modulus / youngs_modulus) * (diameter / wall)
    return math.sqrt(bulk_modulus / density / stiffness)


def wave_speed_hose(bulk_modulus: float, density: float, expansion: float) -> float:
    """Pressure-wave speed in a compliant hose from its volumetric expansion.

    Parameters
    ----------
    bulk_modulus : float
        Isentropic bulk modulus of the liquid K [Pa].
    density : float
        Liquid density rho [kg/m^3].
    expansion : float
        Volumetric expansion of the bore per unit pressure, (1/V) dV/dp [1/Pa]
        (e.g. 0.5 % per 10 bar = 5e-9 1/Pa); 0 for a rigid bore.

    Returns
    -------
    float
        Wave speed a [m/s]

    Notes
    -----
    a = [rho (1/K + (1/V) dV/dp)]^(-1/2), the general form from which the pipe formula is
    derived (Wylie & Streeter 1993, ch. 2). A hose's expansion is uncertain; treat the
    resulting wave speed as a sensitivity parameter.

    References
    ----------
    Wylie, E. B. & Streeter, V. L., Fluid Transients in Systems, Prentice Hall (1993), ch. 2.

    Examples
    --------
    Gasoline-like liquid (rho 740 kg/m^3, K 1.0 GPa) in a hose expanding 2 % per 10 bar:

    >>> round(wave_speed_hose(1.0e9, 740.0, 2e-8))
    254
    """
    if not (bulk_modulus > 0.0 and density > 0.0):
        raise PhysicsRangeError(
            f"bulk modulus and density must be positive, got K={bulk_modulus} Pa, "
            f"rho={density} kg/m^3"
        )
    if expansion < 0.0:
        raise PhysicsRangeError(f"hose expansion must not be negative, got {expansion} 1/Pa")
    return 1.0 / math.sqrt(density * (1.0 / bulk_modulus + expansion))


def expansion_from_wave_speed(bulk_modulus: float, density: float, wave_speed: float) -> float:
    """Volumetric expansion per pressure that gives a wave speed (inverse of
    :func:`wave_speed_hose`).

    Parameters
    ----------
    bulk_modulus : float
        Isentropic bulk modulus of the liquid K [Pa].
    density : float
        Liquid density rho [kg/m^3].
    wave_speed : float
        Wave speed a [m/s], not above the free-liquid speed sqrt(K/rho).

    Returns
    -------
    float
        (1/V) dV/dp = 1/(rho a^2) - 1/K [1/Pa]

    Raises
    ------
    PhysicsRangeError
        When ``wave_speed`` exceeds the speed of sound in the free liquid (no wall makes a
        liquid stiffer than itself).

    Examples
    --------
    >>> round(expansion_from_wave_speed(1.0e9, 740.0, wave_speed_hose(1.0e9, 740.0, 5e-9)), 15)
    5e-09
    """
    if not (bulk_modulus > 0.0 and density > 0.0 and wave_speed > 0.0):
        raise PhysicsRangeError(
            "bulk modulus, density and wave speed must be positive, got "
            f"K={bulk_modulus} Pa, rho={density} kg/m^3, a={wave_speed} m/s"
        )
    free = math.sqrt(bulk_modulus / density)
    if wave_speed > free * (1.0 + 1e-12):
        raise PhysicsRangeError(
            f"wave speed {wave_speed:.1f} m/s exceeds the free-liquid speed of sound {free:.1f} m/s"
        )
    return max(0.0, 1.0 / (density * wave_speed**2) - 1.0 / bulk_modulus)
