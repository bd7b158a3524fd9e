"""The review pack's study: run every study a safety review needs and judge the checklist.

Orchestration only. ``lint`` (:func:`esdsurge.studies.derive.derive`), ``check``
(:func:`esdsurge.studies.check.check`), the stroke window (:mod:`esdsurge.studies.stroke`) and
the rate limits (:mod:`esdsurge.studies.rate`), both with their uncertainty band, run here; the
checklist statuses and the notes on the quality of the data are derived from their results by
comparing the numbers those studies give. Nothing is simulated or solved here beyond what those
studies do, and nothing is formatted: numbers stay SI floats, tagged with the kind of quantity
(:class:`Num`) that the presenters format with :class:`esdsurge.present.fmt.Fmt`.

Statuses (:data:`HOLDS`, :data:`ACTION`, :data:`NOT_ASSESSED`):

* **holds**: the results show that the item holds;
* **needs action**: the results show that it does not, or it cannot hold as the file stands (a
  case without a steady state, an empty stroke window);
* **not assessed**: esdsurge cannot say (no limit in the file, a study that could not run, data
  that only a test or a certificate on site can confirm).
"""

from __future__ import annotations

import datetime as _dt
import hashlib
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from esdsurge.model import (
    Accumulator,
    Arm,
    Case,
    Close,
    Coupling,
    Hose,
    Pipe,
    Pump,
    Release,
    Relief,
    Terminal,
    Trip,
)
from esdsurge.model import Valve as _Valve
from esdsurge.studies.check import (
    CAVITY_THRESHOLD,
    NO_STEADY,
    CaseCheck,
    CheckResult,
    ElementVerdict,
    check,
)
from esdsurge.studies.derive import Derived, derive, first_closing_event

HOLDS, ACTION, NOT_ASSESSED = "holds", "needs action", "not assessed"
STATUSES = (ACTION, NOT_ASSESSED, HOLDS)

#: Kinds of number a :class:`Num` may carry (each is shown by the ``Fmt`` method of that name;
#: ``p_gauge`` is an absolute pressure shown as gauge, ``p_gauge_value`` a gauge pressure).
NUM_KINDS = (
    "p_gauge",
    "p_gauge_value",
    "p_abs",
    "dp",
    "time",
    "flow",
    "volume",
    "length",
    "wave_speed",
    "speed",
    "diameter",
)

#: Checklist topics in the order a review reads them, with the question each answers.
TOPICS: dict[str, str] = {
    "case": "every case can be run as written",
    "stroke": "stroke setting inside the safe window",
    "rate": "transfer rate at or under the governing limit",
    "limit": "pressure limit of each element, with margin",
    "separation": "no column separation",
    "spill": "volume let through within the spill limit",
    "mitigation": "surge relief valves within their capacity and their relief tanks' room",
    "order": "ESD order: pumps stopped and valves shut before a release coupling parts",
    "code": "code closure-time rule",
    "site": "data to confirm on site",
}

#: Element kinds whose limits the checklist lists one by one.
LIMIT_KINDS = ("pipe", "arm", "hose", "manifold", "valve", "coupling")

#: Tolerance of time comparisons [s] and of the rate comparison [m^3/s] (half a step of the
#: rate search's 1 m^3/h lattice).
T_TOL = 1e-9
Q_TOL = 0.5 / 3600.0


@dataclass(frozen=True)
class Num:
    """A labelled number for the presenters: an SI value and the kind of quantity it is."""

    label: str
    value: float | None
    kind: str

    def __post_init__(self) -> None:
        if self.kind not in NUM_KINDS:
            raise ValueError(f"unknown number kind {self.kind!r}")


@dataclass(frozen=True)
class Item:
    """One checklist item: a statement a review signs, its status and the numbers behind it.

    topic : key of :data:`TOPICS`; claim : the statement, in words; status : one of
    :data:`STATUSES`; case, element : what it is about (``None``: the terminal, every case);
    numbers : the values that decide it; why : the reason for the status, in words
    """

    topic: str
    claim: str
    status: str
    case: str | None = None
    element: str | None = None
    numbers: tuple[Num, ...] = ()
    why: str = ""


@dataclass(frozen=True)
class Note:
    """An assumption or a data-quality remark: what the numbers rest on.

    topic : ``product``, ``wave speed``, ``valve``, ``coupling``, ``pump``, ``limit`` or
    ``model``; subject : the product or elements; text : the remark; numbers : values it refers
    to; source : where a value comes from, as the input says
    """

    topic: str
    subject: str
    text: str
    numbers: tuple[Num, ...] = ()
    source: str = ""


@dataclass(frozen=True)
class ReportResult:
    """Everything a review pack shows.

    file_sha256 : hash of the terminal file read, so that a reviewer can tell the input;
    created : when the studies ran (UTC, ISO 8601); derived : what ``lint`` shows; check : the
    cases at the file's settings; stroke, rate : the stroke window and rate limit results
    (``StrokeResult``, ``RateResult``), with the band when ``spread``; ``None`` when a study is
    not available (see ``missing``: study and reason); checklist; notes
    """

    terminal: Terminal
    file_sha256: str
    created: str
    derived: Derived
    check: CheckResult
    stroke: Any | None
    rate: Any | None
    spread: bool
    checklist: tuple[Item, ...]
    notes: tuple[Note, ...]
    missing: tuple[tuple[str, str], ...] = field(default=())

    @property
    def ok(self) -> bool:
        """No checklist item needs action."""
        return all(i.status != ACTION for i in self.checklist)

    def count(self, status: str) -> int:
        return sum(1 for i in self.checklist if i.status == status)


# --- the studies --------------------------------------------------------------------------------


def file_hash(path: str) -> str:
    """SHA-256 of the file at ``path`` (hex), or ``""`` when it cannot be read."""
    try:
        with open(path, "rb") as stream:
            return hashlib.sha256(stream.read()).hexdigest()
    except OSError:
        return ""


def _stroke_windows(terminal, cases, spread, options, tell):
    """The stroke window of every case that closes something, or the reason it cannot run."""
    try:
        from esdsurge.studies.stroke import StrokeResult, stroke_window
    except ImportError as exc:  # the study is missing from this installation
        return None, f"the stroke window study is not available ({exc})"
    windows = []
    for c in cases:
        if first_closing_event(c) is None:
            continue  # nothing closes: no stroke to search (the checklist says so)
        tell(f"stroke window: {c.name}")
        windows.append(stroke_window(terminal, c, spread=spread, **options))
    return StrokeResult(terminal, tuple(windows), spread), None


def _rate_limits(terminal, cases, spread, options, tell):
    """The rate limits of every case, or the reason they cannot run."""
    try:
        from esdsurge.studies.rate import RateResult, rate_limits
    except ImportError as exc:
        return None, f"the rate limit study is not available ({exc})"
    out = []
    for c in cases:
        tell(f"rate limits: {c.name}")
        out.append(rate_limits(terminal, c, spread=spread, **options))
    return RateResult(terminal, tuple(out), spread), None


def report(
    terminal: Terminal,
    case_names: list[str] | None = None,
    *,
    spread: bool = True,
    progress: Callable[[str], None] | None = None,
    stroke_options: dict[str, Any] | None = None,
    rate_options: dict[str, Any] | None = None,
) -> ReportResult:
    """Run every study of the review pack for ``terminal`` (all cases, or those named).

    Parameters
    ----------
    terminal : the terminal file read
    case_names : only these cases (default all)
    spread : search the stroke window and the rate limit across the uncertainty band too
    progress : called with a short description before each piece of work
    stroke_options, rate_options : extra keyword arguments of
        :func:`~esdsurge.studies.stroke.stroke_window` and
        :func:`~esdsurge.studies.rate.rate_limits` (scan ranges; default theirs)

    Returns
    -------
    ReportResult
    """
    tell = progress or (lambda _text: None)
    created = _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat()
    derived = derive(terminal, case_names)
    chk = check(terminal, case_names, progress=lambda n: tell(f"check: {n}"))
    cases = [c for c in terminal.cases if case_names is None or c.name in case_names]
    missing = []
    stroke, why = _stroke_windows(terminal, cases, spread, stroke_options or {}, tell)
    if stroke is None:
        missing.append(("stroke", why))
    rate, why = _rate_limits(terminal, cases, spread, rate_options or {}, tell)
    if rate is None:
        missing.append(("rate", why))
    return ReportResult(
        terminal=terminal,
        file_sha256=file_hash(terminal.path),
        created=created,
        derived=derived,
        check=chk,
        stroke=stroke,
        rate=rate,
        spread=spread,
        checklist=tuple(checklist(chk, stroke, rate)),
        notes=tuple(data_notes(terminal, chk)),
        missing=tuple(missing),
    )


# --- the checklist --------------------------------------------------------------------------------


def checklist(chk: CheckResult, stroke: Any | None, rate: Any | None) -> list[Item]:
    """The checklist items of a pack, in the order of :data:`TOPICS`."""
    items = [
        *_case_items(chk),
        *_stroke_items(chk, stroke),
        *_rate_items(chk, rate),
        *_limit_items(chk),
        *_separation_items(chk),
        *_spill_items(chk),
        *_mitigation_items(chk),
        *_order_items(chk),
        *_code_items(chk),
        *_site_items(chk),
    ]
    order = {t: i for i, t in enumerate(TOPICS)}
    return sorted(items, key=lambda it: order[it.topic])


def _case_items(chk: CheckResult) -> list[Item]:
    return [
        Item("case", "the case can be run as written", ACTION, cc.case.name, None, (),
             f"no steady state: {cc.derived.problem}")
        for cc in chk.cases
        if cc.verdict == NO_STEADY
    ]  # fmt: skip


def _inside(value: float, low: float | None, high: float | None) -> bool:
    return low is not None and value >= low - T_TOL and (high is None or value <= high + T_TOL)


def _stroke_status(w) -> tuple[str, str]:
    """Status of the file's stroke against the nominal window and the band's window."""
    nom, band = w.nominal, w.spread
    if not _inside(w.stroke_file, nom.stroke_min, nom.stroke_max):
        if w.stroke_file < (nom.stroke_min or 0.0):
            return ACTION, f"faster than the fastest safe stroke, set by {nom.min_governed_by}"
        return ACTION, f"slower than the slowest allowed stroke, set by {nom.max_governed_by}"
    if band is not None and band.empty:
        return (
            ACTION,
            f"inside the nominal window; across the band no stroke is safe: {band.reason}",
        )
    if band is not None and not _inside(w.stroke_file, band.stroke_min, band.stroke_max):
        return ACTION, "inside the nominal window, outside the window across the band"
    return HOLDS, (
        "inside the window" + (" across the band too" if band is not None else "")
        + f"; fast end set by {nom.min_governed_by}; slow end set by {nom.max_governed_by}"
    )  # fmt: skip


def _stroke_items(chk: CheckResult, stroke: Any | None) -> list[Item]:
    out = []
    by_case = {} if stroke is None else {w.case.name: w for w in stroke.windows}
    for cc in chk.cases:
        name = cc.case.name
        first = first_closing_event(cc.case)
        w = by_case.get(name)
        if first is None or w is None:
            why = "nothing closes in this case" if first is None else "the study did not run"
            element = None if first is None else first.element
            out.append(Item("stroke", "stroke setting", NOT_ASSESSED, name, element, (), why))
            continue
        claim = f"stroke of {w.valve} inside the safe window"
        nums = [Num("set stroke", w.stroke_file, "time")]
        nom, band = w.nominal, w.spread
        if w.problem is not None or nom.empty:
            why = nom.reason or w.problem or "no stroke keeps every limit"
            out.append(Item("stroke", claim, ACTION, name, w.valve, tuple(nums), why))
            continue
        nums += [Num("fastest safe", nom.stroke_min, "time")]
        nums += [Num("slowest allowed", nom.stroke_max, "time")]
        if band is not None and not band.empty:
            nums += [Num("fastest safe across the band", band.stroke_min, "time")]
            nums += [Num("slowest allowed across the band", band.stroke_max, "time")]
        lead = band if band is not None and not band.empty else nom
        nums += [Num("recommended", lead.recommended, "time")]
        status, why = _stroke_status(w)
        out.append(Item("stroke", claim, status, name, w.valve, tuple(nums), why))
    return out


def _rate_items(chk: CheckResult, rate: Any | None) -> list[Item]:
    out = []
    by_case = {} if rate is None else {r.case.name: r for r in rate.cases}
    claim = "transfer rate at or under the governing limit"
    for cc in chk.cases:
        name = cc.case.name
        s = cc.derived.steady
        r = by_case.get(name)
        if r is None or s is None:
            why = "the study did not run" if r is None else "no steady state"
            out.append(Item("rate", claim, NOT_ASSESSED, name, None, (), why))
            continue
        q = abs(s.flow)
        nums = [Num("case rate", q, "flow"), Num("highest rate", r.rate_max, "flow")]
        band = r.surge_spread is not None
        if band:
            nums.append(Num("highest rate across the band", r.rate_max_spread, "flow"))
        if r.problem is not None:
            status, why = NOT_ASSESSED, r.problem
        elif r.rate_max is None:
            status, why = ACTION, f"no rate keeps every limit with the ESD as set: {r.surge.basis}"
        elif q > r.rate_max + Q_TOL:
            status, why = ACTION, f"above the highest rate, set by {r.governed_by}"
        elif band and (r.rate_max_spread is None or q > r.rate_max_spread + Q_TOL):
            status = ACTION
            why = (
                f"under the nominal highest rate, above it across the band ({r.governed_by_spread})"
            )
        else:
            status = HOLDS
            why = f"highest rate set by {r.governed_by}" + (", across the band too" if band else "")
        out.append(Item("rate", claim, status, name, None, tuple(nums), why))
    return out


def _limit_items(chk: CheckResult) -> list[Item]:
    """One item per element and limit, at its least margin over the cases."""
    seen: dict[str, list[tuple[CaseCheck, ElementVerdict]]] = {}
    for cc in chk.cases:
        for ev in cc.elements:
            if ev.kind in LIMIT_KINDS:
                seen.setdefault(ev.name, []).append((cc, ev))
    out = []
    for name, pairs in seen.items():
        kind = pairs[0][1].kind
        claim = f"{name} ({kind}) within its allowed highest pressure"
        top = [(cc, ev) for cc, ev in pairs if ev.margin_max is not None]
        if not top:
            nums = (Num("highest", max(ev.p_max_abs for _, ev in pairs), "p_gauge"),)
            why = "no pressure limit for it in the file (design pressure, rating or flange class)"
            out.append(Item("limit", claim, NOT_ASSESSED, None, name, nums, why))
        else:
            cc, ev = min(top, key=lambda p: p[1].margin_max)  # type: ignore[arg-type,return-value]
            failing = [c.case.name for c, e in top if not e.ok_max]
            nums = (
                Num("highest", ev.p_max_abs, "p_gauge"),
                Num("allowed", ev.limits.max_gauge, "p_gauge_value"),
                Num("margin", ev.margin_max, "dp"),
            )
            if failing:
                status, why = ACTION, f"above {ev.limits.max_basis} in: " + "; ".join(failing)
            else:
                status, why = HOLDS, f"{ev.limits.max_basis}; least margin in this case"
            out.append(Item("limit", claim, status, cc.case.name, name, nums, why))
        # a minimum pressure of its own (a vacuum rating); the vapour pressure default is the
        # column separation item
        rated = [(cc, ev) for cc, ev in pairs if not ev.limits.min_is_vapour]
        if rated:
            cc, ev = min(rated, key=lambda p: p[1].margin_min)
            failing = [c.case.name for c, e in rated if not e.ok_min]
            nums = (
                Num("lowest", ev.p_min_abs, "p_abs"),
                Num("allowed lowest", ev.limits.min_abs, "p_abs"),
                Num("margin", ev.margin_min, "dp"),
            )
            if failing:
                status, why = ACTION, f"below {ev.limits.min_basis} in: " + "; ".join(failing)
            else:
                status, why = HOLDS, f"{ev.limits.min_basis}; least margin in this case"
            claim = f"{name} ({kind}) stays above its minimum pressure"
            out.append(Item("limit", claim, status, cc.case.name, name, nums, why))
    return out


def _separation_items(chk: CheckResult) -> list[Item]:
    out = []
    claim = "no column separation where the minimum is the vapour pressure"
    for cc in chk.cases:
        name = cc.case.name
        vap = [ev for ev in cc.elements if ev.limits.min_is_vapour]
        if not vap:
            why = "case not run" if not cc.elements else "every element has its own minimum"
            out.append(Item("separation", claim, NOT_ASSESSED, name, None, (), why))
            continue
        broken = [ev for ev in vap if ev.cavity_max > CAVITY_THRESHOLD or not ev.ok_min]
        if broken:
            worst = max(broken, key=lambda e: e.cavity_max)
            status, why = ACTION, "vapour cavity in: " + ", ".join(e.name for e in broken)
        else:
            worst = min(vap, key=lambda e: e.margin_min)
            status, why = HOLDS, f"least margin to the vapour pressure in {worst.name}"
        nums = (
            Num("lowest", worst.p_min_abs, "p_abs"),
            Num("vapour pressure", worst.limits.min_abs, "p_abs"),
            Num("largest vapour cavity", worst.cavity_max, "volume"),
        )
        out.append(Item("separation", claim, status, name, worst.name, nums, why))
    return out


def _spill_items(chk: CheckResult) -> list[Item]:
    out = []
    for cc in chk.cases:
        limit = cc.case.spill_limit
        if limit is None:
            continue
        claim = f"volume through {cc.closing} after the trigger within the spill limit"
        nums = (Num("volume", cc.spill, "volume"), Num("spill limit", limit, "volume"))
        if cc.spill is None:
            status, why = NOT_ASSESSED, "case not run"
        elif cc.spill_ok:
            status, why = HOLDS, "within the limit"
        else:
            status, why = ACTION, "more passes than the limit allows"
        out.append(Item("spill", claim, status, cc.case.name, cc.closing, nums, why))
    return out


def _mitigation_items(chk: CheckResult) -> list[Item]:
    out = []
    for cc in chk.cases:
        for b in cc.branches:
            if b.kind != Relief.kind:
                continue
            claim = f"{b.name} passes what the surge asks within its capacity"
            nums = (Num("peak flow", b.flow_max, "flow"), Num("capacity", b.capacity, "flow"))
            if b.over_capacity:
                status = ACTION
                why = (
                    "fully open with the pressure above its full-open pressure for "
                    f"{b.time_over_capacity:.2g} s: a larger valve, or a slower closure"
                )
            else:
                status, why = HOLDS, "never asked for more than its full-open flow"
            out.append(Item("mitigation", claim, status, cc.case.name, b.name, nums, why))
            if b.volume <= 0.0:
                continue
            claim = f"the relief tank of {b.name} takes the relieved volume"
            nums = (Num("relieved", b.volume, "volume"),)
            if b.receiver_volume is None:
                status, why = NOT_ASSESSED, "no receiver_volume in the file"
            else:
                nums += (Num("room", b.receiver_volume, "volume"),)
                status, why = (
                    (HOLDS, "fits") if b.receiver_ok else (ACTION, "the relief tank overfills")
                )
            out.append(Item("mitigation", claim, status, cc.case.name, b.name, nums, why))
    return out


def shut_time(terminal: Terminal, case: Case, event: Close | Release) -> float:
    """When ``event``'s element is shut [s after the trigger]: its start plus its stroke (or the
    coupling's closing time)."""
    if isinstance(event, Close):
        return event.at + event.stroke
    coupling = terminal.routes[case.route].element(event.element)
    return event.at + coupling.closing_time  # type: ignore[attr-defined]


def _flow_at(cc: CaseCheck, element: str, t: float) -> float | None:
    """Flow into ``element`` at time ``t`` read from the run's series [m^3/s] (not solved)."""
    run: Any = cc.run
    if run is None:
        return None
    return float(np.interp(t, np.asarray(run.time), np.asarray(run.q_in)[0, run.index(element)]))


def _order_items(chk: CheckResult) -> list[Item]:
    """Before a release coupling starts to part, every running pump has tripped and every
    closing valve is shut (event times against the release's start)."""
    out = []
    for cc in chk.cases:
        case = cc.case
        route = chk.terminal.routes[case.route]
        for rel in (e for e in case.events if isinstance(e, Release)):
            late: list[str] = []
            nums = [Num("release starts", rel.at, "time")]
            for p in (e for e in route.elements if isinstance(e, Pump)):
                if case.running_count(p) == 0:
                    continue
                trips = [e.at for e in case.events if isinstance(e, Trip) and e.element == p.name]
                if not trips:
                    late.append(f"{p.name} is never tripped")
                    continue
                nums.append(Num(f"{p.name} trips", min(trips), "time"))
                if min(trips) > rel.at + T_TOL:
                    late.append(f"{p.name} trips after the release starts")
            for e in (e for e in case.events if isinstance(e, Close)):
                shut = shut_time(chk.terminal, case, e)
                nums.append(Num(f"{e.element} shut", shut, "time"))
                if shut > rel.at + T_TOL:
                    late.append(f"{e.element} is still closing when the release starts")
            q = _flow_at(cc, rel.element, rel.at)
            if q is not None:
                nums.append(Num(f"flow through {rel.element} at the release", abs(q), "flow"))
            claim = f"pumps stopped and valves shut before {rel.element} parts"
            status = ACTION if late else HOLDS
            why = (
                "; ".join(late) or "every running pump trips and every closing valve is shut first"
            )
            out.append(Item("order", claim, status, case.name, rel.element, tuple(nums), why))
    if not out:
        why = "no case of this pack releases a coupling"
        out.append(Item("order", "ESD order before an emergency release", NOT_ASSESSED, why=why))
    return out


def _code_items(chk: CheckResult) -> list[Item]:
    out = []
    claim = "first closing element shut within the code's closure time"
    for cc in chk.cases:
        case = cc.case
        if case.max_closure_time is None:
            continue
        allowed = Num("allowed from the trigger", case.max_closure_time, "time")
        first = first_closing_event(case)
        if first is None:
            out.append(Item("code", claim, ACTION, case.name, None, (allowed,), "nothing closes"))
            continue
        shut = shut_time(chk.terminal, case, first)
        nums = (Num("starts to move", first.at, "time"), Num("shut", shut, "time"), allowed)
        ok = shut <= case.max_closure_time + T_TOL
        status, why = (HOLDS, "shut in time") if ok else (ACTION, "shut later than the rule allows")
        out.append(Item("code", claim, status, case.name, first.element, nums, why))
    return out


def _used_elements(chk: CheckResult) -> list:
    """The elements of the routes the cases use, each once, in route order."""
    out, names = [], set()
    for cc in chk.cases:
        for e in chk.terminal.routes[cc.case.route].elements:
            if e.name not in names:
                names.add(e.name)
                out.append(e)
    return out


def _site_items(chk: CheckResult) -> list[Item]:
    """Data only a test or a document on site can confirm (always ``not assessed``)."""
    out = []
    strokes: dict[str, list[float]] = {}
    for cc in chk.cases:
        for e in cc.case.events:
            if isinstance(e, Close) and e.stroke not in strokes.setdefault(e.element, []):
                strokes[e.element].append(e.stroke)
    for valve, values in strokes.items():
        nums = tuple(Num("stroke used", v, "time") for v in sorted(values))
        why = "timed from the trip signal to fully shut, with the actuator supply as installed"
        claim = f"stroke time of {valve} confirmed by a stroke test"
        out.append(Item("site", claim, NOT_ASSESSED, None, valve, nums, why))
    released = {e.element for cc in chk.cases for e in cc.case.events if isinstance(e, Release)}
    for e in _used_elements(chk):
        if isinstance(e, Coupling) and e.name in released:
            nums = (Num("closing time used", e.closing_time, "time"),)
            claim = f"closing time of {e.name} confirmed by its maker's data or a test"
            out.append(Item("site", claim, NOT_ASSESSED, None, e.name, nums, ""))
        elif isinstance(e, Hose):
            lim = e.limits
            nums = tuple(
                n
                for n in (
                    Num(
                        "rated working pressure", lim.rated_working_pressure_gauge, "p_gauge_value"
                    ),
                    Num("vacuum rating", lim.min_pressure_abs, "p_abs"),
                )
                if n.value is not None
            )
            claim = f"{e.name}: certificate matches the ratings used and is in date"
            why = "hose certificate: test pressure, rated working pressure, vacuum rating, date"
            out.append(Item("site", claim, NOT_ASSESSED, None, e.name, nums, why))
        elif isinstance(e, Pump) and e.inertia is None:
            claim = f"{e.name}: inertia of pump and motor from the makers' data"
            why = "the run-down after a trip uses an estimated inertia"
            out.append(Item("site", claim, NOT_ASSESSED, None, e.name, (), why))
        elif isinstance(e, Relief):
            nums = (
                Num("set pressure", e.set_pressure_gauge, "p_gauge_value"),
                Num("fully open at", e.full_open_pressure_gauge, "p_gauge_value"),
                Num("opening time", e.opening_time, "time"),
            )
            claim = f"{e.name}: set pressure, lift and opening time confirmed by test"
            why = "bench or in-situ test certificate, in date, for the valve as installed"
            out.append(Item("site", claim, NOT_ASSESSED, None, e.name, nums, why))
        elif isinstance(e, Accumulator):
            nums = (Num("pre-charge", e.precharge_abs, "p_abs"),)
            claim = f"{e.name}: gas pre-charge checked before the transfer"
            why = "the pre-charge sets how much the vessel takes in and gives back"
            out.append(Item("site", claim, NOT_ASSESSED, None, e.name, nums, why))
    if not any(isinstance(e, Relief | Accumulator) for e in _used_elements(chk)):
        why = (
            "the file has no surge relief valve or accumulator: if one protects the line, add "
            "it to the route, or confirm that these results (without it) are the ones relied on"
        )
        out.append(Item("site", "surge relief: none in the file", NOT_ASSESSED, why=why))
    return out


# --- assumptions and data quality ---------------------------------------------------------------


def _source_remark(source: str) -> str | None:
    s = source.lower()
    if "estimate" in s:
        return "an estimate"
    if "from memory" in s:
        return "a typical value recalled, not read from a source"
    if "typical" in s:
        return "a typical value for the product class, not the cargo's own"
    return None


NOTE_TEXT = {
    "given product": "properties given in the file; their source is the file author's",
    "no conductivity": "electrical conductivity not given: the rate limits take the product as "
    "a static accumulator",
    "hose given": "hose wave speed given in the file, not measured by esdsurge: confirm its basis",
    "hose expansion": "hose wave speed derived from the volumetric expansion given in the file (a "
    "static figure), not measured; the robust answers vary it",
    "line given": "wave speed given in the file",
    "line derived": "wave speed derived from the product's bulk modulus and the wall",
    "custom valve": "valve characteristic given in the file",
    "generic valve": "valve characteristic is the built-in generic curve for its type, not the "
    "vendor's; the robust answers vary it",
    "coupling": "release coupling modelled as two valves closing together over its closing "
    "time; the parting itself is not modelled",
    "inertia": "inertia of pump and motor not given: estimated from power and speed (Thorley & "
    "Faithfull correlations)",
    "efficiency": "efficiency at the best point not given: assumed for the run-down torque",
    "no limit": "no pressure limit given: judged only against the product's vapour pressure",
    "manifold": "the carrier's declared limit: confirm with the carrier's own data for each call",
    "grid": "the time grid runs each wave speed slightly adjusted; the largest adjustment",
    "friction": "Darcy-Weisbach with the Colebrook factor at the initial Reynolds number, held "
    "through the transient (no unsteady friction)",
    "cavities": "discrete vapour cavity model at every grid node; the collapse peaks it gives "
    "scatter, so any column separation is taken as a finding, never as safe",
    "movement": "pipes, arm and hose held still: no fluid-structure interaction; supports and "
    "arm loads are outside this check",
    "relief": "relief valve with a proportional lift between set and full-open pressure, "
    "rate-limited by its opening and closing times; the losses of its relief line and the level "
    "in its relief tank are not modelled",
    "accumulator": "gas follows p V^n = const with the exponent shown; the pre-charge is brought "
    "to the product temperature and compressed isothermally before the transfer",
}


def _product_notes(terminal: Terminal, chk: CheckResult) -> list[Note]:
    out = []
    for pname in dict.fromkeys(cc.case.product for cc in chk.cases):
        fluid = terminal.products[pname]
        if fluid.builtin is None:
            out.append(Note("product", pname, NOTE_TEXT["given product"]))
        for prop, source in fluid.sources:
            remark = _source_remark(source)
            if remark is not None:
                what = prop.replace("_abs", "").replace("_", " ")
                out.append(Note("product", pname, f"{what} is {remark}", source=source))
        if fluid.conductivity is None:
            out.append(Note("product", pname, NOTE_TEXT["no conductivity"]))
    return out


def _element_notes(chk: CheckResult) -> list[Note]:
    from esdsurge.physics.valves import CHARACTERISTIC_SOURCES

    out = []
    speeds: dict[str, tuple[str, float | None]] = {}  # element -> (product, wave speed)
    for cc in chk.cases:
        if cc.derived.steady is not None:
            for ln in cc.derived.steady.lines:
                speeds.setdefault(ln.name, (cc.case.product, ln.wave_speed))
    generic: dict[str, list[str]] = {}
    for e in _used_elements(chk):
        product, a = speeds.get(e.name, ("", None))
        nums = (Num(f"wave speed with {product}", a, "wave_speed"),) if a else ()
        if isinstance(e, Hose):
            key = "hose given" if e.wave_speed is not None else "hose expansion"
            out.append(Note("wave speed", e.name, NOTE_TEXT[key], nums))
        elif isinstance(e, Pipe):
            kind = "arm" if isinstance(e, Arm) else "pipe"
            if e.wave_speed is not None:
                out.append(Note("wave speed", e.name, f"{kind} {NOTE_TEXT['line given']}", nums))
            else:
                how = f" ({e.material or 'modulus given'}, anchoring '{e.anchoring}')"
                text = f"{kind} {NOTE_TEXT['line derived']}{how}"
                out.append(Note("wave speed", e.name, text, nums))
        elif isinstance(e, _Valve | Coupling):
            if e.valve_type == "custom" or e.characteristic:
                out.append(Note("valve", e.name, NOTE_TEXT["custom valve"]))
            else:
                generic.setdefault(e.valve_type, []).append(e.name)
            if isinstance(e, Coupling):
                nums = (Num("closing time", e.closing_time, "time"),)
                out.append(Note("coupling", e.name, NOTE_TEXT["coupling"], nums))
        elif isinstance(e, Pump):
            if e.inertia is None:
                out.append(Note("pump", e.name, NOTE_TEXT["inertia"]))
            if e.efficiency is None:
                out.append(Note("pump", e.name, NOTE_TEXT["efficiency"]))
        elif isinstance(e, Relief):
            out.append(Note("mitigation", e.name, NOTE_TEXT["relief"]))
        elif isinstance(e, Accumulator):
            text = f"{NOTE_TEXT['accumulator']} (n = {e.exponent:g})"
            out.append(Note("mitigation", e.name, text))
        if e.kind not in ("tank", "pump", "relief", "accumulator") and e.limits.is_empty():
            out.append(Note("limit", e.name, NOTE_TEXT["no limit"]))
        if e.kind == "manifold":
            out.append(Note("limit", e.name, NOTE_TEXT["manifold"]))
    for vtype, names in generic.items():
        source = CHARACTERISTIC_SOURCES.get(vtype, "")
        text = f"{vtype}: {NOTE_TEXT['generic valve']}"
        out.append(Note("valve", ", ".join(names), text, source=source))
    return out


def _model_notes(chk: CheckResult) -> list[Note]:
    out = []
    for cc in chk.cases:
        run: Any = cc.run
        if run is None:
            continue
        asked, used = np.asarray(run.wave_speed)[0], np.asarray(run.wave_speed_used)[0]
        diff = np.abs(used - asked)
        if np.all(np.isnan(diff)):
            continue
        k = int(np.nanargmax(diff))
        nums = (
            Num("asked", float(asked[k]), "wave_speed"),
            Num("run", float(used[k]), "wave_speed"),
        )
        text = f"{NOTE_TEXT['grid']} is in {run.elements[k]}"
        out.append(Note("model", cc.case.name, text, nums))
    for key in ("friction", "cavities", "movement"):
        out.append(Note("model", key.replace("cavities", "vapour cavities"), NOTE_TEXT[key]))
    return out


def data_notes(terminal: Terminal, chk: CheckResult) -> list[Note]:
    """What the results rest on, and how well each input is known."""
    return _product_notes(terminal, chk) + _element_notes(chk) + _model_notes(chk)
