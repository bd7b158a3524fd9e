"""Steady state of a case: the operating point before the trigger, and quasi-steady closures.

Head datum: piezometric head on absolute pressure, ``H = z + p_abs / (rho g)`` [m]. Walking the
route from the shore end, a pipe with flow ``Q`` (positive towards the carrier) loses its
Darcy–Weisbach head, a valve or coupling loses ``Q|Q| / (2 g A_eff^2)``, a pump pushing the way
the liquid flows adds its head from the fitted curve (affinity laws for running units in parallel).
The flow is the root of the head balance between the two tanks, found with
``scipy.optimize.brentq`` (the balance is monotone in ``Q`` on the pumps' falling branch).

With a requested ``rate`` the route must pass exactly that flow: excess head of the running pumps
is throttled at the discharge of the first running pump (reported as the throttled head); a rate
the route cannot reach is refused with the rate it can reach.

Entry and exit losses at the tanks and fittings other than valves and couplings are not modelled;
give a pipe's ``friction_factor`` or a ``valve`` with ``k_open`` to account for them.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq
from scipy.optimize.elementwise import find_root

from esdsurge.errors import SteadyStateError
from esdsurge.lineup import LineData, sections
from esdsurge.model import (
    VALVE_LIKE,
    Case,
    Close,
    Coupling,
    Fluid,
    G,
    Pump,
    Route,
    Tank,
    Valve,
)
from esdsurge.physics import friction, pumps, valves


@dataclass(frozen=True)
class ElementState:
    """Steady state of one element.

    flow : [m^3/s], positive towards the carrier; velocity : in the element's bore [m/s]
    head_in, head_out : piezometric head at the shore and carrier ends [m]
    z_in, z_out : elevations [m]; p_in_abs, p_out_abs : pressures [Pa]
    p_min_abs, x_p_min : lowest pressure along the element's profile [Pa] and its chainage [m]
    p_max_abs, x_p_max : highest pressure along the element's profile [Pa] and its chainage [m]
    friction_factor : Darcy factor used [-] (``None`` for points)
    wave_speed : [m/s] (``None`` for points)
    head_change : head gained (pumps, positive) or lost (negative) across the element [m]
    """

    name: str
    kind: str
    flow: float
    velocity: float
    head_in: float
    head_out: float
    z_in: float
    z_out: float
    p_in_abs: float
    p_out_abs: float
    p_min_abs: float
    x_p_min: float
    p_max_abs: float
    x_p_max: float
    friction_factor: float | None
    wave_speed: float | None
    head_change: float


@dataclass(frozen=True)
class SteadyState:
    """Operating point of a case before the trigger.

    flow : [m^3/s], positive towards the carrier
    rate_requested : the case's rate [m^3/s] or ``None``
    natural_flow : flow the route would pass with the running pumps unthrottled [m^3/s]
    throttled_head : head throttled at the discharge of ``throttle_at`` to hold the rate [m]
    running : pump name -> units running
    pump_speeds : pump name -> speed ratio to rated (1 before the trigger)
    pump_heads : pump name -> head added by the station [m]
    tank_heads : piezometric heads of the shore and carrier tanks as the route sees them [m]
    tank_levels : the liquid levels they stand for [m]: a tank's surface, or, where the line
        that fills the tank ends above its liquid (free outfall), the line's end
    """

    case: str
    route: str
    fluid: Fluid
    flow: float
    rate_requested: float | None
    natural_flow: float
    throttled_head: float
    throttle_at: str | None
    running: dict[str, int]
    pump_speeds: dict[str, float]
    pump_heads: dict[str, float]
    elements: tuple[ElementState, ...]
    lines: tuple[LineData, ...]
    tank_heads: tuple[float, float] = (math.nan, math.nan)
    tank_levels: tuple[float, float] = (math.nan, math.nan)

    def element(self, name: str) -> ElementState:
        for e in self.elements:
            if e.name == name:
                return e
        raise KeyError(name)


class _Balance:
    """Head changes along a route as functions of the flow (vectorised over nothing: scalars)."""

    def __init__(self, route: Route, fluid: Fluid, case: Case, atmosphere_abs: float):
        self.route = route
        self.fluid = fluid
        self.lines = sections(route, fluid)
        self.rho_g = fluid.density * G
        first, last = route.elements[0], route.elements[-1]
        assert isinstance(first, Tank) and isinstance(last, Tank)
        self.h_shore = first.surface + (first.gas_pressure_gauge + atmosphere_abs) / self.rho_g
        self.h_carrier = last.surface + (last.gas_pressure_gauge + atmosphere_abs) / self.rho_g
        self.running: dict[str, int] = {}
        self.curves: dict[str, tuple[float, float, float]] = {}
        for e in route.elements:
            if isinstance(e, Pump):
                self.running[e.name] = case.running_count(e)
                self.curves[e.name] = pumps.fit_curve(e.curve)
        pushes = {
            e.pushes for e in route.elements if isinstance(e, Pump) and self.running[e.name] > 0
        }
        if len(pushes) > 1:
            raise SteadyStateError(
                f"route {route.name!r}: running pumps push both ways; run only the pumps of one "
                "direction in a case"
            )
        self.direction = pushes.pop() if pushes else 0
        # a line that ends above the liquid of the tank it fills falls freely into its gas
        # space: its end is at the tank's gas pressure (free outfall, no drop tube modelled)
        going = self.direction or (1 if self.h_shore >= self.h_carrier else -1)
        self.levels = [first.surface, last.surface]
        end = -1 if going > 0 else 0
        z_end = self.lines[end].z_in
        tank = last if going > 0 else first
        if z_end > tank.surface:
            self.levels[end] = z_end
            head = z_end + (tank.gas_pressure_gauge + atmosphere_abs) / self.rho_g
            if going > 0:
                self.h_carrier = head
            else:
                self.h_shore = head
        self.blocked = [
            e.name for e in route.elements if isinstance(e, Pump) and self.running[e.name] == 0
        ]
        # friction factors are fixed at the operating point (set by ``solve``)
        self.ff: list[float | None] = [ln.friction_factor for ln in self.lines]

    def friction_factor(self, i: int, flow: float) -> float:
        ln = self.lines[i]
        if ln.friction_factor is not None:
            return ln.friction_factor
        v = abs(flow) / ln.area
        re = friction.reynolds(v, ln.diameter, self.fluid.kinematic_viscosity)
        return friction.darcy_friction_factor(re, ln.roughness / ln.diameter)

    def pump_head(self, pump: Pump, flow: float | np.ndarray) -> float | np.ndarray:
        """Head the station adds in its push direction at route flow ``flow`` [m] (a flow, or
        an array of flows: a head each)."""
        n = self.running[pump.name]
        q = flow * pump.pushes
        if np.ndim(q) > 0:
            if n == 0:
                return np.zeros_like(q)
            return np.where(q < 0.0, 0.0, pumps.pump_head(self.curves[pump.name], q, 1.0, n))
        if n == 0 or q < 0.0:
            return 0.0
        return pumps.pump_head(self.curves[pump.name], q, 1.0, n)

    def changes(
        self,
        flow: float,
        openings: dict[str, float] | None = None,
        throttle: tuple[str, float] | None = None,
        fixed_friction: bool = False,
    ) -> list[float]:
        """Head change across each element in route order at ``flow`` [m].

        openings : valve name -> relative flow coefficient (default fully open)
        throttle : (pump name, loss coefficient on Q|Q| [s^2/m^5]) at that pump's discharge
        fixed_friction : use the friction factors stored by ``solve`` instead of Colebrook at
            ``flow`` (quasi-steady closures keep the initial factor, as the engine does)

        ``flow`` and the openings may also be arrays (broadcast together; with
        ``fixed_friction``, and openings above zero): the changes are then arrays, one value
        per flow, as the quasi-steady closure solves every time at once.
        """
        out = []
        for i, (e, ln) in enumerate(zip(self.route.elements, self.lines, strict=True)):
            if isinstance(e, Tank):
                out.append(0.0)
            elif isinstance(e, Pump):
                dh = self.pump_head(e, flow) * e.pushes
                if throttle is not None and throttle[0] == e.name:
                    dh -= throttle[1] * flow * abs(flow)
                out.append(dh)
            elif isinstance(e, VALVE_LIKE):
                rel = 1.0 if openings is None else openings.get(e.name, 1.0)
                area = e.flow_area * rel
                if np.ndim(area) == 0 and area <= 0.0:
                    out.append(-math.copysign(math.inf, flow) if flow else 0.0)
                else:
                    out.append(-flow * abs(flow) / (2.0 * G * area * area))
            elif ln.length > 0.0:
                ff = self.ff[i] if fixed_friction else self.friction_factor(i, flow)
                assert ff is not None
                v = flow / ln.area
                out.append(-friction.head_loss(ff, ln.length, ln.diameter, v))
            else:
                out.append(0.0)
        return out

    def residual(self, flow: float | np.ndarray, **kw: object) -> float | np.ndarray:
        """Head left over at the carrier tank: positive means the route could pass more."""
        return self.h_shore + sum(self.changes(flow, **kw)) - self.h_carrier  # type: ignore[arg-type]

    def flow_bound(self) -> float:
        """A flow magnitude beyond any operating point of the route [m^3/s]."""
        q = 0.0
        for e in self.route.elements:
            if isinstance(e, Pump) and self.running[e.name] > 0:
                h0, h1, h2 = self.curves[e.name]
                # run-out: where the fitted curve reaches zero head
                q = max(q, _runout(h0, h1, h2) * self.running[e.name])
        if q == 0.0:
            # gravity: free outflow over the head difference through the largest bore or valve
            dh = abs(self.h_shore - self.h_carrier) + 1.0
            amax = max(
                [ln.area for ln in self.lines]
                + [e.flow_area for e in self.route.elements if isinstance(e, VALVE_LIKE)]
            )
            q = amax * math.sqrt(2.0 * G * dh) * 1.5
        return q


def _runout(h0: float, h1: float, h2: float) -> float:
    """Flow where ``h0 + h1 q + h2 q^2`` falls to zero head [m^3/s] (largest positive root)."""
    roots = np.roots([h2, h1, h0]) if h2 != 0.0 else np.array([-h0 / h1])
    real = [r.real for r in np.atleast_1d(roots) if abs(r.imag) < 1e-12 and r.real > 0.0]
    if not real:
        raise SteadyStateError("a pump curve never falls to zero head; give more curve points")
    return max(real)


def _root(fn: Callable[[float], float], lo: float, hi: float) -> float:
    return float(brentq(fn, lo, hi, xtol=1e-10, rtol=1e-12, maxiter=200))


def steady_state(
    route: Route, fluid: Fluid, case: Case, atmosphere_abs: float, rate: float | None = None
) -> SteadyState:
    """Operating point of ``case`` on ``route`` carrying ``fluid``.

    Parameters
    ----------
    route, fluid, case : model objects
    atmosphere_abs : site atmospheric pressure [Pa]
    rate : transfer rate to hold [m^3/s]; default the case's own ``rate``

    Raises
    ------
    SteadyStateError
        when no flow is possible as the case is set, or a requested rate is unreachable
        (the message gives the reachable rate).
    """
    bal = _Balance(route, fluid, case, atmosphere_abs)
    rate = case.rate if rate is None else rate
    if bal.blocked and bal.direction == 0:
        raise SteadyStateError(
            f"case {case.name!r}: no pump runs and pumps {', '.join(bal.blocked)} block the "
            "line; run at least one unit"
        )
    if bal.blocked and bal.direction != 0:
        # a stopped pump station in line blocks the route (its check valve holds)
        raise SteadyStateError(
            f"case {case.name!r}: pumps {', '.join(bal.blocked)} are stopped in the line; "
            "a stopped station blocks the flow in this model"
        )
    direction = bal.direction
    if direction == 0:
        diff = bal.h_shore - bal.h_carrier
        if abs(diff) < 1e-9:
            raise SteadyStateError(
                f"case {case.name!r}: no pump runs and the tanks stand level; no flow"
            )
        direction = 1 if diff > 0 else -1

    bound = bal.flow_bound() * direction

    def res(q: float) -> float:
        return bal.residual(q)

    r0 = res(0.0) * direction
    if r0 <= 0.0:
        raise SteadyStateError(
            f"case {case.name!r}: the running pumps cannot overcome the static head "
            f"({-r0:.1f} m short at zero flow)"
        )
    # widen the bracket until the head balance changes sign (gravity may add to the pumps)
    for _ in range(60):
        if res(bound) * direction < 0.0:
            break
        bound *= 2.0
    else:
        raise SteadyStateError(
            f"case {case.name!r}: no operating point found; check the pump curves and levels"
        )
    natural = _root(res, min(0.0, bound), max(0.0, bound))

    throttle_at = None
    throttled = 0.0
    flow = natural
    if rate is not None:
        target = rate * direction
        excess = res(target) * direction
        if excess < -1e-9:
            raise SteadyStateError(
                f"case {case.name!r}: rate {rate * 3600:.0f} m^3/h is not reachable; the route "
                f"passes at most {abs(natural) * 3600:.0f} m^3/h as set"
            )
        flow = target
        throttled = max(excess, 0.0)
        if throttled > 0.0:
            running_pumps = [
                e.name for e in route.elements if isinstance(e, Pump) and bal.running[e.name] > 0
            ]
            if not running_pumps:
                raise SteadyStateError(
                    f"case {case.name!r}: a gravity route passes {abs(natural) * 3600:.0f} m^3/h; "
                    "a lower rate needs a pump or a throttling valve in the route"
                )
            # throttle at the discharge of the pump nearest the source tank
            throttle_at = running_pumps[0] if direction > 0 else running_pumps[-1]

    # fix friction factors at the operating point
    bal.ff = [
        bal.friction_factor(i, flow) if ln.length > 0.0 else None for i, ln in enumerate(bal.lines)
    ]
    k_thr = throttled / (flow * flow) if throttled > 0.0 else 0.0
    changes = bal.changes(
        flow, throttle=(throttle_at, k_thr) if throttle_at else None, fixed_friction=True
    )
    elements = _march(bal, flow, changes)
    pump_heads = {e.name: bal.pump_head(e, flow) for e in route.elements if isinstance(e, Pump)}
    return SteadyState(
        case=case.name,
        route=route.name,
        fluid=fluid,
        flow=flow,
        rate_requested=rate,
        natural_flow=natural,
        throttled_head=throttled,
        throttle_at=throttle_at,
        running=dict(bal.running),
        pump_speeds={name: 1.0 for name in bal.running},
        pump_heads=pump_heads,
        elements=elements,
        lines=bal.lines,
        tank_heads=(bal.h_shore, bal.h_carrier),
        tank_levels=(bal.levels[0], bal.levels[1]),
    )


def _march(bal: _Balance, flow: float, changes: Sequence[float]) -> tuple[ElementState, ...]:
    out = []
    h = bal.h_shore
    for i, (e, ln) in enumerate(zip(bal.route.elements, bal.lines, strict=True)):
        dh = changes[i]
        h_in, h_out = h, h + dh
        xs = np.array([p[0] for p in ln.profile])
        zs = np.array([p[1] for p in ln.profile])
        if ln.length > 0.0:
            hs = h_in + (h_out - h_in) * xs / ln.length
        else:
            hs = np.array([h_out])
        ps = bal.rho_g * (hs - zs)
        imin, imax = int(np.argmin(ps)), int(np.argmax(ps))
        p_in = bal.rho_g * (h_in - ln.z_in)
        p_out = bal.rho_g * (h_out - ln.z_out)
        if isinstance(e, Tank):
            p_in = p_out = bal.rho_g * (h_in - bal.levels[0 if i == 0 else 1])
            ps = np.array([p_in])
            imin = imax = 0
        out.append(
            ElementState(
                name=e.name,
                kind=ln.kind,
                flow=flow,
                velocity=flow / ln.area if ln.area > 0.0 else 0.0,
                head_in=h_in,
                head_out=h_out,
                z_in=ln.z_in,
                z_out=ln.z_out,
                p_in_abs=p_in,
                p_out_abs=p_out,
                p_min_abs=float(ps[imin]),
                x_p_min=float(xs[imin]) if ln.length > 0.0 else 0.0,
                p_max_abs=float(ps[imax]),
                x_p_max=float(xs[imax]) if ln.length > 0.0 else 0.0,
                friction_factor=bal.ff[i],
                wave_speed=ln.wave_speed,
                head_change=dh,
            )
        )
        h = h_out
    return tuple(out)


def quasi_steady_closure(
    route: Route,
    fluid: Fluid,
    case: Case,
    atmosphere_abs: float,
    event: Close,
    times: np.ndarray,
    state: SteadyState | None = None,
) -> np.ndarray:
    """Flow through the route while ``event`` closes its valve, with the pumps still running.

    The installed characteristic: at each time the flow is the steady flow of the route with
    the valve at its travel (its inherent characteristic), the other losses and the pump curves
    as before the trigger and the throttle held fixed. No inertia, no compressibility; this is
    the quasi-steady flow used to find the effective closure time.

    Parameters
    ----------
    times : time after the trigger [s]

    Returns
    -------
    flows : [m^3/s], same shape as ``times``
    """
    state = state or steady_state(route, fluid, case, atmosphere_abs)
    bal = _Balance(route, fluid, case, atmosphere_abs)
    bal.ff = [
        bal.friction_factor(i, state.flow) if ln.length > 0.0 else None
        for i, ln in enumerate(bal.lines)
    ]
    valve = route.element(event.element)
    assert isinstance(valve, Valve | Coupling)
    char = valve.characteristic or valves.inherent_characteristic(valve.valve_type)
    k_thr = state.throttled_head / state.flow**2 if state.throttled_head > 0.0 else 0.0
    throttle = (state.throttle_at, k_thr) if state.throttle_at else None
    q0 = state.flow
    times = np.asarray(times, dtype=float)
    flows = np.zeros_like(times)
    # at no flow the valve takes no head, whatever its opening: one residual serves every time
    r_still = bal.residual(0.0, throttle=throttle, fixed_friction=True)
    if r_still * math.copysign(1.0, q0) <= 0.0:
        return flows  # nothing drives a flow the way it ran
    travels = valves.travel_at(event.travel, event.stroke, times - event.at)
    rels = np.broadcast_to(valves.relative_flow(char, travels), times.shape)
    moving = rels > 0.0  # shut: no flow

    def res(q: np.ndarray, rel: np.ndarray) -> np.ndarray:
        out = bal.residual(q, openings={valve.name: rel}, throttle=throttle, fixed_friction=True)
        return out  # type: ignore[return-value]

    rel = rels[moving]
    lo, hi = (0.0, q0 * 1.0000001) if q0 > 0 else (q0 * 1.0000001, 0.0)
    r_end = res(np.full(rel.shape, hi if q0 > 0 else lo), rel)
    # the valve still passes the whole flow at its travel (as at the start): no root between
    full = r_end * math.copysign(1.0, q0) > 0.0
    q = np.full(rel.shape, q0)
    if np.any(~full):
        # every time at once: Chandrupatla's bracketing method, elementwise (scipy)
        found = find_root(
            res, (lo, hi), args=(rel[~full],), tolerances={"xatol": 1e-10, "xrtol": 1e-12}
        )
        roots = np.asarray(found.x, dtype=float)
        for k in np.flatnonzero(~np.asarray(found.success)):  # not seen; brentq then
            r = float(rel[~full][k])
            roots[k] = _root(lambda x, r=r: float(res(np.asarray(x), np.asarray(r))), lo, hi)
        q[~full] = roots
    flows[moving] = q
    return flows
