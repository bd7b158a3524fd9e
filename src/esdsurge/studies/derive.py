"""What a terminal file implies before any transient: line data, steady states, hand checks.

This is the study behind ``esdsurge lint``. For each case it finds the steady operating point,
checks it against the elements' limits, and makes the hand checks an engineer would make first:
the instant-closure Joukowsky rise at the first closing valve, the effective closure time of that
valve from its installed characteristic, and the Joukowsky/Michaud estimate for that time.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from esdsurge.errors import EsdsurgeError
from esdsurge.limits import Basis, ResolvedLimits, resolve
from esdsurge.lineup import LineData, sections
from esdsurge.model import Case, Close, Fluid, G, Release, Route, Tank, Terminal
from esdsurge.physics import handcalc
from esdsurge.steady import SteadyState, quasi_steady_closure, steady_state


@dataclass(frozen=True)
class HandChecks:
    """Hand checks at a case's first closing element.

    valve : the element; governing : the element on the liquid side with the largest
        rho a V (used for the instant-closure rise); side_length : line length from it back to
        the source tank along the
        flow [m]; side_period : 2 L / a of that side [s]; wave_speed : equivalent wave speed of
        that side, L / sum(L_i / a_i) [m/s]; velocity : in the governing element [m/s];
        local_wave_speed : of that element [m/s]
    joukowsky_instant : rho a V for an instant stop [Pa]
    effective_closure : Q0 / max|dQ/dt| of the quasi-steady closure [s]
    stroke : the valve's stroke (or the coupling's closing time) [s]
    estimate : Joukowsky (rapid) or Michaud (slow) rise for the effective closure [Pa]
    regime : ``"rapid"`` when the effective closure is within the side's period, else ``"slow"``
    """

    valve: str
    governing: str
    side_length: float
    side_period: float
    wave_speed: float
    local_wave_speed: float
    velocity: float
    joukowsky_instant: float
    effective_closure: float
    stroke: float
    estimate: float
    regime: str


@dataclass(frozen=True)
class SteadyBreach:
    """An element whose steady pressure is already outside a limit."""

    element: str
    what: str  # "max" or "min"
    pressure_abs: float  # [Pa]
    limit_abs: float  # [Pa]
    basis: Basis


@dataclass(frozen=True)
class CaseDerived:
    case: Case
    fluid: Fluid
    steady: SteadyState | None
    problem: str | None
    hand: HandChecks | None
    limits: dict[str, ResolvedLimits]
    breaches: tuple[SteadyBreach, ...]


@dataclass(frozen=True)
class RouteDerived:
    route: Route
    product: str
    lines: tuple[LineData, ...]

    @property
    def period(self) -> float:
        """Pipeline period of the whole route, 2 sum(L_i / a_i) [s]."""
        ln = [x for x in self.lines if x.wave_speed]
        return handcalc.pipeline_period([x.length for x in ln], [x.wave_speed for x in ln])


@dataclass(frozen=True)
class Derived:
    terminal: Terminal
    routes: dict[str, RouteDerived]
    cases: tuple[CaseDerived, ...]


def first_closing_event(case: Case) -> Close | Release | None:
    """The case's first closing event (earliest ``at``; file order breaks ties)."""
    closing = [e for e in case.events if isinstance(e, Close | Release)]
    if not closing:
        return None
    return min(closing, key=lambda e: e.at)


def _as_close(route: Route, event: Close | Release) -> Close:
    """A release seen as a linear closure over the coupling's closing time."""
    if isinstance(event, Close):
        return event
    coupling = route.element(event.element)
    return Close(element=event.element, at=event.at, stroke=coupling.closing_time)  # type: ignore[attr-defined]


def hand_checks(
    terminal: Terminal, case: Case, fluid: Fluid, state: SteadyState
) -> HandChecks | None:
    """Hand checks at the case's first closing element, or ``None`` if nothing closes."""
    event = first_closing_event(case)
    if event is None:
        return None
    route = terminal.routes[case.route]
    close = _as_close(route, event)
    lines = state.lines
    iv = route.index(close.element)
    # the side the liquid comes from: towards the shore for flow to the carrier
    if state.flow >= 0.0:
        side = [ln for ln in lines[:iv] if ln.wave_speed]
    else:
        side = [ln for ln in lines[iv + 1 :] if ln.wave_speed]
    if not side:
        return None
    length = sum(ln.length for ln in side)
    travel_time = sum(ln.length / ln.wave_speed for ln in side)  # type: ignore[operator]
    a_eq = length / travel_time
    rho = fluid.density

    # instant closure: the largest rho a V among the elements on the liquid side (a short hose
    # next to the valve passes the stiffer line's rise on within a few milliseconds)
    def rise(ln: LineData) -> float:
        assert ln.wave_speed is not None
        return handcalc.joukowsky_pressure(rho, ln.wave_speed, abs(state.flow) / ln.area)

    up = max(side, key=rise)
    assert up.wave_speed is not None
    v = abs(state.flow) / up.area
    dp_instant = rise(up)
    horizon = close.at + close.stroke * 1.05
    times = np.linspace(0.0, horizon, 801)
    flows = quasi_steady_closure(
        route, fluid, case, terminal.atmosphere_abs, close, times, state=state
    )
    t_eff = handcalc.effective_closure_time(times, np.abs(flows))
    period = 2.0 * travel_time
    if t_eff <= period:
        estimate = dp_instant
    else:
        # Michaud for a series line: dH = 2 sum(L_i V_i) / (g t_c), i.e. an equivalent line of
        # length L with the length-weighted velocity; never above the instant rise
        v_eq = sum(ln.length * abs(state.flow) / ln.area for ln in side) / length
        dh = handcalc.michaud_head(length, v_eq, t_eff)
        estimate = min(dp_instant, dh * rho * G)
    return HandChecks(
        valve=close.element,
        governing=up.name,
        side_length=length,
        side_period=period,
        wave_speed=a_eq,
        local_wave_speed=up.wave_speed,
        velocity=v,
        joukowsky_instant=dp_instant,
        effective_closure=t_eff,
        stroke=close.stroke,
        estimate=estimate,
        regime="rapid" if t_eff <= period else "slow",
    )


def steady_breaches(
    state: SteadyState, limits: dict[str, ResolvedLimits], atmosphere_abs: float
) -> tuple[SteadyBreach, ...]:
    """Elements whose steady pressures already break their limits."""
    out = []
    for es in state.elements:
        lim = limits.get(es.name)
        if lim is None or es.kind == Tank.kind:
            continue
        if lim.steady_max_gauge is not None:
            top = lim.steady_max_gauge + atmosphere_abs
            if es.p_max_abs > top:
                out.append(SteadyBreach(es.name, "max", es.p_max_abs, top, lim.max_basis))
        if es.p_min_abs < lim.min_abs:
            out.append(SteadyBreach(es.name, "min", es.p_min_abs, lim.min_abs, lim.min_basis))
    return tuple(out)


def derive_case(terminal: Terminal, case: Case, rate: float | None = None) -> CaseDerived:
    """Steady state, limits and hand checks of one case (``rate`` overrides the case's)."""
    fluid = terminal.products[case.product]
    route = terminal.routes[case.route]
    limits = {e.name: resolve(e, fluid) for e in route.elements if e.kind not in ("tank", "pump")}
    try:
        state = steady_state(route, fluid, case, terminal.atmosphere_abs, rate=rate)
    except EsdsurgeError as exc:
        return CaseDerived(case, fluid, None, str(exc), None, limits, ())
    hand = hand_checks(terminal, case, fluid, state)
    breaches = steady_breaches(state, limits, terminal.atmosphere_abs)
    return CaseDerived(case, fluid, state, None, hand, limits, breaches)


def derive(terminal: Terminal, case_names: list[str] | None = None) -> Derived:
    """Everything ``lint`` shows for ``terminal`` (all cases, or those named)."""
    cases = [c for c in terminal.cases if case_names is None or c.name in case_names]
    routes: dict[str, RouteDerived] = {}
    for name, route in terminal.routes.items():
        users = [c for c in terminal.cases if c.route == name]
        product = users[0].product if users else next(iter(terminal.products))
        routes[name] = RouteDerived(route, product, sections(route, terminal.products[product]))
    return Derived(terminal, routes, tuple(derive_case(terminal, c) for c in cases))
