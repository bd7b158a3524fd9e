"""What the engine takes per batch member (:class:`Variant`) and what it gives back (:class:`Run`).

Both are frozen dataclasses. ``Run`` holds numpy arrays whose first axis is the batch member
(in the order of ``Run.variants``) and, where there is one, whose second axis is the route
element (in route order, ``Run.elements``). Pressures are absolute [Pa], flows [m^3/s] positive
towards the carrier, times [s] from the trigger (t = 0), chainages [m] from the element's shore
end, volumes [m^3].
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True, kw_only=True)
class Variant:
    """One batch member: a variation of a case, run in the same pass as the others.

    Attributes
    ----------
    label : free text shown with the member's results
    rate : initial transfer rate to hold [m^3/s] (magnitude), or ``None`` for the case's own
        (each member gets its own steady state)
    stroke_scale : multiplies the ``stroke`` of every ``close`` event of the case [-]
    strokes : ``(element name, stroke [s])`` pairs: the stroke of that valve's ``close`` events,
        or the closing time of that coupling on ``release``; wins over ``stroke_scale``
    wave_speed_scale : ``(key, factor)`` pairs multiplying the wave speed of the elements whose
        name or kind (``pipe``, ``arm``, ``hose``) is ``key``; a name wins over a kind [-]
    friction_scale : multiplies every line's Darcy friction factor (the steady state is solved
        again with the scaled factors) [-]
    characteristic_power : the relative flow coefficient of every valve and coupling is raised
        to this power: above 1 the flow falls earlier in the travel, below 1 later [-]
    characteristics : ``(element name, ((travel, relative flow coefficient), ...))`` pairs that
        replace a valve's or coupling's characteristic
    travels : ``(element name, ((fraction of stroke, travel), ...))`` pairs that replace the
        travel curve of that valve's ``close`` event
    without : names of mitigations taken out: a relief valve or an accumulator passes no flow,
        a pump's ``ramp`` becomes a ``trip`` at the same time, a valve's staged ``travel``
        becomes linear over the same stroke
    """

    label: str = ""
    rate: float | None = None
    stroke_scale: float = 1.0
    strokes: tuple[tuple[str, float], ...] = ()
    wave_speed_scale: tuple[tuple[str, float], ...] = ()
    friction_scale: float = 1.0
    characteristic_power: float = 1.0
    characteristics: tuple[tuple[str, tuple[tuple[float, float], ...]], ...] = ()
    travels: tuple[tuple[str, tuple[tuple[float, float], ...]], ...] = ()
    without: tuple[str, ...] = ()


@dataclass(frozen=True, kw_only=True)
class StopRule:
    """When a batch member may end before the run's duration: once it has broken a limit that
    no later step can mend.

    The highest pressure on an element only rises over a run, and its lowest pressure and
    largest cavity only fall and grow, so a member beyond one of these bounds stays beyond it.
    A search that only needs to know *that* such a member fails (not by how much) lets the
    engine stop it and run the others on (:mod:`esdsurge.studies.batch`).

    Attributes
    ----------
    max_abs : ``(element name, pressure [Pa abs])`` pairs: the member has failed once its
        highest pressure on the element is above the pressure
    min_abs : ``(element name, pressure [Pa abs])`` pairs: ... once its lowest pressure on the
        element is below the pressure
    no_cavity : names of elements on which a vapour cavity larger than ``cavity`` fails
    cavity : [m^3]
    after : per batch member, in the order of the variants, the time before which it may not
        stop [s] (e.g. until the valve whose let-through volume is measured has shut, so that
        the volume is whole)
    cavity_after : per batch member, the time from which a cavity alone may stop it [s]
        (empty: ``after``); earlier than ``after`` for a member whose let-through volume is
        not needed, since a counted cavity often forms well before the valve has shut

    The engine stops a member only when a head is beyond its bound by more than
    ``engine.codes.STOP_SLACK`` (1e-6 m of liquid, a hundredth of a pascal), so that the same
    comparison made afterwards on the member's figures is sure to find it beyond the bound.
    The bounds are checked every ``engine.codes.STOP_EVERY`` steps. A stopped member's
    figures (peaks, cavities, volumes, the series) cover the run up to ``Run.stopped`` only.
    """

    max_abs: tuple[tuple[str, float], ...] = ()
    min_abs: tuple[tuple[str, float], ...] = ()
    no_cavity: tuple[str, ...] = ()
    cavity: float = 0.0
    after: tuple[float, ...] = ()
    cavity_after: tuple[float, ...] = ()


@dataclass(frozen=True, kw_only=True)
class Envelope:
    """Pressure envelope of one batch member along the route, one value per grid node.

    x : chainage along the route from the shore tank [m]
    z : node elevation [m]
    element : index of the route element that owns the node
    p_max_abs, p_min_abs : highest and lowest pressure over the run [Pa]; like the per-element
        figures they are taken at the lowest (maximum) and highest (minimum) point of the
        node's cell, so a high point between two nodes is not missed
    cavity_max : largest vapour cavity at the node [m^3]
    """

    x: np.ndarray
    z: np.ndarray
    element: np.ndarray
    p_max_abs: np.ndarray
    p_min_abs: np.ndarray
    cavity_max: np.ndarray


@dataclass(frozen=True, kw_only=True, eq=False)
class MemberState:
    """The whole state of one member after its last step, from which a later run of the same
    variant (same grid and time step) resumes (``simulate(resume=...)``): the same steps as a
    run from the start, on to a longer duration.

    step : the last step run [-]; dt : its time step [s]; arrays : the kernel's outputs of the
    member that a resumed run starts from (``codes.RESUMED``), each without its padding
    """

    step: int
    dt: float
    arrays: dict[str, np.ndarray] = field(repr=False)


@dataclass(frozen=True, kw_only=True, eq=False)
class Run:
    """Result of one pass of the engine over a batch of variants of one case.

    Attributes
    ----------
    case, route, product : names from the terminal file
    variants : the batch members, in order (axis 0 of every array below)
    elements, kinds : route element names and kinds, in route order (axis 1)
    rate : initial flow of each member [m^3/s], signed (positive towards the carrier)
    duration : simulated time, common to all members [s]
    cavities : whether vapour cavities were modelled
    rundown : pump run-down model, ``"torque"`` or ``"analytic"``
    dt : time step of each member [s], shape (batch,)
    reaches : grid reaches per element (0 for points), shape (batch, elements)
    wave_speed : wave speed each member asked for [m/s] (NaN for points)
    wave_speed_used : L / (N dt), the wave speed the grid runs with [m/s]
    wave_speed_adjustment : wave_speed_used / wave_speed - 1 [-]
    p_max_abs, t_p_max, x_p_max : highest pressure on each element [Pa], when [s] and where [m]
    p_min_abs, t_p_min, x_p_min : lowest pressure on each element [Pa], when [s], where [m]
    cavity_max, t_cavity_max, x_cavity_max : largest vapour cavity on each element [m^3], when
        [s] and where [m] (a point element reports the cavities at the nodes beside it)
    volume_through : volume that passed each element's shore end over (0, duration] [m^3]; for
        a closing valve this is the volume let through after the trigger (the spill)
    time : sample times of the series [s], shape (samples,)
    p_in_abs, p_out_abs : pressure at each element's shore and carrier end [Pa], shape
        (batch, elements, samples); a pump's ends lie outside its discharge throttle (as in
        the steady state), and its extremes include the pump flange inside the throttle
    q_in, q_out : flow at each element's shore and carrier end [m^3/s], same shape
    pumps : names of the pump elements
    pump_speed : speed ratio to rated speed of each pump [-], shape (batch, pumps, samples)
    envelopes : per member, the pressure envelope along the route (:class:`Envelope`)
    initial_mismatch : head left over at the carrier tank when the engine's own relations are
        walked along the route with the steady flow [m] (a check of the steady state; about 0)
    volume_balance_error : volume in from the shore tank minus volume out to the carrier tank
        and into the branches minus the change of stored volume (liquid compression, wall
        stretch and cavities) [m^3]
    branches : names of the relief valves and accumulators, in route order
    branch_flow : flow from the route into each branch [m^3/s], shape (batch, branches,
        samples); an accumulator's is negative while it gives liquid back
    branch_state : a relief valve's opening [-] (0 shut, 1 fully open) or an accumulator's gas
        volume [m^3], same shape
    branch_volume : volume into each branch over (0, duration] [m^3]: a relief valve's
        relieved volume, an accumulator's net intake
    branch_flow_max, t_branch_flow_max : largest flow into each branch [m^3/s] and when [s]
    branch_state_min, branch_state_max : smallest and largest opening or gas volume
    branch_capacity : a relief valve's flow fully open at its full-open pressure [m^3/s] (NaN
        for an accumulator)
    branch_time_over_capacity : time a relief valve spent fully open with the pressure above
        its full-open pressure, i.e. asked to pass more than its capacity [s]
    stopped : when each member was stopped by the run's :class:`StopRule` [s] (NaN: it ran
        for the whole duration); the figures of a stopped member cover the run up to then,
        and its series are NaN after it
    node_updates : grid nodes times time steps run, summed over the members [-]
    loop_seconds : wall time of the compiled time loop for the whole batch [s]
    steady : the steady state of each member (``esdsurge.steady.SteadyState``)
    states : with ``simulate(keep_state=True)``, each member's :class:`MemberState` after its
        last step (``None`` for a member that was stopped); else empty
    """

    case: str
    route: str
    product: str
    variants: tuple[Variant, ...]
    elements: tuple[str, ...]
    kinds: tuple[str, ...]
    rate: np.ndarray
    duration: float
    cavities: bool
    rundown: str
    dt: np.ndarray
    reaches: np.ndarray
    wave_speed: np.ndarray
    wave_speed_used: np.ndarray
    wave_speed_adjustment: np.ndarray
    p_max_abs: np.ndarray
    t_p_max: np.ndarray
    x_p_max: np.ndarray
    p_min_abs: np.ndarray
    t_p_min: np.ndarray
    x_p_min: np.ndarray
    cavity_max: np.ndarray
    t_cavity_max: np.ndarray
    x_cavity_max: np.ndarray
    volume_through: np.ndarray
    time: np.ndarray
    p_in_abs: np.ndarray
    p_out_abs: np.ndarray
    q_in: np.ndarray
    q_out: np.ndarray
    pumps: tuple[str, ...]
    pump_speed: np.ndarray
    envelopes: tuple[Envelope, ...]
    initial_mismatch: np.ndarray
    volume_balance_error: np.ndarray
    branches: tuple[str, ...]
    branch_flow: np.ndarray
    branch_state: np.ndarray
    branch_volume: np.ndarray
    branch_flow_max: np.ndarray
    t_branch_flow_max: np.ndarray
    branch_state_min: np.ndarray
    branch_state_max: np.ndarray
    branch_capacity: np.ndarray
    branch_time_over_capacity: np.ndarray
    stopped: np.ndarray
    node_updates: int
    loop_seconds: float
    steady: tuple[object, ...] = field(repr=False)
    states: tuple[MemberState | None, ...] = field(default=(), repr=False)

    @property
    def batch(self) -> int:
        """Number of batch members."""
        return len(self.variants)

    def index(self, element: str) -> int:
        """Position of a route element by name (axis 1 of the per-element arrays)."""
        try:
            return self.elements.index(element)
        except ValueError:
            raise KeyError(element) from None
