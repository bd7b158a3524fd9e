"""Line data of a route for one product: bores, lengths, wave speeds, elevations.

The single place where a route's elements are turned into the numbers that the steady state, the
hand checks and the engine share, so that they never disagree on a wave speed or an elevation.
Points (tanks, pumps, valves, couplings, manifolds) have zero length; their bore is their own
(valves, couplings) or that of the nearest element with a bore, and their elevation that of the
neighbouring element's end.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from esdsurge.model import Arm, Coupling, Element, Fluid, Hose, Pipe, Route, Valve
from esdsurge.physics import pipes


@dataclass(frozen=True)
class LineData:
    """Numbers of one route element for one product.

    length : [m] (0 for points); diameter : bore [m]; area : bore area [m^2]
    wave_speed : [m/s] for elements with length, ``None`` for points
    wave_speed_given : whether the wave speed was given in the file rather than derived
    profile : ``((chainage [m], elevation [m]), ...)`` from the element's shore end; points
        have a single point ``((0, z),)``
    roughness : absolute roughness [m] (0 for points)
    friction_factor : given Darcy factor, or ``None`` for Colebrook
    """

    name: str
    kind: str
    length: float
    diameter: float
    area: float
    wave_speed: float | None
    wave_speed_given: bool
    profile: tuple[tuple[float, float], ...]
    roughness: float
    friction_factor: float | None

    @property
    def z_in(self) -> float:
        """Elevation at the shore end [m]."""
        return self.profile[0][1]

    @property
    def z_out(self) -> float:
        """Elevation at the carrier end [m]."""
        return self.profile[-1][1]

    @property
    def period(self) -> float | None:
        """Pipeline period of the element alone, 2L/a [s]."""
        if self.wave_speed is None:
            return None
        return 2.0 * self.length / self.wave_speed


def element_wave_speed(element: Element, fluid: Fluid) -> tuple[float | None, bool]:
    """Wave speed of an element carrying ``fluid`` [m/s] and whether it was given.

    Pipes and arms use the thin/thick-wall formula of ``physics.pipes.wave_speed_pipe``; hoses
    the volumetric-expansion form of ``physics.pipes.wave_speed_hose``; a value given in the
    file wins. Points have none.
    """
    if isinstance(element, Pipe):
        if element.wave_speed is not None:
            return element.wave_speed, True
        a = pipes.wave_speed_pipe(
            fluid.bulk_modulus,
            fluid.density,
            element.inside_diameter,
            element.wall,
            element.youngs_modulus,
            element.poisson,
            element.anchoring,
        )
        return a, False
    if isinstance(element, Hose):
        if element.wave_speed is not None:
            return element.wave_speed, True
        assert element.expansion is not None  # the reader requires one of the two
        return pipes.wave_speed_hose(fluid.bulk_modulus, fluid.density, element.expansion), False
    return None, False


def _own_bore(element: Element) -> float | None:
    if isinstance(element, Pipe | Hose):
        return element.inside_diameter
    if isinstance(element, Valve | Coupling):
        return element.diameter
    return None


def sections(route: Route, fluid: Fluid) -> tuple[LineData, ...]:
    """Line data of every element of ``route`` for ``fluid``, in route order."""
    elements = route.elements
    n = len(elements)
    bores: list[float | None] = [_own_bore(e) for e in elements]
    # points without a bore take the nearest bore, looking towards the shore first
    for i in range(n):
        if bores[i] is None:
            for j in sorted(range(n), key=lambda j: (abs(j - i), j > i)):
                if _own_bore(elements[j]) is not None:
                    bores[i] = _own_bore(elements[j])
                    break
    # elevations of points: the end of the previous element with a profile, else the next start
    profiles: list[tuple[tuple[float, float], ...] | None] = []
    for e in elements:
        if isinstance(e, Pipe | Hose):
            prof = e.profile or ((0.0, 0.0), (e.length, 0.0))
            profiles.append(tuple(prof))
        else:
            profiles.append(None)
    z_points: list[float] = []
    for i in range(n):
        z = None
        for j in range(i - 1, -1, -1):
            if profiles[j] is not None:
                z = profiles[j][-1][1]  # type: ignore[index]
                break
        if z is None:
            for j in range(i + 1, n):
                if profiles[j] is not None:
                    z = profiles[j][0][1]  # type: ignore[index]
                    break
        z_points.append(0.0 if z is None else z)

    out = []
    for i, e in enumerate(elements):
        d = bores[i] or 0.0
        a, given = element_wave_speed(e, fluid)
        if isinstance(e, Pipe | Hose):
            length = e.length
            rough = e.roughness
            ff = e.friction_factor
            prof = profiles[i]
        else:
            length = 0.0
            rough = 0.0
            ff = None
            prof = ((0.0, z_points[i]),)
        assert prof is not None
        kind = Arm.kind if isinstance(e, Arm) else e.kind
        out.append(
            LineData(
                name=e.name,
                kind=kind,
                length=length,
                diameter=d,
                area=math.pi * d * d / 4.0,
                wave_speed=a,
                wave_speed_given=given,
                profile=prof,
                roughness=rough,
                friction_factor=ff,
            )
        )
    return tuple(out)
