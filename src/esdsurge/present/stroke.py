"""Human and JSON views of ``esdsurge stroke`` (read a ``StrokeResult``; compute nothing)."""

from __future__ import annotations

from typing import Any

from rich.console import Group, RenderableType
from rich.panel import Panel
from rich.rule import Rule
from rich.text import Text

from esdsurge.present.cautions import CAUTION
from esdsurge.present.fmt import Fmt
from esdsurge.present.jsonout import envelope, rounded
from esdsurge.studies.batch import Point
from esdsurge.studies.stroke import StrokeResult, StrokeWindow, Window


def _pct(x: float | None) -> str:
    return "—" if x is None else f"{x * 100:.0f} %"


def _noun(sw: StrokeWindow) -> str:
    """What the window is of: ``stroke``, or ``slow stage``."""
    return "slow stage" if sw.stage == "slow" else "stroke"


def _val(sw: StrokeWindow, v: float, f: Fmt, named: bool = True) -> str:
    """A searched value: ``9.3 s``, or ``slow stage 9.3 s (whole stroke 15.3 s)`` (without
    ``slow stage`` when not ``named``)."""
    if sw.stage != "slow":
        return f.time(v, 1)
    text = f"{f.time(v, 1)} (whole stroke {f.time(sw.whole_stroke(v), 1)})"
    return f"slow stage {text}" if named else text


def _scan(points: tuple[Point, ...], w: Window, f: Fmt, noun: str = "stroke") -> Text:
    """The sampled values on one line: ✓ keeps every limit, ~ broke none as far as it was run
    (not run whole), ✗ breaks one, ○ above the top."""
    txt = Text(f"{noun}s run: ", style="dim")
    top = w.stroke_max
    part = False
    for p in points:
        beyond = top is not None and p.value > top + 1e-9
        if beyond:
            mark, style = "○", "dim"
        elif p.ok and p.provisional:
            mark, style, part = "~", "yellow", True
        else:
            mark, style = ("✓", "green") if p.ok else ("✗", "red")
        txt.append(f"{p.value:g}", style="dim")
        txt.append(mark + " ", style=style)
    legend = "~ broke no limit as far as it was run, not run whole; " if part else ""
    txt.append(f"(s; {legend}○ beyond the slowest allowed)", style="dim")
    return txt


def _window_lines(sw: StrokeWindow, w: Window, f: Fmt, label: str) -> list[RenderableType]:
    out: list[RenderableType] = []
    if w.empty:
        head = Text(f"{label}: ", style="bold")
        head.append(f"NO SAFE {_noun(sw).upper()}", style="bold red reverse")
        out.append(head)
        out.append(Text(f"  {w.reason}", style="red"))
        if w.opens:
            out.append(Text("  what would open it: " + "; ".join(w.opens)))
        return out
    assert w.stroke_min is not None
    head = Text(f"{label}: ", style="bold")
    top = f.time(w.stroke_max, 1) if w.stroke_max is not None else "no upper limit set"
    head.append(f"{f.time(w.stroke_min, 1)} to {top}", style="bold green")
    if sw.stage == "slow":
        whole_top = (
            f.time(sw.whole_stroke(w.stroke_max), 1) if w.stroke_max is not None else "no limit"
        )
        head.append(f" (whole stroke {f.time(sw.whole_stroke(w.stroke_min), 1)} to {whole_top})")
    out.append(head)
    out.append(Text(f"  fastest safe {_val(sw, w.stroke_min, f)} — set by {w.min_governed_by}"))
    if w.stroke_max is not None:
        out.append(
            Text(f"  slowest allowed {_val(sw, w.stroke_max, f)} — set by {w.max_governed_by}")
        )
    else:
        out.append(Text(f"  slowest allowed: {w.max_governed_by}"))
    if w.recommended is not None:
        line = Text("  recommended ", style="bold")
        line.append(_val(sw, w.recommended, f), style="bold")
        line.append(f": {_pct(w.margin_fast)} longer than the fastest safe")
        if w.margin_slow is not None:
            line.append(f"; the slowest allowed is {_pct(w.margin_slow)} longer than it")
        out.append(line)
    return out


def _passes(n: int) -> str:
    return f"{n} pass" if n == 1 else f"{n} passes"


def case_view(sw: StrokeWindow, f: Fmt) -> RenderableType:
    ok = sw.ok
    style = "green" if ok else "red"
    parts: list[RenderableType] = [
        Rule(Text(f" {sw.case.name} ", style="bold"), style=style, align="left")
    ]
    what = Text()
    what.append(f"{sw.valve}", style="bold")
    if sw.stage == "slow":
        shape = (
            f": a fast stage of {f.time(sw.fast_stage, 1)} to {_pct(sw.fast_to)} open, kept as "
            f"it is, then a slow stage of {f.time(sw.searched_file, 1)}, which is varied"
        )
    else:
        shape = ", staged travel kept in shape" if sw.staged else ""
    what.append(
        f" ({sw.valve_kind}) starts to move {f.time(sw.at, 1)} after the trigger; its stroke in "
        f"the file is {f.time(sw.stroke_file, 1)}{shape}"
    )
    parts.append(what)
    label = f"safe {_noun(sw)} window"
    if sw.problem is not None:
        parts += _window_lines(sw, sw.nominal, f, label)
        return Group(*parts)
    parts += _window_lines(sw, sw.nominal, f, label)
    if sw.spread is not None:
        parts += _window_lines(sw, sw.spread, f, "across the uncertainty band")
        parts.append(
            Text(
                "  band: " + ", ".join(m.label for m in sw.members),
                style="dim",
            )
        )
    lead = sw.spread if sw.spread is not None and not sw.spread.empty else sw.nominal
    if lead.recommended is not None and sw.check is not None:
        cc = sw.check
        line = Text(f"  at {_val(sw, lead.recommended, f)}: ")
        gov = next((e for e in cc.elements if e.name == cc.governing), None)
        if gov is not None:
            lim = gov.limits
            by_max = (
                lim.max_gauge is not None
                and gov.margin_max is not None
                and (
                    gov.margin_max / max(lim.max_gauge, 1.0)
                    <= gov.margin_min / max(lim.min_abs, 1.0)
                )
            )
            if by_max:
                what = f"highest {f.p_gauge(gov.p_max_abs)} against {f.basis(lim.max_basis)}"
            else:
                what = f"lowest {f.p_abs(gov.p_min_abs)} against {f.basis(lim.min_basis)}"
            line.append(f"least margin at {gov.name} ({gov.kind}), {what}")
        if cc.spill is not None:
            line.append(f"; {f.volume(cc.spill)} through {cc.closing}")
        parts.append(line)
    if lead.recommended is not None and sw.effective_closure is not None:
        parts.append(
            Text(
                f"  effective closure time at {_val(sw, lead.recommended, f)}: "
                f"{f.time(sw.effective_closure, 1)} (installed characteristic, pumps running), "
                f"against a pipeline period 2L/a of {f.time(sw.period, 2)} for the route",
                style="dim",
            )
        )
    w = sw.nominal
    noun = _noun(sw)
    if not w.empty and w.stroke_min is not None:
        own = sw.searched_file
        inside = w.stroke_min <= own and (w.stroke_max is None or own <= w.stroke_max)
        note = "inside" if inside else "OUTSIDE"
        parts.append(
            Text(
                f"  the file's {noun} {_val(sw, own, f, named=False)} is {note} the window",
                style="" if inside else "bold yellow",
            )
        )
    for x in w.worse:
        parts.append(Text(f"  a longer {noun} is worse: {x}", style="yellow"))
    if sw.spread is not None:
        for x in sw.spread.worse:
            if x not in w.worse:
                parts.append(
                    Text(f"  across the band, a longer {noun} is worse: {x}", style="yellow")
                )
    if w.points:
        parts.append(_scan(w.points, w, f, noun))
    parts.append(
        Text(
            f"  {sw.runs} runs in {_passes(sw.passes)}, {sw.seconds:.1f} s; {noun}s on a 0.1 s "
            "lattice, a limit that breaks only between two samples is not seen",
            style="dim",
        )
    )
    return Group(*parts)


def stroke_view(res: StrokeResult, f: Fmt) -> RenderableType:
    t = res.terminal
    head = Text(f"{t.name}", style="bold")
    head.append(f"  ·  {t.path}", style="dim")
    parts: list[RenderableType] = [head]
    parts += [case_view(sw, f) for sw in res.windows]
    n_empty = sum(1 for sw in res.windows if not sw.ok)
    summary = Text()
    noun = "slow stage" if any(sw.stage == "slow" for sw in res.windows) else "stroke"
    if n_empty == 0:
        what = "the case has" if len(res.windows) == 1 else f"all {len(res.windows)} cases have"
        summary.append(f"{what} a safe {noun} window", style="bold green")
    else:
        summary.append(
            f"{n_empty} of {len(res.windows)} cases have no safe {noun}: "
            + ", ".join(sw.case.name for sw in res.windows if not sw.ok),
            style="bold red",
        )
    parts.append(Panel(summary, border_style="green" if n_empty == 0 else "red"))
    parts.append(Text(CAUTION, style="italic dim"))
    return Group(*parts)


def _r(x: float | None, n: int = 3) -> float | None:
    return rounded(x, n)


def window_json(w: Window, sw: StrokeWindow | None = None) -> dict[str, Any]:
    """One window; with a searched slow stage (``sw.stage == "slow"``) the whole strokes are
    given beside the slow-stage values (``whole_stroke_min_s``, ``whole_stroke_max_s``,
    ``whole_recommended_s``, and ``whole_stroke_s`` in each sample)."""
    out = {
        "stroke_min_s": _r(w.stroke_min, 2),
        "stroke_max_s": _r(w.stroke_max, 2),
        "min_governed_by": w.min_governed_by,
        "max_governed_by": w.max_governed_by,
        "recommended_s": _r(w.recommended, 2),
        "empty": w.empty,
        "reason": w.reason,
        "opens": list(w.opens),
        "max_kind": w.max_kind,
        "min_breach": (
            None
            if w.min_breach is None
            else {
                "element": w.min_breach.element,
                "limit": w.min_breach.what,
                "basis": str(w.min_breach.basis),
                "member": w.min_breach.member,
            }
        ),
        "margin_fast": _r(w.margin_fast),
        "margin_slow": _r(w.margin_slow),
        "longer_is_worse": list(w.worse),
        "samples": [
            {
                "stroke_s": _r(p.value, 2),
                "ok": p.ok,
                "spill_m3": _r(p.spill, 4),
                "peak_ratio": _r(p.peak_ratio, 4),
                "cavity_m3": _r(p.cavity, 6),
                "stopped_early": p.partial,
                "provisional": p.provisional,
                "ran_to_s": _r(p.ran_to, 2),
            }
            for p in w.points
        ],
    }
    if sw is not None and sw.stage == "slow":
        out["whole_stroke_min_s"] = _r(sw.whole_stroke(w.stroke_min), 2)
        out["whole_stroke_max_s"] = _r(sw.whole_stroke(w.stroke_max), 2)
        out["whole_recommended_s"] = _r(sw.whole_stroke(w.recommended), 2)
        for sample, p in zip(out["samples"], w.points, strict=True):
            sample["whole_stroke_s"] = _r(sw.whole_stroke(p.value), 2)
    return out


def case_json(sw: StrokeWindow, atm: float) -> dict[str, Any]:
    entry: dict[str, Any] = {"name": sw.case.name, "valve": sw.valve}
    entry.update(window_json(sw.nominal, sw))
    entry.update(
        {
            "valve_kind": sw.valve_kind,
            "at_s": _r(sw.at, 3),
            "stroke_file_s": _r(sw.stroke_file, 3),
            "staged": sw.staged,
            "stage": sw.stage,
            "effective_closure_s": _r(sw.effective_closure, 2),
            "period_s": _r(sw.period, 3),
            "problem": sw.problem,
            "engine": {"passes": sw.passes, "runs": sw.runs, "seconds": _r(sw.seconds, 2)},
        }
    )
    if sw.stage == "slow":
        entry["fast_stage_s"] = _r(sw.fast_stage, 3)
        entry["fast_stage_to"] = _r(sw.fast_to, 4)
        entry["slow_stage_file_s"] = _r(sw.searched_file, 3)
    if sw.check is not None:
        cc = sw.check
        entry["at_recommended"] = {
            "governing": cc.governing,
            "spill_m3": _r(cc.spill, 4),
            "elements": [
                {
                    "name": ev.name,
                    "p_max_barg": _r((ev.p_max_abs - atm) / 1e5, 3),
                    "p_min_bara": _r(ev.p_min_abs / 1e5, 4),
                    "cavity_max_m3": _r(ev.cavity_max, 6),
                    "ok": ev.ok,
                }
                for ev in cc.elements
            ],
        }
    if sw.spread is not None:
        entry["spread"] = window_json(sw.spread, sw)
        entry["spread"]["members"] = [m.label for m in sw.members]
    return entry


def stroke_json(res: StrokeResult) -> dict[str, Any]:
    atm = res.terminal.atmosphere_abs
    return envelope(
        res.terminal, res.ok, [case_json(sw, atm) for sw in res.windows], spread=res.spread
    )
