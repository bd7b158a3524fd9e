"""The grid: from a route, a steady state and a variant to the arrays of the compiled kernel.

Plain Python and numpy, run once per batch member before the time loop.

Layout. A route is tanks at both ends, *lines* (pipes, arms, hoses: elements with length) and
*points* (pumps, valves, couplings, manifolds). Between two consecutive lines, or between a tank
and a line, sits a *connection*: the chain of points there, in route order, sharing one flow.
A pump gets a fixed-loss device at its discharge (the steady state's throttle, zero when there
is none).

Time step. One time step per member; each line gets ``N = max(1, round(L / (a dt)))`` reaches
and runs at ``a_used = L / (N dt)``. :func:`choose_time_step` searches ``dt`` so that the worst
wave-speed adjustment ``|a_used/a - 1|`` over the lines is within a tolerance (default 2 %,
well inside the uncertainty of any wave speed, hoses most of all), taking the largest such
``dt`` under a cap on the nodes. No interpolation is used: interpolation damps the wave fronts
that set the peaks. Resolution floors: at least ``ROUTE_REACHES`` reaches along the route, at
least ``PROFILE_REACHES`` reaches on a line whose profile has an interior point (an arm's apex),
and at least ``STROKE_STEPS`` steps over the shortest closure (each stage of a staged travel, a
pump ramp-down and a relief valve's opening and closing times count as closures).

Elevations. A node's elevation is the profile's at its chainage. Vapour cavities and the lowest
pressure use the highest point of the node's cell (half a reach either side), the highest
pressure its lowest point, so a high point between two nodes is neither missed for column
separation nor flattered.
"""

from __future__ import annotations

import dataclasses
import functools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from esdsurge.errors import InputError, Problem
from esdsurge.lineup import LineData
from esdsurge.model import (
    VALVE_LIKE,
    Accumulator,
    Case,
    Close,
    Coupling,
    Element,
    Event,
    Fluid,
    G,
    Hose,
    Manifold,
    Pipe,
    Pump,
    Ramp,
    Release,
    Relief,
    Route,
    Tank,
    Trip,
    Valve,
)
from esdsurge.physics import mitigations
from esdsurge.physics import pumps as pump_physics
from esdsurge.physics import valves as valve_physics

from .codes import (
    A_C,
    A_N,
    A_R,
    A_V0,
    A_VTOT,
    A_Z,
    B_OFF,
    DEV_ACCUM,
    DEV_LOSS,
    DEV_POINT,
    DEV_PUMP,
    DEV_RELIEF,
    DEV_VALVE,
    L_K,
    N_PAR,
    P_CHECK,
    P_H0,
    P_H1,
    P_H2,
    P_JW2,
    P_MODE,
    P_PUSHES,
    P_QBEP,
    P_RHOG_ETA,
    P_S0,
    P_TAU,
    P_TTRIP,
    P_UNITS,
    R_AREA,
    R_HBACK,
    R_HFULL,
    R_HSET,
    R_RESEAT,
    R_TCLOSE,
    R_TOPEN,
    RUNDOWN_ANALYTIC,
    RUNDOWN_RAMP,
    RUNDOWN_TORQUE,
)
from .run import Variant

#: at least this many reaches along the whole route
ROUTE_REACHES = 64
#: at least this many reaches on a line whose profile has a point between its ends
PROFILE_REACHES = 8
#: at least this many time steps over the shortest closure
STROKE_STEPS = 100
#: samples per event used to tabulate a valve's effective area in time
TABLE_SAMPLES = 801

#: device kinds that take flow out of the route on a branch
BRANCH_DEVICES = (DEV_RELIEF, DEV_ACCUM)

#: efficiency assumed at the operating point of a pump that gives none [-]
#: (common practice, no source: a typical best efficiency of a process pump of this size)
DEFAULT_PUMP_EFFICIENCY = 0.75


def _problem(element: Element, message: str) -> Problem:
    w = element.where
    return Problem(w.file, w.line, w.path, message)


@dataclass(frozen=True)
class Device:
    """A zero-length device in a connection: ``element`` is its route index; a throttle has
    ``kind == DEV_LOSS`` and the route index of its pump."""

    element: int
    kind: int


@dataclass(frozen=True)
class Connection:
    """The points between line ``left`` and line ``right`` (``-1``: a tank there)."""

    left: int
    right: int
    tank_left: int
    tank_right: int
    devices: tuple[Device, ...]
    first_point: int

    @property
    def active(self) -> bool:
        """Whether any device changes the head or takes flow (else a plain junction)."""
        return any(d.kind != DEV_POINT for d in self.devices)

    @property
    def branches(self) -> tuple[int, int]:
        """Chain positions of its first and one past its last branch device, or (-1, -1)."""
        at = [k for k, d in enumerate(self.devices) if d.kind in BRANCH_DEVICES]
        return (at[0], at[-1] + 1) if at else (-1, -1)


@dataclass(frozen=True)
class Layout:
    """Structure of a route, common to every batch member.

    lines : route indices of the lines, in order
    connections : ``len(lines) + 1`` connections; connection ``c`` ends at line ``c``
    place : per route element, ``("line", l)``, ``("device", c, k, w)`` (devices k .. k + w - 1
        of connection c, chain points k .. k + w; a pump spans itself and its discharge
        throttle, so that its ends are those of the steady state) or ``("tank", c)``
    n_points : chain points in all connections
    pumps : route indices of pumps
    """

    lines: tuple[int, ...]
    connections: tuple[Connection, ...]
    place: tuple[tuple[str, ...], ...]
    n_points: int
    pumps: tuple[int, ...]


def layout(route: Route) -> Layout:
    """Split ``route`` into lines and connections; raise :class:`InputError` if it cannot run."""
    els = route.elements
    problems = []
    if len(els) < 3 or not isinstance(els[0], Tank) or not isinstance(els[-1], Tank):
        problems.append(
            Problem(
                route.where.file,
                route.where.line,
                route.where.path,
                f"route {route.name!r} needs a tank at each end and something between",
            )
        )
    for e in els[1:-1]:
        if isinstance(e, Tank):
            problems.append(_problem(e, "a tank must be the first or the last element"))
    lines = tuple(i for i, e in enumerate(els) if isinstance(e, Pipe | Hose))
    if not lines:
        problems.append(
            Problem(
                route.where.file,
                route.where.line,
                route.where.path,
                f"route {route.name!r} has no pipe, arm or hose: nothing to compute a transient on",
            )
        )
    if problems:
        raise InputError(problems)

    place: list[tuple] = [() for _ in els]
    conns = []
    n_points = 0
    bounds = [0, *lines, len(els) - 1]
    for c in range(len(lines) + 1):
        lo, hi = bounds[c], bounds[c + 1]
        devices: list[Device] = []
        for i in range(lo + 1, hi):
            e = els[i]
            if isinstance(e, Pump):
                pump = Device(i, DEV_PUMP)
                throttle = Device(i, DEV_LOSS)
                devices += [pump, throttle] if e.pushes > 0 else [throttle, pump]
            elif isinstance(e, VALVE_LIKE):
                devices.append(Device(i, DEV_VALVE))
            elif isinstance(e, Manifold):
                devices.append(Device(i, DEV_POINT))
            elif isinstance(e, Relief):
                devices.append(Device(i, DEV_RELIEF))
            elif isinstance(e, Accumulator):
                devices.append(Device(i, DEV_ACCUM))
            else:  # pragma: no cover - the model has no other point kinds
                raise InputError([_problem(e, f"element kind {e.kind!r} cannot be simulated")])
        at = [k for k, d in enumerate(devices) if d.kind in BRANCH_DEVICES]
        if at and at[-1] - at[0] + 1 != len(at):
            between = ", ".join(
                repr(els[d.element].name)
                for d in devices[at[0] : at[-1]]
                if d.kind not in BRANCH_DEVICES and d.kind != DEV_LOSS
            )
            one, two = els[devices[at[0]].element], els[devices[at[-1]].element]
            problems.append(
                _problem(
                    two,
                    f"{one.name!r} and {two.name!r} "
                    f"branch off at two points with {between} between them and no pipe, arm or "
                    "hose: put them side by side, or a line between them",
                )
            )
        first = n_points if devices else -1
        for k, d in enumerate(devices):
            if d.kind == DEV_PUMP:
                # with its throttle, on whichever side the discharge is
                k0 = k if els[d.element].pushes > 0 else k - 1  # type: ignore[attr-defined]
                place[d.element] = ("device", c, k0, 2)
            elif d.kind != DEV_LOSS:
                place[d.element] = ("device", c, k, 1)
        n_points += len(devices) + 1 if devices else 0
        conns.append(
            Connection(
                left=c - 1 if c > 0 else -1,
                right=c if c < len(lines) else -1,
                tank_left=0 if c == 0 else -1,
                tank_right=len(els) - 1 if c == len(lines) else -1,
                devices=tuple(devices),
                first_point=first,
            )
        )
    if problems:
        raise InputError(problems)
    for ln, i in enumerate(lines):
        place[i] = ("line", ln)
    place[0] = ("tank", 0)
    place[-1] = ("tank", len(lines))
    pumps = tuple(i for i, e in enumerate(els) if isinstance(e, Pump))
    return Layout(tuple(lines), tuple(conns), tuple(place), n_points, pumps)


def choose_time_step(
    travel: Sequence[float],
    *,
    min_reaches: Sequence[int],
    dt_max: float,
    max_nodes: int,
    tolerance: float,
) -> tuple[float, np.ndarray]:
    """Time step and reaches per line for a common-time-step grid.

    Parameters
    ----------
    travel : one-way travel time L/a of each line [s]
    min_reaches : fewest reaches allowed on each line [-]
    dt_max : largest time step allowed [s]
    max_nodes : cap on the number of nodes, sum(N + 1) (the resolution floors win over it)
    tolerance : acceptable worst wave-speed adjustment |L/(N dt a) - 1| [-]

    Returns
    -------
    dt : [s]
    n : reaches per line [-]

    Notes
    -----
    Candidates are ``dt = travel_k / n`` (each exact for one line) between the floor set by the
    node cap and ``dt_max``; the largest candidate whose worst adjustment is within the
    tolerance wins, else the one with the smallest worst adjustment.

    Examples
    --------
    Lines of 1 s and 0.26 s one-way travel time:

    >>> travel = np.array([1.0, 0.26])
    >>> dt, n = choose_time_step(travel, min_reaches=[1, 1], dt_max=0.1, max_nodes=500,
    ...                          tolerance=0.02)
    >>> round(dt, 4), n.tolist(), np.round(travel / (n * dt) - 1.0, 4).tolist()
    (0.0526, [19, 5], [0.0, -0.012])
    """
    dt, n = _time_step(
        tuple(float(x) for x in travel),
        tuple(float(x) for x in min_reaches),
        float(dt_max),
        int(max_nodes),
        float(tolerance),
    )
    return dt, np.array(n, dtype=np.int64)


@functools.lru_cache(maxsize=256)
def _time_step(
    travel: tuple[float, ...],
    min_reaches: tuple[float, ...],
    dt_max: float,
    max_nodes: int,
    tolerance: float,
) -> tuple[float, tuple[int, ...]]:
    """:func:`choose_time_step`, remembered: the members of a search share their grid, and
    the search over the candidates costs more than the rest of a member's set-up."""
    tr = np.asarray(travel, dtype=float)
    nmin = np.asarray(min_reaches, dtype=float)
    hi = min(dt_max, float(np.min(tr / nmin)))
    room = max_nodes - 2 * len(tr)
    lo = float(tr.sum()) / room if room > 0 else hi
    lo = min(lo, hi)
    cands = [hi]
    for tk in tr:
        n_first = max(1, math.ceil(tk / hi - 1e-9))
        n_last = max(n_first, math.floor(tk / lo + 1e-9))
        n = np.arange(n_first, n_last + 1, dtype=float)
        cands.extend((tk / n).tolist())
    c = np.unique(np.asarray(cands))
    c = c[(c <= hi * (1 + 1e-12)) & (c >= lo * (1 - 1e-12))]
    if c.size == 0:
        c = np.array([hi])
    n = np.maximum(1.0, np.rint(tr[None, :] / c[:, None]))
    err = np.max(np.abs(tr[None, :] / (n * c[:, None]) - 1.0), axis=1)
    ok = np.flatnonzero(err <= tolerance)
    k = ok[np.argmax(c[ok])] if ok.size else int(np.argmin(err - 1e-12 * c))
    return float(c[k]), tuple(int(x) for x in n[k])


@dataclass
class Member:
    """Arrays of one batch member (see :func:`build_member`)."""

    dt: float
    reaches: np.ndarray  # per line
    wave_speed: np.ndarray  # per line, asked [m/s]
    wave_speed_used: np.ndarray  # per line [m/s]
    line_start: np.ndarray
    line_b: np.ndarray
    line_r: np.ndarray
    x: np.ndarray  # per node, chainage within its line [m]
    x_route: np.ndarray  # per node, chainage along the route [m]
    z: np.ndarray
    z_low: np.ndarray
    z_high: np.ndarray
    node_line: np.ndarray
    hv: np.ndarray
    h_init: np.ndarray
    q_init: np.ndarray
    flow: float
    dev_par: np.ndarray
    tables: list[tuple[np.ndarray, np.ndarray]]
    point_z: np.ndarray
    probe_ref: np.ndarray
    mismatch: float
    storage: np.ndarray  # per node, stored volume per head [m^2]
    t_end: float  # end of the last event [s]
    period: float  # pipeline period 2 sum(L/a) [s]


def _cell_extremes(
    profile: Sequence[tuple[float, float]], x: np.ndarray, half: float, length: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Elevation at ``x`` and its lowest and highest value over [x - half, x + half]."""
    px = np.array([p[0] for p in profile], dtype=float)
    pz = np.array([p[1] for p in profile], dtype=float)
    z = np.interp(x, px, pz)
    a = np.clip(x - half, 0.0, length)
    b = np.clip(x + half, 0.0, length)
    za, zb = np.interp(a, px, pz), np.interp(b, px, pz)
    low, high = np.minimum(za, zb), np.maximum(za, zb)
    for xi, zi in zip(px, pz, strict=True):
        inside = (xi > a) & (xi < b)
        low = np.where(inside, np.minimum(low, zi), low)
        high = np.where(inside, np.maximum(high, zi), high)
    return z, low, high


@functools.lru_cache(maxsize=256)
def _line_nodes(
    profile: tuple[tuple[float, float], ...], n: int, dx: float, length: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Chainages of a line's ``n + 1`` nodes and their elevations (:func:`_cell_extremes`),
    remembered (read-only arrays): the members of a search share their grid."""
    xs = np.arange(n + 1) * dx
    xs[-1] = length
    out = (xs, *_cell_extremes(profile, xs, 0.5 * dx, length))
    for arr in out:
        arr.flags.writeable = False
    return out


def member_events(case: Case, variant: Variant) -> tuple[Event, ...]:
    """The case's events with the variant's strokes and travel curves applied, and the
    mitigations it takes out undone (a ramp-down becomes a trip, a staged travel linear)."""
    strokes = dict(variant.strokes)
    travels = dict(variant.travels)
    out: list[Event] = []
    for ev in case.events:
        if isinstance(ev, Close):
            stroke = strokes.get(ev.element, ev.stroke * variant.stroke_scale)
            travel = travels.get(ev.element, ev.travel)
            if ev.element in variant.without:
                travel = LINEAR_TRAVEL
            out.append(dataclasses.replace(ev, stroke=stroke, travel=travel))
        elif isinstance(ev, Ramp) and ev.element in variant.without:
            out.append(Trip(element=ev.element, at=ev.at, where=ev.where))
        else:
            out.append(ev)
    return tuple(out)


#: a valve's travel without stages: open to shut at a steady rate
LINEAR_TRAVEL = ((0.0, 1.0), (1.0, 0.0))


def _closure_time(route: Route, ev: object, strokes: dict[str, float]) -> float | None:
    if isinstance(ev, Close):
        return ev.stroke
    if isinstance(ev, Release):
        el = route.element(ev.element)
        assert isinstance(el, Coupling)
        return strokes.get(el.name, el.closing_time)
    return None


#: what each event acts on: action -> (element kinds, what to call them in a message)
_EVENT_TARGETS: dict[type, tuple[tuple[type, ...], str]] = {
    Close: ((Valve, Coupling), "a valve"),
    Release: ((Coupling,), "a coupling"),
    Trip: ((Pump,), "a pump"),
    Ramp: ((Pump,), "a pump"),
}


def _check_events(route: Route, events: Sequence[Event]) -> None:
    problems = []
    names = {e.name: e for e in route.elements}
    for ev in events:
        w = ev.where
        el = names.get(ev.element)
        kinds, wanted = _EVENT_TARGETS.get(type(ev), ((Element,), "an element"))
        if el is None:
            message = f"no element {ev.element!r} in route {route.name!r}"
        elif not isinstance(el, kinds):
            message = f"{ev.action!r} needs {wanted}; {el.name!r} is a {el.kind}"
        else:
            continue
        problems.append(Problem(w.file, w.line, w.path, message))
    if problems:
        raise InputError(problems)


def valve_table(
    element: Valve | Coupling,
    events: Sequence[object],
    variant: Variant,
) -> tuple[np.ndarray, np.ndarray]:
    """Effective flow area of a valve or coupling in time: (times [s], A_eff [m^2]).

    The travel follows each ``close``/``release`` event on the element (the least open of them
    at any time); the relative flow coefficient comes from the characteristic
    (``physics.valves.relative_flow``), raised to ``variant.characteristic_power``.
    """
    custom = dict(variant.characteristics)
    if element.name in custom:
        char = tuple(custom[element.name])
    elif element.characteristic:
        char = element.characteristic
    else:
        char = valve_physics.inherent_characteristic(element.valve_type)
    strokes = dict(variant.strokes)
    moves = []
    for ev in events:
        if getattr(ev, "element", None) != element.name:
            continue
        if isinstance(ev, Close):
            moves.append((ev.at, ev.stroke, ev.travel))
        elif isinstance(ev, Release):
            closing = strokes.get(element.name, getattr(element, "closing_time", 0.0))
            moves.append((ev.at, closing, ((0.0, 1.0), (1.0, 0.0))))
    if not moves:
        return np.array([0.0]), np.array([element.flow_area])
    return _area_table(
        float(element.flow_area),
        tuple(tuple(p) for p in char),
        tuple(
            (float(at), float(stroke), tuple(tuple(p) for p in travel))
            for at, stroke, travel in moves
        ),
        float(variant.characteristic_power),
    )


@functools.lru_cache(maxsize=256)
def _area_table(
    flow_area: float,
    char: tuple[tuple[float, float], ...],
    moves: tuple[tuple[float, float, tuple[tuple[float, float], ...]], ...],
    power: float,
) -> tuple[np.ndarray, np.ndarray]:
    """The table of :func:`valve_table`, remembered (read-only arrays): the valves whose
    stroke a search does not vary have the same table in every member. A single move is the
    table of :func:`_unit_table` stretched to its stroke (a search varies the stroke)."""
    if len(moves) == 1 and moves[0][1] > 0.0:
        at, stroke, travel = moves[0]
        frac, phi = _unit_table(char, travel, power)
        t = np.concatenate([[min(at, 0.0) - 1.0, np.nextafter(at, -np.inf)], at + stroke * frac])
        out = t, flow_area * phi
        for arr in out:
            arr.flags.writeable = False
        return out
    times = []
    for at, stroke, travel in moves:
        if stroke > 0.0:
            frac = np.union1d(np.linspace(0.0, 1.0, TABLE_SAMPLES), [p[0] for p in travel])
            times.append(at + stroke * frac)
        times.append(np.array([np.nextafter(at, -np.inf), at]))
    t = np.unique(np.concatenate(times))
    travel_now = np.ones_like(t)
    for at, stroke, travel in moves:
        travel_now = np.minimum(travel_now, valve_physics.travel_at(travel, stroke, t - at))
    phi = np.asarray(valve_physics.relative_flow(char, travel_now), dtype=float)
    if power != 1.0:
        phi = phi**power
    area = flow_area * phi
    # the first row holds the open area before the first move
    out = np.concatenate([[min(t[0], 0.0) - 1.0], t]), np.concatenate([[flow_area], area])
    for arr in out:
        arr.flags.writeable = False
    return out


@functools.lru_cache(maxsize=64)
def _unit_table(
    char: tuple[tuple[float, float], ...], travel: tuple[tuple[float, float], ...], power: float
) -> tuple[np.ndarray, np.ndarray]:
    """Relative flow coefficient of one move against the fraction of its stroke: the
    fractions (``TABLE_SAMPLES`` evenly, and the travel curve's points) and the coefficients,
    led by two open rows (before the table, and just before the move starts)."""
    frac = np.union1d(np.linspace(0.0, 1.0, TABLE_SAMPLES), [p[0] for p in travel])
    x = np.concatenate([[1.0, 1.0], np.asarray(valve_physics.travel_at(travel, 1.0, frac))])
    phi = np.asarray(valve_physics.relative_flow(char, x), dtype=float)
    if power != 1.0:
        phi = phi**power
    return frac, phi


def _scale(variant: Variant, line: LineData) -> float:
    by_key = dict(variant.wave_speed_scale)
    if line.name in by_key:
        return by_key[line.name]
    return by_key.get(line.kind, 1.0)


def build_member(
    route: Route,
    fluid: Fluid,
    atmosphere_abs: float,
    lay: Layout,
    steady: object,
    events: Sequence[object],
    variant: Variant,
    *,
    rundown: str,
    dt_max: float | None,
    max_nodes: int,
    tolerance: float,
) -> Member:
    """Grid, initial state and device data of one batch member.

    ``steady`` is the member's steady state (``esdsurge.steady.SteadyState``): its flow,
    friction factors, throttle, running units and pump speeds are used; the initial heads are
    walked again with the engine's own relations, and what is left over at the carrier tank is
    reported as ``mismatch`` [m].
    """
    els = route.elements
    rho_g = fluid.density * G
    lines = steady.lines  # type: ignore[attr-defined]
    states = steady.elements  # type: ignore[attr-defined]
    q0 = float(steady.flow)  # type: ignore[attr-defined]
    _check_events(route, events)

    length = np.array([lines[i].length for i in lay.lines])
    diam = np.array([lines[i].diameter for i in lay.lines])
    area = np.array([lines[i].area for i in lay.lines])
    a_ask = np.array(
        [lines[i].wave_speed * _scale(variant, lines[i]) for i in lay.lines], dtype=float
    )
    ff = np.array([states[i].friction_factor or 0.0 for i in lay.lines], dtype=float)
    travel = length / a_ask

    # resolution floors
    min_reach = np.array([PROFILE_REACHES if len(lines[i].profile) > 2 else 1 for i in lay.lines])
    limit = float(travel.sum()) / ROUTE_REACHES
    strokes = dict(variant.strokes)
    closures = [_closure_time(route, ev, strokes) for ev in events]
    # each stage of a staged travel is resolved like a closure of its own
    closures += [
        ev.stroke * (f1 - f0)
        for ev in events
        if isinstance(ev, Close)
        for (f0, x0), (f1, x1) in zip(ev.travel, ev.travel[1:], strict=False)
        if x1 != x0 and f1 > f0
    ]
    closures += [ev.ramp_time for ev in events if isinstance(ev, Ramp)]
    for e in els:
        if isinstance(e, Relief) and e.name not in variant.without:
            closures += [e.opening_time, e.closing_time]
    closures = [s for s in closures if s is not None and s > 0.0]
    if closures:
        limit = min(limit, min(closures) / STROKE_STEPS)
    if dt_max is not None:
        limit = min(limit, dt_max)
        max_nodes = max(max_nodes, int(travel.sum() / dt_max) + 2 * len(travel) + 1)
    dt, n = choose_time_step(
        travel, min_reaches=min_reach, dt_max=limit, max_nodes=max_nodes, tolerance=tolerance
    )
    a_used = length / (n * dt)
    dx = length / n
    b_line = a_used / (G * area)
    r_line = ff * dx / (2.0 * G * diam * area * area)

    # nodes
    starts = np.concatenate([[0], np.cumsum(n + 1)[:-1]]).astype(np.int64)
    n_nodes = int(np.sum(n + 1))
    x = np.empty(n_nodes)
    z = np.empty(n_nodes)
    z_low = np.empty(n_nodes)
    z_high = np.empty(n_nodes)
    node_line = np.empty(n_nodes, dtype=np.int64)
    storage = np.empty(n_nodes)
    route_x0 = 0.0
    x_route = np.empty(n_nodes)
    for ln, i in enumerate(lay.lines):
        s = starts[ln]
        xs, zz, lo, hi = _line_nodes(
            tuple(tuple(p) for p in lines[i].profile), int(n[ln]), float(dx[ln]), float(length[ln])
        )
        sl = slice(s, s + n[ln] + 1)
        x[sl], z[sl], z_low[sl], z_high[sl] = xs, zz, lo, hi
        x_route[sl] = route_x0 + xs
        node_line[sl] = ln
        w = np.full(n[ln] + 1, dx[ln])
        w[0] = w[-1] = 0.5 * dx[ln]
        storage[sl] = w * G * area[ln] / a_used[ln] ** 2
        route_x0 += length[ln]
    hv = z_high + fluid.vapour_pressure_abs / rho_g

    # devices
    devices = [d for c in lay.connections for d in c.devices]
    dev_par = np.zeros((len(devices), N_PAR))
    tables: list[tuple[np.ndarray, np.ndarray]] = []
    running = dict(getattr(steady, "running", {}))
    speeds = dict(getattr(steady, "pump_speeds", {}))
    throttle_at = getattr(steady, "throttle_at", None)
    throttled = float(getattr(steady, "throttled_head", 0.0) or 0.0)
    trips: dict[str, tuple[float, float | None]] = {}  # pump -> (time, ramp time or None)
    for ev in events:
        if isinstance(ev, Trip | Ramp) and ev.element not in trips:
            trips[ev.element] = (ev.at, ev.ramp_time if isinstance(ev, Ramp) else None)
    t_end = 0.0
    for ev, s in zip(events, [_closure_time(route, ev, strokes) for ev in events], strict=True):
        t_end = max(t_end, ev.at + (s or 0.0))  # type: ignore[attr-defined]
    for k, d in enumerate(devices):
        e = els[d.element]
        if d.kind == DEV_VALVE:
            assert isinstance(e, Valve | Coupling)
            tables.append(valve_table(e, events, variant))
            continue
        tables.append((np.array([0.0]), np.array([0.0])))
        if d.kind == DEV_LOSS:
            if throttle_at == e.name and throttled > 0.0:
                dev_par[k, L_K] = throttled / (q0 * q0)
        elif d.kind == DEV_PUMP:
            assert isinstance(e, Pump)
            par, tau = _pump_parameters(e, fluid, q0, running, speeds, trips, rundown)
            dev_par[k] = par
            if e.name in trips:
                ramps = trips[e.name][1] is not None
                t_end = max(t_end, trips[e.name][0] + (tau if ramps else 3.0 * tau))

    # chain point elevations: the neighbouring line end
    point_z = np.zeros(lay.n_points)
    for c in lay.connections:
        if c.first_point < 0:
            continue
        if c.left >= 0:
            zc = z[starts[c.left] + n[c.left]]
        else:
            zc = z[starts[c.right]]
        point_z[c.first_point : c.first_point + len(c.devices) + 1] = zc

    # initial heads: walk the route with the engine's own relations
    h_shore, h_carrier = route_tank_heads(route, steady, rho_g, atmosphere_abs)
    h = h_shore
    h_init = np.empty(n_nodes)
    k = 0
    for c in lay.connections:
        for pos, d in enumerate(c.devices):
            if d.kind in BRANCH_DEVICES:
                zp = point_z[c.first_point + pos]
                e = els[d.element]
                if e.name in variant.without:
                    dev_par[k, B_OFF] = 1.0
                else:
                    dev_par[k] = _branch_parameters(e, h, zp, fluid, atmosphere_abs)
            h += _device_head(els[d.element], d.kind, dev_par[k], tables[k], q0)
            k += 1
        if c.right >= 0:
            ln = c.right
            s = starts[ln]
            h_init[s : s + n[ln] + 1] = h - np.arange(n[ln] + 1) * r_line[ln] * q0 * abs(q0)
            h = h_init[s + n[ln]]
    mismatch = h - h_carrier

    # probes: two per element (shore end, carrier end)
    probe_ref = np.zeros(2 * len(els), dtype=np.int64)
    for i, pl in enumerate(lay.place):
        if pl[0] == "line":
            ln = pl[1]
            probe_ref[2 * i] = starts[ln]
            probe_ref[2 * i + 1] = starts[ln] + n[ln]
        elif pl[0] == "device":
            c = lay.connections[pl[1]]
            probe_ref[2 * i] = c.first_point + pl[2]
            probe_ref[2 * i + 1] = c.first_point + pl[2] + pl[3]

    return Member(
        dt=dt,
        reaches=n,
        wave_speed=a_ask,
        wave_speed_used=a_used,
        line_start=starts,
        line_b=b_line,
        line_r=r_line,
        x=x,
        x_route=x_route,
        z=z,
        z_low=z_low,
        z_high=z_high,
        node_line=node_line,
        hv=hv,
        h_init=h_init,
        q_init=np.full(n_nodes, q0),
        flow=q0,
        dev_par=dev_par,
        tables=tables,
        point_z=point_z,
        probe_ref=probe_ref,
        mismatch=float(mismatch),
        storage=storage,
        t_end=t_end,
        period=2.0 * float(travel.sum()),
    )


def tank_head(tank: Element, rho_g: float, atmosphere_abs: float) -> float:
    assert isinstance(tank, Tank)
    return tank.surface + (tank.gas_pressure_gauge + atmosphere_abs) / rho_g


def route_tank_heads(
    route: Route, steady: object, rho_g: float, atmosphere_abs: float
) -> tuple[float, float]:
    """Heads of the shore and carrier tanks [m] as the steady state sees them (a line ending
    above the liquid of the tank it fills discharges at the tank's gas pressure at its end),
    or from the tanks' surfaces when the steady state does not say."""
    heads = getattr(steady, "tank_heads", None)
    if heads is not None and all(math.isfinite(h) for h in heads):
        return float(heads[0]), float(heads[1])
    els = route.elements
    return tank_head(els[0], rho_g, atmosphere_abs), tank_head(els[-1], rho_g, atmosphere_abs)


def _device_head(
    e: Element, kind: int, par: np.ndarray, table: tuple[np.ndarray, np.ndarray], q: float
) -> float:
    """Head gained across a device at flow ``q`` before the trigger [m] (as the kernel)."""
    if kind == DEV_LOSS:
        return -par[L_K] * q * abs(q)
    if kind == DEV_VALVE:
        a = table[1][0]
        return -q * abs(q) / (2.0 * G * a * a) if a > 0.0 else 0.0
    if kind == DEV_PUMP:
        s, units, pushes = par[P_S0], par[P_UNITS], par[P_PUSHES]
        x = pushes * q / units
        return pushes * (par[P_H0] * s * s + par[P_H1] * s * x + par[P_H2] * x * abs(x))
    return 0.0


@functools.lru_cache(maxsize=64)
def _fit_curve(curve: tuple[tuple[float, float], ...]) -> tuple[float, float, float]:
    """:func:`esdsurge.physics.pumps.fit_curve`, remembered (it runs for every member)."""
    h0, h1, h2 = pump_physics.fit_curve(curve)
    return float(h0), float(h1), float(h2)


def _pump_parameters(
    pump: Pump,
    fluid: Fluid,
    q0: float,
    running: dict[str, int],
    speeds: dict[str, float],
    trips: dict[str, tuple[float, float | None]],
    rundown: str,
) -> tuple[np.ndarray, float]:
    """Kernel parameters of a pump station and its run-down time constant (a ramp-down: the
    ramp time) [s]."""
    h0, h1, h2 = _fit_curve(tuple(tuple(p) for p in pump.curve))
    units = running.get(pump.name, pump.count)
    if units < 1:
        raise InputError([_problem(pump, "a stopped pump station blocks the line in this model")])
    s0 = float(speeds.get(pump.name, 1.0))
    par = np.zeros(N_PAR)
    par[P_H0], par[P_H1], par[P_H2] = h0, h1, h2
    par[P_UNITS], par[P_PUSHES], par[P_S0] = units, pump.pushes, s0
    par[P_TTRIP] = 1e300  # no trip
    par[P_CHECK] = 1.0 if pump.check_valve else 0.0
    tau = 0.0
    if pump.name in trips and trips[pump.name][1] is not None:
        # a variable-speed drive ramps down: the speed is the drive's, not the inertia's
        at, ramp = trips[pump.name]
        par[P_TTRIP] = at
        par[P_MODE] = RUNDOWN_RAMP
        par[P_TAU] = tau = float(ramp)  # type: ignore[arg-type]
    elif pump.name in trips:
        if pump.rated_speed is None:
            raise InputError(
                [
                    _problem(
                        pump,
                        f"pump {pump.name!r} trips but has no 'speed': the run-down "
                        "needs the rated speed (and 'inertia', or it is estimated)",
                    )
                ]
            )
        q_unit = abs(q0) / units
        head = float(pump_physics.pump_head((h0, h1, h2), q_unit, s0, 1))
        eta = pump.efficiency or DEFAULT_PUMP_EFFICIENCY
        power = pump_physics.shaft_power(fluid.density, q_unit, head, eta)
        w0 = s0 * pump.rated_speed
        inertia = pump.inertia or pump_physics.estimate_inertia(power, pump.rated_speed)
        tau = pump_physics.rundown_time_constant(inertia, w0, power)
        par[P_TTRIP] = trips[pump.name][0]
        par[P_MODE] = RUNDOWN_ANALYTIC if rundown == "analytic" else RUNDOWN_TORQUE
        par[P_TAU] = tau
        par[P_JW2] = inertia * pump.rated_speed**2
        par[P_RHOG_ETA] = fluid.density * G / eta
        par[P_QBEP] = q_unit / s0
    return par, tau


def _branch_parameters(
    e: Element, head: float, z: float, fluid: Fluid, atmosphere_abs: float
) -> np.ndarray:
    """Kernel parameters of a relief valve or an accumulator at a point of head ``head`` [m]
    and elevation ``z`` [m] before the trigger."""
    rho_g = fluid.density * G
    par = np.zeros(N_PAR)
    p0 = rho_g * (head - z)  # absolute pressure at the point before the trigger [Pa]
    if isinstance(e, Relief):
        set_abs = e.set_pressure_gauge + atmosphere_abs
        if p0 >= set_abs:
            raise InputError(
                [
                    _problem(
                        e,
                        f"relief valve {e.name!r} would be open before the trigger: the "
                        f"transfer holds {(p0 - atmosphere_abs) / 1e5:.2f} barg there, at or "
                        f"above its set pressure {e.set_pressure_gauge / 1e5:.2f} barg; raise "
                        "'set_pressure' above the operating pressure",
                    )
                ]
            )
        par[R_HSET] = z + set_abs / rho_g
        par[R_HFULL] = z + (e.full_open_pressure_gauge + atmosphere_abs) / rho_g
        par[R_AREA] = e.flow_area
        par[R_TOPEN] = e.opening_time
        par[R_TCLOSE] = e.closing_time
        par[R_RESEAT] = 1.0 if e.reseats else 0.0
        par[R_HBACK] = z + (e.back_pressure_gauge + atmosphere_abs) / rho_g
    elif isinstance(e, Accumulator):
        v0, p_gas = mitigations.accumulator_charge(
            e.volume, e.precharge_abs, e.precharge_temperature, p0, fluid.temperature
        )
        par[A_C] = p_gas * v0**e.exponent / rho_g
        par[A_N] = e.exponent
        par[A_VTOT] = e.volume
        par[A_R] = e.connection_loss / (2.0 * G * e.connection_area**2)
        par[A_Z] = z
        par[A_V0] = v0
    return par
