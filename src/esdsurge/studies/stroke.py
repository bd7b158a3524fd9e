"""The safe stroke window of a case's closing valve (``esdsurge stroke``).

For one valve of a case (its first closing valve, or one named), the window is the range of
stroke times that keeps every limit:

* **fastest safe stroke**: the shortest stroke at which every pressure limit holds (the check's
  own verdict, :func:`esdsurge.studies.check.judge`) and keeps holding at every longer stroke
  sampled up to the window's top;
* **slowest allowed stroke**: the longest stroke at which the volume through the case's first
  closing element after the trigger (the delay before it moves included) stays within the
  case's ``spill_limit``, and at which the valve is shut within ``max_closure_time`` of the
  trigger (``at + stroke``).

Search. A coarse scan of strokes spaced evenly in log from ``FLOOR`` to the top runs in one
request (:class:`~esdsurge.studies.batch.Evaluator`), then each end is refined on a 0.1 s
lattice: the fastest end by bisection between the longest failing and the next passing stroke,
the spill end by secant steps on the spill. Nothing assumes that the surge falls as the stroke
grows: the fastest safe stroke lies above every failing stroke sampled below the top, and any
place where a longer stroke is worse is reported. A failing region narrower than the spacing of
the samples can still hide between them; the samples are listed with the result.

A staged closure (a ``travel`` curve) keeps its shape: its points are fractions of the stroke,
so scaling the stroke scales every stage. With ``stage="slow"`` (``--stage slow``) the searched
value is the duration of the last stage of a staged closure instead: the stages before its last
interior point (the fast stage) keep their durations and travel (:func:`slow_stage_travel`), the
spill limit and ``max_closure_time`` still apply to the whole closure. With ``--spread`` every
sample runs every member of the uncertainty band (:mod:`esdsurge.studies.spread`) in the same
pass; the window across the band is searched beside the nominal one.
"""

from __future__ import annotations

import dataclasses
import math
import os
import time
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np

from esdsurge.engine import Variant
from esdsurge.errors import UsageError
from esdsurge.model import Case, Close, Coupling, Release, Terminal
from esdsurge.physics import handcalc
from esdsurge.steady import SteadyState, quasi_steady_closure, steady_state
from esdsurge.studies.batch import (
    Breach,
    Evaluator,
    Outcome,
    Point,
    geometric_lattice,
    on_lattice,
    points_of,
)
from esdsurge.studies.check import FAIL_STEADY, NO_STEADY, CaseCheck
from esdsurge.studies.derive import first_closing_event
from esdsurge.studies.spread import NOMINAL, Member, band
from esdsurge.studies.window import STEP, Track, worse_places

#: shortest stroke scanned [s]: quicker ESD actuators are rare, and the engine's grid would
#: need a finer time step (at least 100 steps over the closure)
FLOOR = 0.5
#: top of the scan when the case sets neither a spill limit nor ``max_closure_time`` [s]
DEFAULT_TOP = 60.0
#: fewest strokes in the coarse scan; more when needed to keep neighbours within a factor 2
COARSE = 12
#: the recommended setting lies this far inside each end of the window [-]: actuator stroke
#: times drift with supply pressure, temperature and wear (common practice, no source)
MARGIN = 0.2
#: most refinement passes
MAX_PASSES = 30
#: the file's own stroke, always scanned, takes the place of a scanned stroke this close to
#: it [-]
OWN_NEAR = 0.05
#: a refinement sample runs only until a little after its failing neighbours broke their
#: limits (:func:`stroke_window`'s ``horizon``): their stop time, stretched by this share ...
HORIZON_SHARE = 0.05
#: ... plus this many pipeline periods; a pass by then steers the search, and a sample that
#: becomes an end of the window is run whole before it is reported
HORIZON_PERIODS = 1.0
#: a sample whose spill is needed runs at least this many periods past its shut, so that its
#: spill is whole (a period spans at least 128 time steps: ``ROUTE_REACHES``)
SPILL_PAST = 0.1
#: what ``stage`` may be: the whole stroke, or the last stage of a staged closure
STAGES = ("whole", "slow")

WHAT_OPENS = (
    "a staged closure: close most of the travel quickly and the last 15-30 % slowly (a "
    "'travel' curve on the close event)",
    "a lower transfer rate (see 'esdsurge rate')",
    "surge relief or an accumulator near the element that breaks its limit",
)
#: with a searched slow stage, in place of the staged closure that ``WHAT_OPENS`` starts with
SLOW_OPENS = (
    "another fast stage (the time or the travel of the 'travel' curve's last interior point), "
    "or the stages scaled together ('esdsurge stroke --stage whole')",
)


@dataclass(frozen=True)
class Window:
    """The window of one track (the nominal case, or the worst across the band).

    stroke_min, stroke_max : [s] (``None`` when the window is empty; ``stroke_max`` also when
        nothing sets a top); min_governed_by, max_governed_by : what sets each end
    min_breach : what breaks just below ``stroke_min``; max_kind : ``spill``, ``code``,
        ``none``
    empty : no stroke keeps every limit; reason : why, naming the constraints that collide;
        opens : what would open it
    recommended [s] with margin_fast, margin_slow : how far inside each end [-]
    worse : places where a longer stroke is worse; points : the strokes sampled
    """

    stroke_min: float | None
    stroke_max: float | None
    min_governed_by: str
    max_governed_by: str
    min_breach: Breach | None
    max_kind: str
    empty: bool
    reason: str | None
    opens: tuple[str, ...]
    recommended: float | None
    margin_fast: float | None
    margin_slow: float | None
    worse: tuple[str, ...]
    points: tuple[Point, ...]


@dataclass(frozen=True)
class StrokeWindow:
    """The stroke window of one case.

    valve : the element whose stroke is varied; valve_kind : ``valve`` or ``coupling``; at :
    when it starts to move [s]; stroke_file : its stroke in the file [s]; staged : it has a
    ``travel`` curve; nominal : the nominal window; spread : the window across the band (or
    ``None``); members : the band; check : the nominal verdict at the recommended setting;
    effective_closure : at the recommended setting [s] (installed characteristic, pumps
    running); period : pipeline period of the route [s]; top_scanned : the scan's top [s];
    passes, runs : engine passes and member runs used; seconds : wall time [s]; problem : why
    no window could be searched (no steady state, fails before surge), else ``None``;
    node_updates : grid nodes times time steps the engine ran for the search
    stage : ``whole`` (the windows are whole strokes) or ``slow`` (the windows, the
    recommendation and the samples are durations of the last stage of a staged closure);
    fast_stage : with ``slow``, the fast stage's duration, kept as in the file [s] (else 0);
    fast_to : with ``slow``, the travel open at the end of the fast stage [-] (else ``None``)
    """

    case: Case
    valve: str
    valve_kind: str
    at: float
    stroke_file: float
    staged: bool
    nominal: Window
    spread: Window | None
    members: tuple[Member, ...]
    check: CaseCheck | None
    effective_closure: float | None
    period: float
    top_scanned: float
    passes: int
    runs: int
    seconds: float
    problem: str | None = None
    node_updates: int = 0
    stage: str = "whole"
    fast_stage: float = 0.0
    fast_to: float | None = None

    @property
    def ok(self) -> bool:
        """The window is not empty (across the band too, when one was searched)."""
        return not self.nominal.empty and (self.spread is None or not self.spread.empty)

    @property
    def searched_file(self) -> float:
        """The searched value as the file sets it: the stroke, or the slow stage [s]."""
        return self.stroke_file - self.fast_stage

    def whole_stroke(self, value: float | None) -> float | None:
        """The whole stroke at a searched ``value`` [s] (the fast stage and the slow stage)."""
        return None if value is None else self.fast_stage + value


@dataclass(frozen=True)
class StrokeResult:
    terminal: Terminal
    windows: tuple[StrokeWindow, ...]
    spread: bool

    @property
    def ok(self) -> bool:
        return all(w.ok for w in self.windows)


# --- which event ------------------------------------------------------------------------------


def closing_event(terminal: Terminal, case: Case, valve: str | None) -> Close | Release:
    """The event whose stroke is varied: on ``valve``, or the case's first closing event."""
    closing = [e for e in case.events if isinstance(e, Close | Release)]
    if valve is None:
        first = first_closing_event(case)
        if first is None:
            raise UsageError(f"case {case.name!r} closes nothing: no stroke to search")
        return first
    for e in closing:
        if e.element == valve:
            return e
    names = ", ".join(repr(e.element) for e in closing) or "none"
    raise UsageError(
        f"--valve {valve!r}: case {case.name!r} has no close or release event on it "
        f"(its closing elements: {names})"
    )


def stroke_of(terminal: Terminal, case: Case, event: Close | Release) -> float:
    """The stroke of a close event, or the closing time of a released coupling [s]."""
    if isinstance(event, Close):
        return event.stroke
    el = terminal.routes[case.route].element(event.element)
    assert isinstance(el, Coupling)
    return el.closing_time


def fast_stage(travel: tuple[tuple[float, float], ...], stroke: float) -> float:
    """Duration of the stages before the last interior point of a staged ``travel`` [s].

    travel : points (fraction of stroke time [-], travel fraction open [-]) with at least one
    point between (0, 1) and (1, 0); stroke : the stroke the fractions refer to [s]

    >>> fast_stage(((0.0, 1.0), (0.3, 0.25), (1.0, 0.0)), 20.0)
    6.0
    """
    if len(travel) < 3:
        raise ValueError("a travel curve without an interior point has no stages")
    return travel[-2][0] * stroke


def slow_stage_travel(
    travel: tuple[tuple[float, float], ...], stroke: float, slow: float
) -> tuple[float, tuple[tuple[float, float], ...]]:
    """Whole stroke and travel curve of a staged closure whose last stage lasts ``slow``.

    The points up to the last interior one (the fast stage) keep their absolute times
    ``f × stroke`` and their travel; the last stage is stretched or shrunk to ``slow``; the
    curve ends shut at fraction 1 as before (common practice, no source: a staged actuator's
    slow stage is set on its own, e.g. by a second throttle, without changing the first).

    Parameters
    ----------
    travel : points (fraction of stroke time [-], travel fraction open [-]) from (0, 1) to
        (1, 0) with at least one point between
    stroke : the stroke the fractions of ``travel`` refer to [s]
    slow : duration of the last stage [s] (> 0)

    Returns
    -------
    whole : the whole stroke ``T_f + slow`` [s], ``T_f`` from :func:`fast_stage`
    curve : the points ``(f × stroke / whole, travel)`` up to the last interior point, then
        ``(1, 0)``

    Examples
    --------
    Fast to 25 % open over 0.3 of a 20 s stroke (6 s), then slow for 14 s; with a slow stage
    of 24 s the 6 s fast stage is 0.2 of a 30 s stroke:

    >>> slow_stage_travel(((0.0, 1.0), (0.3, 0.25), (1.0, 0.0)), 20.0, 24.0)
    (30.0, ((0.0, 1.0), (0.2, 0.25), (1.0, 0.0)))
    """
    if not slow > 0.0:
        raise ValueError(f"the slow stage must last longer than 0 s, got {slow} s")
    whole = fast_stage(travel, stroke) + slow
    curve = tuple((f * stroke / whole, x) for f, x in travel[:-1]) + (travel[-1],)
    return whole, curve


def staged_event(terminal: Terminal, case: Case, event: Close | Release) -> Close:
    """``event`` if its travel has stages (a point between open and shut), else a usage error
    naming the file, the case and the element."""
    where = f"--stage slow: in {terminal.path}, case {case.name!r}"
    if isinstance(event, Release):
        raise UsageError(
            f"{where}: {event.element!r} is a coupling that closes on a 'release' event, which "
            "has no stages; only a valve's 'close' event with a staged 'travel' curve has a slow "
            "stage to search (use --stage whole)"
        )
    if len(event.travel) < 3:
        raise UsageError(
            f"{where}: the close event of {event.element!r} has no staged travel (a 'travel' "
            "curve with a point between open and shut, e.g. travel: [[0, 100 %], [0.3, 25 %], "
            "[1, 0 %]]); use --stage whole"
        )
    return event


def effective_closure(
    terminal: Terminal,
    case: Case,
    event: Close | Release,
    stroke: float,
    state: SteadyState | None = None,
) -> float:
    """Effective closure time of ``event``'s element at ``stroke`` [s].

    The quasi-steady flow while the element closes (installed characteristic, pumps running,
    :func:`esdsurge.steady.quasi_steady_closure`), sampled over the travel and again finely
    around its steepest fall; then :func:`esdsurge.physics.handcalc.effective_closure_time`.
    ``state`` is the case's steady state, when the caller has it already.
    """
    route = terminal.routes[case.route]
    fluid = terminal.products[case.product]
    travel = event.travel if isinstance(event, Close) else ((0.0, 1.0), (1.0, 0.0))
    close = Close(element=event.element, at=event.at, stroke=stroke, travel=travel)
    atm = terminal.atmosphere_abs
    state = state or steady_state(route, fluid, case, atm)
    t = event.at + stroke * np.linspace(0.0, 1.0, 101)
    q = np.abs(quasi_steady_closure(route, fluid, case, atm, close, t, state))
    k = int(np.argmax(np.abs(np.diff(q))))
    lo, hi = t[max(k - 2, 0)], t[min(k + 3, len(t) - 1)]
    fine = np.linspace(lo, hi, 101)
    qf = np.abs(quasi_steady_closure(route, fluid, case, atm, close, fine, state))
    times = np.concatenate([t[t < lo], fine, t[t > hi]])
    flows = np.concatenate([q[t < lo], qf, q[t > hi]])
    return handcalc.effective_closure_time(times, flows)


# --- one track ---------------------------------------------------------------------------------


def _window(
    track: Track,
    points: list[Point],
    *,
    floor: float,
    at: float,
    closing: str | None,
    valve: str,
    spill_limit: float | None,
    code_top: float | None,
    max_closure: float | None,
    noun: str = "stroke",
    fast: float = 0.0,
) -> Window:
    """The window a finished track describes (the recommended setting not yet chosen).

    ``noun`` names the searched value (``stroke`` or ``slow stage``); ``fast`` is the fast
    stage before a searched slow stage [s] (0 for the whole stroke).
    """
    by = {p.value: p for p in points}

    def breach(v: float | None) -> tuple[str, Breach | None]:
        p = by.get(v) if v is not None else None
        if p is None or not p.breaches:
            return "", None
        return p.breaches[0].describe(), p.breaches[0]

    spill_text = (
        f"spill limit {spill_limit:g} m³ (volume through {closing} after the trigger, the "
        f"{at:g} s before {valve} moves included)"
        if spill_limit is not None
        else ""
    )
    fast_text = f", its fast stage takes {fast:g} s" if fast > 0.0 else ""
    code_text = (
        f"max_closure_time {max_closure:g} s from the trigger to shut ({valve} starts to move "
        f"at {at:g} s{fast_text})"
        if max_closure is not None
        else ""
    )
    worse = tuple(worse_places(points, track.top))
    min_text, min_breach = breach(track.fast_fail)
    if not min_text and track.fast is not None:
        min_text = f"nothing: every {noun} scanned from {floor:g} s keeps the limits (scan floor)"
    candidates: list[tuple[float, str, str]] = []
    if code_top is not None:
        candidates.append((code_top, "code", code_text))
    if track.spill_top is not None:
        candidates.append((track.spill_top, "spill", spill_text))
    if track.surge_top is not None:
        what, _ = breach(track.surge_fail)
        candidates.append(
            (
                track.surge_top,
                "surge",
                f"a limit that breaks again at a longer {noun}: at {track.surge_fail:g} s {what}",
            )
        )
    reason, opens = None, ()
    max_empty = min(candidates, key=lambda c: c[0])[2] if candidates else "none set"
    if track.spill_below_floor:
        first = points[0]
        reason = (
            f"even the fastest {noun} scanned, {first.value:g} s, lets "
            f"{first.spill or 0.0:.2f} m³ through {closing}: more than the {spill_text}"
        )
        opens = (
            "a shorter delay before the valve moves (the case's 'at')",
            "tripping the pumps earlier",
            "a lower transfer rate (see 'esdsurge rate')",
        )
    elif code_top is not None and code_top < floor - 1e-9:
        reason = (
            f"the {code_text} leaves {max(code_top, 0.0):.1f} s for the {noun}, less than the "
            f"fastest {noun} scanned ({floor:g} s)"
        )
        opens = ("a shorter delay before the valve moves (the case's 'at')",)
    elif track.no_pass or track.fast is None:
        last = max((p.value for p in points if p.value <= track.top + 1e-9), default=None)
        what, min_breach = breach(last)
        min_text = what
        bound = min(candidates, key=lambda c: c[0]) if candidates else None
        if bound is None:
            reason = (
                f"no {noun} from {floor:g} s to {track.top:g} s (the scan's top) keeps every "
                f"limit: at {last:g} s {what}"
            )
        else:
            reason = (
                f"no {noun} from {floor:g} s to {bound[0]:g} s keeps every limit, and "
                f"{bound[0]:g} s is the slowest allowed by the {bound[2]}: at {last:g} s {what}"
            )
        extra = ("a larger spill allowance, if the terminal can accept it",)
        opens = (WHAT_OPENS if fast <= 0.0 else SLOW_OPENS + WHAT_OPENS[1:]) + (
            extra if bound is not None and bound[1] == "spill" else ()
        )
    if reason is not None:
        return Window(
            None,
            None,
            min_text or "—",
            max_empty,
            min_breach,
            "none",
            True,
            reason,
            opens,
            None,
            None,
            None,
            worse,
            tuple(points),
        )
    if candidates:
        stroke_max, max_kind, max_text = min(candidates, key=lambda c: c[0])
    else:
        stroke_max, max_kind = None, "none"
        spill = by[track.top].spill if track.top in by else None
        max_text = f"none set (no spill_limit or max_closure_time); scanned up to {track.top:g} s"
        if fast > 0.0:
            max_text = max_text.replace("scanned", f"{noun}s scanned")
            max_text += f" (whole stroke {fast + track.top:g} s)"
        if spill is not None:
            max_text += f", where {spill:.2f} m³ pass {closing}"
    return Window(
        track.fast,
        stroke_max,
        min_text,
        max_text,
        min_breach,
        max_kind,
        False,
        None,
        (),
        None,
        None,
        None,
        worse,
        tuple(points),
    )


def _recommend(w: Window, scan_top: float) -> tuple[float, float, float | None]:
    """Recommended stroke [s], and how far it lies inside the fast and the slow end [-]."""
    assert w.stroke_min is not None
    lo, hi = w.stroke_min, w.stroke_max
    r = on_lattice(lo * (1.0 + MARGIN), STEP, "up")
    if hi is None:
        r = max(min(r, on_lattice(scan_top, STEP, "down")), lo)
        return r, r / lo - 1.0, None
    if r * (1.0 + MARGIN) > hi + 1e-9:
        # narrower than both margins: the geometric middle, on the lattice, inside the window
        r = min(max(on_lattice(math.sqrt(lo * hi), STEP), lo), hi)
    return r, r / lo - 1.0, hi / r - 1.0


# --- the study ---------------------------------------------------------------------------------


def stroke_window(
    terminal: Terminal,
    case: Case,
    *,
    valve: str | None = None,
    spread: bool = False,
    members: tuple[Member, ...] | None = None,
    floor: float = FLOOR,
    top: float | None = None,
    coarse: int = COARSE,
    concurrent: bool = True,
    stage: str = "whole",
    alone: bool = True,
) -> StrokeWindow:
    """The safe stroke window of ``case``'s first closing valve (or of ``valve``).

    Parameters
    ----------
    terminal, case : the file and the case
    valve : the element whose stroke to vary (a valve with a ``close`` event, or a coupling
        with a ``release`` event); default the case's first closing element
    spread : search the window across the uncertainty band too
    members : the band (default :func:`esdsurge.studies.spread.band` of the route)
    floor : shortest stroke scanned [s]
    top : top of the scan when the case sets no ``max_closure_time`` [s] (default
        ``DEFAULT_TOP``)
    coarse : fewest strokes in the coarse scan
    concurrent : run the batches of a pass on threads at the same time
    stage : ``whole`` to vary the whole stroke (a staged travel scaled with it), or ``slow``
        to vary the duration of the last stage of the valve's staged travel, its fast stage
        kept (:func:`slow_stage_travel`); ``floor``, ``top`` and the window are then slow-stage
        durations, and ``top`` defaults to ``DEFAULT_TOP`` less the fast stage (at least half
        of ``DEFAULT_TOP``)
    alone : no other search shares the processors: a step that would run a single stroke runs
        two that cut its bracket in three instead, so as not to leave a processor idle

    Returns
    -------
    StrokeWindow

    Notes
    -----
    The coarse scan runs in two steps: its longer half first, its shorter half only when the
    window may reach into it (no failing stroke was found below a passing one). Strokes below
    the longest failing stroke under the window are not explored. The file's own stroke (or
    slow stage) is always among the scanned values, in place of a scanned value within
    ``OWN_NEAR`` of it. A refinement sample runs first only to a horizon (``horizon``); the
    ends of a window are run whole before it is reported.
    """
    t_start = time.perf_counter()
    if stage not in STAGES:
        raise UsageError(f"--stage {stage!r}: use one of {', '.join(STAGES)}")
    event = closing_event(terminal, case, valve)
    route = terminal.routes[case.route]
    element = route.element(event.element)
    stroke_file = stroke_of(terminal, case, event)
    staged = isinstance(event, Close) and len(event.travel) > 2
    slow = stage == "slow"
    t_fast, fast_to = 0.0, None
    if slow:
        staged_close = staged_event(terminal, case, event)
        t_fast = fast_stage(staged_close.travel, stroke_file)
        fast_to = staged_close.travel[-2][1]

    def setting(v: float) -> tuple[float, Close | Release]:
        """The whole stroke [s] and the event at a searched value ``v`` [s]."""
        if not slow:
            return v, event
        whole, curve = slow_stage_travel(staged_close.travel, stroke_file, v)
        return whole, dataclasses.replace(staged_close, stroke=whole, travel=curve)

    def changes(v: float) -> dict[str, object]:
        """What a batch member at ``v`` changes (``Variant`` fields)."""
        whole, ev_v = setting(v)
        out: dict[str, object] = {"strokes": ((event.element, whole),)}
        if slow:
            assert isinstance(ev_v, Close)
            out["travels"] = ((event.element, ev_v.travel),)
        return out

    def closure_time(v: float) -> float:
        whole, ev_v = setting(v)
        return effective_closure(terminal, case, ev_v, whole, ev.base.steady)

    first = first_closing_event(case)
    closing = first.element if first is not None else None
    band_members = (members or band(route)) if spread else (NOMINAL,)
    all_members = list(range(len(band_members)))
    tracks_members = [[0]] + ([all_members] if spread else [])
    ev = Evaluator(terminal, case, concurrent=concurrent)
    code_top = (
        None
        if case.max_closure_time is None
        else on_lattice(case.max_closure_time - event.at - t_fast, STEP, "down")
    )
    default_top = max(DEFAULT_TOP - t_fast, DEFAULT_TOP / 2.0)
    scan_top = code_top if code_top is not None else (top if top is not None else default_top)

    def result(windows: list[Window], **kw: object) -> StrokeWindow:
        return StrokeWindow(
            case=case,
            valve=event.element,
            valve_kind=element.kind,
            at=event.at,
            stroke_file=stroke_file,
            staged=staged,
            nominal=windows[0],
            spread=windows[-1] if spread else None,
            members=band_members,
            check=kw.get("check"),
            effective_closure=kw.get("t_eff"),  # type: ignore[arg-type]
            period=ev.period,
            top_scanned=scan_top,
            passes=ev.passes,
            runs=ev.members,
            seconds=time.perf_counter() - t_start,
            problem=kw.get("problem"),  # type: ignore[arg-type]
            node_updates=ev.node_updates,
            stage=stage,
            fast_stage=t_fast,
            fast_to=fast_to,
        )

    base = ev.base
    if base.steady is None or base.breaches:
        if base.steady is None:
            problem, reason, opens = NO_STEADY, f"no steady state: {base.problem}", ()
        else:
            b = base.breaches[0]
            problem = FAIL_STEADY
            reason = (
                f"fails before any surge: {b.element} is outside {b.basis} at steady state; "
                "no stroke time helps"
            )
            opens = ("a lower transfer rate or pump head", "limits that fit the line's duty")
        w = Window(
            None, None, "—", "—", None, "none", True, reason, opens, None, None, None, (), ()
        )
        return result([w], problem=problem)

    samples: dict[float, list[Outcome | None]] = {}

    def spill_not_needed(v: float, m: int) -> bool:
        """Member ``m``'s spill at ``v`` is not needed: the case has no spill limit, or a
        longer stroke already run lets through no more than it, below any stroke found above
        it. Such a member, if it fails for a cavity, fails whatever its spill, and lies outside
        the window, whose spill end the sampled spills place."""
        if case.spill_limit is None:
            return True
        for u in sorted(samples):
            o = samples[u][m]
            if o is None or o.spill is None:
                continue
            if o.spill > case.spill_limit:
                return False
            if u > v:
                return True
        return False

    def horizon(v: float, m: int, variant: Variant, no_spill: bool) -> float | None:
        """How far member ``m`` at ``v`` must run for the search to steer by it [s], or
        ``None`` (run whole): past the time at which its nearest samples on either side that
        break a limit were stopped, stretched with the stroke and by ``HORIZON_SHARE``, plus
        ``HORIZON_PERIODS`` periods; past its shut when its spill is needed. A pass by then is
        provisional: an end of the window is run whole before it is reported. A sample next
        to a failing one on the lattice runs whole: if it passes, it is an end."""
        runs = {u: o[m] for u, o in samples.items() if o[m] is not None and o[m].possible}
        below = [u for u in runs if u < v]
        above = [u for u in runs if u > v]
        near = ([max(below)] if below else []) + ([min(above)] if above else [])
        times = []
        for u in near:
            o = runs[u]
            if o.limits_ok:
                continue
            if o.stopped is None or abs(u - v) < STEP * 1.5:
                # broke a limit over its whole run (when is not kept here); or next to ``v``
                # on the lattice, so that ``v`` is an end of the window if it passes
                return None
            stretch = max(1.0, v / u) if u > 0.0 else 1.0
            times.append(o.stopped * stretch * (1.0 + HORIZON_SHARE) + HORIZON_PERIODS * ev.period)
        spill_fail = any(runs[u].spill_ok is False for u in near)
        if not times and not spill_fail:
            return None
        if not no_spill:
            times.append(ev.shut_time(variant) + SPILL_PAST * ev.period)
        return max(times)

    def run(
        requests: dict[float, set[int]], keep: bool = False, whole: bool = False
    ) -> list[Outcome]:
        """Run the requested members not yet run (with ``keep``, all of them, kept whole;
        with ``whole``, also those run only provisionally, on from their horizon); the others
        up to their :func:`horizon`."""
        todo = [
            (v, m)
            for v, ms in sorted(requests.items())
            for m in sorted(ms)
            if v not in samples
            or samples[v][m] is None
            or keep
            or (whole and samples[v][m].provisional)  # type: ignore[union-attr]
        ]
        variants = [band_members[m].variant(**changes(v)) for v, m in todo]
        no_spill = [spill_not_needed(v, m) for v, m in todo]
        horizons = (
            None
            if keep or whole
            else [
                horizon(v, m, var, free)
                for (v, m), var, free in zip(todo, variants, no_spill, strict=True)
            ]
        )
        # a provisional sample run whole goes on from where it was left
        resume = [samples[v][m] if whole and v in samples else None for v, m in todo]
        outs = (
            ev.evaluate(variants, keep, no_spill, horizons=horizons, resume=resume)
            if variants
            else []
        )
        for (v, m), out in zip(todo, outs, strict=True):
            samples.setdefault(v, [None] * len(band_members))[m] = out
        return outs

    def provisional_ends() -> dict[float, set[int]]:
        """The ends of the windows found so far whose pass is only provisional."""
        req: dict[float, set[int]] = {}
        for tr, ms in zip(tracks, tracks_members, strict=True):
            ends = [tr.fast, tr.surge_top]
            if tr.spill_top is not None and tr.spill_top <= tr.top + 1e-9:
                ends.append(tr.spill_top)
            for v in ends:
                if v is not None and any(
                    o is not None and o.provisional for o in (samples[v][m] for m in ms)
                ):
                    req.setdefault(v, set()).update(ms)
        return req

    def refine_ends(lower_scanned: bool, cut_in_three: bool) -> None:
        """Refine every track's ends until none asks for more and every end is run whole
        (``lower_scanned``: the coarse scan's shorter half has run; ``cut_in_three``: a
        lone halving runs as two samples, see ``alone``)."""
        for _ in range(MAX_PASSES):
            req: dict[float, set[int]] = {}
            for tr, ms in zip(tracks, tracks_members, strict=True):
                tr.update(points_of(samples, ms), lower_scanned)
                for v in tr.requests:
                    req.setdefault(v, set()).update(ms)
            if any(tr.need_lower for tr in tracks) and not lower_scanned:
                for v in lower:
                    req.setdefault(v, set()).update(all_members)
                lower_scanned = True
            if not req:
                req = provisional_ends()
                if not req:
                    break
                run(req, whole=True)
                continue
            if cut_in_three and len(req) == 1 and len(band_members) == 1:
                # one stroke would leave a processor idle: cut its bracket in three instead
                req = {v: set(all_members) for v in tracks[0].thirds()} or req
            run(req)

    tracks = [Track(case.spill_limit, code_top, scan_top) for _ in tracks_members]
    lower: list[float] = []  # the coarse scan's shorter half
    if code_top is None or code_top >= floor - 1e-9:
        n = max(coarse, math.ceil(math.log2(max(scan_top, floor) / floor)) + 1)
        coarse_pts = geometric_lattice(floor, max(scan_top, floor), n, STEP)
        half = len(coarse_pts) // 2
        lower, upper = coarse_pts[:half], coarse_pts[half:]
        # the file's own stroke (slow stage) is always run: a window around it must not hide
        # between samples
        own = on_lattice(stroke_file - t_fast, STEP)
        if own is not None and floor <= own <= scan_top and own not in coarse_pts:
            # in place of a scanned stroke within OWN_NEAR of it (not the scan's top): the
            # two would say the same
            near = [v for v in upper if abs(v / own - 1.0) <= OWN_NEAR and v != upper[-1]]
            upper = sorted([v for v in upper if v not in near[:1]] + [own])
        run({v: set(all_members) for v in upper})
        refine_ends(not lower, alone and (os.cpu_count() or 1) > 1)

    def finish(i: int) -> Window:
        return _window(
            tracks[i],
            points_of(samples, tracks_members[i]),
            floor=floor,
            at=event.at,
            closing=closing,
            valve=event.element,
            spill_limit=case.spill_limit,
            code_top=code_top,
            max_closure=case.max_closure_time,
            noun="slow stage" if slow else "stroke",
            fast=t_fast,
        )

    windows = [finish(i) for i in range(len(tracks))]
    lead = len(windows) - 1  # the window across the band when there is one
    check: CaseCheck | None = None
    t_eff = None
    checked_at = None
    for _ in range(3):
        if windows[lead].empty:
            break
        rec, _, _ = _recommend(windows[lead], scan_top)
        # run the recommended setting (every member; the nominal kept for the report) while
        # the effective closure time is worked out beside it
        with ThreadPoolExecutor(1) as pool:
            future = pool.submit(closure_time, rec)
            outs = run({rec: set(all_members)}, keep=True)
            t_eff = future.result()
        check, checked_at = outs[0].check, rec
        moved = False
        for i, (tr, ms) in enumerate(zip(tracks, tracks_members, strict=True)):
            tr.update(points_of(samples, ms), True)
            new = finish(i)
            moved |= (new.stroke_min, new.stroke_max) != (
                windows[i].stroke_min,
                windows[i].stroke_max,
            )
            windows[i] = new
        if not moved:
            break
        # the recommended stroke failed where the samples around it passed: a gap between
        # samples; refine the moved window and choose again
        refine_ends(True, False)
        windows = [finish(i) for i in range(len(tracks))]
    rec_final = None
    for i, w in enumerate(windows):
        if w.empty:
            continue
        rec, mf, ms_ = _recommend(windows[lead] if not windows[lead].empty else w, scan_top)
        assert w.stroke_min is not None
        if not (w.stroke_min <= rec and (w.stroke_max is None or rec <= w.stroke_max)):
            rec, mf, ms_ = _recommend(w, scan_top)
        # the margins of this window's own ends (the setting may come from the band's window)
        mf = rec / w.stroke_min - 1.0
        ms_ = None if w.stroke_max is None else w.stroke_max / rec - 1.0
        windows[i] = dataclasses.replace(w, recommended=rec, margin_fast=mf, margin_slow=ms_)
        if i == lead or rec_final is None:
            rec_final = rec
    if rec_final is not None and rec_final != checked_at:
        with ThreadPoolExecutor(1) as pool:
            future = pool.submit(closure_time, rec_final)
            check = run({rec_final: {0}}, keep=True)[0].check
            t_eff = future.result()
    elif rec_final is None:
        check, t_eff = None, None
    return result(windows, check=check, t_eff=t_eff)


def stroke_windows(
    terminal: Terminal,
    case_names: list[str] | None = None,
    *,
    valve: str | None = None,
    spread: bool = False,
    stage: str = "whole",
    progress: Callable[[str], None] | None = None,
) -> StrokeResult:
    """The stroke window of every case of ``terminal`` (or of those named); ``stage`` as for
    :func:`stroke_window`.

    The cases are searched at the same time, up to one per processor: a search leaves a
    processor idle while a pass runs a single stroke, and between passes; the cases share
    nothing that the order would change, and the results keep the file's order. Searched side
    by side, a case halves its brackets one stroke at a time (``alone=False``): the other
    cases keep the processors busy, and a halving costs fewer runs than cutting in three.
    """
    cases = [c for c in terminal.cases if case_names is None or c.name in case_names]
    if stage not in STAGES:
        raise UsageError(f"--stage {stage!r}: use one of {', '.join(STAGES)}")
    if valve is not None or stage != "whole":
        for c in cases:  # refuse before any work
            event = closing_event(terminal, c, valve)
            if stage == "slow":
                staged_event(terminal, c, event)

    def one(c: Case) -> StrokeWindow:
        if progress:
            progress(c.name)
        return stroke_window(
            terminal, c, valve=valve, spread=spread, stage=stage, alone=workers <= 1
        )

    workers = min(len(cases), os.cpu_count() or 1)
    if workers <= 1:
        out = [one(c) for c in cases]
    else:
        with ThreadPoolExecutor(workers) as pool:
            out = list(pool.map(one, cases))
    return StrokeResult(terminal, tuple(out), spread)


def bench_jetty_windows(path: str | None = None, repeats: int = 3) -> dict[str, object]:
    """Wall time of the full stroke window of every case of the jetty demo.

    A first, untimed call loads the compiled kernel; then :func:`stroke_windows`, as ``esdsurge
    stroke`` runs it (the cases at the same time, so their own times overlap), ``repeats``
    times: on a shared machine the wall time of one search varies by some 10 %, and the
    fastest is the figure least disturbed by other work. Returns ``{"cases": {"<case>": s,
    ...}, "total_s": s (the fastest), "totals_s": [s, ...] (every repeat), "cpu_s": processor
    time of the fastest, summed over its threads [s], "processors": how many the machine has,
    "runs": member runs, "node_updates": grid nodes times time steps, "node_updates_per_s":
    the rate the fastest search achieved}``. The wall time cannot fall below ``cpu_s`` shared
    out over the processors.
    """
    from pathlib import Path

    from esdsurge.terminal import load

    if path is None:
        here = Path.cwd() / "terminals" / "jetty.yaml"
        default = Path(__file__).resolve().parents[3] / "terminals" / "jetty.yaml"
        path = str(here if here.exists() else default)
    terminal = load(path)
    stroke_window(terminal, terminal.cases[0], top=2.0, coarse=2)  # load the kernel
    best: tuple[float, float, StrokeResult] | None = None
    totals = []
    for _ in range(max(1, repeats)):
        t0, c0 = time.perf_counter(), time.process_time()
        result = stroke_windows(terminal)
        totals.append(time.perf_counter() - t0)
        if best is None or totals[-1] < best[0]:
            best = (totals[-1], time.process_time() - c0, result)
    assert best is not None
    total, cpu, result = best
    cases = {w.case.name: w.seconds for w in result.windows}
    runs = sum(w.runs for w in result.windows)
    updates = sum(w.node_updates for w in result.windows)
    return {
        "cases": cases,
        "total_s": total,
        "totals_s": totals,
        "cpu_s": cpu,
        "processors": os.cpu_count() or 1,
        "runs": runs,
        "node_updates": updates,
        "node_updates_per_s": updates / total if total > 0 else math.nan,
    }
