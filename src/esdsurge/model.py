"""Model objects: what a terminal file says, in SI units.

Everything here is a frozen dataclass of plain floats in SI: metres, seconds, kilograms, pascals
(absolute unless the field name ends in ``_gauge``), m^3/s, kelvin. ``esdsurge.terminal`` builds
them from a file; physics, the steady state and the engine read them; nothing here computes
anything beyond trivial derived properties.

Route order is from the shore end to the carrier end. A flow is positive towards the carrier.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import ClassVar

#: Standard acceleration of gravity [m/s^2] (CGPM 1901, exact).
G = 9.80665

#: Standard atmosphere [Pa] (exact by definition).
STANDARD_ATMOSPHERE = 101_325.0


@dataclass(frozen=True)
class Where:
    """Where a thing was written: file, 1-based line (0 when unknown) and key path."""

    file: str = ""
    line: int = 0
    path: str = ""


NOWHERE = Where()


@dataclass(frozen=True, kw_only=True)
class Fluid:
    """A product's properties at one temperature.

    Attributes
    ----------
    name : product name as the file calls it
    builtin : name of the built-in property set used, or ``None`` when all values were given
    density : [kg/m^3]
    bulk_modulus : isentropic bulk modulus [Pa] (the one that sets the speed of sound)
    vapour_pressure_abs : [Pa]
    viscosity : dynamic viscosity [Pa*s]
    temperature : [K]
    sources : property name -> where its value comes from
    conductivity : electrical conductivity [S/m], or ``None`` when not known (static-electricity
        rate limits then take the product as a static accumulator)
    sulphur : sulphur content as a mass fraction [-] (50 ppm = 50e-6), or ``None``
    """

    name: str
    builtin: str | None = None
    density: float
    bulk_modulus: float
    vapour_pressure_abs: float
    viscosity: float
    temperature: float
    sources: tuple[tuple[str, str], ...] = ()
    conductivity: float | None = None
    sulphur: float | None = None
    where: Where = field(default=NOWHERE, compare=False)

    @property
    def sound_speed(self) -> float:
        """Speed of sound in the free liquid, sqrt(K/rho) [m/s]."""
        return math.sqrt(self.bulk_modulus / self.density)

    @property
    def kinematic_viscosity(self) -> float:
        """[m^2/s]"""
        return self.viscosity / self.density


@dataclass(frozen=True, kw_only=True)
class Limits:
    """Pressure limits of one element (``None``: not set).

    design_pressure_gauge : [Pa]; the surge limit is
        ``design_pressure_gauge * (1 + surge_allowance)``
    surge_allowance : occasional overpressure allowed by the applicable code [-]
    rated_working_pressure_gauge : hoses, the maximum including surge [Pa]
    flange_class : ASME B16.5 class (150, 300, 600), group 1.1 rating at the product temperature
    min_pressure_abs : lowest allowed pressure [Pa]; ``None`` means the product's vapour pressure
    """

    design_pressure_gauge: float | None = None
    surge_allowance: float = 0.0
    rated_working_pressure_gauge: float | None = None
    flange_class: int | None = None
    min_pressure_abs: float | None = None

    def is_empty(self) -> bool:
        return (
            self.design_pressure_gauge is None
            and self.rated_working_pressure_gauge is None
            and self.flange_class is None
            and self.min_pressure_abs is None
        )


NO_LIMITS = Limits()


@dataclass(frozen=True, kw_only=True)
class Element:
    """Common part of every element of a route."""

    kind: ClassVar[str] = "element"
    #: whether the element has length (and so grid reaches in the engine)
    has_length: ClassVar[bool] = False

    name: str
    limits: Limits = NO_LIMITS
    where: Where = field(default=NOWHERE, compare=False)


@dataclass(frozen=True, kw_only=True)
class Tank(Element):
    """Constant-pressure free surface at one end of a route.

    surface : elevation of the liquid surface [m]
    gas_pressure_gauge : pressure of the gas above the liquid [Pa]
    """

    kind: ClassVar[str] = "tank"
    surface: float
    gas_pressure_gauge: float = 0.0


@dataclass(frozen=True, kw_only=True)
class Pump(Element):
    """One or more identical centrifugal pumps in parallel.

    curve : points ``(flow [m^3/s], head [m])`` of one pump at rated speed, increasing flow
    pushes : +1 pushes towards the carrier, -1 towards the shore
    count : number of identical pumps installed in parallel
    rated_speed : [rad/s], or ``None`` when not given
    inertia : pump + motor, each unit [kg*m^2], or ``None`` (estimated when needed)
    check_valve : a check valve at the discharge stops reverse flow
    efficiency : best-efficiency-point efficiency [-], or ``None`` (assumed when needed)
    """

    kind: ClassVar[str] = "pump"
    curve: tuple[tuple[float, float], ...]
    pushes: int = 1
    count: int = 1
    rated_speed: float | None = None
    inertia: float | None = None
    check_valve: bool = True
    efficiency: float | None = None


@dataclass(frozen=True, kw_only=True)
class Pipe(Element):
    """Rigid pipe.

    length, inside_diameter, wall : [m]
    youngs_modulus : [Pa]; poisson : [-]
    anchoring : ``"joints"``, ``"anchored"`` or ``"upstream"``
    roughness : absolute roughness [m]
    profile : points ``(chainage [m], elevation [m])`` from the element's shore end
    wave_speed : given wave speed [m/s], overriding the formula, or ``None``
    friction_factor : given Darcy friction factor [-], overriding Colebrook, or ``None``
    material : material name (for messages), or ``""`` when E and nu were given
    """

    kind: ClassVar[str] = "pipe"
    has_length: ClassVar[bool] = True
    length: float
    inside_diameter: float
    wall: float
    youngs_modulus: float
    poisson: float
    anchoring: str = "anchored"
    roughness: float
    profile: tuple[tuple[float, float], ...] = ()
    wave_speed: float | None = None
    friction_factor: float | None = None
    material: str = ""

    @property
    def area(self) -> float:
        """Bore area [m^2]."""
        return math.pi * self.inside_diameter**2 / 4.0


@dataclass(frozen=True, kw_only=True)
class Arm(Pipe):
    """Loading arm: a pipe with the arm's own limits (often with an apex in its profile)."""

    kind: ClassVar[str] = "arm"


@dataclass(frozen=True, kw_only=True)
class Hose(Element):
    """Cargo hose.

    length, inside_diameter : [m]
    wave_speed : given wave speed [m/s], or ``None`` to derive it from ``expansion``
    expansion : volumetric expansion per pressure, (1/V) dV/dp [1/Pa], or ``None``
    roughness : [m]; profile, friction_factor : as for :class:`Pipe`
    """

    kind: ClassVar[str] = "hose"
    has_length: ClassVar[bool] = True
    length: float
    inside_diameter: float
    wave_speed: float | None = None
    expansion: float | None = None
    roughness: float
    profile: tuple[tuple[float, float], ...] = ()
    friction_factor: float | None = None

    @property
    def area(self) -> float:
        """Bore area [m^2]."""
        return math.pi * self.inside_diameter**2 / 4.0


@dataclass(frozen=True, kw_only=True)
class Valve(Element):
    """In-line valve (ESD valve, manifold valve, control valve).

    valve_type : ``ball``, ``butterfly``, ``gate``, ``globe`` or ``custom``
    flow_area : effective flow area when fully open, A_eff with Q = A_eff*sqrt(2*dp/rho) [m^2]
    diameter : bore used for velocities and loss coefficients [m] (the ``size``, or the
        neighbouring element's bore)
    characteristic : points ``(travel fraction open, relative flow coefficient)`` for
        ``custom``; empty for the built-in types (their inherent curves live in physics)
    """

    kind: ClassVar[str] = "valve"
    valve_type: str
    flow_area: float
    diameter: float
    characteristic: tuple[tuple[float, float], ...] = ()


@dataclass(frozen=True, kw_only=True)
class Coupling(Element):
    """Emergency release coupling: two valves that close together on release.

    closing_time : [s]; flow_area, diameter, valve_type, characteristic : as for :class:`Valve`
    """

    kind: ClassVar[str] = "coupling"
    closing_time: float
    valve_type: str = "ball"
    flow_area: float
    diameter: float
    characteristic: tuple[tuple[float, float], ...] = ()


@dataclass(frozen=True, kw_only=True)
class Manifold(Element):
    """Zero-length point: the carrier's manifold connection."""

    kind: ClassVar[str] = "manifold"


@dataclass(frozen=True, kw_only=True)
class Relief(Element):
    """Surge relief valve on a branch at a point of the route, discharging to a relief tank.

    The valve starts to open at ``set_pressure_gauge`` and is fully open (``flow_area``) at
    ``full_open_pressure_gauge``, its opening proportional to the pressure between the two; it
    cannot move faster than full travel in ``opening_time`` (opening) or ``closing_time``
    (closing). The relief line's own losses and the level in the relief tank are not modelled:
    the valve discharges against ``back_pressure_gauge`` at its own elevation.

    set_pressure_gauge, full_open_pressure_gauge, back_pressure_gauge : [Pa]
    flow_area : effective flow area fully open, A_eff with Q = A_eff*sqrt(2*dp/rho) [m^2]
    opening_time, closing_time : full travel times [s]
    reseats : whether it closes again when the pressure falls (else it stays at the largest
        opening it reached)
    receiver_volume : room in the relief tank [m^3], or ``None`` when not given
    """

    kind: ClassVar[str] = "relief"
    set_pressure_gauge: float
    full_open_pressure_gauge: float
    flow_area: float
    opening_time: float
    closing_time: float
    reseats: bool = True
    back_pressure_gauge: float = 0.0
    receiver_volume: float | None = None


@dataclass(frozen=True, kw_only=True)
class Accumulator(Element):
    """Gas-charged surge vessel (bladder or piston) on a branch at a point of the route.

    volume : gas volume when the vessel holds no liquid [m^3]
    precharge_abs : gas pre-charge pressure [Pa] at ``precharge_temperature`` [K]; the gas
        comes to the product temperature before the transfer
    exponent : polytropic exponent n of the gas during the transient, p V^n = const [-]
    connection_diameter : bore of the branch connecting it to the route [m]
    connection_loss : loss coefficient of that branch on its velocity [-]
    """

    kind: ClassVar[str] = "accumulator"
    volume: float
    precharge_abs: float
    precharge_temperature: float
    exponent: float = 1.2
    connection_diameter: float
    connection_loss: float = 1.0

    @property
    def connection_area(self) -> float:
        """[m^2]"""
        return math.pi * self.connection_diameter**2 / 4.0


#: Element kinds by the name used in terminal files. A new kind is added here.
ELEMENT_KINDS: dict[str, type[Element]] = {
    cls.kind: cls
    for cls in (Tank, Pump, Pipe, Arm, Hose, Valve, Coupling, Manifold, Relief, Accumulator)
}

#: Kinds that sit on a branch off the route and take flow out of it at a point.
BRANCH_KINDS = (Relief, Accumulator)

#: Kinds that behave as a valve in the line (have a travel and a characteristic).
VALVE_LIKE = (Valve, Coupling)


@dataclass(frozen=True, kw_only=True)
class Route:
    """A line-up, elements ordered from the shore end to the carrier end."""

    name: str
    elements: tuple[Element, ...]
    where: Where = field(default=NOWHERE, compare=False)

    def element(self, name: str) -> Element:
        for e in self.elements:
            if e.name == name:
                return e
        raise KeyError(name)

    def index(self, name: str) -> int:
        for i, e in enumerate(self.elements):
            if e.name == name:
                return i
        raise KeyError(name)


@dataclass(frozen=True, kw_only=True)
class Event:
    """Something that happens at time ``at`` [s] after the trigger, to element ``element``."""

    action: ClassVar[str] = "event"
    element: str
    at: float = 0.0
    where: Where = field(default=NOWHERE, compare=False)


@dataclass(frozen=True, kw_only=True)
class Close(Event):
    """An in-line valve closes.

    stroke : full travel time from open to shut [s]
    travel : points ``(fraction of stroke time, travel fraction open)``, from ``(0, 1)`` to
        ``(1, 0)``, travel non-increasing
    """

    action: ClassVar[str] = "close"
    stroke: float
    travel: tuple[tuple[float, float], ...] = ((0.0, 1.0), (1.0, 0.0))


@dataclass(frozen=True, kw_only=True)
class Trip(Event):
    """Pumps lose power and run down on their inertia."""

    action: ClassVar[str] = "trip"


@dataclass(frozen=True, kw_only=True)
class Release(Event):
    """An emergency release coupling's valves close over its closing time."""

    action: ClassVar[str] = "release"


@dataclass(frozen=True, kw_only=True)
class Ramp(Event):
    """Pumps on variable-speed drives ramp their speed down to zero, linearly.

    ramp_time : time from the speed before the event to standstill [s]
    """

    action: ClassVar[str] = "ramp"
    ramp_time: float


EVENT_ACTIONS: dict[str, type[Event]] = {cls.action: cls for cls in (Close, Trip, Release, Ramp)}

#: Kinds of carrier a case may name (``Carrier.kind``).
CARRIER_KINDS = ("ship", "barge", "rail car", "road tanker")


@dataclass(frozen=True, kw_only=True)
class Carrier:
    """What a case says about the carrier, for the rate limits other than surge.

    kind : one of :data:`CARRIER_KINDS`, or ``None`` when not given
    vent_capacity : venting capacity of the tanks being loaded [m^3/s], or ``None``
    inlet_diameter : inside diameter of a tank inlet [m], or ``None``
    inlets : number of tank inlets loaded at once [-]
    fill_pipe : inside diameter of a road or rail fill pipe [m], or ``None`` (the bore of the
        route's last line is used)
    """

    kind: str | None = None
    vent_capacity: float | None = None
    inlet_diameter: float | None = None
    inlets: int = 1
    fill_pipe: float | None = None
    where: Where = field(default=NOWHERE, compare=False)


@dataclass(frozen=True, kw_only=True)
class Case:
    """One ESD case to check.

    rate : transfer rate to hold initially [m^3/s] (magnitude), or ``None`` for the natural
        operating point
    running : pump element name -> number of units running (pumps not named: all units)
    duration : simulated time [s], or ``None`` for the default
    spill_limit : most volume allowed through the first closing element after t = 0 [m^3]
    max_closure_time : longest time allowed from the trigger to the first closing element
        being shut [s] (e.g. a code's 30 s rule), or ``None``
    carrier : the carrier's kind, venting and tank inlets (:class:`Carrier`), or ``None``
    """

    name: str
    route: str
    product: str
    rate: float | None = None
    running: tuple[tuple[str, int], ...] = ()
    events: tuple[Event, ...] = ()
    duration: float | None = None
    spill_limit: float | None = None
    max_closure_time: float | None = None
    carrier: Carrier | None = None
    where: Where = field(default=NOWHERE, compare=False)

    def running_count(self, pump: Pump) -> int:
        """Units of ``pump`` running at the start of the case."""
        return dict(self.running).get(pump.name, pump.count)


@dataclass(frozen=True, kw_only=True)
class Terminal:
    """One terminal file: one transfer point, its products, routes and cases.

    atmosphere_abs : [Pa]; temperature : site (default product) temperature [K]
    """

    path: str
    name: str
    atmosphere_abs: float = STANDARD_ATMOSPHERE
    temperature: float = 293.15
    products: dict[str, Fluid] = field(default_factory=dict)
    routes: dict[str, Route] = field(default_factory=dict)
    cases: tuple[Case, ...] = ()

    def case(self, name: str) -> Case:
        for c in self.cases:
            if c.name == name:
                return c
        raise KeyError(name)
