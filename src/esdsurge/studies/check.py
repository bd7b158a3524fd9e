"""The check of a terminal's ESD cases: run each case and judge every element against its limits.

Orchestration only: the steady state and hand checks come from ``studies.derive``, the transient
from ``engine.simulate``, the limits from ``limits.resolve``. The result objects are what every
presenter (summary, JSON, plots, report) reads; none of them recomputes anything.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from esdsurge.errors import UsageError
from esdsurge.limits import ResolvedLimits
from esdsurge.model import (
    BRANCH_KINDS,
    Case,
    Close,
    Fluid,
    Ramp,
    Relief,
    Terminal,
)
from esdsurge.studies.derive import CaseDerived, derive_case, first_closing_event

PASS, FAIL, FAIL_STEADY, NO_STEADY = "pass", "fail", "fails before surge", "no steady state"

#: A vapour cavity larger than this counts as column separation [m^3] (1 mL: far above the
#: round-off of the cavity model, far below any cavity that matters).
CAVITY_THRESHOLD = 1e-6

#: Pressure tolerance of the minimum check [Pa]: the cavity model holds a cavity's pressure at
#: the vapour pressure exactly, so a node at vapour pressure without a cavity is not a breach.
MIN_PRESSURE_TOLERANCE = 1.0


@dataclass(frozen=True)
class ElementVerdict:
    """One element's peaks against its limits.

    p_max_abs [Pa] at t_p_max [s] and chainage x_p_max [m]; p_min_abs [Pa] at t_p_min, x_p_min;
    cavity_max [m^3] at x_cavity_max [m]; limits : the resolved limits;
    margin_max : limit minus peak [Pa] (``None`` without a limit); margin_min : lowest pressure
    minus the minimum allowed [Pa]; ok_max, ok_min, ok : verdicts
    """

    name: str
    kind: str
    p_max_abs: float
    t_p_max: float
    x_p_max: float
    p_min_abs: float
    t_p_min: float
    x_p_min: float
    cavity_max: float
    x_cavity_max: float
    limits: ResolvedLimits
    margin_max: float | None
    margin_min: float
    ok_max: bool
    ok_min: bool

    @property
    def ok(self) -> bool:
        return self.ok_max and self.ok_min

    def worst_ratio(self, atmosphere_abs: float) -> float:
        """Smallest relative margin of the element [-] (negative when a limit is broken)."""
        ratios = [self.margin_min / max(self.limits.min_abs, 1.0)]
        if self.margin_max is not None and self.limits.max_gauge is not None:
            ratios.append(self.margin_max / max(self.limits.max_gauge, 1.0))
        return min(ratios)


@dataclass(frozen=True)
class Trace:
    """Pressure against time at one point: ``time`` [s], ``p_abs`` [Pa]."""

    where: str
    time: np.ndarray
    p_abs: np.ndarray


@dataclass(frozen=True)
class BranchResult:
    """What a relief valve or an accumulator did in the run.

    volume : volume into it over the run [m^3] (relieved; an accumulator's net intake)
    flow_max : largest flow into it [m^3/s] at t_flow_max [s]
    state_min, state_max : a relief valve's smallest and largest opening [-] (1 fully open),
        an accumulator's smallest and largest gas volume [m^3]
    capacity : a relief valve's flow fully open at its full-open pressure [m^3/s] (``None``
        for an accumulator)
    time_over_capacity : time a relief valve was fully open with the pressure above its
        full-open pressure [s]: it was asked to pass more than its capacity
    receiver_volume : the relief tank's room [m^3] or ``None``; receiver_ok : whether the
        relieved volume fits (``None`` without a receiver volume)
    time [s], flow [m^3/s], state : the histories (opening [-] or gas volume [m^3])
    flow_out_max : largest flow out of it back into the route [m^3/s] (>= 0; an accumulator
        giving liquid back) at t_flow_out_max [s], from the sampled history
    """

    name: str
    kind: str
    volume: float
    flow_max: float
    t_flow_max: float
    state_min: float
    state_max: float
    capacity: float | None
    time_over_capacity: float
    receiver_volume: float | None
    receiver_ok: bool | None
    time: np.ndarray
    flow: np.ndarray
    state: np.ndarray
    flow_out_max: float = 0.0
    t_flow_out_max: float = 0.0

    @property
    def over_capacity(self) -> bool:
        return self.time_over_capacity > 0.0


@dataclass(frozen=True)
class CaseCheck:
    """Result of one case.

    verdict : ``pass``, ``fail``, ``fails before surge`` or ``no steady state``
    governing : the element with the smallest relative margin (or the first failing one)
    closing : the first closing element; spill : volume through it after t = 0 [m^3]
    manifold : where the carrier-side trace was taken; manifold_peak_abs [Pa] at t [s]
    traces : pressure at the manifold and at the closing element
    run : the engine's Run (``None`` when there is no steady state)
    branches : what each relief valve and accumulator did
    without : the mitigations taken out in ``compare``
    compare : the same case with those mitigations taken out (``None`` when not asked)
    member : the batch member of ``run`` that this result judges (0 as designed; ``compare``
        is another member of the same run)
    """

    case: Case
    fluid: Fluid
    derived: CaseDerived
    run: object | None
    elements: tuple[ElementVerdict, ...]
    verdict: str
    governing: str | None
    closing: str | None
    spill: float | None
    spill_ok: bool | None
    manifold: str | None
    manifold_peak_abs: float | None
    t_manifold_peak: float | None
    traces: tuple[Trace, ...]
    largest_cavity: float
    largest_cavity_at: str | None
    branches: tuple[BranchResult, ...] = ()
    without: tuple[str, ...] = ()
    compare: CaseCheck | None = None
    member: int = 0

    @property
    def ok(self) -> bool:
        return self.verdict == PASS

    @property
    def limits_ok(self) -> bool:
        """Every pressure limit holds, before and during the surge (the spill limit aside)."""
        return self.verdict in (PASS, FAIL) and all(e.ok for e in self.elements)


@dataclass(frozen=True)
class CheckResult:
    terminal: Terminal
    cases: tuple[CaseCheck, ...]
    stroke: float | None
    rate: float | None

    @property
    def ok(self) -> bool:
        return all(c.ok for c in self.cases)


def with_stroke(case: Case, stroke: float) -> Case:
    """``case`` with the stroke of its first closing valve set to ``stroke`` [s]."""
    first = first_closing_event(case)
    if not isinstance(first, Close):
        raise UsageError(
            f"case {case.name!r}: --stroke needs a case whose first event closes a valve"
        )
    events = tuple(dataclasses.replace(e, stroke=stroke) if e is first else e for e in case.events)
    return dataclasses.replace(case, events=events)


def _verdicts(run, member: int, limits: dict[str, ResolvedLimits], atm: float):
    out = []
    for i, name in enumerate(run.elements):
        kind = run.kinds[i]
        if name not in limits:
            continue
        lim = limits[name]
        pmax = float(run.p_max_abs[member, i])
        pmin = float(run.p_min_abs[member, i])
        margin_max = None if lim.max_gauge is None else lim.max_gauge - (pmax - atm)
        margin_min = pmin - lim.min_abs
        cavity = float(run.cavity_max[member, i])
        # the default minimum is "no column separation": a cavity breaks it even though the
        # cavity model holds the pressure at the vapour pressure
        ok_min = margin_min >= -MIN_PRESSURE_TOLERANCE and not (
            lim.min_is_vapour and cavity > CAVITY_THRESHOLD
        )
        out.append(
            ElementVerdict(
                name=name,
                kind=kind,
                p_max_abs=pmax,
                t_p_max=float(run.t_p_max[member, i]),
                x_p_max=float(run.x_p_max[member, i]),
                p_min_abs=pmin,
                t_p_min=float(run.t_p_min[member, i]),
                x_p_min=float(run.x_p_min[member, i]),
                cavity_max=cavity,
                x_cavity_max=float(run.x_cavity_max[member, i]),
                limits=lim,
                margin_max=margin_max,
                margin_min=margin_min,
                ok_max=margin_max is None or margin_max >= 0.0,
                ok_min=ok_min,
            )
        )
    return tuple(out)


def _governing(
    elements: tuple[ElementVerdict, ...], failing: list[ElementVerdict], atm: float
) -> str | None:
    """The element that governs a case: the worst failure, else the smallest relative margin.

    An overpressure ranks by how far the peak exceeds the limit (relative); column separation
    by the size of the largest cavity. Overpressure ranks first: it is what bursts a hose.
    """
    if not elements:
        return None
    over = [e for e in failing if not e.ok_max]
    if over:
        return min(over, key=lambda e: e.worst_ratio(atm)).name
    if failing:
        return max(failing, key=lambda e: (e.cavity_max, -e.margin_min)).name
    return min(elements, key=lambda e: e.worst_ratio(atm)).name


def judge(terminal: Terminal, case: Case, derived: CaseDerived, run, member: int = 0) -> CaseCheck:
    """Turn member ``member`` of ``run`` into a verdict for ``case``."""
    atm = terminal.atmosphere_abs
    route = terminal.routes[case.route]
    if run is None or derived.steady is None:
        return CaseCheck(
            case,
            derived.fluid,
            derived,
            None,
            (),
            NO_STEADY,
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            (),
            0.0,
            None,
        )
    elements = _verdicts(run, member, derived.limits, atm)
    failing = [e for e in elements if not e.ok]
    governing = _governing(elements, failing, atm)
    first = first_closing_event(case)
    closing = first.element if first is not None else None
    spill = spill_ok = None
    if closing is not None:
        spill = abs(float(run.volume_through[member, run.index(closing)]))
        if case.spill_limit is not None:
            spill_ok = spill <= case.spill_limit
    # the carrier-side trace: the manifold if the route has one, else the carrier end of the
    # last element with length
    kinds = [e.kind for e in route.elements]
    if "manifold" in kinds:
        im = kinds.index("manifold")
        series = run.p_in_abs[member, im]
    else:
        im = max(i for i, e in enumerate(route.elements) if e.has_length)
        series = run.p_out_abs[member, im]
    manifold = route.elements[im].name
    k = int(np.argmax(series))
    traces = [Trace(manifold, run.time, series)]
    if closing is not None:
        ic = run.index(closing)
        side = run.p_in_abs if (derived.steady.flow >= 0.0) else run.p_out_abs
        traces.append(Trace(closing, run.time, side[member, ic]))
    cav = run.cavity_max[member]
    icav = int(np.argmax(cav))
    branches = _branches(route, run, member)
    verdict = PASS
    if derived.breaches:
        verdict = FAIL_STEADY
    elif failing or spill_ok is False or any(b.receiver_ok is False for b in branches):
        verdict = FAIL
    return CaseCheck(
        case=case,
        fluid=derived.fluid,
        derived=derived,
        run=run,
        elements=elements,
        verdict=verdict,
        governing=governing,
        closing=closing,
        spill=spill,
        spill_ok=spill_ok,
        manifold=manifold,
        manifold_peak_abs=float(series[k]),
        t_manifold_peak=float(run.time[k]),
        traces=tuple(traces),
        largest_cavity=float(cav[icav]),
        largest_cavity_at=run.elements[icav] if cav[icav] > 0.0 else None,
        branches=branches,
        member=member,
    )


def _branches(route, run, member: int) -> tuple[BranchResult, ...]:
    out = []
    for j, name in enumerate(run.branches):
        e = route.element(name)
        volume = float(run.branch_volume[member, j])
        receiver = e.receiver_volume if isinstance(e, Relief) else None
        capacity = float(run.branch_capacity[member, j])
        flow = run.branch_flow[member, j]
        k_out = int(np.argmin(flow))
        out.append(
            BranchResult(
                name=name,
                kind=e.kind,
                volume=volume,
                flow_max=float(run.branch_flow_max[member, j]),
                t_flow_max=float(run.t_branch_flow_max[member, j]),
                state_min=float(run.branch_state_min[member, j]),
                state_max=float(run.branch_state_max[member, j]),
                capacity=capacity if isinstance(e, Relief) else None,
                time_over_capacity=float(run.branch_time_over_capacity[member, j]),
                receiver_volume=receiver,
                receiver_ok=None if receiver is None else volume <= receiver,
                time=run.time,
                flow=flow,
                state=run.branch_state[member, j],
                flow_out_max=max(-float(flow[k_out]), 0.0) + 0.0,  # no negative zero
                t_flow_out_max=float(run.time[k_out]),
            )
        )
    return tuple(out)


def mitigations(terminal: Terminal, case: Case) -> dict[str, str]:
    """The mitigations of ``case`` that ``--without`` can take out: name -> what it is."""
    route = terminal.routes[case.route]
    out = {}
    for e in route.elements:
        if isinstance(e, BRANCH_KINDS):
            out[e.name] = "surge relief valve" if isinstance(e, Relief) else "accumulator"
    for ev in case.events:
        if isinstance(ev, Ramp):
            out[ev.element] = "pump ramp-down (becomes a trip)"
        elif isinstance(ev, Close) and len(ev.travel) > 2:
            out[ev.element] = "staged closure (becomes linear over the same stroke)"
    return out


def _check_without(terminal: Terminal, cases: list[Case], without: tuple[str, ...]) -> None:
    known: dict[str, str] = {}
    for case in cases:
        known.update(mitigations(terminal, case))
    unknown = [n for n in without if n not in known]
    if unknown:
        have = ", ".join(f"{n!r} ({what})" for n, what in known.items()) or "none"
        raise UsageError(
            f"--without {unknown[0]!r}: not a mitigation of the cases checked; their "
            f"mitigations: {have}"
        )


def check(
    terminal: Terminal,
    case_names: list[str] | None = None,
    *,
    stroke: float | None = None,
    rate: float | None = None,
    product: str | None = None,
    without: tuple[str, ...] = (),
    progress: Callable[[str], None] | None = None,
) -> CheckResult:
    """Run the cases of ``terminal`` (all, or those named) and judge them.

    stroke : stroke of each case's first closing valve [s] (what-if); rate : transfer rate [m^3/s];
    product : run every case with this product of the file instead of its own;
    without : mitigations to take out in a second member of the same batch, judged beside the
    case as designed (:func:`mitigations` lists what may be named)
    """
    from esdsurge.engine import Variant, simulate

    if product is not None and product not in terminal.products:
        raise UsageError(
            f"--product {product!r}: no such product in {terminal.path} "
            f"(products: {', '.join(terminal.products)})"
        )
    chosen = [c for c in terminal.cases if case_names is None or c.name in case_names]
    if without:
        _check_without(terminal, chosen, without)
    out = []
    for case in chosen:
        if progress:
            progress(case.name)
        if stroke is not None:
            case = with_stroke(case, stroke)
        if rate is not None:
            case = dataclasses.replace(case, rate=rate)
        if product is not None:
            case = dataclasses.replace(case, product=product)
        derived = derive_case(terminal, case)
        here = tuple(n for n in without if n in mitigations(terminal, case))
        variants = [Variant()]
        if here:
            variants.append(Variant(label="without " + ", ".join(here), without=here))
        run = None
        if derived.steady is not None:
            run = simulate(
                terminal.routes[case.route],
                terminal.products[case.product],
                case,
                atmosphere_abs=terminal.atmosphere_abs,
                variants=variants,
            )
        result = judge(terminal, case, derived, run)
        if here and run is not None:
            bare = judge(terminal, case, derived, run, member=1)
            result = dataclasses.replace(result, without=here, compare=bare)
        out.append(result)
    return CheckResult(terminal, tuple(out), stroke, rate)


__all__ = [
    "BranchResult",
    "CaseCheck",
    "CheckResult",
    "ElementVerdict",
    "check",
    "judge",
    "mitigations",
]
