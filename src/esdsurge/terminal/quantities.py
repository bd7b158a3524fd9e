"""Quantities written with units: ``"1350 m"``, ``"2400 m^3/h"``, ``"19 barg"`` -> SI floats.

One pint registry parses every unit; pint lives here and nowhere else in esdsurge. The gauge
and absolute pressure units (``barg``, ``bara``, ``psig``, ``psia``, ``kPag``, ``kPaa``,
``MPag``, ``MPaa``) are handled here rather than in pint, because turning a gauge pressure into
an absolute one needs the site's atmosphere, which is only known once the file is read.

Every parser takes the value as YAML built it (a str, a number, ...) and returns a float in SI,
or raises :class:`QuantityError` with a message that says what would be valid. The reader turns
that message into a :class:`~esdsurge.errors.Problem` with the file, line and key path.
"""

from __future__ import annotations

import functools
import math
import re
from dataclasses import dataclass

import pint

from esdsurge.errors import EsdsurgeError


class QuantityError(EsdsurgeError):
    """A value that is not a valid quantity of the kind asked for (message says what is)."""


#: The one unit registry of esdsurge.
UREG = pint.UnitRegistry()
UREG.define("gpm = gallon / minute")  # US gallons per minute, as in pump and valve data
UREG.define("rev = revolution")

_PA = 1.0
_PSI = float(UREG.Quantity(1.0, "psi").to("Pa").magnitude)

#: Pressure units that say gauge or absolute: name -> (Pa per unit, "gauge" | "abs").
PRESSURE_UNITS: dict[str, tuple[float, str]] = {
    "barg": (1e5 * _PA, "gauge"),
    "bara": (1e5 * _PA, "abs"),
    "psig": (_PSI, "gauge"),
    "psia": (_PSI, "abs"),
    "kPag": (1e3 * _PA, "gauge"),
    "kPaa": (1e3 * _PA, "abs"),
    "MPag": (1e6 * _PA, "gauge"),
    "MPaa": (1e6 * _PA, "abs"),
}

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
_UNIT_CHARS = re.compile(r"^[A-Za-z0-9_%°µμ²³*/^(). -]+$")
_WORDS = re.compile(r"[A-Za-z_]+")
_AMBIGUOUS_BARREL = {"bbl", "barrel", "barrels"}
_SPACED_GAUGE = re.compile(r"^(bar|psi|kPa|MPa)\s*\(?\s*((?i:g|a|gauge|abs|absolute))\s*\)?$")


@dataclass(frozen=True)
class Kind:
    """A kind of quantity: pint dimensionality, SI unit and an example for messages."""

    what: str
    dimension: str
    si_unit: str
    example: str


#: Kinds of plain (non-pressure, non-temperature) quantities.
KINDS: dict[str, Kind] = {
    k.what: k
    for k in (
        Kind("length", "[length]", "m", "1350 m"),
        Kind("time", "[time]", "s", "30 s"),
        Kind("flow", "[length] ** 3 / [time]", "m^3/s", "2400 m^3/h"),
        Kind("volume", "[length] ** 3", "m^3", "3 m^3"),
        Kind("velocity", "[length] / [time]", "m/s", "1100 m/s"),
        Kind("density", "[mass] / [length] ** 3", "kg/m^3", "791 kg/m^3"),
        Kind("modulus", "[mass] / [length] / [time] ** 2", "Pa", "0.83 GPa"),
        Kind("viscosity", "[mass] / [length] / [time]", "Pa*s", "0.59 mPa*s"),
        Kind("kinematic viscosity", "[length] ** 2 / [time]", "m^2/s", "0.75 cSt"),
        Kind("moment of inertia", "[mass] * [length] ** 2", "kg*m^2", "1.6 kg*m^2"),
        Kind("expansion per pressure", "[length] * [time] ** 2 / [mass]", "1/Pa", "0.4 %/bar"),
        Kind(
            "conductivity",
            "[current] ** 2 * [time] ** 3 / [mass] / [length] ** 3",
            "S/m",
            "5 pS/m",
        ),
    )
}


def _split(value: object, example: str) -> tuple[float, str]:
    """Split a written quantity into its number and unit text."""
    if isinstance(value, bool) or value is None or not isinstance(value, str | int | float):
        raise QuantityError(f"expected a quantity with a unit, e.g. '{example}'")
    if isinstance(value, int | float):
        raise QuantityError(f"a bare number needs a unit here: write e.g. '{example}'")
    match = _QUANTITY.match(value)
    if match is None:
        raise QuantityError(f"{value!r} is not a number followed by a unit; write e.g. '{example}'")
    number = float(match.group(1))
    if not math.isfinite(number):
        raise QuantityError(f"{value!r} is not a finite number; write e.g. '{example}'")
    return number, match.group(2)


def _units(unit_text: str, example: str) -> pint.Unit:
    """Parse a unit text with the registry, turning every failure into a QuantityError."""
    try:
        return _parsed(unit_text)
    except _NotAUnit as exc:
        raise QuantityError(f"{exc}; write e.g. '{example}'") from None


class _NotAUnit(QuantityError):
    """Internal: raised by :func:`_parsed`, always turned into a QuantityError."""


@functools.lru_cache(maxsize=512)
def _parsed(unit_text: str) -> pint.Unit:
    """Parse a unit text (cached: a file repeats few units many times)."""
    if not _UNIT_CHARS.match(unit_text):
        raise _NotAUnit(f"{unit_text!r} is not a unit")
    words = set(_WORDS.findall(unit_text))
    if words & _AMBIGUOUS_BARREL:
        raise _NotAUnit(
            "'barrel' is ambiguous (31.5 or 42 US gallons); for the 42 US gal oil barrel "
            "write oil_bbl, as in '15000 oil_bbl/h'"
        )
    gauge = sorted(words & set(PRESSURE_UNITS))
    if gauge:
        raise _NotAUnit(
            f"{gauge[0]} is only for pressures that say gauge or absolute; here use a plain "
            "unit (bar, psi, kPa)"
        )
    try:
        units = UREG.parse_units(unit_text)
    except pint.UndefinedUnitError as exc:
        hint = ""
        if re.search(r"[A-Za-z][23]\b", unit_text):
            hint = " (powers are written with ^, e.g. m^3)"
        raise _NotAUnit(f"unknown unit {exc.unit_names!r}{hint}") from None
    except Exception as exc:  # noqa: BLE001
        # pint's unit parser evaluates a token stream and, on malformed text, can raise
        # almost anything (AssertionError, tokenize.TokenError, ZeroDivisionError, ...).
        # Any of them means the same thing here: the text is not a unit.
        raise _NotAUnit(f"{unit_text!r} is not a unit ({type(exc).__name__})") from None
    return units


@functools.lru_cache(maxsize=512)
def _dims(unit_text: str) -> object:
    """pint dimensionality of a unit text already parsed by :func:`_parsed`."""
    return UREG.Quantity(1.0, _parsed(unit_text)).dimensionality


@functools.lru_cache(maxsize=64)
def _dims_of(dimension: str) -> object:
    return UREG.get_dimensionality(dimension)


@functools.lru_cache(maxsize=512)
def _factor(unit_text: str, to: str) -> float | None:
    """SI units per unit, or ``None`` for an offset unit (degC, degF) that has no factor."""
    units = _parsed(unit_text)
    if not UREG.Quantity(1.0, units)._is_multiplicative:
        return None
    return float(UREG.Quantity(1.0, units).to(to).magnitude)


def _convert(number: float, unit_text: str, to: str, example: str) -> float:
    try:
        factor = _factor(unit_text, to)
        if factor is None:
            result = float(UREG.Quantity(number, _parsed(unit_text)).to(to).magnitude)
        else:
            result = number * factor
    except (pint.PintError, ValueError, TypeError, ArithmeticError) as exc:
        raise QuantityError(f"cannot convert to {to} ({exc}); write e.g. '{example}'") from None
    if not math.isfinite(result):
        raise QuantityError(f"the value is too large; write e.g. '{example}'")
    return result


def _dimension_name(unit_text: str) -> str:
    dims = _dims(unit_text)
    return str(dims) if dims else "no dimension"


def quantity(value: object, kind: str) -> float:
    """Parse a quantity of ``kind`` (a key of :data:`KINDS`) into its SI unit.

    >>> quantity("16 in", "length")
    0.4064
    >>> round(quantity("2400 m^3/h", "flow"), 6)
    0.666667
    """
    k = KINDS[kind]
    number, unit_text = _split(value, k.example)
    if not unit_text:
        raise QuantityError(f"a bare number needs a unit here: write e.g. '{k.example}'")
    _units(unit_text, k.example)
    if _is_pressure(unit_text) and kind != "modulus":
        raise QuantityError(f"expected a {k.what}, got a pressure; write e.g. '{k.example}'")
    if _dims(unit_text) != _dims_of(k.dimension):
        raise QuantityError(
            f"expected a {k.what} ({k.dimension}), got {unit_text!r} "
            f"({_dimension_name(unit_text)}); write e.g. '{k.example}'"
        )
    return _convert(number, unit_text, k.si_unit, k.example)


def _is_pressure(unit_text: str) -> bool:
    return _dims(unit_text) == _dims_of("[pressure]")


def pressure(value: object, reference: str, atmosphere_abs: float) -> float:
    """Parse a pressure that says gauge or absolute; return it [Pa] gauge or absolute.

    ``reference`` is ``"gauge"`` or ``"abs"``: what the caller wants back. Gauge and absolute
    are related by ``atmosphere_abs`` [Pa] (the site's atmosphere).

    >>> pressure("19 barg", "gauge", 101325.0)
    1900000.0
    >>> pressure("1 barg", "abs", 101325.0)
    201325.0
    """
    example = "15 barg' or '0.4 bara"
    if isinstance(value, int | float) and not isinstance(value, bool):
        value = f"{value}"
    number, unit_text = _split(value, example)
    if not unit_text:
        raise QuantityError(
            f"a bare number needs a unit that says gauge or absolute: write e.g. "
            f"'{number:g} barg' or '{number:g} bara'"
        )
    if unit_text in PRESSURE_UNITS:
        factor, given = PRESSURE_UNITS[unit_text]
        p = number * factor
        if not math.isfinite(p):
            raise QuantityError("the value is too large")
        if given == reference:
            return p
        return p + atmosphere_abs if given == "gauge" else p - atmosphere_abs
    units_list = ", ".join(PRESSURE_UNITS)
    spaced = _SPACED_GAUGE.match(unit_text)
    if spaced:
        unit = spaced.group(1) + ("g" if spaced.group(2).lower().startswith("g") else "a")
        raise QuantityError(
            f"write the pressure unit as one word: '{number:g} {unit}'; "
            f"pressure units: {units_list}"
        )
    try:
        _units(unit_text, example)
    except QuantityError as exc:
        raise QuantityError(f"{exc}; pressure units: {units_list}") from None
    if _is_pressure(unit_text):
        raise QuantityError(
            f"say whether {value!r} is gauge or absolute: write e.g. '{number:g} barg' "
            f"(gauge) or '{number:g} bara' (absolute); pressure units: {units_list}"
        )
    raise QuantityError(
        f"expected a pressure, got {unit_text!r} ({_dimension_name(unit_text)}); write e.g. "
        f"'15 barg' or '0.4 bara'"
    )


def temperature(value: object) -> float:
    """Parse a temperature (``degC``, ``degF``, ``K``, ``degR``) into kelvin.

    >>> temperature("20 degC")
    293.15
    """
    example = "20 degC"
    number, unit_text = _split(value, example)
    if not unit_text:
        raise QuantityError(f"a bare number needs a unit here: write e.g. '{example}'")
    _units(unit_text, example)
    if _dims(unit_text) != _dims_of("[temperature]"):
        raise QuantityError(
            f"expected a temperature, got {unit_text!r} ({_dimension_name(unit_text)}); "
            f"write e.g. '{example}' or '68 degF'"
        )
    kelvin = _convert(number, unit_text, "K", example)
    if kelvin <= 0.0:
        raise QuantityError(f"{value!r} is at or below absolute zero")
    return kelvin


def rotational_speed(value: object) -> float:
    """Parse a shaft speed (``rpm``, ``rev/s``, ``rad/s``) into rad/s.

    >>> round(rotational_speed("2980 rpm"), 3)
    312.065
    """
    example = "2980 rpm"
    number, unit_text = _split(value, example)
    if not unit_text:
        raise QuantityError(f"a bare number needs a unit here: write e.g. '{example}'")
    units = _units(unit_text, example)
    base = UREG.Quantity(1.0, units).to_base_units()
    if base.dimensionality != UREG.get_dimensionality("1 / [time]") or "radian" not in str(
        base.units
    ):
        raise QuantityError(
            f"expected a shaft speed in rpm, rev/s or rad/s, got {unit_text!r}; "
            f"write e.g. '{example}'"
        )
    return _convert(number, unit_text, "rad/s", example)


def ratio(value: object, example: str = "10 %") -> float:
    """Parse a ratio: a bare fraction (``0.1``) or a percentage (``"10 %"``).

    >>> ratio("10 %"), ratio(0.25)
    (0.1, 0.25)
    """
    if isinstance(value, bool) or value is None or not isinstance(value, str | int | float):
        raise QuantityError(f"expected a percentage or a fraction, e.g. '{example}' or 0.1")
    if isinstance(value, int | float):
        if not math.isfinite(value):
            raise QuantityError(f"expected a finite number, e.g. '{example}'")
        return float(value)
    number, unit_text = _split(value, example)
    if not unit_text:
        return number
    _units(unit_text, example)
    if _dims(unit_text):
        raise QuantityError(
            f"expected a percentage or a fraction, got {unit_text!r} "
            f"({_dimension_name(unit_text)}); write e.g. '{example}'"
        )
    return _convert(number, unit_text, "dimensionless", example)


def number(value: object, example: str, integer: bool = False) -> float | int:
    """A plain number (YAML int or float, not a bool, not a string with a unit).

    >>> number(9000, "cv: 9000")
    9000
    """
    kind = "a whole number" if integer else "a plain number"
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise QuantityError(f"expected {kind} without unit, e.g. {example}")
    if integer and not isinstance(value, int):
        if isinstance(value, float) and value.is_integer():
            return int(value)
        raise QuantityError(f"expected {kind}, e.g. {example}")
    if not math.isfinite(value):
        raise QuantityError(f"expected a finite number, e.g. {example}")
    return value
