"""The highest safe transfer rate of a case (``esdsurge rate``), and the other rate limits.

Surge. The case's ESD runs as set in the file at a range of transfer rates; each rate has its
own steady state (the running pumps throttled to it). A coarse scan of rates from an eighth of
the pumps' reach to the reach runs in one request
(:class:`~esdsurge.studies.batch.Evaluator`), then the boundary is refined between the highest
rate that keeps every limit (the check's verdict, spill limit included) and the lowest one above
it that does not, until they are within ``RESOLUTION`` of each other. The result is the highest
rate below which every rate sampled passes; rates that pass again above a failing one are
reported, not used. Rates above the reach of the running pumps are not possible and are not
run.

Other limits, each from its source (:mod:`esdsurge.physics.ratelimits`):

* the running pumps' capacity: the natural operating point of the route with the case's running
  pumps and no throttling;
* static electricity: for a static accumulator (conductivity unknown or below 50 pS/m), 7 m/s
  in the smallest bore of the route (ISGOTT 5th ed. 11.1.7); when loading a road tanker or rail
  tank car, the v d limit of IEC TS 60079-32-1 in the fill pipe; and, reported beside the
  maximum, ISGOTT's initial rate of 1 m/s in the tank inlets until they are covered;
* the carrier's venting: transfer rate <= venting capacity / 1.25 (IMO MSC/Circ.585 2.7.2.1).

The limit with the lowest rate governs.
"""

from __future__ import annotations

import dataclasses
import math
import time
from collections.abc import Callable
from dataclasses import dataclass

from esdsurge.errors import EsdsurgeError
from esdsurge.model import Case, Element, Pump, Terminal
from esdsurge.physics import ratelimits
from esdsurge.steady import steady_state
from esdsurge.studies.batch import (
    Evaluator,
    Outcome,
    Point,
    boundary_estimate,
    on_lattice,
    points_of,
    refine,
)
from esdsurge.studies.derive import first_closing_event
from esdsurge.studies.spread import NOMINAL, Member, band
from esdsurge.studies.stroke import stroke_of

#: lattice of the searched rates [m^3/h]
STEP_M3H = 1.0
#: coarse scan: this many rates, evenly spaced up to the pumps' reach
COARSE = 8
#: the boundary is refined until the failing and the passing rate are within this share of
#: the rate [-] (or one lattice step)
RESOLUTION = 0.005
#: a bracket narrower than this many lattice steps is halved rather than interpolated
NARROW = 8
MAX_PASSES = 30

SURGE, PUMPS, STATIC, VENTING = "surge", "pumps", "static", "venting"


@dataclass(frozen=True)
class RateLimit:
    """One limit on the transfer rate.

    name : ``surge``, ``pumps``, ``static`` or ``venting``; rate : [m^3/s], or ``None`` when
    the limit leaves no rate; basis : what it is and where it comes from; bound : ``exact``,
    or ``at least`` when the surge holds up to the pumps' reach
    """

    name: str
    rate: float | None
    basis: str
    bound: str = "exact"


@dataclass(frozen=True)
class RateCheck:
    """The rate limits of one case.

    direction : +1 loading (to the carrier), -1 discharging; reach : the running pumps' natural
    flow [m^3/s]; rate_file : the case's rate, or its natural flow [m^3/s]; surge : the surge
    limit (nominal); surge_spread : across the band, or ``None``; limits : every limit;
    rate_max : the lowest of them [m^3/s] (``None`` when one leaves no rate); governed_by :
    its name; initial : ISGOTT's initial rate until the tank inlets are covered, or ``None``;
    points, points_spread : the rates sampled [m^3/h]; notes : what else the engineer should
    know; members : the band; passes, runs : engine passes and member runs; seconds : wall
    time [s]; problem : why no search could run, else ``None``
    """

    case: Case
    direction: int
    reach: float | None
    rate_file: float | None
    surge: RateLimit
    surge_spread: RateLimit | None
    limits: tuple[RateLimit, ...]
    rate_max: float | None
    governed_by: str
    rate_max_spread: float | None
    governed_by_spread: str | None
    initial: RateLimit | None
    points: tuple[Point, ...]
    points_spread: tuple[Point, ...]
    notes: tuple[str, ...]
    members: tuple[Member, ...]
    passes: int
    runs: int
    seconds: float
    problem: str | None = None

    @property
    def ok(self) -> bool:
        """A rate was found that keeps every limit (across the band too, when searched)."""
        found = self.rate_max is not None and self.rate_max > 0.0
        if self.surge_spread is not None:
            found = found and self.rate_max_spread is not None
        return found


@dataclass(frozen=True)
class RateResult:
    terminal: Terminal
    cases: tuple[RateCheck, ...]
    spread: bool

    @property
    def ok(self) -> bool:
        return all(c.ok for c in self.cases)


# --- the limits other than surge --------------------------------------------------------------


def _bore(e: Element) -> float | None:
    return getattr(e, "inside_diameter", None) if e.has_length else None


def other_limits(
    terminal: Terminal, case: Case, direction: int
) -> tuple[list[RateLimit], RateLimit | None, list[str]]:
    """The static-electricity and venting limits of ``case`` (and ISGOTT's initial rate)."""
    route = terminal.routes[case.route]
    fluid = terminal.products[case.product]
    carrier = case.carrier
    kind = carrier.kind if carrier is not None else None
    loading = direction > 0
    out: list[RateLimit] = []
    notes: list[str] = []
    initial = None
    accumulator = ratelimits.is_static_accumulator(fluid.conductivity)
    sigma = (
        "conductivity not given"
        if fluid.conductivity is None
        else f"conductivity {fluid.conductivity * 1e12:g} pS/m"
    )
    lines = [(e, _bore(e)) for e in route.elements if _bore(e)]
    if loading and kind in ("rail car", "road tanker"):
        if carrier is not None and carrier.fill_pipe is not None:
            d, where = carrier.fill_pipe, "the fill pipe"
        else:
            last, d = lines[-1]
            where = f"the fill pipe, taken as {last.name} (the last line before the carrier)"
        v = ratelimits.iec_fill_velocity(d, fluid.conductivity, fluid.sulphur)  # type: ignore[arg-type]
        _, basis = ratelimits.iec_vd_limit(fluid.conductivity, fluid.sulphur)
        out.append(
            RateLimit(
                STATIC,
                ratelimits.velocity_rate(d, v),  # type: ignore[arg-type]
                f"{basis}, and v ≤ 7 m/s: {v:.2f} m/s in {where}, bore {d * 1000:.1f} mm "
                f"({kind}; the TS's road-tanker values are applied)",
            )
        )
    elif accumulator:
        smallest, d = min(lines, key=lambda x: x[1])  # type: ignore[arg-type,return-value]
        out.append(
            RateLimit(
                STATIC,
                ratelimits.isgott_max_rate(d),  # type: ignore[arg-type]
                f"ISGOTT 5th ed. 11.1.7: static accumulator ({sigma}), 7 m/s in the smallest "
                f"bore of the line, {smallest.name} ({d * 1000:.1f} mm)",  # type: ignore[operator]
            )
        )
        if loading and carrier is not None and carrier.inlet_diameter is not None:
            initial = RateLimit(
                "initial",
                ratelimits.isgott_initial_rate(carrier.inlet_diameter, carrier.inlets),
                f"ISGOTT 5th ed. 11.1.7: 1 m/s in {carrier.inlets} tank inlet"
                f"{'s' if carrier.inlets != 1 else ''} of {carrier.inlet_diameter * 1000:.0f} mm "
                "until the inlets are covered",
            )
        elif loading:
            notes.append(
                "ISGOTT's initial rate (1 m/s in the tank inlets until they are covered) needs "
                "the carrier's inlet_diameter"
            )
    else:
        notes.append(
            f"{fluid.name}: {sigma}, not a static accumulator: ISGOTT's velocity limits do not "
            "apply"
        )
    if carrier is not None and carrier.vent_capacity is not None:
        if loading:
            out.append(
                RateLimit(
                    VENTING,
                    ratelimits.vent_limited_rate(carrier.vent_capacity),
                    f"IMO MSC/Circ.585 2.7.2.1: venting capacity "
                    f"{carrier.vent_capacity * 3600:.0f} m³/h / 1.25",
                )
            )
        else:
            notes.append("the venting limit applies when loading the carrier, not here")
    elif loading:
        notes.append("no venting limit: the case gives no carrier vent_capacity")
    return out, initial, notes


# --- the surge search --------------------------------------------------------------------------


class _Track:
    """The surge search of one track, recomputed from the samples at every pass."""

    def __init__(self, top: float, spill_limit: float | None):
        self.top = top
        self.spill_limit = spill_limit
        self._width = math.inf
        self.update([])

    def update(self, points: list[Point]) -> None:
        by = {p.value: p for p in points}
        vals = sorted(by)
        self.limit: float | None = None  # highest rate with every lower rate passing
        self.fail: float | None = None
        self.none_pass = False
        self.requests: tuple[float, ...] = ()
        if not vals:
            return
        failing = [v for v in vals if not by[v].ok]
        if not failing:
            self.limit = vals[-1]
            return
        f = min(failing)
        below = [v for v in vals if v < f]
        self.fail = f
        if not below:
            self.none_pass = True
            return
        p = max(below)
        self.limit = p
        if f - p <= max(STEP_M3H, RESOLUTION * p) + 1e-9:
            return
        width = f - p
        est = None
        if width > NARROW * STEP_M3H and width <= 0.6 * self._width:
            est = boundary_estimate(points, f, p, self.spill_limit)
        self._width = width
        # either side of the estimate by half the resolution: a good estimate closes it
        half = max(STEP_M3H, on_lattice(RESOLUTION * p / 2.0, STEP_M3H, "down"))
        self.requests = tuple(refine(f, p, STEP_M3H, est, (-half, half)))


def rate_limits(
    terminal: Terminal,
    case: Case,
    *,
    spread: bool = False,
    members: tuple[Member, ...] | None = None,
    coarse: int = COARSE,
    concurrent: bool = True,
) -> RateCheck:
    """The highest safe transfer rate of ``case`` and every other rate limit.

    Parameters
    ----------
    terminal, case : the file and the case (its ESD events as set)
    spread : search across the uncertainty band too
    members : the band (default :func:`esdsurge.studies.spread.band` of the route)
    coarse : rates in the coarse scan
    concurrent : run the batches of a pass on threads at the same time
    """
    t_start = time.perf_counter()
    route = terminal.routes[case.route]
    fluid = terminal.products[case.product]
    band_members = (members or band(route)) if spread else (NOMINAL,)
    all_members = list(range(len(band_members)))
    tracks_members = [[0]] + ([all_members] if spread else [])
    notes: list[str] = []
    try:
        natural = steady_state(
            route, fluid, dataclasses.replace(case, rate=None), terminal.atmosphere_abs
        )
    except EsdsurgeError as exc:
        none = RateLimit(SURGE, None, f"no steady state: {exc}")
        return RateCheck(
            case=case,
            direction=0,
            reach=None,
            rate_file=case.rate,
            surge=none,
            surge_spread=none if spread else None,
            limits=(none,),
            rate_max=None,
            governed_by=SURGE,
            rate_max_spread=None,
            governed_by_spread=SURGE if spread else None,
            initial=None,
            points=(),
            points_spread=(),
            notes=(),
            members=band_members,
            passes=0,
            runs=0,
            seconds=time.perf_counter() - t_start,
            problem=str(exc),
        )
    direction = 1 if natural.flow >= 0.0 else -1
    reach = abs(natural.natural_flow)
    running = [
        f"{natural.running[e.name]} × {e.name}"
        for e in route.elements
        if isinstance(e, Pump) and natural.running.get(e.name, 0) > 0
    ]
    gravity = not running
    pumps = RateLimit(
        PUMPS,
        reach,
        (
            f"the running pumps ({', '.join(running)}) on the route's losses, unthrottled"
            if running
            else "gravity: the route's natural flow between its tanks"
        ),
    )
    others, initial, more = other_limits(terminal, case, direction)
    notes += more
    first = first_closing_event(case)
    if case.max_closure_time is not None and first is not None:
        shut = first.at + stroke_of(terminal, case, first)
        if shut > case.max_closure_time + 1e-9:
            notes.append(
                f"as set, {first.element} shuts {shut:g} s after the trigger, later than the "
                f"case's max_closure_time {case.max_closure_time:g} s"
            )

    ev = Evaluator(terminal, dataclasses.replace(case, rate=None), concurrent=concurrent)
    samples: dict[float, list[Outcome | None]] = {}

    def run(requests: dict[float, set[int]]) -> None:
        todo = [
            (v, m)
            for v, ms in sorted(requests.items())
            for m in sorted(ms)
            if v not in samples or samples[v][m] is None
        ]
        variants = [band_members[m].variant(rate=v / 3600.0) for v, m in todo]
        outs = ev.evaluate(variants) if variants else []
        for (v, m), out in zip(todo, outs, strict=True):
            samples.setdefault(v, [None] * len(band_members))[m] = out

    def passed(o: Outcome) -> bool:
        return o.limits_ok and o.spill_ok is not False

    top = on_lattice(reach * 3600.0, STEP_M3H, "down")
    if gravity:
        rates = [top]
        notes.append(
            "a gravity route runs at its natural flow; lower rates need a control valve in the "
            "route, which this case does not have"
        )
    else:
        rates = sorted(
            {on_lattice(top * k / coarse, STEP_M3H, "down") for k in range(1, coarse + 1)}
        )
        rates = [r for r in rates if r > 0.0]
    tracks = [_Track(top, case.spill_limit) for _ in tracks_members]
    run({r: set(all_members) for r in rates})
    for _ in range(MAX_PASSES):
        req: dict[float, set[int]] = {}
        for tr, ms in zip(tracks, tracks_members, strict=True):
            tr.update(points_of(samples, ms, passed))
            for v in tr.requests:
                req.setdefault(v, set()).update(ms)
        if not req:
            break
        run(req)

    def surge_limit(tr: _Track, pts: list[Point]) -> RateLimit:
        by = {p.value: p for p in pts}
        if tr.none_pass or tr.limit is None:
            lowest = min(by) if by else top
            what = by[lowest].breaches[0].describe() if by and by[lowest].breaches else ""
            return RateLimit(
                SURGE,
                None,
                f"the ESD as set breaks a limit at every rate sampled, down to "
                f"{lowest:g} m³/h: {what}",
            )
        if tr.fail is None:
            return RateLimit(
                SURGE,
                tr.limit / 3600.0,
                f"the ESD as set keeps every limit up to the pumps' reach ({tr.limit:g} m³/h "
                "sampled)",
                bound="at least",
            )
        what = by[tr.fail].breaches[0].describe() if by[tr.fail].breaches else "a limit breaks"
        return RateLimit(
            SURGE,
            tr.limit / 3600.0,
            f"the ESD as set keeps every limit up to {tr.limit:g} m³/h; at {tr.fail:g} m³/h {what}",
        )

    pts = [points_of(samples, ms, passed) for ms in tracks_members]
    surges = [surge_limit(tr, p) for tr, p in zip(tracks, pts, strict=True)]
    for tr, p in zip(tracks, pts, strict=True):
        if tr.fail is not None:
            again = [x.value for x in p if x.value > tr.fail and x.ok]
            if again:
                notes.append(
                    f"rates above the failing {tr.fail:g} m³/h pass again (at "
                    f"{', '.join(f'{v:g}' for v in again)} m³/h); they are not used"
                )
    nominal = govern([surges[0], pumps, *others])
    across = govern([surges[1], pumps, *others]) if spread else None
    return RateCheck(
        case=case,
        direction=direction,
        reach=reach,
        rate_file=case.rate if case.rate is not None else reach,
        surge=surges[0],
        surge_spread=surges[1] if spread else None,
        limits=(surges[0], pumps, *others),
        rate_max=nominal[0],
        governed_by=nominal[1],
        rate_max_spread=across[0] if across else None,
        governed_by_spread=across[1] if across else None,
        initial=initial,
        points=tuple(pts[0]),
        points_spread=tuple(pts[-1]) if spread else (),
        notes=tuple(notes),
        members=band_members,
        passes=ev.passes,
        runs=ev.members,
        seconds=time.perf_counter() - t_start,
    )


def govern(limits: list[RateLimit]) -> tuple[float | None, str]:
    """The lowest limit and its name; ``None`` when the surge leaves no rate. A surge limit
    that only says "at least the pumps' reach" gives way to the pumps."""
    surge = next(lim for lim in limits if lim.name == SURGE)
    if surge.rate is None:
        return None, SURGE
    values = [lim for lim in limits if lim.rate is not None]
    lowest = min(values, key=lambda lim: (lim.rate, lim.bound != "exact", lim.name == SURGE))
    if lowest.name == SURGE and surge.bound == "at least":
        return lowest.rate, PUMPS
    return lowest.rate, lowest.name


def rate_checks(
    terminal: Terminal,
    case_names: list[str] | None = None,
    *,
    spread: bool = False,
    progress: Callable[[str], None] | None = None,
) -> RateResult:
    """The rate limits of every case of ``terminal`` (or of those named)."""
    out = []
    for c in terminal.cases:
        if case_names is not None and c.name not in case_names:
            continue
        if progress:
            progress(c.name)
        out.append(rate_limits(terminal, c, spread=spread))
    return RateResult(terminal, tuple(out), spread)
