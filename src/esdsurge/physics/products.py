"""Built-in product property sets: density, isentropic bulk modulus, vapour pressure, viscosity.

Each built-in product gives, at a temperature inside its valid range, a
:class:`esdsurge.model.Fluid` with density [kg/m^3], the **isentropic** bulk modulus
K_s = rho*c^2 [Pa] (the one that sets the speed of sound and so the wave speed; the isothermal
K_T is smaller by a factor of about 1.006 for water and 1.2-1.45 for alcohols and hydrocarbons),
vapour pressure [Pa abs] and dynamic viscosity [Pa*s]. Every value names its source in
``Fluid.sources``.

- **Pure liquids** (methanol, ethanol, toluene, xylene, styrene): density, vapour pressure and
  viscosity by the DIPPR equations with the coefficients of Perry's Chemical Engineers'
  Handbook, 8th ed. (2008), Tables 2-32, 2-8 and 2-313; water by its own standard equations.
  Speed of sound from a 5 K table of the reference equations of state, written with CoolProp
  8.0.0 by ``tools/make_product_tables.py`` into ``product_tables.py``. "xylene" (mixed xylenes)
  is represented by m-xylene, their main isomer.
- **Styrene**: no speed of sound was found, so its modulus is an *estimate* by the ARCO
  adiabatic correlation at its API gravity, to be treated as a sensitivity.
- **Petroleum products** are typical products, not specifications: a typical density at 15 degC
  inside the specification range, API MPMS 11.1 thermal expansion, ARCO modulus at the API
  gravity, US EPA AP-42 vapour pressure, Walther (ASTM D341) viscosity through two typical
  points. Coefficients recalled from memory say so in their sources.

Why hand-written: no run-time dependency carries these correlations (``fluids`` has no liquid
property data; CoolProp is a test dependency only and lacks petroleum mixtures and styrene), and
each is a line or two of arithmetic. Temperatures are in kelvin except where a standard defines
its correlation in degC, which the parameter name then says (``t_c``).
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from functools import partial
from typing import Any

import numpy as np

from esdsurge.errors import PhysicsRangeError
from esdsurge.model import Fluid
from esdsurge.physics.product_tables import SOUND_SPEED_TABLES

#: Pascal per psi (pound-force per square inch, exact from the definitions of lb, g_n and inch).
PSI = 6894.757293168361

#: Density of water at 60 degF used to form specific gravity 60/60 [kg/m^3] (API MPMS Ch. 11.5,
#: from memory).
WATER_DENSITY_60F = 999.016


# --- Generic correlations -------------------------------------------------------------------


def dippr101(temperature, c1: float, c2: float, c3: float, c4: float, c5: float):
    """DIPPR equation 101: ``exp(C1 + C2/T + C3*ln(T) + C4*T**C5)``.

    Parameters
    ----------
    temperature : float or array
        [K]
    c1, c2, c3, c4, c5 : float
        Coefficients of the tabulated property (units as in the table).

    Returns
    -------
    float or array
        The property in the table's units ([Pa] for Perry's Table 2-8 vapour pressures,
        [Pa*s] for Table 2-313 liquid viscosities).

    References
    ----------
    Perry's Chemical Engineers' Handbook, 8th ed. (Green & Perry, McGraw-Hill 2008), Tables 2-8
    and 2-313 (equation stated in the table headings).

    Examples
    --------
    Toluene's vapour pressure at 20 degC (Perry 8th ed. Table 2-8 coefficients):

    >>> round(float(dippr101(293.15, 76.945, -6729.8, -8.179, 5.3017e-06, 2)))
    2926
    """
    t = np.asarray(temperature, dtype=float)
    return np.exp(c1 + c2 / t + c3 * np.log(t) + c4 * t**c5)


def dippr105(temperature, c1: float, c2: float, c3: float, c4: float):
    """DIPPR equation 105, molar density of a liquid: ``C1 / C2**(1 + (1 - T/C3)**C4)``.

    Parameters
    ----------
    temperature : float or array
        [K], below the critical temperature ``c3``
    c1, c2, c3, c4 : float
        [kmol/m^3], [-], [K], [-]

    Returns
    -------
    float or array
        Molar density [kmol/m^3]; times the molar mass [kg/kmol] gives [kg/m^3].

    References
    ----------
    Perry's Chemical Engineers' Handbook, 8th ed. (2008), Table 2-32, "Densities of Inorganic and
    Organic Liquids" (equation 105 in its heading).

    Examples
    --------
    Ethanol at 20 degC, molar mass 46.069 kg/kmol:

    >>> round(46.069 * float(dippr105(293.15, 1.6288, 0.27469, 514.0, 0.23178)), 1)
    790.3
    """
    t = np.asarray(temperature, dtype=float)
    return c1 / c2 ** (1.0 + (1.0 - t / c3) ** c4)


def water_density_kell(temperature):
    """Density of liquid water at 101.325 kPa (Kell 1975).

    Parameters
    ----------
    temperature : float or array
        [K], 0-150 degC in the source

    Returns
    -------
    float or array
        [kg/m^3]

    Notes
    -----
    rho = (999.83952 + 16.945176 t - 7.9870401e-3 t^2 - 46.170461e-6 t^3 + 105.56302e-9 t^4
    - 280.54253e-12 t^5) / (1 + 16.879850e-3 t), t in degC. Coefficients from memory; the tests
    check them against IAPWS-95 (CoolProp 8.0.0) to 0.01 %.

    References
    ----------
    G. S. Kell, "Density, thermal expansivity, and compressibility of liquid water from 0 deg to
    150 deg C", J. Chem. Eng. Data 20(1):97-105 (1975).

    Examples
    --------
    >>> round(float(water_density_kell(293.15)), 2)
    998.2
    """
    t = np.asarray(temperature, dtype=float) - 273.15
    num = (999.83952, 16.945176, -7.9870401e-3, -46.170461e-6, 105.56302e-9, -280.54253e-12)
    return np.polynomial.polynomial.polyval(t, num) / (1.0 + 16.879850e-3 * t)


def water_vapour_pressure_iapws92(temperature):
    """Saturation pressure of water, IAPWS 1992 (Wagner & Pruss 1993).

    Parameters
    ----------
    temperature : float or array
        [K], 273.16 K to the critical point 647.096 K

    Returns
    -------
    float or array
        Vapour pressure, absolute [Pa]

    Notes
    -----
    ln(p/p_c) = (T_c/T)(a1 th + a2 th^1.5 + a3 th^3 + a4 th^3.5 + a5 th^4 + a6 th^7.5),
    th = 1 - T/T_c, T_c = 647.096 K, p_c = 22.064 MPa.

    References
    ----------
    W. Wagner and A. Pruss, "International equations for the saturation properties of ordinary
    water substance. Revised according to the International Temperature Scale of 1990",
    J. Phys. Chem. Ref. Data 22(3):783-787 (1993), eq. 1.

    Examples
    --------
    >>> round(float(water_vapour_pressure_iapws92(293.15)))
    2339
    """
    t = np.asarray(temperature, dtype=float)
    tc, pc = 647.096, 22.064e6
    th = 1.0 - t / tc
    a = (-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502)
    s = sum(ai * th**ni for ai, ni in zip(a, (1.0, 1.5, 3.0, 3.5, 4.0, 7.5), strict=True))
    return pc * np.exp(tc / t * s)


def water_viscosity_kestin(temperature):
    """Dynamic viscosity of liquid water at 0.1 MPa (Kestin, Sokolov & Wakeham 1978).

    Parameters
    ----------
    temperature : float or array
        [K]

    Returns
    -------
    float or array
        [Pa*s]

    Notes
    -----
    log10(mu/mu_20) = (1.2378 d - 1.303e-3 d^2 + 3.06e-6 d^3 + 2.55e-8 d^4) / (96 + t),
    d = 20 - t, t in degC, mu_20 = 1.0016 mPa*s (the value adopted in
    ISO/TR 3666:1998). From memory; the tests check it against the IAPWS 2008 formulation
    (CoolProp 8.0.0) to 0.5 %.

    References
    ----------
    J. Kestin, M. Sokolov and W. A. Wakeham, "Viscosity of liquid water in the range -8 degC to
    150 degC", J. Phys. Chem. Ref. Data 7(3):941-948 (1978).

    Examples
    --------
    >>> round(float(water_viscosity_kestin(293.15)) * 1e3, 4)
    1.0016
    """
    t = np.asarray(temperature, dtype=float) - 273.15
    d = 20.0 - t
    log_ratio = (1.2378 * d - 1.303e-3 * d**2 + 3.06e-6 * d**3 + 2.55e-8 * d**4) / (96.0 + t)
    return 1.0016e-3 * 10.0**log_ratio


# --- Petroleum correlations -----------------------------------------------------------------


def api_gravity(rho15: float) -> float:
    """API gravity from the density at 15 degC.

    Parameters
    ----------
    rho15 : float
        Density at 15 degC [kg/m^3]

    Returns
    -------
    float
        API gravity [deg API] = 141.5/SG - 131.5

    Notes
    -----
    SG is formed as ``rho15 / 999.016`` (water at 60 degF). The oil density at 15 degC is used
    for the one at 60 degF (15.56 degC); the 0.56 K difference moves the API gravity by about
    0.1 deg, and the ARCO modulus by under 0.05 %.

    References
    ----------
    API Manual of Petroleum Measurement Standards Ch. 11.1 / ASTM D1250 (definition of API
    gravity; from memory).

    Examples
    --------
    >>> round(api_gravity(999.016), 6)
    10.0
    """
    if not rho15 > 0.0:
        raise PhysicsRangeError(f"density at 15 degC must be positive, got {rho15} kg/m^3")
    return 141.5 / (rho15 / WATER_DENSITY_60F) - 131.5


def api_isothermal_compressibility(rho15: float, t_c: float) -> float:
    """Isothermal compressibility factor F of a hydrocarbon liquid (API MPMS 11.2.1M).

    Parameters
    ----------
    rho15 : float
        Density at 15 degC [kg/m^3], 638-1074 in the standard
    t_c : float
        Temperature [degC] (the standard's unit), -30 to 90 in the standard

    Returns
    -------
    float
        F [1/Pa]; the isothermal bulk modulus is K_T = 1/F. This is **not** the modulus that
        sets the speed of sound (see :func:`arco_adiabatic_bulk_modulus`).

    Notes
    -----
    F = 1e-6 exp(-1.62080 + 0.00021592 t + 0.87096e6/rho15^2 + 4.2092e3 t/rho15^2) [1/kPa].
    Coefficients and range from memory, corroborated by several public implementations
    (REFERENCES section 3.5).

    References
    ----------
    API Manual of Petroleum Measurement Standards Ch. 11.2.1M, "Compressibility Factors for
    Hydrocarbons: 638-1074 Kilograms per Cubic Metre Range" (1984).

    Examples
    --------
    rho15 = 800 kg/m^3 at 15 degC gives F = 8.538e-7 1/kPa:

    >>> round(api_isothermal_compressibility(800.0, 15.0) * 1e3 * 1e7, 3)
    8.538
    """
    if not 638.0 <= rho15 <= 1074.0:
        raise PhysicsRangeError(
            f"API MPMS 11.2.1M covers densities 638-1074 kg/m^3 at 15 degC, got {rho15} kg/m^3"
        )
    if not -30.0 <= t_c <= 90.0:
        raise PhysicsRangeError(f"API MPMS 11.2.1M covers -30 to 90 degC, got {t_c} degC")
    exponent = -1.62080 + 0.00021592 * t_c + (0.87096e6 + 4.2092e3 * t_c) / rho15**2
    return 1e-6 * math.exp(exponent) * 1e-3


def arco_adiabatic_bulk_modulus(
    api_gravity: float, temperature: float, pressure_gauge: float = 0.0
) -> float:
    """Adiabatic (isentropic) bulk modulus of a petroleum liquid, "ARCO" correlation.

    Parameters
    ----------
    api_gravity : float
        API gravity at 60 degF [deg API]
    temperature : float
        [K]
    pressure_gauge : float
        [Pa]

    Returns
    -------
    float
        Isentropic bulk modulus K_s [Pa]: the modulus that sets the speed of sound.

    Notes
    -----
    K_s [psi] = 1.286e6 + 13.55 P - 4.122e4 sqrt(T) - 4.53e3 API - 10.59 API^2 + 3.228 T API,
    P [psig], T [degR] taken as degF + 460 as the source states. The original publication
    was not identified; the correlation is widely reproduced in pipeline handbooks.

    References
    ----------
    ttwiki knowledge base, "Adiabatic bulk modulus for hydrocarbons", correlation attributed to
    ARCO (read; esdsurge's REFERENCES section 3.6).

    Examples
    --------
    API 35 at 60 degF and 0 psig gives 233,266 psi = 1.608 GPa:

    >>> round(arco_adiabatic_bulk_modulus(35.0, (60.0 - 32.0) / 1.8 + 273.15, 0.0) / PSI)
    233266
    """
    t_r = (temperature - 273.15) * 1.8 + 32.0 + 460.0
    p = pressure_gauge / PSI
    api = api_gravity
    k_psi = (
        1.286e6 + 13.55 * p - 4.122e4 * math.sqrt(t_r) - api * (4.53e3 + 10.59 * api - 3.228 * t_r)
    )
    if not k_psi > 0.0:
        raise PhysicsRangeError(
            f"ARCO correlation gives no positive modulus at {api_gravity} deg API and "
            f"{temperature - 273.15:.1f} degC"
        )
    return k_psi * PSI


#: API MPMS 11.1 (1980, Tables 53/54 A and B) thermal expansion at 15 degC,
#: alpha15 = K0/rho15^2 + K1/rho15 + K2 [1/degC], by commodity group (from memory). Refined
#: products take the group of their density band: gasolines 653-770.5, transition 770.5-787.5,
#: jet fuels 787.5-838.5, fuel oils 838.5-1075 kg/m^3.
API_EXPANSION_GROUPS: dict[str, tuple[float, float, float]] = {
    "crude oils": (613.9723, 0.0, 0.0),
    "gasolines": (346.4228, 0.4388, 0.0),
    "transition": (2680.3206, 0.0, -0.00336312),
    "jet fuels": (594.5418, 0.0, 0.0),
    "fuel oils": (186.9696, 0.4862, 0.0),
}


def api_density(rho15: float, temperature, group: str):
    """Density at a temperature from the density at 15 degC, API MPMS 11.1 (at 0 gauge).

    Parameters
    ----------
    rho15 : float
        Density at 15 degC [kg/m^3]
    temperature : float or array
        [K]
    group : str
        A key of :data:`API_EXPANSION_GROUPS`

    Returns
    -------
    float or array
        [kg/m^3] = rho15 CTL, CTL = exp(-alpha15 dt (1 + 0.8 alpha15 dt)), dt = t - 15 degC,
        alpha15 = K0/rho15^2 + K1/rho15 + K2 [1/K]

    References
    ----------
    API MPMS Ch. 11.1 (1980) / ASTM D1250, Tables 54A (crude oils) and 54B (refined products),
    CTL equation (from memory); the 2004 edition has the same coefficients per degF.

    Examples
    --------
    A 35 deg API crude warmed from 15 to 40 degC:

    >>> round(float(api_density(850.0, 313.15, "crude oils")), 1)
    831.8
    """
    k0, k1, k2 = API_EXPANSION_GROUPS[group]
    alpha = k0 / rho15**2 + k1 / rho15 + k2
    dt = np.asarray(temperature, dtype=float) - 288.15
    return rho15 * np.exp(-alpha * dt * (1.0 + 0.8 * alpha * dt))


def ap42_vapour_pressure_abs(temperature, a: float, b: float):
    """True vapour pressure of a petroleum liquid, US EPA AP-42 form ln(p [psia]) = A - B/T [degR].

    Parameters
    ----------
    temperature : float or array
        [K]
    a : float
        [-]
    b : float
        [degR]

    Returns
    -------
    float or array
        Vapour pressure, absolute [Pa]

    Notes
    -----
    A Clausius-Clapeyron form (B = enthalpy of vaporisation / R).

    References
    ----------
    US EPA, AP-42 Compilation of Air Pollutant Emission Factors, 5th ed., Ch. 7.1 "Organic
    Liquid Storage Tanks", vapour-pressure equation and Table 7.1-2 (from memory).

    Examples
    --------
    Motor gasoline of RVP 10 psi (A = 11.724, B = 5237 degR) at 20 degC:

    >>> round(float(ap42_vapour_pressure_abs(293.15, 11.724, 5237.0)) / 1e3, 1)
    41.7
    """
    t_r = np.asarray(temperature, dtype=float) * 1.8
    return PSI * np.exp(a - b / t_r)


def ap42_vapour_pressure_constants(
    rvp_psi: float, stock: str, distillation_slope: float = 3.0
) -> tuple[float, float]:
    """AP-42 constants (A, B) of a refined stock or a crude oil from its Reid vapour pressure.

    Parameters
    ----------
    rvp_psi : float
        Reid vapour pressure [psi]
    stock : str
        ``"refined"`` (gasoline, naphtha) or ``"crude oil"``
    distillation_slope : float
        Refined stocks: ASTM D86 slope at 10 % evaporated [degF/vol%]; 3 for motor gasoline

    Returns
    -------
    tuple of float
        (A [-], B [degR]) for :func:`ap42_vapour_pressure_abs`

    Notes
    -----
    Refined: A = 15.64 - 1.854 S^0.5 - (0.8742 - 0.3280 S^0.5) ln(RVP),
    B = 8742 - 1042 S^0.5 - (1049 - 179.4 S^0.5) ln(RVP); with S = 3 this reproduces the
    motor-gasoline rows of Table 7.1-2, which the tests check. Crude oil: A = 12.82 - 0.9672
    ln(RVP), B = 7261 - 1216 ln(RVP).

    References
    ----------
    US EPA AP-42, 5th ed., Ch. 7.1, equations for refined stocks and crude oils (from memory).

    Examples
    --------
    Motor gasoline of RVP 10 psi (Table 7.1-2 lists A = 11.724, B = 5237):

    >>> a, b = ap42_vapour_pressure_constants(10.0, "refined")
    >>> round(a, 3), round(b)
    (11.724, 5237)
    """
    ln_rvp = math.log(rvp_psi)
    if stock == "crude oil":
        return 12.82 - 0.9672 * ln_rvp, 7261.0 - 1216.0 * ln_rvp
    if stock != "refined":
        raise PhysicsRangeError(f"stock must be 'refined' or 'crude oil', got {stock!r}")
    s = math.sqrt(distillation_slope)
    a = 15.64 - 1.854 * s - (0.8742 - 0.3280 * s) * ln_rvp
    return a, 8742.0 - 1042.0 * s - (1049.0 - 179.4 * s) * ln_rvp


def walther_kinematic_viscosity(temperature, point1, point2):
    """Kinematic viscosity from the Walther / ASTM D341 form through two points.

    Parameters
    ----------
    temperature : float or array
        [K]
    point1, point2 : tuple of float
        ``(temperature [K], kinematic viscosity [mm^2/s])``, at two different temperatures

    Returns
    -------
    float or array
        Kinematic viscosity [m^2/s]

    Notes
    -----
    log10(log10(Z)) = A - B log10(T), Z = nu + 0.7 + exp(-1.47 - 1.84 nu - 0.51 nu^2), nu in
    mm^2/s (the exponential term extends the chart below 2 mm^2/s; from memory of ASTM
    D341-09). A and B follow from the two points; nu is recovered from Z by Newton's method.

    References
    ----------
    ASTM D341-09, "Standard Practice for Viscosity-Temperature Charts for Liquid Petroleum
    Products", eqs. for Z (from memory); C. Walther (1931).

    Examples
    --------
    >>> pts = ((313.15, 3.0), (293.15, 4.8))
    >>> round(float(walther_kinematic_viscosity(313.15, *pts)) * 1e6, 9)
    3.0
    """
    (t1, nu1), (t2, nu2) = point1, point2
    y1, y2 = (
        np.log10(np.log10(nu + 0.7 + np.exp(-1.47 - 1.84 * nu - 0.51 * nu**2))) for nu in (nu1, nu2)
    )
    b = (y1 - y2) / (np.log10(t2) - np.log10(t1))
    a = y1 + b * np.log10(t1)
    t = np.asarray(temperature, dtype=float)
    z = 10.0 ** (10.0 ** (a - b * np.log10(t)))
    nu = z - 0.7
    for _ in range(50):
        e = np.exp(-1.47 - 1.84 * nu - 0.51 * nu**2)
        step = (nu + 0.7 + e - z) / (1.0 - e * (1.84 + 1.02 * nu))
        nu = nu - step
        if np.all(np.abs(step) <= 1e-12 * np.maximum(nu, 1.0)):
            break
    return nu * 1e-6


# --- Registry of built-in products ----------------------------------------------------------

_PERRY = "Perry's Chemical Engineers' Handbook, 8th ed. (2008), Table {table}, {name}"
_FROM_TABLE = (
    "K_s = rho*c^2 (isentropic); c interpolated in a 5 K table of the reference equation of "
    "state ({eos}), computed with CoolProp 8.0.0 by tools/make_product_tables.py"
)
_ARCO = (
    "K_s (isentropic) by the ARCO adiabatic correlation (as reproduced in the ttwiki knowledge "
    "base, 'Adiabatic bulk modulus for hydrocarbons') at {api:.1f} deg API from rho15"
)
_STYRENE_ESTIMATE = (
    " - ESTIMATE: no measured speed of sound was found for styrene; the same correlation at "
    "toluene's API gravity overstates toluene's reference-EOS K_s by about 10 % (c by about "
    "5 %), so treat this value as a sensitivity"
)
_AP42 = "US EPA AP-42 5th ed. Ch. 7.1 {what} (from memory); ln p = A - B/T"

# fmt: off
#: Pure liquids: name -> (description, t_min [K], t_max [K], molar mass [kg/kmol],
#: equation of state behind the sound-speed table, and the Perry 8th ed. coefficients of
#: Table 2-32 (C1 [kmol/m^3], C2, C3 [K], C4), Table 2-8 and Table 2-313 (C1 ... C5)).
_PURE_LIQUIDS: dict[str, tuple[Any, ...]] = {
    "methanol": ("Methanol (pure)", 243.15, 333.15, 32.042, "de Reuck & Craven, IUPAC 1993",
                 (2.3267, 0.27073, 512.5, 0.24713),
                 (82.718, -6904.5, -8.8622, 7.4664e-06, 2.0),
                 (-25.317, 1789.2, 2.069, 0.0, 0.0)),
    "ethanol": ("Ethanol (pure, anhydrous)", 243.15, 343.15, 46.069,
                "Schroeder et al., JPCRD 2014",
                (1.6288, 0.27469, 514.0, 0.23178),
                (73.304, -7122.3, -7.1424, 2.8853e-06, 2.0),
                (7.875, 781.98, -3.0418, 0.0, 0.0)),
    "toluene": ("Toluene (pure)", 243.15, 373.15, 92.138, "Lemmon & Span, JCED 2006",
                (0.8792, 0.27136, 591.75, 0.29241),
                (76.945, -6729.8, -8.179, 5.3017e-06, 2.0),
                (-226.08, 6805.7, 37.542, -0.060853, 1.0)),
    "xylene": ("Mixed xylenes, represented by m-xylene (their main isomer)", 243.15, 393.15,
               106.165, "m-xylene, Zhou, Wu & Lemmon, JPCRD 2012",
               (0.68902, 0.26086, 617.0, 0.27479),
               (85.099, -7615.9, -9.3072, 5.5643e-06, 2.0),
               (-11.91, 1094.9, 0.13825, 0.0, 0.0)),
    "styrene": ("Styrene monomer; bulk modulus and speed of sound are estimates", 253.15, 353.15,
                104.149, None,
                (0.7397, 0.2603, 636.0, 0.3009),
                (105.93, -8685.9, -12.42, 7.5583e-06, 2.0),
                (-22.675, 1758.0, 1.6701, 0.0, 0.0)),
}

#: Petroleum products: name -> (description, t_min [K], t_max [K], typical rho15 [kg/m^3] and
#: the specification range it sits in, API MPMS 11.1 group, AP-42 (A, B [degR]) and what they
#: are, two typical kinematic viscosities (T [K], nu [mm^2/s]) and where they come from).
_PETROLEUM: dict[str, tuple[Any, ...]] = {
    "gasoline": ("Motor gasoline (petrol), typical EN 228 product, RVP 10 psi (69 kPa)",
                 243.15, 323.15, 745.0, "EN 228: 720-775", "gasolines",
                 ap42_vapour_pressure_constants(10.0, "refined"),
                 "refined-stock equation at RVP 10 psi, D86 slope 3 (typical)",
                 ((293.15, 0.60), (313.15, 0.51)), "typical values, from memory"),
    "jet fuel": ("Aviation turbine kerosene (Jet A-1), typical DEF STAN 91-091 product",
                 233.15, 333.15, 800.0, "Jet A-1: 775-840", "jet fuels",
                 (12.390, 8933.0), "Table 7.1-2, jet kerosene",
                 ((253.15, 4.0), (313.15, 1.35)),
                 "typical values, from memory; Jet A-1 limit 8.0 mm^2/s at -20 degC"),
    "diesel": ("Automotive diesel / gas oil, typical EN 590 product",
               253.15, 333.15, 835.0, "EN 590: 820-845", "jet fuels",
               (12.101, 8907.0), "Table 7.1-2, distillate fuel oil No. 2",
               ((293.15, 4.8), (313.15, 3.0)),
               "typical values, from memory; EN 590 2.0-4.5 mm^2/s at 40 degC"),
    "light crude": ("Light crude oil, about 35 deg API, RVP 5 psi (34 kPa)",
                    273.15, 353.15, 850.0, "light crude about 800-870, from memory",
                    "crude oils", ap42_vapour_pressure_constants(5.0, "crude oil"),
                    "crude-oil equation at RVP 5 psi (typical)",
                    ((293.15, 8.0), (313.15, 4.6)), "typical values, from memory"),
    "heavy fuel oil": ("Residual marine fuel, ISO 8217 RMG 380 class, handled warm",
                       293.15, 373.15, 980.0, "ISO 8217 RMG 380: at most 991, from memory",
                       "fuel oils", (10.781, 10093.0), "Table 7.1-2, residual oil No. 6",
                       ((323.15, 380.0), (373.15, 35.0)),
                       "RMG 380 grade viscosity at 50 degC and a typical value at 100 degC, "
                       "from memory"),
}
# fmt: on


@dataclass(frozen=True, kw_only=True)
class _Builtin:
    """One built-in product: its range, four property functions of T [K] and their sources."""

    name: str
    description: str
    t_min: float
    t_max: float
    density: Any
    bulk_modulus: Any
    vapour_pressure_abs: Any
    viscosity: Any
    sources: tuple[tuple[str, str], ...]

    def check_temperature(self, temperature: float) -> None:
        if not self.t_min <= temperature <= self.t_max:
            raise PhysicsRangeError(
                f"built-in product {self.name!r}: {_degc(temperature)} degC is outside its valid "
                f"range {_degc(self.t_min)} to {_degc(self.t_max)} degC"
            )


def _degc(temperature: float) -> str:
    return f"{temperature - 273.15:.2f}".rstrip("0").rstrip(".")


def _perry_density(molar_mass: float, coefficients: tuple[float, ...], temperature):
    return molar_mass * dippr105(temperature, *coefficients)


def _perry101(coefficients: tuple[float, ...], temperature):
    return dippr101(temperature, *coefficients)


def _modulus_from_table(name: str, density, temperature: float) -> float:
    temps, speeds = SOUND_SPEED_TABLES[name]
    return float(density(temperature)) * float(np.interp(temperature, temps, speeds)) ** 2


def _arco_modulus(rho15: float, temperature: float) -> float:
    return arco_adiabatic_bulk_modulus(api_gravity(rho15), temperature, 0.0)


def _dynamic_viscosity(kinematic, density, temperature):
    return kinematic(temperature) * density(temperature)


def _pure_liquid(name: str, data: tuple[Any, ...]) -> _Builtin:
    description, t_min, t_max, molar_mass, eos, rho, pv, mu = data
    density = partial(_perry_density, molar_mass, rho)
    if eos is None:  # no speed of sound at hand: ARCO estimate at the liquid's API gravity
        api = api_gravity(float(density(288.15)))
        modulus = partial(_arco_modulus, float(density(288.15)))
        modulus_source = _ARCO.format(api=api) + _STYRENE_ESTIMATE
    else:
        modulus = partial(_modulus_from_table, name, density)
        modulus_source = _FROM_TABLE.format(eos=eos)
    return _Builtin(
        name=name,
        description=description,
        t_min=t_min,
        t_max=t_max,
        density=density,
        bulk_modulus=modulus,
        vapour_pressure_abs=partial(_perry101, pv),
        viscosity=partial(_perry101, mu),
        sources=(
            ("density", _PERRY.format(table="2-32", name=name) + f", M = {molar_mass} kg/kmol"),
            ("bulk_modulus", modulus_source),
            ("vapour_pressure_abs", _PERRY.format(table="2-8", name=name)),
            ("viscosity", _PERRY.format(table="2-313", name=name)),
        ),
    )


def _petroleum(name: str, data: tuple[Any, ...]) -> _Builtin:
    description, t_min, t_max, rho15, spec, group, (a, b), vp_what, points, nu_what = data
    density = partial(api_density, rho15, group=group)
    kinematic = partial(walther_kinematic_viscosity, point1=points[0], point2=points[1])
    table = "54A" if group == "crude oils" else "54B"
    typical = " and ".join(f"{nu:g} mm^2/s at {_degc(t)} degC" for t, nu in points)
    return _Builtin(
        name=name,
        description=description,
        t_min=t_min,
        t_max=t_max,
        density=density,
        bulk_modulus=partial(_arco_modulus, rho15),
        vapour_pressure_abs=partial(ap42_vapour_pressure_abs, a=a, b=b),
        viscosity=partial(_dynamic_viscosity, kinematic, density),
        sources=(
            (
                "density",
                f"typical rho15 = {rho15:g} kg/m^3 ({spec}); thermal expansion by API MPMS 11.1 "
                f"(1980) Table {table} '{group}' coefficients (from memory)",
            ),
            ("bulk_modulus", _ARCO.format(api=api_gravity(rho15))),
            ("vapour_pressure_abs", _AP42.format(what=vp_what)),
            (
                "viscosity",
                f"Walther / ASTM D341 form through {typical} ({nu_what}); times density",
            ),
        ),
    )


_WATER = _Builtin(
    name="water",
    description="Fresh water (pure H2O), e.g. for line flushing or hydrostatic testing",
    t_min=273.16,
    t_max=368.15,
    density=water_density_kell,
    bulk_modulus=partial(_modulus_from_table, "water", water_density_kell),
    vapour_pressure_abs=water_vapour_pressure_iapws92,
    viscosity=water_viscosity_kestin,
    sources=(
        ("density", "Kell, J. Chem. Eng. Data 20(1):97-105 (1975) (coefficients from memory)"),
        ("bulk_modulus", _FROM_TABLE.format(eos="IAPWS-95, Wagner & Pruss, JPCRD 2002")),
        (
            "vapour_pressure_abs",
            "IAPWS 1992 saturation pressure, Wagner & Pruss, JPCRD 22(3):783-787 (1993)",
        ),
        (
            "viscosity",
            "Kestin, Sokolov & Wakeham, JPCRD 7(3):941-948 (1978), mu20 = 1.0016 mPa*s "
            "(ISO/TR 3666:1998) (coefficients from memory)",
        ),
    ),
)

_PRODUCTS: dict[str, _Builtin] = {
    **{name: _petroleum(name, data) for name, data in _PETROLEUM.items()},
    **{name: _pure_liquid(name, data) for name, data in _PURE_LIQUIDS.items()},
    "water": _WATER,
}

#: Canonical names of the built-in products, petroleum products first.
BUILTIN_NAMES: tuple[str, ...] = tuple(_PRODUCTS)

#: Other names accepted for a built-in product -> its canonical name.
ALIASES: dict[str, str] = {
    "petrol": "gasoline",
    "kerosene": "jet fuel",
    "jet a-1": "jet fuel",
    "gas oil": "diesel",
    "hfo": "heavy fuel oil",
    "mixed xylenes": "xylene",
    "m-xylene": "xylene",
}


def builtin_names() -> list[str]:
    """Canonical names of the built-in products followed by their aliases."""
    return [*BUILTIN_NAMES, *ALIASES]


def _canonical(builtin: str) -> str:
    key = " ".join(str(builtin).split()).lower()
    if key in _PRODUCTS:
        return key
    if key in ALIASES:
        return ALIASES[key]
    near = difflib.get_close_matches(key, builtin_names(), n=3, cutoff=0.6)
    hint = f" (did you mean {' or '.join(repr(n) for n in near)}?)" if near else ""
    raise KeyError(
        f"unknown built-in product {builtin!r}{hint}; built-in products are: "
        + ", ".join(builtin_names())
    )


def builtin_fluid(builtin: str, temperature: float, name: str | None = None) -> Fluid:
    """Properties of a built-in product at a temperature.

    Parameters
    ----------
    builtin : str
        A canonical name of :data:`BUILTIN_NAMES` or an alias of :data:`ALIASES` (case and
        repeated spaces do not matter)
    temperature : float
        [K], inside the product's valid range
    name : str, optional
        Name to give the fluid; default ``builtin``

    Returns
    -------
    Fluid
        density [kg/m^3], isentropic bulk modulus [Pa], vapour pressure [Pa abs], dynamic
        viscosity [Pa*s], with the source of each value in ``sources``

    Raises
    ------
    KeyError
        Unknown product (the message lists the nearest names and all valid ones).
    PhysicsRangeError
        Temperature outside the product's valid range.

    Examples
    --------
    >>> f = builtin_fluid("kerosene", 288.15)
    >>> f.builtin, round(f.density, 1)
    ('jet fuel', 800.0)
    """
    product = _PRODUCTS[_canonical(builtin)]
    product.check_temperature(temperature)
    return Fluid(
        name=name or builtin,
        builtin=product.name,
        density=float(product.density(temperature)),
        bulk_modulus=float(product.bulk_modulus(temperature)),
        vapour_pressure_abs=float(product.vapour_pressure_abs(temperature)),
        viscosity=float(product.viscosity(temperature)),
        temperature=float(temperature),
        sources=product.sources,
    )


#: Keys of :func:`describe_builtins` rows -> Fluid attributes.
_DESCRIBED = {
    "density_kg_m3": "density",
    "bulk_modulus_Pa": "bulk_modulus",
    "sound_speed_m_s": "sound_speed",
    "vapour_pressure_Pa_abs": "vapour_pressure_abs",
    "viscosity_Pa_s": "viscosity",
}


def describe_builtins(temperature: float = 293.15) -> list[dict]:
    """The built-in products with their range, values at ``temperature`` [K] and sources.

    Returns one dict per product, in :data:`BUILTIN_NAMES` order, with keys ``name``,
    ``aliases``, ``description``, ``t_min_K``, ``t_max_K``, ``density_kg_m3``,
    ``bulk_modulus_Pa`` (isentropic), ``sound_speed_m_s``, ``vapour_pressure_Pa_abs``,
    ``viscosity_Pa_s`` and ``sources`` (property -> source text). Where ``temperature`` is
    outside a product's range its values are ``None``.
    """
    rows = []
    for product in _PRODUCTS.values():
        inside = product.t_min <= temperature <= product.t_max
        fluid = builtin_fluid(product.name, temperature) if inside else None
        row: dict[str, Any] = {
            "name": product.name,
            "aliases": [alias for alias, canonical in ALIASES.items() if canonical == product.name],
            "description": product.description,
            "t_min_K": product.t_min,
            "t_max_K": product.t_max,
        }
        for key, attribute in _DESCRIBED.items():
            row[key] = None if fluid is None else getattr(fluid, attribute)
        row["sources"] = dict(product.sources)
        rows.append(row)
    return rows
