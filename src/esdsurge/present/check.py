"""Human and JSON views of ``esdsurge check`` (read a ``CheckResult``; compute nothing)."""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from rich.console import Group, RenderableType
from rich.panel import Panel
from rich.rule import Rule
from rich.table import Table
from rich.text import Text

from esdsurge.model import Close, Ramp, Release, Trip
from esdsurge.present.cautions import CAUTION
from esdsurge.present.fmt import Fmt
from esdsurge.present.jsonout import envelope, rounded
from esdsurge.studies.check import (
    FAIL_STEADY,
    NO_STEADY,
    PASS,
    BranchResult,
    CaseCheck,
    CheckResult,
    ElementVerdict,
)

BARS = "▁▂▃▄▅▆▇█"
VERDICT_STYLE = {PASS: "bold green", NO_STEADY: "bold yellow"}


def sparkline(values: np.ndarray, width: int = 56, scale: tuple[float, float] | None = None) -> str:
    """A one-line trace: the highest value in each of ``width`` bins, on eight levels.

    ``scale`` : the values of the lowest and the highest level (two traces drawn on one scale
    can be compared); by default the trace's own lowest and highest bin.
    """
    values = np.asarray(values, dtype=float)
    if values.size == 0:
        return ""
    bins = np.array_split(values, min(width, values.size))
    tops = np.array([b.max() for b in bins])
    lo, hi = (float(tops.min()), float(tops.max())) if scale is None else scale
    if hi - lo <= 0.0:
        return BARS[0] * len(tops)
    idx = np.clip(((tops - lo) / (hi - lo) * (len(BARS) - 1)).round().astype(int), 0, 7)
    return "".join(BARS[i] for i in idx)


def describe_events(cc: CaseCheck, f: Fmt) -> str:
    parts = []
    for e in sorted(cc.case.events, key=lambda e: e.at):
        if isinstance(e, Close):
            shape = "" if len(e.travel) == 2 else " (staged)"
            parts.append(f"{f.time(e.at, 1)} {e.element} closes in {f.time(e.stroke, 1)}{shape}")
        elif isinstance(e, Trip):
            parts.append(f"{f.time(e.at, 1)} {e.element} trip")
        elif isinstance(e, Release):
            parts.append(f"{f.time(e.at, 1)} {e.element} releases")
        elif isinstance(e, Ramp):
            parts.append(f"{f.time(e.at, 1)} {e.element} ramps down in {f.time(e.ramp_time, 1)}")
    return "; ".join(parts)


def _mark(ok: bool) -> Text:
    return Text("✓", style="green") if ok else Text("✗", style="bold red")


def _allowed(ev: ElementVerdict, f: Fmt) -> str:
    lim = ev.limits
    allowed = f"≤ {f.p_gauge_value(lim.max_gauge)}" if lim.max_gauge is not None else "—"
    return allowed + f" · ≥ {f.p_abs(lim.min_abs)}"


def _name_cell(ev: ElementVerdict, cc: CaseCheck) -> Text:
    governs = ev.name == cc.governing
    return Text(ev.name + (" ◀" if governs else ""), style="bold" if governs else "")


def _highest(ev: ElementVerdict, f: Fmt) -> Text:
    return Text(f.p_gauge(ev.p_max_abs), style="" if ev.ok_max else "bold red")


def _lowest(ev: ElementVerdict, f: Fmt) -> Text:
    return Text(f.p_abs(ev.p_min_abs), style="" if ev.ok_min else "bold red")


def _cavity(ev: ElementVerdict, f: Fmt) -> str:
    return f.cavity(ev.cavity_max) if ev.cavity_max > 0 else "—"


def _element_table(cc: CaseCheck, f: Fmt) -> Table:
    t = Table(box=None, pad_edge=False, header_style="bold", expand=False)
    for name, just in (
        ("", "left"),
        ("element", "left"),
        ("highest", "right"),
        ("at", "right"),
        ("lowest", "right"),
        ("cavity", "right"),
        ("allowed", "right"),
        ("margin", "right"),
    ):
        t.add_column(name, justify=just, no_wrap=True)  # type: ignore[arg-type]
    for ev in cc.elements:
        where = f.time(ev.t_p_max, 1)
        if ev.kind in ("pipe", "arm", "hose"):
            where += f", {f.length(ev.x_p_max)}"
        if ev.margin_max is None:
            margin = "—"
        else:
            margin = f.dp(ev.margin_max)
        if not ev.ok_min:
            margin += " · cavity" if ev.cavity_max > 0 else f" · {f.dp(ev.margin_min)} below min"
        t.add_row(
            _mark(ev.ok),
            _name_cell(ev, cc),
            _highest(ev, f),
            where,
            _lowest(ev, f),
            _cavity(ev, f),
            _allowed(ev, f),
            Text(margin, style="" if ev.ok else "bold red"),
        )
    return t


def without_label(cc: CaseCheck) -> str:
    """``without X, Y``: what the comparison of ``cc`` took out, in words.

    A relief valve or an accumulator by its name; a valve's staged closure and a pump's
    ramp-down by what was taken out of them (the valve and the pump stay).
    """
    words = []
    for name in cc.without:
        events = [e for e in cc.case.events if e.element == name]
        if any(isinstance(e, Ramp) for e in events):
            words.append(f"the ramp-down of {name}")
        elif any(isinstance(e, Close) and len(e.travel) > 2 for e in events):
            words.append(f"the staged closure of {name}")
        else:
            words.append(name)
    return "without " + ", ".join(words)


def _compare_table(cc: CaseCheck, f: Fmt) -> Table:
    """The elements of the case as designed and without its mitigations, side by side."""
    other = cc.compare
    assert other is not None
    bare = {ev.name: ev for ev in other.elements}
    cavities = any(ev.cavity_max > 0 for ev in (*cc.elements, *other.elements))
    t = Table(box=None, pad_edge=False, header_style="bold", expand=False)
    t.add_column("", no_wrap=True)
    t.add_column("\nelement", no_wrap=True)
    for group in ("as designed", "without"):
        if group == "without":
            t.add_column("", no_wrap=True)
        t.add_column(f"{group}\nhighest", justify="right", no_wrap=True)
        t.add_column("\nlowest", justify="right", no_wrap=True)
        if cavities:
            t.add_column("\ncavity", justify="right", no_wrap=True)
    t.add_column("\nallowed", justify="right", no_wrap=True)
    for ev in cc.elements:
        row: list[RenderableType] = [_mark(ev.ok), _name_cell(ev, cc)]
        for side in (ev, bare.get(ev.name)):
            if side is None:  # an element judged in one member only: not expected
                row += ["", "—", "—"] + (["—"] if cavities else [])
                continue
            if side is not ev:
                row.append(_mark(side.ok))
            row += [_highest(side, f), _lowest(side, f)]
            if cavities:
                row.append(_cavity(side, f))
        row.append(_allowed(ev, f))
        t.add_row(*row)
    return t


def _relief_lines(b: BranchResult, f: Fmt) -> list[Text]:
    out = [Text(f"  {b.name} (surge relief valve): ")]
    if b.state_max <= 0.0:
        out[0].append("stayed shut, the pressure never reached its set pressure")
    else:
        out[0].append(f"relieved {f.small_volume(b.volume)}")
        if b.receiver_volume is not None:
            out[0].append(f" into a receiver with room for {f.small_volume(b.receiver_volume)}")
        out.append(
            Text(
                f"    peak flow {f.flow(b.flow_max)} at {f.time(b.t_flow_max, 1)} · largest "
                f"opening {f.percent(b.state_max)} · capacity fully open "
                + (f.flow(b.capacity) if b.capacity is not None else "—")
            )
        )
    if b.over_capacity:
        out.append(
            Text(
                f"  ✗ {b.name} would pass more than its capacity: fully open above its "
                f"full-open pressure for {f.time(b.time_over_capacity, 1)}",
                style="bold red",
            )
        )
    if b.receiver_ok is False:
        out.append(
            Text(
                f"  ✗ {b.name} overflows its receiver: relieved {f.small_volume(b.volume)} "
                f"into room for {f.small_volume(b.receiver_volume)}",
                style="bold red",
            )
        )
    return out


def _accumulator_lines(b: BranchResult, f: Fmt) -> list[Text]:
    def gas(v: float) -> str:  # the gas volumes in one unit, that of the largest
        return f.small_volume(v, like=b.state_max)

    before = gas(float(b.state[0])) if len(b.state) else "—"
    first = Text(
        f"  {b.name} (accumulator): gas {before} before · {gas(b.state_min)} smallest · "
        f"{gas(b.state_max)} largest"
    )
    if f.flow(b.flow_max) == f.flow(0.0) and f.flow(b.flow_out_max) == f.flow(0.0):
        # nothing to show at the display's resolution: its pre-charge held it shut
        return [first, Text("    took in and gave back no liquid that shows at this resolution")]
    return [
        first,
        Text(
            f"    net volume taken in {gas(b.volume)} · peak flow in "
            f"{f.flow(b.flow_max)} at {f.time(b.t_flow_max, 1)}, out {f.flow(b.flow_out_max)} "
            f"at {f.time(b.t_flow_out_max, 1)}"
        ),
    ]


def mitigations_view(cc: CaseCheck, f: Fmt) -> list[Text]:
    """What each relief valve and accumulator of the case as designed did."""
    if not cc.branches:
        return []
    out = [
        Text(
            "relief valves and accumulators" + (", as designed:" if cc.compare else ":"),
            style="bold",
        )
    ]
    for b in cc.branches:
        out += _relief_lines(b, f) if b.kind == "relief" else _accumulator_lines(b, f)
    return out


def _governing_line(cc: CaseCheck, f: Fmt) -> Text:
    ev = next(e for e in cc.elements if e.name == cc.governing)
    txt = Text("governing: ", style="bold")
    txt.append(f"{ev.name} ({ev.kind}) — ")
    if not ev.ok_min:
        if ev.cavity_max > 0.0 and ev.limits.min_is_vapour:
            what = f"column separation, vapour cavity {f.cavity(ev.cavity_max)}"
            if ev.kind in ("pipe", "arm", "hose"):
                what += f" at {f.length(ev.x_cavity_max)}"
        else:
            what = f"lowest {f.p_abs(ev.p_min_abs)}"
        txt.append(f"{what} against {f.basis(ev.limits.min_basis)}", style="bold red")
    elif ev.limits.max_gauge is not None:
        txt.append(
            f"highest {f.p_gauge(ev.p_max_abs)} against {f.basis(ev.limits.max_basis)}",
            style="" if ev.ok_max else "bold red",
        )
    else:
        txt.append(f"lowest {f.p_abs(ev.p_min_abs)} against {f.basis(ev.limits.min_basis)}")
    return txt


def _trace_lines(cc: CaseCheck, f: Fmt) -> list[Text]:
    """The carrier-side trace as a sparkline; with a comparison both, on one scale."""
    if cc.compare is None or not cc.compare.traces:
        tr = cc.traces[0]
        line = Text()
        line.append(f"{cc.manifold}: ", style="bold")
        line.append(sparkline(tr.p_abs), style="cyan")
        line.append(
            f"  peak {f.p_gauge(cc.manifold_peak_abs)} at {f.time(cc.t_manifold_peak, 1)}"
            f" (trace {f.time(float(tr.time[0]), 0)}–{f.time(float(tr.time[-1]), 0)}, "
            f"{f.p_gauge(float(tr.p_abs.min()))} to {f.p_gauge(float(tr.p_abs.max()))})"
        )
        return [line]
    pair = (("as designed", cc), (without_label(cc), cc.compare))
    low = min(float(one.traces[0].p_abs.min()) for _, one in pair)
    high = max(float(one.traces[0].p_abs.max()) for _, one in pair)
    tr = cc.traces[0]
    out = [
        Text(f"{cc.manifold}: ", style="bold").append(
            f"trace {f.time(float(tr.time[0]), 0)}–{f.time(float(tr.time[-1]), 0)}, both on "
            f"one scale from {f.p_gauge(low)} to {f.p_gauge(high)}",
            style="",
        )
    ]
    label_width = max(len(label) for label, _ in pair)
    # keep the lines within about 110 columns however long the names are
    width = max(24, min(56, 110 - 4 - label_width - 28))
    for label, one in pair:
        line = Text(f"  {label:<{label_width}}  ")
        line.append(sparkline(one.traces[0].p_abs, width, scale=(low, high)), style="cyan")
        line.append(
            f"  peak {f.p_gauge(one.manifold_peak_abs)} at {f.time(one.t_manifold_peak, 1)}"
        )
        out.append(line)
    return out


def case_view(cc: CaseCheck, f: Fmt) -> RenderableType:
    verdict = cc.verdict.upper()
    style = VERDICT_STYLE.get(cc.verdict, "bold red")
    title = Text(f" {cc.case.name} ", style="bold")
    parts: list[RenderableType] = [Rule(title, style=style.replace("bold ", ""), align="left")]
    head = Text()
    head.append(f"{verdict}", style=style + " reverse")
    if cc.compare is not None:
        # both verdicts on the first line, the route on the next
        head.append(" as designed · ")
        head.append(
            cc.compare.verdict.upper(),
            style=VERDICT_STYLE.get(cc.compare.verdict, "bold red") + " reverse",
        )
        head.append(f" {without_label(cc)}")
        parts.append(head)
        head = Text()
    else:
        head.append("  ")
    head.append(f"route {cc.case.route} · {cc.case.product}")
    s = cc.derived.steady
    if s is not None:
        direction = "to the carrier" if s.flow >= 0 else "to the shore"
        head.append(f" · {f.flow(s.flow)} {direction}")
    parts.append(head)
    parts.append(Text(f"after the trigger: {describe_events(cc, f)}", style="dim"))
    if cc.verdict == NO_STEADY:
        parts.append(Text(f"no steady state: {cc.derived.problem}", style="bold yellow"))
        return Group(*parts)
    if cc.verdict == FAIL_STEADY:
        for b in cc.derived.breaches:
            p = f.p_gauge(b.pressure_abs) if b.what == "max" else f.p_abs(b.pressure_abs)
            parts.append(
                Text(
                    f"fails before any surge: {b.element} runs at {p} at steady state, "
                    f"outside {f.basis(b.basis)}",
                    style="bold red",
                )
            )
    cmp = cc.compare
    if cmp is None:
        parts.append(_element_table(cc, f))
    else:
        legend = f"left as designed, right {without_label(cc)}"
        note = " (the exit status follows the case as designed)"
        parts.append(Text(legend + (note if len(legend + note) <= 110 else ""), style="dim"))
        parts.append(_compare_table(cc, f))
    parts += mitigations_view(cc, f)
    if cmp is None:
        if cc.governing:
            parts.append(_governing_line(cc, f))
    else:
        for label, one in (("as designed", cc), (without_label(cc), cmp)):
            line = Text(f"{label}: ", style="bold")
            line.append(one.verdict.upper(), style=VERDICT_STYLE.get(one.verdict, "bold red"))
            parts.append(line)
            if one.governing:
                parts.append(Text("  ").append(_governing_line(one, f)))
    if cc.manifold and cc.traces:
        parts += _trace_lines(cc, f)
    h = cc.derived.hand
    if h is not None and s is not None:
        closing = next((e for e in cc.elements if e.name == h.valve), None)
        sim = ""
        if closing is not None:
            run_p = closing.p_max_abs
            start = s.element(h.valve).p_in_abs if s.flow >= 0 else s.element(h.valve).p_out_abs
            sim = f"; simulated rise at the valve {f.dp(run_p - start)}"
        parts.append(
            Text(
                f"why: instant closure would give Joukowsky {f.dp(h.joukowsky_instant)} "
                f"({h.governing}); the {f.time(h.stroke, 1)} stroke acts as "
                f"{f.time(h.effective_closure, 1)} effective against 2L/a = "
                f"{f.time(h.side_period)} ({h.regime}) → estimate {f.dp(h.estimate)} with the "
                f"pumps running throughout{sim}",
                style="dim",
            )
        )
    if cc.spill is not None:
        txt = Text(f"volume through {cc.closing} after the trigger: {f.volume(cc.spill)}")
        if cc.case.spill_limit is not None:
            ok = "within" if cc.spill_ok else "ABOVE"
            txt.append(
                f" — {ok} the spill limit {f.volume(cc.case.spill_limit)}",
                style="" if cc.spill_ok else "bold red",
            )
        parts.append(txt)
    if cc.largest_cavity > 0.0:
        parts.append(
            Text(
                f"column separation: largest vapour cavity {f.cavity(cc.largest_cavity)} "
                f"in {cc.largest_cavity_at}",
                style="yellow",
            )
        )
    return Group(*parts)


def check_view(res: CheckResult, f: Fmt) -> RenderableType:
    t = res.terminal
    n_fail = sum(1 for c in res.cases if not c.ok)
    head = Text(f"{t.name}", style="bold")
    head.append(f"  ·  {t.path}", style="dim")
    what = []
    if res.stroke is not None:
        what.append(f"stroke set to {f.time(res.stroke, 1)}")
    if res.rate is not None:
        what.append(f"rate set to {f.flow(res.rate)}")
    parts: list[RenderableType] = [head]
    if what:
        parts.append(Text("what-if: " + ", ".join(what), style="yellow"))
    parts += [case_view(c, f) for c in res.cases]
    summary = Text()
    if n_fail == 0:
        what = "the case is" if len(res.cases) == 1 else f"all {len(res.cases)} cases are"
        summary.append(f"{what} within limits", style="bold green")
    else:
        summary.append(
            f"{n_fail} of {len(res.cases)} cases outside limits: "
            + ", ".join(c.case.name for c in res.cases if not c.ok),
            style="bold red",
        )
    if n_fail:
        summary.append(
            "\nnext: `esdsurge stroke FILE` gives each case's safe stroke window, "
            "`esdsurge rate FILE` the highest safe transfer rate",
            style="dim",
        )
    parts.append(Panel(summary, border_style="green" if n_fail == 0 else "red"))
    parts.append(Text(CAUTION, style="italic dim"))
    return Group(*parts)


_r = rounded


def case_json(cc: CaseCheck, atm: float) -> dict[str, Any]:
    s = cc.derived.steady
    entry: dict[str, Any] = {
        "name": cc.case.name,
        "route": cc.case.route,
        "product": cc.case.product,
        "rate_m3h": _r(abs(s.flow) * 3600, 3) if s is not None else None,
        "verdict": cc.verdict,
        "governing": cc.governing,
        "elements": [],
        "spill_m3": _r(cc.spill),
        "spill_limit_m3": _r(cc.case.spill_limit),
        "closing_element": cc.closing,
        "branches": [branch_json(b) for b in cc.branches],
    }
    if cc.verdict == NO_STEADY:
        entry["problem"] = cc.derived.problem
        return entry
    for ev in cc.elements:
        lim = ev.limits
        entry["elements"].append(
            {
                "name": ev.name,
                "kind": ev.kind,
                "p_max_barg": _r((ev.p_max_abs - atm) / 1e5),
                "t_p_max_s": _r(ev.t_p_max),
                "x_p_max_m": _r(ev.x_p_max, 2),
                "p_min_bara": _r(ev.p_min_abs / 1e5),
                "t_p_min_s": _r(ev.t_p_min),
                "x_p_min_m": _r(ev.x_p_min, 2),
                "cavity_max_m3": _r(ev.cavity_max, 6),
                "limit_max_barg": _r(lim.max_gauge / 1e5) if lim.max_gauge is not None else None,
                "limit_max_basis": str(lim.max_basis),
                "limit_min_bara": _r(lim.min_abs / 1e5),
                "limit_min_basis": str(lim.min_basis),
                "margin_max_bar": _r(ev.margin_max / 1e5) if ev.margin_max is not None else None,
                "ok": ev.ok,
            }
        )
    entry["manifold"] = {
        "element": cc.manifold,
        "p_max_barg": _r((cc.manifold_peak_abs - atm) / 1e5) if cc.manifold_peak_abs else None,
        "t_p_max_s": _r(cc.t_manifold_peak),
    }
    entry["largest_cavity_m3"] = _r(cc.largest_cavity, 6)
    entry["largest_cavity_element"] = cc.largest_cavity_at
    entry["fails_before_surge"] = [
        {"element": b.element, "limit": b.what, "basis": str(b.basis)} for b in cc.derived.breaches
    ]
    if cc.derived.hand is not None:
        h = cc.derived.hand
        entry["hand_checks"] = {
            "closing_element": h.valve,
            "joukowsky_instant_bar": _r(h.joukowsky_instant / 1e5),
            "effective_closure_s": _r(h.effective_closure),
            "estimate_bar": _r(h.estimate / 1e5),
            "period_s": _r(h.side_period),
            "regime": h.regime,
        }
    run = cc.run
    if run is not None:
        entry["engine"] = {
            "dt_s": _r(float(run.dt[cc.member]), 7),  # type: ignore[attr-defined]
            "duration_s": _r(run.duration),  # type: ignore[attr-defined]
            "worst_wave_speed_adjustment": _r(
                float(np.nanmax(np.abs(run.wave_speed_adjustment[cc.member]))),
                5,  # type: ignore[attr-defined]
            ),
        }
    if cc.compare is not None:
        # the same case without its mitigations, built by this same function
        entry["without"] = list(cc.without)
        entry["compare"] = case_json(cc.compare, atm)
    return entry


def branch_json(b: BranchResult) -> dict[str, Any]:
    """What a relief valve or an accumulator did (flows in m^3/h, volumes in m^3)."""
    entry: dict[str, Any] = {
        "name": b.name,
        "kind": b.kind,
        "volume_m3": _r(b.volume, 6),
        "flow_max_m3h": _r(b.flow_max * 3600, 3),
        "t_flow_max_s": _r(b.t_flow_max),
    }
    if b.kind == "relief":
        entry |= {
            "opening_min": _r(b.state_min),
            "opening_max": _r(b.state_max),
            "capacity_m3h": _r(b.capacity * 3600, 3) if b.capacity is not None else None,
            "time_over_capacity_s": _r(b.time_over_capacity),
            "over_capacity": b.over_capacity,
            "receiver_volume_m3": _r(b.receiver_volume, 6),
            "receiver_ok": b.receiver_ok,
        }
    else:
        entry |= {
            "gas_volume_start_m3": _r(float(b.state[0]), 6) if len(b.state) else None,
            "gas_volume_min_m3": _r(b.state_min, 6),
            "gas_volume_max_m3": _r(b.state_max, 6),
            "flow_out_max_m3h": _r(b.flow_out_max * 3600, 3),
            "t_flow_out_max_s": _r(b.t_flow_out_max),
        }
    # the history, every k-th sample of the run's series (at most HISTORY_POINTS + 1)
    k = max(1, math.ceil((len(b.time) - 1) / HISTORY_POINTS))
    state_key = "opening" if b.kind == "relief" else "gas_volume_m3"
    entry["history"] = {
        "time_s": [_r(float(t)) for t in b.time[::k]],
        "flow_m3h": [_r(float(q) * 3600, 3) or 0.0 for q in b.flow[::k]],
        state_key: [_r(float(x), 6) for x in b.state[::k]],
    }
    return entry


#: samples of a relief valve's or an accumulator's history in the JSON
HISTORY_POINTS = 200


def check_json(res: CheckResult) -> dict[str, Any]:
    atm = res.terminal.atmosphere_abs
    return envelope(res.terminal, res.ok, [case_json(c, atm) for c in res.cases])
