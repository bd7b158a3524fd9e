"""Batched evaluation for the searches: many variants of one case, judged by the check's rules.

The stroke and rate searches ask, at each step, for a set of variants of one case (strokes or
rates, times the members of an uncertainty band). :class:`Evaluator` runs them through the
engine and judges every member with :func:`esdsurge.studies.check.judge`, so that a search says
"safe" exactly when ``esdsurge check`` would.

Passes. The engine runs every member of a batch for the batch's common simulated time (the
longest default duration of its members: ten pipeline periods, or the end of the last event
plus five periods). A 60 s stroke needs about twice the time of a 5 s stroke, so one batch of
mixed strokes runs the short ones twice as long as ``check`` would. :func:`duration_groups`
therefore splits a request into at most a few batches of similar duration (the split that
costs least; a batch of its own costs only its set-up, so a few strokes of a refinement step
each run for their own time, as in ``check``), and the batches of one request run at the same
time on threads (the compiled loop releases the GIL). Each member is judged over a simulated
time at least as long as ``check`` would use for it, so a member judged safe here is safe in
``check``. A search keeps the steady state of the case's rate from one pass to the next.

Early stop. A search needs to know that a member fails, not by how much: a member whose
highest pressure has passed a surge limit, whose lowest has passed a minimum, or that holds a
counted vapour cavity fails whatever happens later (the extremes of a run only widen), so the
engine stops it (:meth:`Evaluator.stop_rule`, ``engine.StopRule``), though not before the
case's first closing element has shut, so that its spill is whole. About half of the members
of a stroke search fail; they stop at about the end of their closure instead of five periods
after it. The verdict and the spill of a stopped member are those of the whole run; its peaks
and cavities (``Outcome.measures``), which place the next samples, are those reached when it
stopped, and a stroke search does not compare them with its neighbours' (``Point.partial``).
Runs kept whole (``keep``, e.g. the recommended setting) are never stopped. A run judged only
for its verdict keeps two samples per series (``VERDICT_SAMPLES``): the searches use none.

Horizons. A search may ask for a member to be run only to a time of its choosing (the stroke
search: a little past the time its failing neighbours broke a limit), in batches of their own:
a member that breaks a limit by then fails as it would whole; one that breaks none passes
only provisionally (``Outcome.provisional``): that steers a search, but is not a verdict until
the member is run whole.

Lattices. Searched values are kept on a lattice (0.1 s for strokes, 1 m^3/h for rates), so that
every value a search reports was simulated, and is shown exactly as it was run.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field

import numpy as np

from esdsurge.engine import Run, StopRule, Variant, simulate
from esdsurge.engine.run import MemberState
from esdsurge.engine.simulate import MIN_PERIODS, PERIODS_AFTER_EVENTS, default_duration
from esdsurge.errors import SteadyStateError
from esdsurge.limits import Basis
from esdsurge.lineup import sections
from esdsurge.model import Case, Close, Coupling, Fluid, Release, Route, Terminal
from esdsurge.steady import steady_state
from esdsurge.studies.check import (
    CAVITY_THRESHOLD,
    MIN_PRESSURE_TOLERANCE,
    CaseCheck,
    judge,
)
from esdsurge.studies.derive import (
    CaseDerived,
    derive_case,
    first_closing_event,
    steady_breaches,
)

#: samples per series of a run judged only for its verdict: the searches use none of the series
#: (the extremes and volumes are taken at every step), and 2000 samples of every element end
#: cost more to allocate and unpack than a short run's time loop
VERDICT_SAMPLES = 2
#: most batches one request is split into (by simulated time)
MAX_GROUPS = 3
#: a straight line through the margins above the vapour pressure that reaches zero beyond the
#: failing end of a bracket by at most this share of it still places the next sample beside
#: that end (:func:`margin_estimate`) [-]
MARGIN_REACH = 0.25
#: what one more batch costs, in simulated time of one member [pipeline periods]: its Python
#: set-up (steady state, grids, unpacking), a few milliseconds, about what two periods of one
#: member take on the demo routes
GROUP_COST_PERIODS = 2.0
#: a member is run only to its horizon (:meth:`Evaluator.evaluate`) when that saves at least
#: a tenth of its whole simulated time; else it runs whole, and its pass is a verdict
CUT_SHARE = 0.9


@dataclass(frozen=True)
class Breach:
    """A limit broken by one band member.

    element, kind : the element; what : ``highest pressure``, ``lowest pressure``, ``column
    separation``, ``steady state`` or ``no steady state``; basis : the limit as
    ``limits.resolve`` gives it (``""``: none); member : the band member's label
    """

    element: str
    kind: str
    what: str
    basis: Basis | str
    member: str

    def describe(self, with_member: bool = False) -> str:
        text = f"{self.element}: {self.what}"
        if self.basis:
            text += f" against {self.basis}"
        if with_member and self.member:
            text += f" [{self.member}]"
        return text


@dataclass(frozen=True)
class Outcome:
    """One band member at one searched value, judged.

    possible : the member could be run (``False``: no steady state, see ``problem``)
    limits_ok : every pressure limit holds, before and during the surge
    spill : volume through the case's first closing element after the trigger [m^3]
    spill_ok : within the case's spill limit (``None`` without one)
    peak_ratio : highest pressure over its surge limit, gauge, over the elements that have one
        [-] (1 means at the limit; NaN without any such limit)
    measures : per element, ``(name, peak over its limit less one [-] (NaN without a
        limit), shortfall of the lowest pressure below its minimum in atmospheres [-], counted
        vapour cavity [m^3])``: continuous measures that the searches interpolate between
        samples to place their next sample (the verdict is ``limits_ok``)
    cavity : largest vapour cavity in an element whose minimum is the vapour pressure [m^3]
    governing : the element with the least margin (the first failing one)
    breaches : what is broken
    duration : simulated time [s]
    flow : steady flow before the trigger [m^3/s] (signed)
    stopped : when the engine stopped the member, a limit being broken for good [s] (``None``:
        it ran for the whole duration); the spill and the verdict are whole, the peaks,
        cavities and ``measures`` those reached by then
    check : the full verdict, kept only when asked for
    provisional : the member was run only up to a horizon shorter than ``check`` would use
        (``duration``) and broke no limit by then: a pass so far, not a verdict; its peaks,
        cavities and ``measures`` are those reached by then (see :meth:`Evaluator.evaluate`)
    state : of a provisional member, the engine's state at its horizon, from which a run of
        it whole goes on (``Evaluator.evaluate(resume=...)``)
    """

    possible: bool
    limits_ok: bool
    spill: float | None
    spill_ok: bool | None
    peak_ratio: float
    cavity: float
    governing: str | None
    breaches: tuple[Breach, ...]
    duration: float
    flow: float | None
    measures: tuple[tuple[str, float, float, float], ...] = ()
    problem: str | None = None
    stopped: float | None = None
    check: CaseCheck | None = None
    provisional: bool = False
    state: MemberState | None = field(default=None, compare=False, repr=False)


def summarise(cc: CaseCheck, atmosphere_abs: float, label: str, duration: float) -> Outcome:
    """The :class:`Outcome` of a verdict (``judge``'s result); nothing is judged again here."""
    breaches: list[Breach] = []
    for b in cc.derived.breaches:
        breaches.append(Breach(b.element, "", "steady state", b.basis, label))
    ratios = []
    cavity = 0.0
    measures = []
    for ev in cc.elements:
        lim = ev.limits
        over = math.nan
        if lim.max_gauge is not None and lim.max_gauge > 0.0:
            ratios.append((ev.p_max_abs - atmosphere_abs) / lim.max_gauge)
            over = ratios[-1] - 1.0
        counted = ev.cavity_max if lim.min_is_vapour else 0.0
        cavity = max(cavity, counted)
        measures.append((ev.name, over, (lim.min_abs - ev.p_min_abs) / atmosphere_abs, counted))
        if not ev.ok_max:
            breaches.append(Breach(ev.name, ev.kind, "highest pressure", lim.max_basis, label))
        if not ev.ok_min:
            what = (
                "column separation"
                if lim.min_is_vapour and ev.cavity_max > CAVITY_THRESHOLD
                else "lowest pressure"
            )
            breaches.append(Breach(ev.name, ev.kind, what, lim.min_basis, label))
    steady = cc.derived.steady
    stopped = float(cc.run.stopped[cc.member]) if cc.run is not None else math.nan
    if cc.spill_ok is False:
        breaches.append(
            Breach(cc.closing or "", "", "spill", f"spill limit {cc.case.spill_limit:g} m³", label)
        )
    return Outcome(
        possible=True,
        limits_ok=cc.limits_ok,
        spill=cc.spill,
        spill_ok=cc.spill_ok,
        peak_ratio=max(ratios) if ratios else math.nan,
        cavity=cavity,
        governing=cc.governing,
        breaches=tuple(breaches),
        duration=duration,
        flow=steady.flow if steady is not None else None,
        measures=tuple(measures),
        stopped=None if math.isnan(stopped) else stopped,
    )


def impossible(problem: str, label: str) -> Outcome:
    """A member that cannot be run (no steady state)."""
    return Outcome(
        possible=False,
        limits_ok=False,
        spill=None,
        spill_ok=None,
        peak_ratio=math.nan,
        cavity=0.0,
        governing=None,
        breaches=(Breach("", "", "no steady state", problem, label),),
        duration=0.0,
        flow=None,
        problem=problem,
    )


def duration_groups(
    ends: Sequence[float],
    period: float,
    max_groups: int = MAX_GROUPS,
    durations: Sequence[float] | None = None,
) -> list[list[int]]:
    """Split members into batches of similar simulated time, at least cost.

    Parameters
    ----------
    ends : end of the last event of each member [s]
    period : pipeline period of the route [s]
    max_groups : most batches
    durations : the simulated time of each member [s], in place of the one its end gives

    Returns
    -------
    list of lists of member indices; the cost of a batch is its size times its duration
    (``MIN_PERIODS`` periods, or the last end plus ``PERIODS_AFTER_EVENTS`` periods), plus
    ``GROUP_COST_PERIODS`` periods per extra batch (its set-up).

    Examples
    --------
    >>> duration_groups([1.0, 2.0, 60.0], 3.0)
    [[0, 1], [2]]
    >>> duration_groups([1.0, 2.0], 3.0)
    [[0, 1]]
    """
    floor = MIN_PERIODS * period
    if durations is None:
        durations = [max(floor, e + PERIODS_AFTER_EVENTS * period) for e in ends]
    order = sorted(range(len(durations)), key=lambda i: durations[i])
    if not order:
        return []
    extra = GROUP_COST_PERIODS * period
    dur = [durations[i] for i in order]
    n = len(order)
    inf = math.inf
    # best[g][j]: least cost of the first j members in g batches (contiguous in sorted order)
    best = [[inf] * (n + 1) for _ in range(max_groups + 1)]
    cut = [[0] * (n + 1) for _ in range(max_groups + 1)]
    best[0][0] = 0.0
    for g in range(1, max_groups + 1):
        for j in range(1, n + 1):
            for i in range(g - 1, j):
                c = best[g - 1][i] + (j - i) * dur[j - 1] + (extra if g > 1 else 0.0)
                if c < best[g][j]:
                    best[g][j], cut[g][j] = c, i
    g = min(range(1, max_groups + 1), key=lambda k: best[k][n])
    groups = []
    j = n
    while g > 0:
        i = cut[g][j]
        groups.append([order[k] for k in range(i, j)])
        j, g = i, g - 1
    return list(reversed(groups))


class Evaluator:
    """Runs and judges variants of one case; counts the work done.

    Parameters
    ----------
    terminal, case : the file and the case (the case as the search varies it from)
    concurrent : run the batches of one request at the same time on threads
    """

    def __init__(self, terminal: Terminal, case: Case, *, concurrent: bool = True):
        self.terminal = terminal
        self.case = case
        self.route = terminal.routes[case.route]
        self.fluid = terminal.products[case.product]
        self.atmosphere_abs = terminal.atmosphere_abs
        # limits and the steady state as lint and check see them (hand checks left out: they
        # need the closure, which the searches vary)
        self.base: CaseDerived = derive_case(terminal, dataclasses.replace(case, events=()))
        self.limits = self.base.limits
        lines = [ln for ln in sections(self.route, self.fluid) if ln.wave_speed]
        self.period = 2.0 * sum(ln.length / ln.wave_speed for ln in lines)  # type: ignore[operator]
        self.concurrent = concurrent
        self.passes = 0
        self.members = 0
        self.node_updates = 0
        self._impossible: dict[tuple, str] = {}
        self._steadies: dict[float | None, object] = {}

    # -- what a variant does to the case's events --------------------------------------------

    def _end(self, ev: object, variant: Variant) -> float:
        """When event ``ev`` is over with ``variant``'s strokes [s]: a closing element shut,
        any other event at its time."""
        strokes = dict(variant.strokes)
        if isinstance(ev, Close):
            return ev.at + strokes.get(ev.element, ev.stroke * variant.stroke_scale)
        if isinstance(ev, Release):
            el = self.route.element(ev.element)
            assert isinstance(el, Coupling)
            return ev.at + strokes.get(el.name, el.closing_time)
        return ev.at  # type: ignore[attr-defined]

    def event_end(self, variant: Variant) -> float:
        """End of the case's last event with ``variant``'s strokes [s]."""
        return max((self._end(ev, variant) for ev in self.case.events), default=0.0)

    def whole_duration(self, variant: Variant) -> float:
        """About the simulated time ``check`` gives ``variant`` [s]: the case's ``duration``,
        else :func:`~esdsurge.engine.simulate.default_duration` on the route's period as the
        file gives its wave speeds (the engine's own grid may differ by the wave-speed
        adjustment, and a band member by its wave-speed scale)."""
        if self.case.duration is not None:
            return self.case.duration
        return default_duration([self.period], [self.event_end(variant)])

    # -- running ------------------------------------------------------------------------------

    def _steady(
        self, route: Route, fluid: Fluid, case: Case, atmosphere_abs: float, rate: float | None
    ) -> object:
        """:func:`esdsurge.steady.steady_state`, remembered by rate across the passes of a
        search on the case's own route (a member that scales the friction brings its own
        route, solved afresh)."""
        if route is not self.route:
            return steady_state(route, fluid, case, atmosphere_abs, rate=rate)
        if rate not in self._steadies:
            self._steadies[rate] = steady_state(route, fluid, case, atmosphere_abs, rate=rate)
        return self._steadies[rate]

    def shut_time(self, variant: Variant) -> float:
        """When the case's first closing element is shut with ``variant``'s strokes [s] (0
        when it closes nothing): from then on no more spill passes it."""
        first = first_closing_event(self.case)
        return 0.0 if first is None else self._end(first, variant)

    def stop_rule(
        self, variants: Sequence[Variant], no_spill: Sequence[bool] | None = None
    ) -> StopRule:
        """The bounds beyond which a member fails whatever follows, as ``judge`` sees them: the
        surge limit (gauge, on the site's atmosphere), the minimum less the check's tolerance,
        a counted cavity where the minimum is the vapour pressure; not before the first
        closing element has shut, so that its spill is whole. A member marked in
        ``no_spill`` (its spill is not needed) may stop for a cavity from the start."""
        atm = self.atmosphere_abs
        lims = self.limits.items()
        after = tuple(self.shut_time(v) for v in variants)
        free = tuple(no_spill) if no_spill is not None else (False,) * len(variants)
        return StopRule(
            max_abs=tuple((n, atm + lim.max_gauge) for n, lim in lims if lim.max_gauge is not None),
            min_abs=tuple((n, lim.min_abs - MIN_PRESSURE_TOLERANCE) for n, lim in lims),
            no_cavity=tuple(n for n, lim in lims if lim.min_is_vapour),
            cavity=CAVITY_THRESHOLD,
            after=after,
            cavity_after=tuple(0.0 if f else a for a, f in zip(after, free, strict=True)),
        )

    def _simulate(
        self,
        variants: Sequence[Variant],
        stop: bool = False,
        no_spill: Sequence[bool] = (),
        duration: float | None = None,
        resume: Sequence[MemberState | None] = (),
    ) -> Run:
        """Run ``variants``; with ``stop``, judged only for the verdict: failing members stop
        early (those marked in ``no_spill`` even before their valve has shut, for a cavity)
        and the series keep ``VERDICT_SAMPLES`` samples. ``duration``: the simulated time
        (default: the engine's, as ``check`` runs it)."""
        extra: dict[str, object] = {}
        if stop:
            rule = self.stop_rule(variants, no_spill or None)
            extra = {"stop": rule, "samples": VERDICT_SAMPLES}
        if duration is not None:
            extra["duration"] = duration
            extra["keep_state"] = True  # a cut member goes on from here when run whole
        if any(r is not None for r in resume):
            extra["resume"] = resume
        return simulate(
            self.route,
            self.fluid,
            self.case,
            atmosphere_abs=self.atmosphere_abs,
            variants=variants,
            steady=self._steady,
            **extra,  # type: ignore[arg-type]
        )

    def _judge(self, run: Run, member: int, keep: bool, cut: bool = False) -> Outcome:
        """The verdict on ``member``; a member stopped, or run (``cut``) only to a time,
        before its valve had shut has no spill (``None``): only part of it had passed. A
        ``cut`` member that broke nothing is ``provisional``."""
        steady = run.steady[member]
        derived = CaseDerived(
            self.case,
            self.fluid,
            steady,  # type: ignore[arg-type]
            None,
            None,
            self.limits,
            steady_breaches(steady, self.limits, self.atmosphere_abs),  # type: ignore[arg-type]
        )
        cc = judge(self.terminal, self.case, derived, run, member=member)
        stopped = float(run.stopped[member])  # NaN: not stopped
        ended = run.duration if cut and math.isnan(stopped) else stopped
        if ended < self.shut_time(run.variants[member]) + float(run.dt[member]):
            cc = dataclasses.replace(cc, spill=None, spill_ok=None)
        out = summarise(cc, self.atmosphere_abs, run.variants[member].label, run.duration)
        if cut and out.limits_ok:
            out = dataclasses.replace(out, provisional=True, state=run.states[member])
        return dataclasses.replace(out, check=cc) if keep else out

    def _run_group(
        self,
        variants: list[Variant],
        keep: bool,
        no_spill: Sequence[bool] = (),
        duration: float | None = None,
        resume: Sequence[MemberState | None] = (),
    ) -> list[Outcome]:
        """Run one batch; members found to have no steady state are left out (and noted).
        Without ``keep``, a member that has broken a limit for good is stopped early. With a
        ``duration`` (a horizon), the batch runs that long and its passes are provisional."""
        try:
            run = self._simulate(variants, not keep, no_spill, duration, resume)
        except SteadyStateError:
            for v in {self._key(v): v for v in variants}.values():
                self._probe(v)
            kept = [i for i, v in enumerate(variants) if self._key(v) not in self._impossible]
            if len(kept) == len(variants):
                raise
            rest = [variants[i] for i in kept]
            free = [no_spill[i] for i in kept] if no_spill else []
            again = [resume[i] for i in kept] if resume else []
            return self._run_group(rest, keep, free, duration, again) if rest else []
        self.passes += 1
        self.members += len(variants)
        self.node_updates += int(getattr(run, "node_updates", 0))
        cut = duration is not None
        return [self._judge(run, i, keep, cut) for i in range(len(variants))]

    @staticmethod
    def _key(v: Variant) -> tuple:
        """What a member's steady state depends on."""
        return (v.rate, v.friction_scale)

    def _probe(self, v: Variant) -> None:
        """Note whether ``v`` has a steady state (a run of a few steps)."""
        try:
            simulate(
                self.route,
                self.fluid,
                self.case,
                atmosphere_abs=self.atmosphere_abs,
                variants=[v],
                duration=1e-3,
                steady=self._steady,
            )
        except SteadyStateError as exc:
            self._impossible[self._key(v)] = str(exc)

    def evaluate(
        self,
        variants: Sequence[Variant],
        keep: bool = False,
        no_spill: Sequence[bool] | None = None,
        horizons: Sequence[float | None] | None = None,
        resume: Sequence[Outcome | None] | None = None,
    ) -> list[Outcome]:
        """Run and judge ``variants``; one :class:`Outcome` each, in order.

        Members whose rate cannot be held (no steady state) come back with ``possible=False``.
        ``keep`` keeps each member's full :class:`~esdsurge.studies.check.CaseCheck`.
        ``no_spill`` marks the members whose spill the caller does not need: one that forms a
        counted cavity stops then, though its valve has not shut, and has no spill.
        ``horizons`` gives, per member, a time [s] (``None``: none) to which it is enough to
        run it for now: a member whose horizon is well short of its whole simulated time
        (below ``CUT_SHARE`` of :meth:`whole_duration`) runs only that far, in batches of its
        own, and a pass by then is ``provisional`` (a failure is a failure). Not with ``keep``.
        ``resume`` gives, per member, a provisional outcome of the same variant to go on from
        (its ``state``): the member is run whole from there, through the same steps as a run
        from the start.
        """
        variants = list(variants)
        results: list[Outcome | None] = [None] * len(variants)
        todo = []
        for i, v in enumerate(variants):
            if self._key(v) in self._impossible:
                results[i] = impossible(self._impossible[self._key(v)], v.label)
            else:
                todo.append(i)
        cut: dict[int, float] = {}
        if horizons is not None and not keep:
            for i in todo:
                h = horizons[i]
                if h is not None and h < CUT_SHARE * self.whole_duration(variants[i]):
                    cut[i] = h
        whole = [i for i in todo if i not in cut]
        short = [i for i in todo if i in cut]
        groups: list[tuple[list[int], float | None]] = []
        if self.case.duration is not None:
            groups = [(whole, None)] if whole else []
        else:
            ends = [self.event_end(variants[i]) for i in whole]
            groups = [([whole[k] for k in g], None) for g in duration_groups(ends, self.period)]
        durs = [cut[i] for i in short]
        for g in duration_groups([], self.period, durations=durs):
            groups.append(([short[k] for k in g], max(durs[k] for k in g)))

        def work(job: tuple[list[int], float | None]) -> list[tuple[int, Outcome]]:
            group, duration = job
            free = [no_spill[i] for i in group] if no_spill is not None else []
            states = [
                o.state if o is not None and duration is None and not keep else None
                for o in (resume[i] if resume is not None else None for i in group)
            ]
            outs = iter(self._run_group([variants[i] for i in group], keep, free, duration, states))
            done = []
            for i in group:
                key = self._key(variants[i])
                if key in self._impossible:
                    done.append((i, impossible(self._impossible[key], variants[i].label)))
                else:
                    done.append((i, next(outs)))
            return done

        if self.concurrent and len(groups) > 1:
            with ThreadPoolExecutor(len(groups)) as pool:
                parts = list(pool.map(work, groups))
        else:
            parts = [work(g) for g in groups]
        for part in parts:
            for i, out in part:
                results[i] = out
        assert all(r is not None for r in results)
        return results  # type: ignore[return-value]


# --- lattices --------------------------------------------------------------------------------


def on_lattice(value: float, step: float, how: str = "nearest") -> float:
    """``value`` on the lattice of ``step`` (``nearest``, ``down`` or ``up``), rounded clean.

    >>> on_lattice(3.94, 0.1), on_lattice(3.94, 0.1, "down"), on_lattice(3.91, 0.1, "up")
    (3.9, 3.9, 4.0)
    """
    k = value / step
    if how == "nearest":
        n = round(k)
    elif how == "down":
        n = math.floor(k + 1e-9)
    else:
        n = math.ceil(k - 1e-9)
    digits = max(0, 1 - math.floor(math.log10(step)))
    return round(n * step, digits)


def geometric_lattice(low: float, high: float, count: int, step: float) -> list[float]:
    """About ``count`` values from ``low`` to ``high`` spaced evenly in log, on the lattice.

    >>> geometric_lattice(0.5, 60.0, 8, 0.1)
    [0.5, 1.0, 2.0, 3.9, 7.7, 15.3, 30.3, 60.0]
    """
    if high <= low:
        return [on_lattice(low, step)]
    raw = np.geomspace(low, high, count)
    vals = sorted({on_lattice(float(v), step) for v in raw} | {on_lattice(high, step, "down")})
    return [v for v in vals if v >= on_lattice(low, step, "up") - 1e-12]


def between(low: float, high: float, step: float, fraction: float = 0.5) -> float | None:
    """A lattice value strictly between ``low`` and ``high`` near ``low + fraction (high -
    low)``, or ``None`` when they are neighbours on the lattice.

    >>> between(3.0, 4.0, 0.1), between(3.0, 3.1, 0.1), between(3.0, 4.0, 0.1, 0.99)
    (3.5, None, 3.9)
    """
    lo_next = on_lattice(low + step, step)
    hi_prev = on_lattice(high - step, step)
    if lo_next > hi_prev + 1e-12:
        return None
    x = on_lattice(low + fraction * (high - low), step)
    return min(max(x, lo_next), hi_prev)


def refine(
    bad: float,
    good: float,
    step: float,
    estimate: float | None = None,
    around: Sequence[float] = (0.0,),
) -> list[float]:
    """Lattice values to sample next between a failing value ``bad`` and a passing ``good``.

    Parameters
    ----------
    bad, good : the bracket, in either order
    step : lattice step
    estimate : where the boundary is expected (e.g. by interpolation), or ``None``
    around : with an estimate, sample at these offsets from it (in the searched unit; a
        positive offset points from ``bad`` towards ``good``)

    Returns
    -------
    list of float
        Every inner lattice value when there are at most three; else the samples around the
        estimate (kept inside the bracket), so that an estimate that good closes the bracket in
        one pass; or the middle without an estimate.

    Examples
    --------
    >>> refine(3.0, 3.3, 0.1)
    [3.1, 3.2]
    >>> refine(10.0, 20.0, 0.1, estimate=12.46, around=(0.0, 0.1))
    [12.5, 12.6]
    >>> refine(20.0, 10.0, 0.1, estimate=12.46, around=(-0.1, 0.1))
    [12.4, 12.6]
    >>> refine(10.0, 20.0, 0.1)
    [15.0]
    """
    lo, hi = sorted((bad, good))
    n_inner = round((hi - lo) / step) - 1
    if n_inner <= 0:
        return []
    if n_inner <= 3:
        return [on_lattice(lo + k * step, step) for k in range(1, n_inner + 1)]
    if estimate is None or not math.isfinite(estimate):
        mid = between(lo, hi, step)
        return [] if mid is None else [mid]
    x = min(max(estimate, lo), hi)
    sign = 1.0 if good > bad else -1.0
    inner_lo, inner_hi = on_lattice(lo + step, step), on_lattice(hi - step, step)
    pts = (on_lattice(x + sign * d, step) for d in around)
    return sorted({min(max(v, inner_lo), inner_hi) for v in pts})


def crossing(x0: float, g0: float, x1: float, g1: float) -> float | None:
    """Where the straight line through (x0, g0) and (x1, g1) crosses zero, or ``None``.

    >>> crossing(10.0, 1.0, 20.0, -3.0)
    12.5
    """
    if not (math.isfinite(g0) and math.isfinite(g1)) or g0 == g1:
        return None
    return x0 + g0 * (x1 - x0) / (g0 - g1)


# --- points of a track ---------------------------------------------------------------------


@dataclass(frozen=True)
class Point:
    """One sampled value (a stroke, a rate) of a search's track: its members taken together.

    value : the searched value; ok : every member passes (see :func:`points_of`); spill :
    largest over the members [m^3]; peak_ratio : highest pressure over its limit [-]; cavity :
    largest counted vapour cavity [m^3]; breaches : what the members break; measures : per
    element, the largest over the members of ``(peak over limit - 1, shortfall below the
    minimum [atm], cavity [m^3])`` (see :class:`Outcome`); partial : a member was stopped
    early (a limit broken for good), or run only to a horizon, so ``peak_ratio``, ``cavity``
    and ``measures`` are those reached by then: at least, not at most; provisional : ``ok``
    only so far: a member was run only to a horizon (``ran_to`` [s], the shortest such) and
    broke nothing by then (:meth:`Evaluator.evaluate`); not a verdict until run whole
    """

    value: float
    ok: bool
    spill: float | None
    peak_ratio: float
    cavity: float
    breaches: tuple[Breach, ...]
    measures: dict[str, tuple[float, float, float]] = dataclasses.field(
        default_factory=dict, compare=False, repr=False
    )
    partial: bool = False
    provisional: bool = False
    ran_to: float | None = None


def points_of(
    samples: dict[float, list[Outcome | None]],
    members: list[int],
    ok: Callable[[Outcome], bool] = lambda o: o.limits_ok,
) -> list[Point]:
    """The samples in which every member of ``members`` was run, as points of one track.

    A point is ``ok`` when every member that can run is ``ok`` (by default: keeps every
    pressure limit), and not when none can run; an ``ok`` point is ``provisional`` when a
    member's pass is.
    """
    out = []
    for v in sorted(samples):
        outs = samples[v]
        if any(outs[m] is None for m in members):
            continue
        runs = [o for o in (outs[m] for m in members) if o is not None and o.possible]
        spills = [o.spill for o in runs if o.spill is not None]
        ratios = [o.peak_ratio for o in runs if not math.isnan(o.peak_ratio)]
        measures: dict[str, tuple[float, float, float]] = {}
        for o in runs:
            for name, over, short, cav in o.measures:
                old = measures.get(name, (math.nan, -math.inf, 0.0))
                measures[name] = (
                    over if math.isnan(old[0]) else max(old[0], over),
                    max(old[1], short),
                    max(old[2], cav),
                )
        ok_ = bool(runs) and all(ok(o) for o in runs)
        cut = [o.duration for o in runs if o.provisional]
        out.append(
            Point(
                value=v,
                ok=ok_,
                spill=max(spills) if spills else None,
                peak_ratio=max(ratios) if ratios else math.nan,
                cavity=max((o.cavity for o in runs), default=0.0),
                breaches=() if ok_ else tuple(b for o in runs for b in o.breaches),
                measures=measures,
                partial=any(o.stopped is not None or o.provisional for o in runs),
                provisional=ok_ and bool(cut),
                ran_to=min(cut) if ok_ and cut else None,
            )
        )
    return out


def measure(p: Point, element: str, what: str, failing: bool) -> float:
    """The continuous measure of a breach at a sample: > 0 broken."""
    over, short, cav = p.measures.get(element, (math.nan, math.nan, 0.0))
    if what == "highest pressure":
        return over
    if what == "lowest pressure":
        return short
    if what == "column separation":
        return cav if failing else short
    return math.nan


def boundary_estimate(
    points: list[Point], bad: float, good: float, spill_limit: float | None = None
) -> float | None:
    """Where the breach seen at ``bad`` is expected to stop, between ``bad`` and ``good``.

    A pressure breach, or the spill: the straight line through its measure at both ends
    (regula falsi). A vapour cavity has no measure that runs through zero on both sides (a
    cavity on one side, a margin above the vapour pressure on the other): the margins on the
    passing side, carried on to zero (:func:`margin_estimate`; on the demo jetty's eight
    cavity-bound window ends this took the four stroke searches from 86 runs to 78, with
    members that form a cavity stopped early). ``None`` when nothing fits: the search halves
    the bracket.
    """
    by = {p.value: p for p in points}
    first = by[bad].breaches[0] if by[bad].breaches else None
    if first is None:
        return None
    el, what = first.element, first.what
    if what == "spill" and spill_limit is not None:
        sb, sg = by[bad].spill, by[good].spill
        if sb is None or sg is None:
            return None
        return crossing(bad, sb - spill_limit, good, sg - spill_limit)
    if what in ("highest pressure", "lowest pressure"):
        g_bad, g_good = measure(by[bad], el, what, True), measure(by[good], el, what, False)
        if not g_bad > 0.0 >= g_good:
            return None
        return crossing(bad, g_bad, good, g_good)
    if what == "column separation":
        cav = [b.element for b in by[bad].breaches if b.what == "column separation"]
        return margin_estimate(points, cav, bad, good)
    return None


def margin_estimate(
    points: list[Point], elements: Sequence[str], bad: float, good: float
) -> float | None:
    """Where the vapour cavities seen at ``bad`` on ``elements`` are expected to stop forming,
    between ``bad`` and ``good`` (none forms there).

    For each element, the straight line through its lowest pressure's margin above the
    vapour pressure at ``good`` and at the next sample beyond it (passing too), carried on to
    zero margin; of these, the estimate nearest ``good`` (the cavity that lasts longest). The
    cavity side has no such margin (its lowest pressure is the vapour pressure), so only the
    passing side is used. A line that reaches zero a little beyond ``bad`` (within
    ``MARGIN_REACH`` of the bracket) says that the cavities stop close to ``bad``: ``bad``
    is returned, and the search samples next to it; one that reaches zero farther off, or
    beyond ``good``, is not used.
    """
    by = {p.value: p for p in points}
    away = sorted((v for v in by if (v - good) * (good - bad) > 0.0), key=lambda v: abs(v - good))
    if not away or not by[away[0]].ok or not by[good].ok:
        return None
    x2 = away[0]
    best = None
    for el in elements:
        g1 = measure(by[good], el, "lowest pressure", False)
        g2 = measure(by[x2], el, "lowest pressure", False)
        if not (math.isfinite(g1) and math.isfinite(g2)) or not g2 < g1 < 0.0:
            continue
        x = crossing(good, g1, x2, g2)
        if x is None:
            continue
        # how far from bad towards good, as a share of the bracket
        share = (x - bad) / (good - bad)
        if -MARGIN_REACH <= share <= 0.0:
            x = bad
        elif not 0.0 < share < 1.0:
            continue
        if best is None or abs(x - good) < abs(best - good):
            best = x
    return best
