"""Uncertainty bands (``--spread``): the inputs that are rarely known well, varied together.

A band is the nominal case plus members in which one uncertain input is set to the low or the
high end of its range (one at a time). The searches run every member at every searched value in
the same pass of the engine, and take the worst member: a stroke or rate is safe across the band
when every member keeps every limit.

Defaults and why (each a factor on the nominal value):

* hose wave speed x0.7 .. x1.3: no measured wave speed of a cargo hose was found for esdsurge
  (the hose's figure comes from a volumetric expansion at test pressure); dynamic stiffness of
  reinforced hoses is above the static value and varies much between constructions
  (J. Vib. Acoust. 132(2) 021011, 2010: measured dynamic properties of flexible hoses). A wide
  band: +-30 %.
* pipe and arm wave speed x0.9 .. x1.1: the bulk modulus of a fuel is known to 5-15 % depending
  on the model (isothermal or isentropic, blend or pure component), and the anchoring factor and
  wall tolerance add a few per cent.
* friction x0.8 .. x1.25: the roughness of pipe in service is rarely measured, fittings and
  strainers are not modelled one by one, and the Colebrook factor itself carries some 10-15 %
  (common practice, no source).
* valve characteristic: relative flow coefficient raised to the power 0.8 .. 1.25 (below 1 the
  flow falls later in the travel, above 1 earlier): the built-in curves are generic (the ball
  valve's is a plug-cock table), and a vendor's curve for the actual valve is seldom at hand.

One at a time: the band does not explore factors acting together (a corner of the box may be
worse than any member). The members and their factors are listed with every result.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from esdsurge.engine import Variant
from esdsurge.model import VALVE_LIKE, Route


@dataclass(frozen=True)
class Member:
    """One member of a band: the engine options that vary it (see ``engine.Variant``)."""

    label: str
    wave_speed_scale: tuple[tuple[str, float], ...] = ()
    friction_scale: float = 1.0
    characteristic_power: float = 1.0

    def variant(self, **kwargs: object) -> Variant:
        """A :class:`~esdsurge.engine.Variant` of this member with ``kwargs`` added."""
        return Variant(
            label=self.label,
            wave_speed_scale=self.wave_speed_scale,
            friction_scale=self.friction_scale,
            characteristic_power=self.characteristic_power,
            **kwargs,  # type: ignore[arg-type]
        )


NOMINAL = Member("nominal")


@dataclass(frozen=True)
class Factor:
    """An uncertain input and its range.

    name : what varies; low, high : the ends of its range (factors on the nominal, or the
    characteristic's power) [-]; reason : why this range; kinds : element kinds it acts on
    (for wave speeds); target : ``wave_speed``, ``friction`` or ``characteristic``
    """

    name: str
    target: str
    low: float
    high: float
    reason: str
    kinds: tuple[str, ...] = field(default=())

    def applies(self, route: Route) -> bool:
        """Whether the route has anything this factor acts on."""
        if self.target == "wave_speed":
            return any(e.kind in self.kinds for e in route.elements)
        if self.target == "characteristic":
            return any(isinstance(e, VALVE_LIKE) for e in route.elements)
        return any(e.has_length for e in route.elements)

    def member(self, value: float) -> Member:
        label = f"{self.name} ×{value:g}"
        if self.target == "wave_speed":
            return Member(label, wave_speed_scale=tuple((k, value) for k in self.kinds))
        if self.target == "friction":
            return Member(label, friction_scale=value)
        if self.target == "characteristic":
            label = f"{self.name} ^{value:g}"
            return Member(label, characteristic_power=value)
        raise ValueError(f"unknown factor target {self.target!r}")


DEFAULT_FACTORS: tuple[Factor, ...] = (
    Factor(
        "hose wave speed",
        "wave_speed",
        0.7,
        1.3,
        "no measured cargo-hose wave speed; dynamic stiffness differs from the static "
        "expansion figure (J. Vib. Acoust. 132(2), 2010)",
        kinds=("hose",),
    ),
    Factor(
        "pipe wave speed",
        "wave_speed",
        0.9,
        1.1,
        "a fuel's bulk modulus is known to 5-15 % by model; anchoring and wall add a few %",
        kinds=("pipe", "arm"),
    ),
    Factor(
        "friction",
        "friction",
        0.8,
        1.25,
        "roughness in service and fittings not modelled one by one (common practice, no source)",
    ),
    Factor(
        "valve characteristic",
        "characteristic",
        0.8,
        1.25,
        "generic inherent curves stand in for the actual valves' curves",
    ),
)


def band(route: Route, factors: tuple[Factor, ...] = DEFAULT_FACTORS) -> tuple[Member, ...]:
    """The nominal member, then each applicable factor at its low and high end.

    >>> from esdsurge.model import Route, Tank
    >>> [m.label for m in band(Route(name="r", elements=(Tank(name="a", surface=0.0),)))]
    ['nominal']
    """
    out = [NOMINAL]
    for f in factors:
        if f.applies(route):
            out += [f.member(f.low), f.member(f.high)]
    return tuple(out)
