"""ASME B16.5 group 1.1 flange ratings."""

from __future__ import annotations

import pytest

from esdsurge.errors import PhysicsRangeError
from esdsurge.physics.flanges import FLANGE_CLASSES, b16_5_rating_gauge

ZERO_C = 273.15
BAR = 1e5

# ASME B16.5-2009 Table 2-1.1, material group 1.1, working pressure [bar] (REFERENCES §4.1, read)
TABLE = {
    150: {38.0: 19.6, 50.0: 19.2, 100.0: 17.7, 150.0: 15.8, 200.0: 13.8},
    300: {38.0: 51.1, 50.0: 50.1, 100.0: 46.6, 150.0: 45.1, 200.0: 43.8},
    600: {38.0: 102.1, 50.0: 100.2, 100.0: 93.2, 150.0: 90.2, 200.0: 87.6},
}


@pytest.mark.parametrize("flange_class", FLANGE_CLASSES)
def test_exact_at_listed_temperatures(flange_class):
    for celsius, bar in TABLE[flange_class].items():
        # ASME B16.5-2009 Table 2-1.1, group 1.1 (read), exact
        assert b16_5_rating_gauge(flange_class, celsius + ZERO_C) == pytest.approx(
            bar * BAR, rel=1e-12
        )


@pytest.mark.parametrize("celsius", [-29.0, -10.0, 0.0, 20.0, 38.0])
def test_constant_from_minus_29_to_38(celsius):
    # ASME B16.5-2009 Table 2-1.1: one rating for -29 to 38 degC (read)
    assert b16_5_rating_gauge(300, celsius + ZERO_C) == pytest.approx(51.1 * BAR, rel=1e-12)


@pytest.mark.parametrize(("flange_class", "bar"), [(150, 18.45), (300, 48.35), (600, 96.7)])
def test_interpolation_at_75_degc(flange_class, bar):
    # ASME B16.5 permits linear interpolation in temperature (REFERENCES §4.1, read): halfway
    # between the 50 and 100 degC values
    assert b16_5_rating_gauge(flange_class, 75.0 + ZERO_C) == pytest.approx(bar * BAR, rel=1e-12)


def test_outside_the_table_is_refused():
    with pytest.raises(PhysicsRangeError, match="outside the ASME B16.5"):
        b16_5_rating_gauge(150, -30.0 + ZERO_C)
    with pytest.raises(PhysicsRangeError, match="outside the ASME B16.5"):
        b16_5_rating_gauge(150, 201.0 + ZERO_C)


def test_unknown_class_lists_the_valid_ones():
    with pytest.raises(PhysicsRangeError, match="valid: 150, 300, 600"):
        b16_5_rating_gauge(900, 300.0)
