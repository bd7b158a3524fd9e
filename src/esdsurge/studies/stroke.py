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
so scaling the stroke scales every stage. With ``--spread`` every sample runs every member of
the uncertainty band (:mod:`esdsurge.studies.spread`) in the same pass; the window across the
band is searched beside the nominal one.
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

from esdsurge.errors import UsageError
from esdsurge.model import Case, Close, Coupling, Release, Terminal
from esdsurge.physics import handcalc
from esdsurge.steady import quasi_steady_closure
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

WHAT_OPENS = (
    "a staged closure: close most of the travel quickly and the last 15-30 % slowly (a "
    "'travel' curve on the close event)",
    "a lower transfer rate (see 'esdsurge rate')",
    "surge relief or an accumulator near the element that breaks its limit",
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

    @property
    def ok(self) -> bool:
        """The window is not empty (across the band too, when one was searched)."""
        return not self.nominal.empty and (self.spread is None or not self.spread.empty)


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


def effective_closure(
    terminal: Terminal, case: Case, event: Close | Release, stroke: float
) -> float:
    """Effective closure time of ``event``'s element at ``stroke`` [s].

    The quasi-steady flow while the element closes (installed characteristic, pumps running,
    :func:`esdsurge.steady.quasi_steady_closure`), sampled over the travel and again finely
    around its steepest fall; then :func:`esdsurge.physics.handcalc.effective_closure_time`.
    """
    route = terminal.routes[case.route]
    fluid = terminal.products[case.product]
    travel = event.travel if isinstance(event, Close) else ((0.0, 1.0), (1.0, 0.0))
    close = Close(element=event.element, at=event.at, stroke=stroke, travel=travel)
    atm = terminal.atmosphere_abs
    t = event.at + stroke * np.linspace(0.0, 1.0, 101)
    q = np.abs(quasi_steady_closure(route, fluid, case, atm, close, t))
    k = int(np.argmax(np.abs(np.diff(q))))
    lo, hi = t[max(k - 2, 0)], t[min(k + 3, len(t) - 1)]
    fine = np.linspace(lo, hi, 101)
    qf = np.abs(quasi_steady_closure(route, fluid, case, atm, close, fine))
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
) -> Window:
    """The window a finished track describes (the recommended setting not yet chosen)."""
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
    code_text = (
        f"max_closure_time {max_closure:g} s from the trigger to shut ({valve} starts to move "
        f"at {at:g} s)"
        if max_closure is not None
        else ""
    )
    worse = tuple(worse_places(points, track.top))
    min_text, min_breach = breach(track.fast_fail)
    if not min_text and track.fast is not None:
        min_text = f"nothing: every stroke scanned from {floor:g} s keeps the limits (scan floor)"
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
                f"a limit that breaks again at a longer stroke: at {track.surge_fail:g} s {what}",
            )
        )
    reason, opens = None, ()
    max_empty = min(candidates, key=lambda c: c[0])[2] if candidates else "none set"
    if track.spill_below_floor:
        first = points[0]
        reason = (
            f"even the fastest stroke scanned, {first.value:g} s, lets "
            f"{first.spill or 0.0:.2f} m³ through {closing}: more than the {spill_text}"
        )
        opens = (
            "a shorter delay before the valve moves (the case's 'at')",
            "tripping the pumps earlier",
            "a lower transfer rate (see 'esdsurge rate')",
        )
    elif code_top is not None and code_top < floor - 1e-9:
        reason = (
            f"the {code_text} leaves {max(code_top, 0.0):.1f} s for the stroke, less than the "
            f"fastest stroke scanned ({floor:g} s)"
        )
        opens = ("a shorter delay before the valve moves (the case's 'at')",)
    elif track.no_pass or track.fast is None:
        last = max((p.value for p in points if p.value <= track.top + 1e-9), default=None)
        what, min_breach = breach(last)
        min_text = what
        bound = min(candidates, key=lambda c: c[0]) if candidates else None
        if bound is None:
            reason = (
                f"no stroke from {floor:g} s to {track.top:g} s (the scan's top) keeps every "
                f"limit: at {last:g} s {what}"
            )
        else:
            reason = (
                f"no stroke from {floor:g} s to {bound[0]:g} s keeps every limit, and "
                f"{bound[0]:g} s is the slowest allowed by the {bound[2]}: at {last:g} s {what}"
            )
        extra = ("a larger spill allowance, if the terminal can accept it",)
        opens = WHAT_OPENS + (extra if bound is not None and bound[1] == "spill" else ())
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

    Returns
    -------
    StrokeWindow

    Notes
    -----
    The coarse scan runs in two steps: its longer half first, its shorter half only when the
    window may reach into it (no failing stroke was found below a passing one). Strokes below
    the longest failing stroke under the window are not explored.
    """
    t_start = time.perf_counter()
    event = closing_event(terminal, case, valve)
    route = terminal.routes[case.route]
    element = route.element(event.element)
    stroke_file = stroke_of(terminal, case, event)
    staged = isinstance(event, Close) and len(event.travel) > 2
    first = first_closing_event(case)
    closing = first.element if first is not None else None
    band_members = (members or band(route)) if spread else (NOMINAL,)
    all_members = list(range(len(band_members)))
    tracks_members = [[0]] + ([all_members] if spread else [])
    ev = Evaluator(terminal, case, concurrent=concurrent)
    code_top = (
        None
        if case.max_closure_time is None
        else on_lattice(case.max_closure_time - event.at, STEP, "down")
    )
    scan_top = code_top if code_top is not None else (top if top is not None else DEFAULT_TOP)

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

    def run(requests: dict[float, set[int]], keep: bool = False) -> list[Outcome]:
        todo = [
            (v, m)
            for v, ms in sorted(requests.items())
            for m in sorted(ms)
            if v not in samples or samples[v][m] is None or keep
        ]
        variants = [band_members[m].variant(strokes=((event.element, v),)) for v, m in todo]
        outs = ev.evaluate(variants, keep=keep) if variants else []
        for (v, m), out in zip(todo, outs, strict=True):
            samples.setdefault(v, [None] * len(band_members))[m] = out
        return outs

    tracks = [Track(case.spill_limit, code_top, scan_top) for _ in tracks_members]
    if code_top is None or code_top >= floor - 1e-9:
        n = max(coarse, math.ceil(math.log2(max(scan_top, floor) / floor)) + 1)
        coarse_pts = geometric_lattice(floor, max(scan_top, floor), n, STEP)
        half = len(coarse_pts) // 2
        lower, upper = coarse_pts[:half], coarse_pts[half:]
        # the file's own stroke is always run: a window around it must not hide between samples
        own = on_lattice(stroke_file, STEP) if stroke_file is not None else None
        if own is not None and floor <= own <= scan_top and own not in coarse_pts:
            upper = sorted([*upper, own])
        run({v: set(all_members) for v in upper})
        lower_scanned = not lower
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
                break
            if len(req) == 1 and len(band_members) == 1 and (os.cpu_count() or 1) > 1:
                # one stroke would leave a processor idle: cut its bracket in three instead
                req = {v: set(all_members) for v in tracks[0].thirds()} or req
            run(req)

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
            future = pool.submit(effective_closure, terminal, case, event, rec)
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
        for _ in range(MAX_PASSES):
            req = {}
            for tr, ms in zip(tracks, tracks_members, strict=True):
                tr.update(points_of(samples, ms), True)
                for v in tr.requests:
                    req.setdefault(v, set()).update(ms)
            if not req:
                break
            run(req)
        windows = [finish(i) for i in range(len(tracks))]
    rec_final = None
    for i, w in enumerate(windows):
        if w.empty:
            continue
        rec, mf, ms_ = _recommend(windows[lead] if not windows[lead].empty else w, scan_top)
        assert w.stroke_min is not None
        if not (w.stroke_min <= rec and (w.stroke_max is None or rec <= w.stroke_max)):
            rec, mf, ms_ = _recommend(w, scan_top)
        windows[i] = dataclasses.replace(w, recommended=rec, margin_fast=mf, margin_slow=ms_)
        if i == lead or rec_final is None:
            rec_final = rec
    if rec_final is not None and rec_final != checked_at:
        with ThreadPoolExecutor(1) as pool:
            future = pool.submit(effective_closure, terminal, case, event, rec_final)
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
    progress: Callable[[str], None] | None = None,
) -> StrokeResult:
    """The stroke window of every case of ``terminal`` (or of those named)."""
    out = []
    cases = [c for c in terminal.cases if case_names is None or c.name in case_names]
    if valve is not None:
        for c in cases:
            closing_event(terminal, c, valve)  # refuse before any work
    for c in cases:
        if progress:
            progress(c.name)
        out.append(stroke_window(terminal, c, valve=valve, spread=spread))
    return StrokeResult(terminal, tuple(out), spread)


def bench_jetty_windows(path: str | None = None) -> dict[str, object]:
    """Wall time of the full stroke window of every case of the jetty demo.

    A first, untimed call loads the compiled kernel. Returns ``{"cases": {"<case>": s, ...},
    "total_s": s, "runs": member runs, "node_updates": grid nodes times time steps,
    "node_updates_per_s": the rate the searches achieved}``.
    """
    from pathlib import Path

    from esdsurge.terminal import load

    if path is None:
        here = Path.cwd() / "terminals" / "jetty.yaml"
        default = Path(__file__).resolve().parents[3] / "terminals" / "jetty.yaml"
        path = str(here if here.exists() else default)
    terminal = load(path)
    stroke_window(terminal, terminal.cases[0], top=2.0, coarse=2)  # load the kernel
    cases: dict[str, float] = {}
    runs = updates = 0
    t0 = time.perf_counter()
    for c in terminal.cases:
        w = stroke_window(terminal, c)
        cases[c.name] = w.seconds
        runs += w.runs
        updates += w.node_updates
    total = time.perf_counter() - t0
    return {
        "cases": cases,
        "total_s": total,
        "runs": runs,
        "node_updates": updates,
        "node_updates_per_s": updates / total if total > 0 else math.nan,
    }
