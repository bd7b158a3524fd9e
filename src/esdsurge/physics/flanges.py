"""Flange pressure-temperature ratings (ASME B16.5, material group 1.1).

The rating table is data from a standard that no installed library carries, so it is written
out here with the edition and table it comes from. Only the temperatures read in the source are
tabulated; a temperature outside them is refused rather than extrapolated.
"""

from __future__ import annotations

import numpy as np

from esdsurge.errors import PhysicsRangeError

__all__ = ["B16_5_GROUP_1_1", "FLANGE_CLASSES", "b16_5_rating_gauge"]

FLANGE_CLASSES: tuple[int, ...] = (150, 300, 600)

_ZERO_CELSIUS = 273.15

#: ASME B16.5-2009 Table 2-1.1 (material group 1.1: A105, A216 WCB, A350 LF2, A516-70, ...),
#: working pressure by class [bar gauge] at temperature [degC]. The -29 to 38 degC row is
#: entered at both ends so that the rating is constant across it.
B16_5_GROUP_1_1: dict[int, tuple[tuple[float, float], ...]] = {
    150: ((-29.0, 19.6), (38.0, 19.6), (50.0, 19.2), (100.0, 17.7), (150.0, 15.8), (200.0, 13.8)),
    300: ((-29.0, 51.1), (38.0, 51.1), (50.0, 50.1), (100.0, 46.6), (150.0, 45.1), (200.0, 43.8)),
    600: (
        (-29.0, 102.1),
        (38.0, 102.1),
        (50.0, 100.2),
        (100.0, 93.2),
        (150.0, 90.2),
        (200.0, 87.6),
    ),
}


def b16_5_rating_gauge(flange_class: int, temperature: float) -> float:
    """Pressure rating of an ASME B16.5 flange, material group 1.1.

    Parameters
    ----------
    flange_class : int
        Pressure class: 150, 300 or 600.
    temperature : float
        Metal (product) temperature [K], from -29 degC to 200 degC.

    Returns
    -------
    float
        Maximum working pressure [Pa] gauge.

    Raises
    ------
    PhysicsRangeError
        Unknown class, or a temperature outside the tabulated -29 .. 200 degC.

    Notes
    -----
    Linear interpolation in temperature between the listed temperatures, as B16.5 permits;
    never between classes. Constant from -29 to 38 degC.

    References
    ----------
    ASME B16.5-2009, Pipe Flanges and Flanged Fittings NPS 1/2 through NPS 24, Table 2-1.1.

    Examples
    --------
    Class 150 at 75 degC, halfway between 19.2 bar (50 degC) and 17.7 bar (100 degC):

    >>> round(b16_5_rating_gauge(150, 348.15) / 1e5, 2)
    18.45
    """
    if flange_class not in B16_5_GROUP_1_1:
        raise PhysicsRangeError(
            f"unknown flange class {flange_class!r}; valid: "
            f"{', '.join(str(c) for c in FLANGE_CLASSES)}"
        )
    table = B16_5_GROUP_1_1[flange_class]
    celsius = float(temperature) - _ZERO_CELSIUS
    lo, hi = table[0][0], table[-1][0]
    # a hair of tolerance so that the table's own temperatures pass after a K round trip
    if not (lo - 1e-9 <= celsius <= hi + 1e-9):
        raise PhysicsRangeError(
            f"temperature {celsius:.1f} degC is outside the ASME B16.5 group 1.1 ratings held "
            f"here ({lo:g} to {hi:g} degC)"
        )
    temps = np.array([t for t, _ in table])
    bars = np.array([p for _, p in table])
    return float(np.interp(celsius, temps, bars)) * 1e5
