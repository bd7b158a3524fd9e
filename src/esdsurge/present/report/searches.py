"""The stroke window, rate limit and robust-answer sections of the review pack (compute nothing).

They read the stroke window study (:mod:`esdsurge.studies.stroke`) and the rate limit study
(:mod:`esdsurge.studies.rate`) as the report study ran them, with their uncertainty band. When a
study was not available, its section says so plainly instead of showing numbers.
"""

from __future__ import annotations

from esdsurge.present.fmt import Fmt
from esdsurge.present.report.document import Bullets, Cell, Heading, Para, Section, Table, cell
from esdsurge.studies.report import ReportResult


def _missing(res: ReportResult, study: str) -> Para:
    reason = dict(res.missing).get(study, "the study did not run")
    return Para(f"NOT INCLUDED — {reason}. This section is left open.", "missing")


def _by_case(stroke) -> dict:
    return {w.case.name: w for w in stroke.windows}


def _span(w, f: Fmt) -> str:
    """A window as ``min to max`` (``None`` top: no upper limit)."""
    if w is None:
        return "—"
    if w.empty:
        return "no safe stroke"
    top = f.time(w.stroke_max, 1) if w.stroke_max is not None else "no upper limit"
    return f"{f.time(w.stroke_min, 1)} to {top}"


def _inside(value: float, w) -> bool:
    if w is None or w.empty or w.stroke_min is None:
        return False
    return value >= w.stroke_min - 1e-9 and (w.stroke_max is None or value <= w.stroke_max + 1e-9)


def _recommended(sw, f: Fmt) -> str:
    """The recommended stroke: across the band when the band has a window, else nominal."""
    if sw.spread is not None and not sw.spread.empty and sw.spread.recommended is not None:
        return f.time(sw.spread.recommended, 1)
    if sw.nominal.recommended is not None:
        return f.time(sw.nominal.recommended, 1) + (
            "\n(nominal only)" if sw.spread is not None else ""
        )
    return "—"


def stroke_summary(res: ReportResult, case: str, f: Fmt) -> str:
    """For the summary table: the set stroke, the window, and the window across the band."""
    if res.stroke is None:
        return "not included"
    sw = _by_case(res.stroke).get(case)
    if sw is None:
        return "nothing closes"
    text = f"set {f.time(sw.stroke_file, 1)}\nwindow {_span(sw.nominal, f)}"
    if sw.spread is not None:
        text += f"\nacross the band {_span(sw.spread, f)}"
    return text


def _top(rate: float | None, by: str | None, f: Fmt) -> str:
    return "no safe rate" if rate is None else f"{f.flow(rate)} ({by})"


def rate_summary(res: ReportResult, case: str, f: Fmt) -> str:
    """For the summary table: the case's rate, the highest, and the highest across the band."""
    if res.rate is None:
        return "not included"
    rc = next((r for r in res.rate.cases if r.case.name == case), None)
    if rc is None or rc.rate_file is None:
        return "—"
    if rc.problem is not None:
        return "no steady state"
    text = f"set {f.flow(rc.rate_file)}\nhighest {_top(rc.rate_max, rc.governed_by, f)}"
    if rc.surge_spread is not None:
        text += f"\nacross the band {_top(rc.rate_max_spread, rc.governed_by_spread, f)}"
    return text


def _points_line(points, top: float | None, f: Fmt) -> str:
    marks = []
    for p in points:
        beyond = top is not None and p.value > top + 1e-9
        mark = "✗" if not p.ok else ("○" if beyond else "✓")
        marks.append(f"{f.time(p.value, 1)} {mark}")
    return " · ".join(marks)


def stroke_section(res: ReportResult, f: Fmt) -> Section:
    sec = Section("stroke", "Stroke window")
    sec.add(
        Para(
            "For each case, the range of stroke times of its first closing valve that keeps "
            "every limit: the fastest safe stroke (every pressure limit holds there and at "
            "every longer stroke sampled up to the window's top) and the slowest allowed "
            "stroke (the spill limit, and the code's closure-time rule where the case sets "
            "one). Strokes are searched on a 0.1 s lattice; the recommended setting lies a "
            "margin inside both ends, because actuator stroke times drift with supply "
            "pressure, temperature and wear.",
            "lead",
        )
    )
    if res.stroke is None:
        sec.add(_missing(res, "stroke"))
        return sec
    rows = []
    for sw in res.stroke.windows:
        w = sw.nominal
        inside = _inside(sw.stroke_file, w) and (
            sw.spread is None or _inside(sw.stroke_file, sw.spread)
        )
        rows.append(
            (
                Cell(sw.case.name, strong=True),
                f"{sw.valve} (moves at {f.time(sw.at, 1)})",
                f.time(sw.stroke_file, 1) + (" staged" if sw.staged else ""),
                _span(w, f),
                _span(sw.spread, f) if sw.spread is not None else "not searched",
                _recommended(sw, f),
                cell("inside" if inside else "outside", "good" if inside else "bad", not inside),
            )
        )
    sec.add(
        Table(
            (
                "case",
                "valve",
                "set in the file",
                "safe window",
                "across the band",
                "recommended",
                "set stroke",
            ),
            tuple(rows),
            numeric=(2, 5),
        )
    )
    for sw in res.stroke.windows:
        w = sw.nominal
        sec.add(Heading(sw.case.name))
        items = []
        if sw.problem is not None or w.empty:
            items.append(f"No safe stroke: {w.reason or sw.problem}")
            if w.opens:
                items.append("What would open the window: " + "; ".join(w.opens))
        else:
            items.append(f"Fast end set by: {w.min_governed_by}")
            items.append(f"Slow end set by: {w.max_governed_by}")
            if sw.effective_closure is not None and w.recommended is not None:
                lead = sw.spread if sw.spread is not None and not sw.spread.empty else w
                items.append(
                    f"At the recommended {f.time(lead.recommended, 1)} the valve stops the flow "
                    f"in an effective {f.time(sw.effective_closure, 1)} (installed "
                    f"characteristic, pumps running); pipeline period of the route "
                    f"{f.time(sw.period, 2)}"
                )
        if sw.spread is not None:
            if sw.spread.empty:
                items.append(f"Across the band: no safe stroke — {sw.spread.reason}")
            else:
                items.append(
                    f"Across the band: fast end {sw.spread.min_governed_by}; slow end "
                    f"{sw.spread.max_governed_by}"
                )
        for x in w.worse:
            items.append(f"A longer stroke is worse here: {x}")
        sec.add(Bullets(tuple(items)))
        if w.points:
            sec.add(
                Para(
                    "Strokes run (✓ every limit holds, ✗ a limit breaks, ○ limits hold "
                    "but beyond the slowest allowed): " + _points_line(w.points, w.stroke_max, f),
                    "small",
                )
            )
    return sec


def rate_section(res: ReportResult, f: Fmt) -> Section:
    sec = Section("rate", "Rate limits")
    sec.add(
        Para(
            "For each case, the highest transfer rate at which the ESD as set in the file keeps "
            "every limit (surge), beside the other limits on the rate: the running pumps' "
            "reach, static electricity (flow velocity for a static accumulator) and the "
            "carrier's venting. The lowest governs.",
            "lead",
        )
    )
    if res.rate is None:
        sec.add(_missing(res, "rate"))
        return sec
    names = []
    for rc in res.rate.cases:
        for lim in rc.limits:
            if lim.name not in names:
                names.append(lim.name)
    rows = []
    for rc in res.rate.cases:
        by = {lim.name: lim for lim in rc.limits}
        cells: list[Cell | str] = [
            Cell(rc.case.name, strong=True),
            f.flow(rc.rate_file) if rc.rate_file is not None else "—",
        ]
        if rc.rate_max is None:
            cells.append(cell("no safe rate", "bad", True))
        else:
            over = rc.rate_file is not None and rc.rate_file > rc.rate_max + 0.5 / 3600
            cells.append(cell(f.flow(rc.rate_max), "bad" if over else "", over))
        cells.append(rc.governed_by)
        for n in names:
            lim = by.get(n)
            if lim is None:
                cells.append("—")
            elif lim.rate is None:
                cells.append("none")
            else:
                cells.append(("≥ " if lim.bound == "at least" else "") + f.flow(lim.rate))
        rows.append(tuple(cells))
    sec.add(
        Table(
            ("case", "rate in the file", "highest rate", "governed by", *names),
            tuple(rows),
            numeric=tuple(range(1, 3)) + tuple(range(4, 4 + len(names))),
        )
    )
    for rc in res.rate.cases:
        sec.add(Heading(rc.case.name))
        items = [f"{lim.name}: {lim.basis}" for lim in rc.limits]
        if rc.initial is not None and rc.initial.rate is not None:
            items.append(
                f"initial rate until the tank inlets are covered: "
                f"{f.flow(rc.initial.rate)} — {rc.initial.basis}"
            )
        items += [f"note: {n}" for n in rc.notes]
        if rc.problem is not None:
            items.append(f"no search: {rc.problem}")
        sec.add(Bullets(tuple(items)))
        if rc.points:
            # the rate samples are kept in m^3/h by the study; Fmt takes m^3/s
            marks = " · ".join(
                f"{f.flow(p.value / 3600.0)} {'✓' if p.ok else '✗'}" for p in rc.points
            )
            sec.add(Para(f"Rates run (✓ every limit holds, ✗ a limit breaks): {marks}", "small"))
    return sec


def robust_section(res: ReportResult, f: Fmt) -> Section:
    from esdsurge.studies.spread import DEFAULT_FACTORS

    sec = Section("robust", "Robust answers (uncertainty band)")
    sec.add(
        Para(
            "Some inputs are rarely known well: a cargo hose's wave speed, a fuel's bulk "
            "modulus, friction in service, the actual valve's characteristic. The band runs "
            "the nominal case beside members in which one of them is set to the low or the "
            "high end of its range (one at a time); an answer is robust when every member "
            "keeps every limit. Corners where several act together are not explored.",
            "lead",
        )
    )
    if not res.spread:
        sec.add(Para("The band was not searched for this pack.", "missing"))
        return sec
    members: list[str] = []
    for study in res.stroke.windows if res.stroke else ():
        for m in study.members:
            if m.label not in members:
                members.append(m.label)
    for study in res.rate.cases if res.rate else ():
        for m in study.members:
            if m.label not in members:
                members.append(m.label)
    rows = []
    for fac in DEFAULT_FACTORS:
        labels = [m for m in members if m.startswith(fac.name)]
        if labels:
            rows.append((fac.name, ", ".join(labels), fac.reason))
    if rows:
        sec.add(Table(("input", "members", "why this range"), tuple(rows), kind="compact"))
    if res.stroke is None and res.rate is None:
        sec.add(_missing(res, "stroke"))
        return sec
    table = []
    windows = {} if res.stroke is None else {w.case.name: w for w in res.stroke.windows}
    rates = {} if res.rate is None else {r.case.name: r for r in res.rate.cases}
    for cc in res.check.cases:
        name = cc.case.name
        sw = windows.get(name)
        rc = rates.get(name)
        nominal_w = _span(sw.nominal, f) if sw is not None else "—"
        band_w = _span(sw.spread, f) if sw is not None and sw.spread is not None else "—"
        nominal_r = "—"
        band_r = "—"
        if rc is not None and rc.problem is None:
            nominal_r = f.flow(rc.rate_max) if rc.rate_max is not None else "no safe rate"
            if rc.surge_spread is not None:
                band_r = (
                    f"{f.flow(rc.rate_max_spread)} ({rc.governed_by_spread})"
                    if rc.rate_max_spread is not None
                    else "no safe rate"
                )
        narrower = (
            sw is not None
            and sw.spread is not None
            and (
                sw.spread.empty != sw.nominal.empty
                or sw.spread.stroke_min != sw.nominal.stroke_min
                or sw.spread.stroke_max != sw.nominal.stroke_max
            )
        )
        table.append(
            (
                Cell(name, strong=True),
                nominal_w,
                cell(band_w, "", narrower),
                nominal_r,
                band_r,
            )
        )
    sec.add(
        Table(
            (
                "case",
                "stroke window, nominal",
                "stroke window, across the band",
                "highest rate, nominal",
                "highest rate, across the band",
            ),
            tuple(table),
            numeric=(),
            caption="A band answer in bold differs from the nominal one.",
        )
    )
    if res.stroke is None:
        sec.add(_missing(res, "stroke"))
    if res.rate is None:
        sec.add(_missing(res, "rate"))
    return sec
