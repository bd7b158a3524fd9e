"""The content of the review pack, built once from a :class:`ReportResult` (computes nothing).

Sections, in the order a reviewer reads them: purpose and scope, findings at a glance, the
checklist, the terminal and its line-ups, the products, the inputs that matter, the results of
each case, the stroke window, the rate limits, the robust answers, assumptions and data quality,
cautions, sign-off. Numbers become text here only through :class:`~esdsurge.present.fmt.Fmt`.
"""

from __future__ import annotations

from esdsurge import __version__
from esdsurge.model import Arm, Close, Coupling, Hose, Pipe, Pump, Release, Trip, Valve
from esdsurge.present.cautions import CAUTION
from esdsurge.present.check import describe_events
from esdsurge.present.fmt import Fmt
from esdsurge.present.report.checklist import (
    checklist_section,
    counts_text,
    p_low,
    show,
    show_all,
    volume,
)
from esdsurge.present.report.document import (
    Bullets,
    Cell,
    Document,
    Figure,
    Heading,
    Pairs,
    Para,
    Section,
    Table,
    Verdict,
    cell,
    status_cell,
)
from esdsurge.present.report.searches import (
    rate_section,
    rate_summary,
    robust_section,
    stroke_section,
    stroke_summary,
)
from esdsurge.studies.check import FAIL_STEADY, NO_STEADY, CaseCheck
from esdsurge.studies.report import ACTION, ReportResult

TOPIC_TITLES = {
    "product": "Products",
    "wave speed": "Wave speeds",
    "valve": "Valve characteristics",
    "coupling": "Release couplings",
    "pump": "Pumps",
    "mitigation": "Surge relief valves and accumulators",
    "limit": "Limits",
    "model": "The model",
}


def case_anchor(name: str) -> str:
    from esdsurge.present.plots import slug

    return "case-" + slug(name)


def _direction(cc: CaseCheck) -> str:
    s = cc.derived.steady
    if s is None:
        return ""
    return "to the carrier" if s.flow >= 0 else "to the shore"


# --- 1 purpose and scope ---------------------------------------------------------------------


def scope_section(res: ReportResult, f: Fmt) -> Section:
    t = res.terminal
    sec = Section("scope", "Purpose and scope")
    sec.add(
        Para(
            f"This pack records an engineering check of the pressure surges that an emergency "
            f"shutdown (ESD) causes on the transfer line-ups of {t.name}. It is meant to be "
            "attached to a safety review (HAZOP or LOPA action, ship/shore compatibility, "
            "management of change) and to be read without esdsurge installed.",
            "lead",
        ),
        Para(
            "For each ESD case below, the transient after the trigger was computed with the "
            "method of characteristics: pumps trip and run down on their inertia, valves close "
            "along their installed characteristic (not a linear area ramp), and a vapour cavity "
            "forms wherever the pressure falls to the product's vapour pressure. Each element's "
            "highest and lowest pressure was compared with its limits. Beside that: the window "
            "of stroke times that keeps every limit, the highest transfer rate at which the ESD "
            "as set keeps every limit, the other rate limits (pumps, static electricity, "
            "venting), and the same answers across an uncertainty band of the inputs that are "
            "rarely known well."
        ),
    )
    rows = []
    why = []
    for cc in res.check.cases:
        c = cc.case
        s = cc.derived.steady
        rows.append(
            (
                c.name,
                c.route,
                c.product,
                f"{f.flow(s.flow)} {_direction(cc)}" if s is not None else "no steady state",
                describe_events(cc, f) or "nothing happens",
            )
        )
        if cc.closing is not None and s is not None:
            up, down = ("shore", "carrier") if s.flow >= 0 else ("carrier", "shore")
            why.append(
                f"{c.name}: closing the {cc.closing} stops a column moving {_direction(cc)}; the "
                f"surge rises on its {up} side and the pressure falls on its {down} side, where "
                "column separation can start."
            )
    sec.add(
        Heading("The cases"),
        Table(("case", "route", "product", "transfer rate", "after the trigger"), tuple(rows)),
    )
    if why:
        sec.add(Heading("Why each case"), Bullets(tuple(why)))
    for study, reason in res.missing:
        sec.add(Para(f"Not included: the {study} study. {reason}.", "missing"))
    return sec


# --- 2 findings at a glance -------------------------------------------------------------------


def _governing_text(cc: CaseCheck, f: Fmt) -> str:
    ev = next((e for e in cc.elements if e.name == cc.governing), None)
    if ev is None:
        return cc.derived.problem or "—"
    if not ev.ok_min:
        if ev.cavity_max > 0.0 and ev.limits.min_is_vapour:
            return (
                f"{ev.name}: column separation, vapour cavity "
                f"{volume(f, ev.cavity_max)}, against the {f.basis(ev.limits.min_basis)}"
            )
        return f"{ev.name}: lowest {p_low(f, ev.p_min_abs)} against {f.basis(ev.limits.min_basis)}"
    if ev.limits.max_gauge is not None:
        return (
            f"{ev.name}: highest {f.p_gauge(ev.p_max_abs)} against "
            f"{f.p_gauge_value(ev.limits.max_gauge)} ({f.basis(ev.limits.max_basis)})"
        )
    return f"{ev.name}: lowest {p_low(f, ev.p_min_abs)} against {f.basis(ev.limits.min_basis)}"


def summary_section(res: ReportResult, f: Fmt) -> Section:
    sec = Section("summary", "Findings at a glance")
    rows = []
    for cc in res.check.cases:
        rows.append(
            (
                Cell(cc.case.name, strong=True),
                status_cell(cc.verdict),
                _governing_text(cc, f),
                stroke_summary(res, cc.case.name, f),
                rate_summary(res, cc.case.name, f),
            )
        )
    sec.add(
        Para(
            "Verdicts at the settings in the file; the element named is the one closest to a "
            "limit (or the first one past it).",
            "lead",
        ),
        Table(
            (
                "case",
                "verdict",
                "governing element",
                "stroke",
                "transfer rate",
            ),
            tuple(rows),
        ),
        Para("Checklist: " + counts_text(res)),
    )
    actions = [i for i in res.checklist if i.status == ACTION]
    if actions:
        sec.add(Heading("Needs action"))
        rows = tuple((i.claim, i.case or "—", i.why) for i in actions)
        sec.add(Table(("item", "case", "why"), rows, kind="compact"))
    return sec


# --- 4 terminal and line-ups ------------------------------------------------------------------


def _route_case(res: ReportResult, route: str):
    """The first case of the pack on ``route`` (its product sets the limits shown)."""
    return next((cd for cd in res.derived.cases if cd.case.route == route), None)


def _limit_cells(cd, name: str, f: Fmt) -> tuple[str, str]:
    if cd is None or name not in cd.limits:
        return "—", "—"
    lim = cd.limits[name]
    top = (
        f"{f.p_gauge_value(lim.max_gauge)}\n{f.basis(lim.max_basis)}"
        if lim.max_gauge is not None
        else "none set"
    )
    low = p_low(f, lim.min_abs) + (" (vapour pressure)" if lim.min_is_vapour else "")
    return top, low


def lineups_section(res: ReportResult, f: Fmt, diagrams: dict[str, Figure]) -> Section:
    t = res.terminal
    sec = Section("lineups", "Terminal and line-ups")
    sec.add(
        Pairs(
            (
                ("terminal", t.name),
                ("file", t.path),
                ("site atmosphere", f.p_abs(t.atmosphere_abs, 4)),
                ("site temperature", f.temperature(t.temperature)),
                ("routes", ", ".join(t.routes)),
            )
        )
    )
    used = {c.case.route for c in res.check.cases}
    for name, route in t.routes.items():
        rd = res.derived.routes.get(name)
        cd = _route_case(res, name)
        sec.add(Heading(f"Route “{name}”", "route-" + name.replace(" ", "-")))
        if name not in used:
            sec.add(Para("No case of this pack uses this route.", "small"))
        if name in diagrams:
            sec.add(diagrams[name])
        rows = []
        lines = {ln.name: ln for ln in rd.lines} if rd is not None else {}
        for i, e in enumerate(route.elements, start=1):
            ln = lines.get(e.name)
            top, low = _limit_cells(cd, e.name, f) if e.kind not in ("tank", "pump") else ("", "")
            if ln is not None and ln.length:
                geo = f"{f.length(ln.length)}, bore {f.diameter(ln.diameter)}"
                elev = f"{f.elevation(ln.z_in)} → {f.elevation(ln.z_out)}"
            elif ln is not None:
                geo = f"bore {f.diameter(ln.diameter)}" if e.kind in ("valve", "coupling") else ""
                elev = f.elevation(ln.z_in)
            else:
                geo, elev = "", ""
            if e.kind == "tank":
                geo = f"surface at {f.elevation(e.surface)}"  # type: ignore[attr-defined]
            rows.append((str(i), e.name, _kind_text(e), geo, elev, top, low))
        sec.add(
            Table(
                ("#", "element", "kind", "size", "elevation", "allowed highest", "allowed lowest"),
                tuple(rows),
                numeric=(0,),
                caption=f"Route “{name}”, shore end first"
                + (f"; limits for {cd.case.product} at its temperature" if cd is not None else ""),
            )
        )
    return sec


def _kind_text(e) -> str:
    if isinstance(e, Arm):
        return "loading arm"
    if isinstance(e, Valve):
        return f"{e.valve_type} valve"
    if isinstance(e, Coupling):
        return "release coupling"
    if isinstance(e, Pump):
        n = f"{e.count} × " if e.count != 1 else ""
        return f"{n}pump" + (", check valve" if e.check_valve else "")
    if e.kind == "relief":
        return "surge relief valve"
    return e.kind


def _branch_rows(cc: CaseCheck, f: Fmt) -> tuple[tuple[str, ...], ...]:
    """What each relief valve and accumulator did in the case."""
    rows = []
    for b in cc.branches:
        if b.kind == "relief" and b.state_max <= 0.0:
            did = "did not open"
        elif b.kind == "relief":
            did = (
                f"relieved {volume(f, b.volume)}; peak {f.flow(b.flow_max)} at "
                f"{f.time(b.t_flow_max, 1)}; opened to {b.state_max * 100:.0f} %"
            )
            cap = f"capacity {f.flow(b.capacity)}" if b.capacity is not None else "—"
            if b.over_capacity:
                cap += f"; over it for {f.time(b.time_over_capacity, 2)}"
            if b.receiver_volume is not None:
                cap += f"; relief tank room {f.volume(b.receiver_volume)}"
                cap += "" if b.receiver_ok else " — overfills"
            rows.append((b.name, "surge relief valve", did, cap))
        else:
            intake = b.volume if abs(b.volume) >= 1e-6 else 0.0  # below 1 mL: round-off
            did = (
                f"gas {volume(f, b.state[0])} before, {volume(f, b.state_min)} to "
                f"{volume(f, b.state_max)}; net intake {volume(f, intake)}"
            )
            rows.append((b.name, "accumulator", did, f"peak intake {f.flow(b.flow_max)}"))
    return tuple(rows)


# --- 5 products ------------------------------------------------------------------------------


def products_section(res: ReportResult, f: Fmt) -> Section:
    t = res.terminal
    used = []
    for cc in res.check.cases:
        if cc.case.product not in used:
            used.append(cc.case.product)
    sec = Section("products", "Products")
    rows = []
    for name in used:
        fl = t.products[name]
        rows.append(
            (
                name,
                fl.builtin or "given in the file",
                f.temperature(fl.temperature),
                f.density(fl.density),
                f.modulus(fl.bulk_modulus),
                f.wave_speed(fl.sound_speed),
                p_low(f, fl.vapour_pressure_abs),
                f.viscosity(fl.viscosity),
            )
        )
    sec.add(
        Para("Properties at the product temperature, as the cases use them.", "lead"),
        Table(
            (
                "product",
                "property set",
                "temperature",
                "density",
                "bulk modulus (isentropic)",
                "speed of sound",
                "vapour pressure",
                "viscosity",
            ),
            tuple(rows),
            numeric=(2, 3, 4, 5, 6, 7),
        ),
    )
    for name in used:
        fl = t.products[name]
        if fl.sources:
            sec.add(Heading(f"Sources: {name}"))
            sec.add(
                Table(
                    ("property", "source"),
                    tuple((p.replace("_abs", "").replace("_", " "), s) for p, s in fl.sources),
                    kind="compact",
                )
            )
    return sec


# --- 6 inputs that matter --------------------------------------------------------------------


def inputs_section(res: ReportResult, f: Fmt) -> Section:
    t = res.terminal
    sec = Section("inputs", "Inputs that matter")
    sec.add(
        Para(
            "The inputs that move the answer most: wave speeds (they set the Joukowsky rise "
            "and the pipeline period), the valves' characteristics and stroke times (they set "
            "the effective closure), the release couplings, the pumps' run-down, and the delays "
            "between the trigger and each action.",
            "lead",
        )
    )
    # wave speeds, per route and product as the cases run them
    sec.add(Heading("Wave speeds"))
    done = set()
    for cc in res.check.cases:
        key = (cc.case.route, cc.case.product)
        if key in done or cc.derived.steady is None:
            continue
        done.add(key)
        route = t.routes[cc.case.route]
        rows = []
        for e, ln in zip(route.elements, cc.derived.steady.lines, strict=True):
            if not ln.wave_speed:
                continue
            if ln.wave_speed_given:
                basis = "given in the file"
            elif isinstance(e, Hose):
                basis = "derived: hose volumetric expansion (static figure)"
            elif isinstance(e, Pipe):
                basis = f"derived: wall and material ({e.material or 'E given'}, {e.anchoring})"
            else:
                basis = "derived"
            rows.append(
                (
                    e.name,
                    _kind_text(e),
                    f.length(ln.length),
                    f.wave_speed(ln.wave_speed),
                    basis,
                    f.time(ln.period, 3) if ln.period else "—",
                )
            )
        sec.add(
            Table(
                ("element", "kind", "length", "wave speed", "given or derived", "2L/a"),
                tuple(rows),
                numeric=(2, 3, 5),
                caption=f"route “{cc.case.route}” with {cc.case.product}",
            )
        )
    # valves and couplings
    sec.add(Heading("Valves and release couplings"))
    rows = []
    seen = set()
    for cc in res.check.cases:
        route = t.routes[cc.case.route]
        s = cc.derived.steady
        for e in route.elements:
            if not isinstance(e, Valve | Coupling) or e.name in seen:
                continue
            seen.add(e.name)
            char = (
                "given in the file"
                if e.valve_type == "custom" or e.characteristic
                else f"built-in generic {e.valve_type} curve"
            )
            loss = "—"
            if s is not None:
                es = s.element(e.name)
                loss = f"{f.dp(es.p_in_abs - es.p_out_abs, 2)} at {f.flow(s.flow)}"
            extra = f"closing time {f.time(e.closing_time, 1)}" if isinstance(e, Coupling) else ""
            rows.append((e.name, e.valve_type, f.diameter(e.diameter), char, loss, extra or "—"))
    sec.add(
        Table(
            ("element", "type", "bore", "characteristic", "loss when open", "note"),
            tuple(rows),
        )
    )
    # pumps
    pumps = []
    seen = set()
    for cc in res.check.cases:
        for e in t.routes[cc.case.route].elements:
            if isinstance(e, Pump) and e.name not in seen:
                seen.add(e.name)
                running = ", ".join(
                    f"{c.case.name}: {c.case.running_count(e)} of {e.count}"
                    for c in res.check.cases
                    if e.name in {x.name for x in t.routes[c.case.route].elements}
                )
                pumps.append(
                    (
                        e.name,
                        "to the carrier" if e.pushes > 0 else "to the shore",
                        str(e.count),
                        "given" if e.inertia is not None else "estimated",
                        "yes" if e.check_valve else "no",
                        running,
                    )
                )
    if pumps:
        sec.add(Heading("Pumps"))
        sec.add(
            Table(
                ("pump", "pushes", "units", "inertia", "check valve", "running in each case"),
                tuple(pumps),
            )
        )
    # events
    sec.add(Heading("Stroke times and delays after the trigger"))
    for cc in res.check.cases:
        case = cc.case
        route = t.routes[case.route]
        rows = []
        for e in sorted(case.events, key=lambda e: e.at):
            if isinstance(e, Close):
                shape = "linear travel" if len(e.travel) == 2 else "staged travel"
                rows.append(
                    (
                        f.time(e.at, 1),
                        e.element,
                        f"closes ({shape})",
                        f.time(e.stroke, 1),
                        f.time(e.at + e.stroke, 1),
                    )
                )
            elif isinstance(e, Release):
                ct = route.element(e.element).closing_time  # type: ignore[attr-defined]
                rows.append(
                    (f.time(e.at, 1), e.element, "releases", f.time(ct, 1), f.time(e.at + ct, 1))
                )
            elif isinstance(e, Trip):
                rows.append((f.time(e.at, 1), e.element, "trips (runs down)", "—", "—"))
        extras = []
        if case.spill_limit is not None:
            extras.append(f"spill limit {f.volume(case.spill_limit)}")
        if case.max_closure_time is not None:
            extras.append(f"closure-time rule {f.time(case.max_closure_time, 1)} from the trigger")
        if case.duration is not None:
            extras.append(f"simulated for {f.time(case.duration, 1)}")
        sec.add(
            Table(
                ("at", "element", "action", "stroke / closing time", "shut at"),
                tuple(rows),
                numeric=(0, 3, 4),
                caption=case.name + (" — " + "; ".join(extras) if extras else ""),
            )
        )
    return sec


# --- 7 case results ---------------------------------------------------------------------------


def _element_rows(cc: CaseCheck, f: Fmt) -> tuple[tuple[Cell | str, ...], ...]:
    rows = []
    for ev in cc.elements:
        lim = ev.limits
        where = f.time(ev.t_p_max, 1)
        if ev.kind in ("pipe", "arm", "hose"):
            where += f"\n{f.length(ev.x_p_max)}"
        margin = f.dp(ev.margin_max) if ev.margin_max is not None else "—"
        low_note = ""
        if not ev.ok_min:
            low_note = "\ncavity" if ev.cavity_max > 0 else "\nbelow minimum"
        top = f"≤ {f.p_gauge_value(lim.max_gauge)}" if lim.max_gauge is not None else "none set"
        rows.append(
            (
                cell("✓ ok", "good") if ev.ok else cell("✗ breaks", "bad", True),
                cell(
                    ev.name + (" ◀" if ev.name == cc.governing else "") + f"\n{ev.kind}",
                    strong=ev.name == cc.governing,
                ),
                cell(f.p_gauge(ev.p_max_abs), "" if ev.ok_max else "bad", not ev.ok_max),
                where,
                cell(p_low(f, ev.p_min_abs) + low_note, "" if ev.ok_min else "bad", not ev.ok_min),
                volume(f, ev.cavity_max) if ev.cavity_max > 0 else "—",
                f"{top}\n≥ {p_low(f, lim.min_abs)}",
                margin,
            )
        )
    return tuple(rows)


def _hand_rows(cc: CaseCheck, f: Fmt) -> tuple[tuple[str, ...], ...] | None:
    h = cc.derived.hand
    s = cc.derived.steady
    if h is None or s is None:
        return None
    closing = next((e for e in cc.elements if e.name == h.valve), None)
    start = s.element(h.valve).p_in_abs if s.flow >= 0 else s.element(h.valve).p_out_abs
    sim_rise = f.dp(closing.p_max_abs - start) if closing is not None else "—"
    est = "Joukowsky" if h.regime == "rapid" else "Michaud"
    return (
        (
            "rise for an instant closure, ρaV",
            f"{f.dp(h.joukowsky_instant)} in {h.governing}",
            "—",
            f"V = {f.speed(h.velocity)}, a = {f.wave_speed(h.local_wave_speed)}",
        ),
        (
            "pipeline period of the liquid side, 2L/a",
            f.time(h.side_period, 2),
            "—",
            f"{f.length(h.side_length)} back to the source, a = {f.wave_speed(h.wave_speed)}",
        ),
        (
            "effective closure time",
            f.time(h.effective_closure, 2),
            "—",
            f"of a {f.time(h.stroke, 1)} stroke ({h.regime}: "
            f"{'within' if h.regime == 'rapid' else 'longer than'} 2L/a)",
        ),
        (
            f"rise at {h.valve}",
            f"{f.dp(h.estimate)} ({est})",
            sim_rise,
            "above the running pressure at the valve",
        ),
    )


def case_section(cc: CaseCheck, f: Fmt, figures: list[Figure]) -> Section:
    c = cc.case
    sec = Section(case_anchor(c.name), c.name)
    s = cc.derived.steady
    if cc.verdict == NO_STEADY:
        text = f"no steady state: {cc.derived.problem}"
    elif cc.governing:
        text = "governing: " + _governing_text(cc, f)
    else:
        text = ""
    sec.add(Verdict(cc.verdict, status_cell(cc.verdict).tone, text))
    pairs = [("route", c.route), ("product", c.product)]
    if s is not None:
        rate = f"{f.flow(s.flow)} {_direction(cc)}"
        if s.throttled_head > 0:
            rate += f" (throttled {f.head(s.throttled_head)} at {s.throttle_at})"
        pairs.append(("transfer rate", rate))
    pairs.append(("after the trigger", describe_events(cc, f) or "nothing happens"))
    sec.add(Pairs(tuple(pairs)))
    if cc.verdict == NO_STEADY:
        return sec
    if cc.verdict == FAIL_STEADY:
        for b in cc.derived.breaches:
            p = f.p_gauge(b.pressure_abs) if b.what == "max" else f.p_abs(b.pressure_abs)
            sec.add(
                Para(
                    f"Fails before any surge: {b.element} runs at {p} at steady state, "
                    f"outside {f.basis(b.basis)}.",
                    "missing",
                )
            )
    sec.add(
        Table(
            (
                "",
                "element",
                "highest",
                "when, where",
                "lowest",
                "vapour cavity",
                "allowed",
                "margin to the highest",
            ),
            _element_rows(cc, f),
            numeric=(2, 3, 4, 5, 6, 7),
            caption="Each element against its limits (◀ governing; highest gauge, lowest "
            "absolute; where: chainage from the element's shore end)",
        )
    )
    hand = _hand_rows(cc, f)
    if hand is not None:
        sec.add(
            Heading("Hand checks beside the simulation"),
            Table(("quantity", "hand check", "simulated", "basis"), hand, numeric=(1, 2)),
        )
    lines = []
    if cc.spill is not None:
        txt = f"Volume through {cc.closing} after the trigger: {f.volume(cc.spill)}"
        if c.spill_limit is not None:
            txt += (" — within" if cc.spill_ok else " — above") + (
                f" the spill limit {f.volume(c.spill_limit)}"
            )
        lines.append(txt + ".")
    if cc.manifold and cc.manifold_peak_abs is not None:
        lines.append(
            f"Highest pressure at {cc.manifold}: {f.p_gauge(cc.manifold_peak_abs)} at "
            f"{f.time(cc.t_manifold_peak, 1)}."
        )
    if cc.largest_cavity > 0.0:
        lines.append(
            f"Largest vapour cavity: {volume(f, cc.largest_cavity)} in {cc.largest_cavity_at}."
        )
    for ln in lines:
        sec.add(Para(ln))
    if cc.branches:
        sec.add(
            Heading("Surge relief valves and accumulators"),
            Table(("element", "kind", "what it did", "against"), _branch_rows(cc, f)),
        )
    for fig in figures:
        sec.add(fig)
    return sec


def cases_section(res: ReportResult, f: Fmt, figures: dict[str, list[Figure]]) -> Section:
    sec = Section("cases", "Results of each case")
    sec.add(
        Para(
            "Each case at the settings in the file: the verdict, every element against its "
            "limits, the hand checks an engineer would make first beside the simulated values, "
            "and the figures (pressure against time at the manifold and at the closing element; "
            "highest and lowest pressure along the route).",
            "lead",
        )
    )
    for cc in res.check.cases:
        sec.children.append(case_section(cc, f, figures.get(cc.case.name, [])))
    return sec


# --- 11 assumptions, 12 cautions, 13 sign-off -------------------------------------------------


def assumptions_section(res: ReportResult, f: Fmt) -> Section:
    sec = Section("assumptions", "Assumptions and data quality")
    sec.add(
        Para(
            "What the numbers rest on and how well each input is known. Items marked as an "
            "estimate, a typical value or a generic curve are the first to confirm; the robust "
            "answers show how much they move the result.",
            "lead",
        )
    )
    topics: dict[str, list] = {}
    for n in res.notes:
        topics.setdefault(n.topic, []).append(n)
    for topic, notes in topics.items():
        sec.add(Heading(TOPIC_TITLES.get(topic, topic.capitalize())))
        rows = []
        for n in notes:
            rows.append((n.subject, n.text, show_all(n.numbers, f) or "—", n.source or "—"))
        sec.add(Table(("about", "remark", "values", "source"), tuple(rows), kind="compact"))
    return sec


def cautions_section() -> Section:
    sec = Section("cautions", "Cautions")
    sec.add(
        Para(CAUTION, "caution"),
        Para(
            "The checklist statuses follow the results of this pack only. An item that holds "
            "here still rests on the inputs listed under assumptions and data quality; an item "
            "not assessed is open until someone closes it."
        ),
    )
    return sec


def signoff_section() -> Section:
    sec = Section("signoff", "Sign-off")
    sec.add(
        Table(
            ("", "name", "role / company", "signature", "date"),
            (
                ("Prepared by", "", "", "", ""),
                ("Checked by", "", "", "", ""),
            ),
            kind="signoff",
        ),
        Table(
            ("reference", ""),
            (("Review or action reference", ""), ("Remarks", "")),
            kind="signoff",
        ),
    )
    return sec


def build_document(
    res: ReportResult,
    f: Fmt,
    *,
    figures: dict[str, list[Figure]],
    diagrams: dict[str, Figure],
) -> Document:
    """The whole pack as a :class:`Document` (figures already written and read back)."""
    t = res.terminal
    facts = (
        ("terminal file", t.path),
        ("SHA-256 of the file", res.file_sha256 or "not readable"),
        ("esdsurge", __version__),
        ("studies run", res.created.replace("T", " ").replace("+00:00", " UTC")),
        ("units", "SI (bar, m³/h, m)" if f.system == "si" else "US customary (psi, US gpm, ft)"),
        ("cases", str(len(res.check.cases))),
        ("uncertainty band", "searched" if res.spread else "not searched"),
    )
    sections = [
        scope_section(res, f),
        summary_section(res, f),
        checklist_section(res, f),
        lineups_section(res, f, diagrams),
        products_section(res, f),
        inputs_section(res, f),
        cases_section(res, f, figures),
        stroke_section(res, f),
        rate_section(res, f),
        robust_section(res, f),
        assumptions_section(res, f),
        cautions_section(),
        signoff_section(),
    ]
    return Document(
        title="ESD surge review pack",
        subtitle=t.name,
        facts=facts,
        sections=sections,
        footer=f"esdsurge {__version__} · {t.path} · {res.created}",
    )


__all__ = ["build_document", "case_anchor", "show", "show_all"]
