"""Quantities: the same terminal written in any unit system gives the same model values."""

from __future__ import annotations

import dataclasses
import math
import re

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from esdsurge.model import Terminal
from esdsurge.terminal import loads
from esdsurge.terminal import quantities as q

# Exact unit definitions (NIST SP 811 (2008), Appendix B.8 and B.9):
# 1 ft = 0.3048 m, 1 in = 0.0254 m, 1 US gal = 3.785411784e-3 m^3, 1 lb = 0.45359237 kg,
# standard gravity 9.80665 m/s^2 (so 1 psi = 0.45359237 * 9.80665 / 0.0254^2 Pa),
# t/degF = 1.8 t/degC + 32.
FT = 0.3048
INCH = 0.0254
GAL = 3.785411784e-3
LB = 0.45359237
PSI = LB * 9.80665 / INCH**2
ATM = 101_325.0

#: unit as written -> (SI per unit, SI offset): si = value * factor + offset.
#: Pressures are converted to absolute pascals (the demo's site atmosphere is 1.01325 bara).
UNITS: dict[str, tuple[float, float]] = {
    "m": (1.0, 0.0),
    "ft": (FT, 0.0),
    "in": (INCH, 0.0),
    "mm": (1e-3, 0.0),
    "m^3/h": (1 / 3600, 0.0),
    "gpm": (GAL / 60, 0.0),
    "m^3/s": (1.0, 0.0),
    "L/min": (1e-3 / 60, 0.0),
    "barg": (1e5, ATM),
    "bara": (1e5, 0.0),
    "psig": (PSI, ATM),
    "psia": (PSI, 0.0),
    "kPag": (1e3, ATM),
    "kPaa": (1e3, 0.0),
    "degC": (1.0, 273.15),
    "degF": (5 / 9, 273.15 - 32 * 5 / 9),
    "K": (1.0, 0.0),
    "s": (1.0, 0.0),
    "min": (60.0, 0.0),
    "kg*m^2": (1.0, 0.0),
    "lb*ft^2": (LB * FT**2, 0.0),
    "rpm": (2 * math.pi / 60, 0.0),
    "rad/s": (1.0, 0.0),
    "%/bar": (1e-7, 0.0),
    "%/psi": (0.01 / PSI, 0.0),
    "m^3": (1.0, 0.0),
    "gal": (GAL, 0.0),
    "%": (0.01, 0.0),
    "": (1.0, 0.0),
}

#: Units that may stand for each unit of the demo file.
FAMILIES: dict[str, list[str]] = {
    "m": ["m", "ft", "in", "mm"],
    "mm": ["mm", "in", "m", "ft"],
    "in": ["in", "mm", "m", "ft"],
    "m^3/h": ["m^3/h", "gpm", "m^3/s", "L/min"],
    "barg": ["barg", "psig", "kPag", "bara", "psia", "kPaa"],
    "bara": ["bara", "psia", "kPaa", "barg", "psig", "kPag"],
    "atmosphere": ["bara", "psia", "kPaa"],  # the site atmosphere is always absolute
    "degC": ["degC", "degF", "K"],
    "s": ["s", "min"],
    "kg*m^2": ["kg*m^2", "lb*ft^2"],
    "rpm": ["rpm", "rad/s"],
    "%/bar": ["%/bar", "%/psi"],
    "m^3": ["m^3", "gal"],
    "%": ["%", ""],
}

#: The US customary choice for each unit of the demo file.
US = {
    "m": "ft",
    "mm": "in",
    "in": "in",
    "m^3/h": "gpm",
    "barg": "psig",
    "bara": "psia",
    "atmosphere": "psia",
    "degC": "degF",
    "s": "s",
    "kg*m^2": "lb*ft^2",
    "rpm": "rpm",
    "%/bar": "%/psi",
    "m^3": "gal",
    "%": "%",
}

_UNIT = "|".join(re.escape(u) for u in sorted(FAMILIES, key=len, reverse=True))
QUANTITY = re.compile(rf"(?<![\w.])(-?\d+(?:\.\d+)?) ({_UNIT})(?=[\],}}\s]|$)")


def rewrite(text: str, choose) -> str:
    """``text`` with each quantity rewritten in the unit that ``choose(i, unit)`` picks."""
    counter = iter(range(10**6))

    def convert(match: re.Match[str]) -> str:
        value, unit = float(match.group(1)), match.group(2)
        line_start = text.rfind("\n", 0, match.start()) + 1
        family = "atmosphere" if "atmosphere:" in text[line_start : match.start()] else unit
        new = choose(next(counter), family)
        factor, offset = UNITS[unit]
        new_factor, new_offset = UNITS[new]
        converted = (value * factor + offset - new_offset) / new_factor
        return f"{converted!r} {new}".rstrip()

    return QUANTITY.sub(convert, text)


def assert_same(a: object, b: object, where: str = "") -> None:
    """Model objects equal, floats within a relative 1e-9."""
    if isinstance(a, float) and isinstance(b, float):
        assert math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-9 * 1e-3), f"{where}: {a} != {b}"
    elif dataclasses.is_dataclass(a):
        assert type(a) is type(b), where
        for f in dataclasses.fields(a):
            if f.compare:
                assert_same(getattr(a, f.name), getattr(b, f.name), f"{where}.{f.name}")
    elif isinstance(a, dict):
        assert list(a) == list(b), where
        for key in a:
            assert_same(a[key], b[key], f"{where}[{key!r}]")
    elif isinstance(a, tuple | list):
        assert len(a) == len(b), where
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            assert_same(x, y, f"{where}[{i}]")
    else:
        assert a == b, f"{where}: {a!r} != {b!r}"


@pytest.fixture(scope="module")
def si(jetty_text: str) -> Terminal:
    return loads(jetty_text)


def test_regex_finds_the_demo_quantities(jetty_text: str) -> None:
    units = []
    rewrite(jetty_text, lambda i, unit: units.append(unit) or FAMILIES[unit][0])
    assert {"m", "in", "mm", "m^3/h", "barg", "bara", "degC", "s", "rpm", "%/bar"} <= set(units)
    assert units.count("atmosphere") == 1
    assert len(units) > 80


def test_us_customary_units_give_the_same_model(jetty_text: str, si: Terminal) -> None:
    us_text = rewrite(jetty_text, lambda i, unit: US[unit])
    assert " ft" in us_text and " psig" in us_text and " gpm" in us_text and " degF" in us_text
    assert_same(si, loads(us_text), "terminal")


@settings(max_examples=25, deadline=None)
@given(st.data())
def test_any_unit_system_gives_the_same_model(jetty_text: str, si: Terminal, data) -> None:
    picks: dict[int, str] = {}

    def choose(i: int, unit: str) -> str:
        picks[i] = data.draw(st.sampled_from(FAMILIES[unit]), label=f"quantity {i} ({unit})")
        return picks[i]

    assert_same(si, loads(rewrite(jetty_text, choose)), "terminal")


# --- single quantities ---------------------------------------------------------------------


def test_gauge_and_absolute_use_the_site_atmosphere() -> None:
    # 1 bar = 1e5 Pa exact; gauge + atmosphere = absolute
    assert q.pressure("2 barg", "abs", 90_000.0) == pytest.approx(290_000.0)
    assert q.pressure("2 bara", "gauge", 90_000.0) == pytest.approx(110_000.0)
    assert q.pressure("-0.5 barg", "abs", 101_325.0) == pytest.approx(51_325.0)
    # NIST SP 811 (2008) B.8: 1 psi = 6.894757e3 Pa
    assert q.pressure("1 psig", "gauge", ATM) == pytest.approx(6894.757, rel=1e-6)
    assert q.pressure("100 kPaa", "abs", ATM) == 1e5
    assert q.pressure("1.5 MPag", "gauge", ATM) == 1.5e6


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("3 bar", "gauge or absolute"),
        ("3 psi", "gauge or absolute"),
        ("3", "bare number"),
        ("3 m", "expected a pressure"),
        ("three barg", "not a number"),
        ("3 bar g", "'3 barg'"),
        ("3 psi(a)", "'3 psia'"),
        ("3 m^^2", "not a unit"),
    ],
)
def test_pressure_refusals(text: str, fragment: str) -> None:
    with pytest.raises(q.QuantityError, match=fragment):
        q.pressure(text, "gauge", ATM)


def test_bare_yaml_number_for_a_pressure() -> None:
    with pytest.raises(q.QuantityError, match="'19 barg' or '19 bara'"):
        q.pressure(19, "gauge", ATM)


def test_temperatures_use_offset_units() -> None:
    # ITS-90: 0 degC = 273.15 K; 32 degF = 0 degC; 212 degF = 100 degC
    assert q.temperature("0 degC") == pytest.approx(273.15)
    assert q.temperature("32 degF") == pytest.approx(273.15)
    assert q.temperature("212 degF") == pytest.approx(373.15)
    assert q.temperature("300 K") == 300.0
    with pytest.raises(q.QuantityError, match="absolute zero"):
        q.temperature("-300 degC")
    with pytest.raises(q.QuantityError, match="bare number"):
        q.temperature(20)


def test_flows_volumes_and_speeds() -> None:
    # 1200 m^3/h = 1200/3600 m^3/s, exact unit arithmetic
    assert q.quantity("1200 m^3/h", "flow") == pytest.approx(1 / 3, rel=1e-12)
    # 1 US gal/min = 3.785411784e-3 / 60 m^3/s (NIST SP 811 (2008) B.8, exact)
    assert q.quantity("1 gpm", "flow") == pytest.approx(GAL / 60, rel=1e-12)
    # 1 oil barrel = 42 US gal (API MPMS ch. 1, from memory); exact from the gallon
    assert q.quantity("1 oil_bbl/h", "flow") == pytest.approx(42 * GAL / 3600, rel=1e-12)
    with pytest.raises(q.QuantityError, match="ambiguous"):
        q.quantity("100 bbl/h", "flow")
    assert q.rotational_speed("60 rpm") == pytest.approx(2 * math.pi)
    with pytest.raises(q.QuantityError, match="rpm"):
        q.rotational_speed("50 Hz")
    assert q.quantity("1.6 kg*m^2", "moment of inertia") == 1.6
    with pytest.raises(q.QuantityError, match="powers are written with"):
        q.quantity("3 m3", "volume")


def test_ratios() -> None:
    assert q.ratio("10 %") == pytest.approx(0.1)
    assert q.ratio(0.1) == 0.1
    assert q.ratio("0.25") == 0.25
    with pytest.raises(q.QuantityError, match="percentage or a fraction"):
        q.ratio("10 m")
    with pytest.raises(q.QuantityError):
        q.ratio(True)


@pytest.mark.parametrize(
    "text", ["5 (m", "5 m^", "5 **", "5 m^(1/0)", "5 m;", "nan m", "1e999 m", "5 m^1e999"]
)
def test_malformed_units_are_quantity_errors(text: str) -> None:
    with pytest.raises(q.QuantityError):
        q.quantity(text, "length")


def test_plain_numbers() -> None:
    assert q.number(9000, "cv: 9000") == 9000
    assert q.number(2.0, "count: 2", integer=True) == 2
    for bad in (True, "9000", None, float("nan")):
        with pytest.raises(q.QuantityError):
            q.number(bad, "cv: 9000")
    with pytest.raises(q.QuantityError, match="whole number"):
        q.number(2.5, "count: 2", integer=True)
