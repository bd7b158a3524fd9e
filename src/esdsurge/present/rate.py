"""Human and JSON views of ``esdsurge rate`` (read a ``RateResult``; compute nothing)."""

from __future__ import annotations

import math
from typing import Any

from rich.console import Group, RenderableType
from rich.panel import Panel
from rich.rule import Rule
from rich.table import Table
from rich.text import Text

from esdsurge.present.cautions import CAUTION
from esdsurge.present.fmt import Fmt
from esdsurge.present.jsonout import envelope
from esdsurge.studies.rate import RateCheck, RateLimit, RateResult

NAMES = {
    "surge": "surge (the ESD as set)",
    "pumps": "running pumps",
    "static": "static electricity",
    "venting": "carrier venting",
}


def _limit_row(t: Table, lim: RateLimit, governing: bool, f: Fmt) -> None:
    if lim.rate is None:
        value = Text("none", style="bold red")
    else:
        value = Text(("≥ " if lim.bound == "at least" else "") + f.flow(lim.rate))
    mark = Text("◀ governs", style="bold") if governing else Text("")
    t.add_row(NAMES.get(lim.name, lim.name), value, mark, Text(lim.basis, style="dim"))


def _passes(n: int) -> str:
    return f"{n} pass" if n == 1 else f"{n} passes"


def case_view(rc: RateCheck, f: Fmt) -> RenderableType:
    style = "green" if rc.ok else "red"
    parts: list[RenderableType] = [
        Rule(Text(f" {rc.case.name} ", style="bold"), style=style, align="left")
    ]
    if rc.problem is not None:
        parts.append(Text(f"no steady state: {rc.problem}", style="bold yellow"))
        return Group(*parts)
    direction = "to the carrier" if rc.direction > 0 else "to the shore"
    head = Text()
    if rc.rate_max is None:
        head.append("NO SAFE RATE", style="bold red reverse")
    else:
        head.append(f"highest safe rate {f.flow(rc.rate_max)}", style="bold green")
        head.append(f", set by {NAMES.get(rc.governed_by, rc.governed_by)}")
    own = (
        "the case's rate"
        if rc.case.rate is not None
        else "the natural flow, as the case sets no rate"
    )
    head.append(f"  ·  {direction}; {own}: {f.flow(rc.rate_file or 0.0)}", style="dim")
    parts.append(head)
    t = Table(box=None, pad_edge=False, header_style="bold")
    for name, just in (("limit", "left"), ("rate", "right"), ("", "left"), ("basis", "left")):
        t.add_column(name, justify=just, no_wrap=name != "basis")  # type: ignore[arg-type]
    for lim in rc.limits:
        _limit_row(t, lim, lim.name == rc.governed_by, f)
    if rc.surge_spread is not None:
        lim = rc.surge_spread
        row = RateLimit("surge across the band", lim.rate, lim.basis, lim.bound)
        _limit_row(t, row, False, f)
    parts.append(t)
    if rc.surge_spread is not None:
        txt = Text("across the uncertainty band: ", style="bold")
        if rc.rate_max_spread is None:
            txt.append("no safe rate", style="bold red")
        else:
            txt.append(
                f"{f.flow(rc.rate_max_spread)}, set by "
                f"{NAMES.get(rc.governed_by_spread or '', rc.governed_by_spread)}"
            )
        parts.append(txt)
        parts.append(Text("  band: " + ", ".join(m.label for m in rc.members), style="dim"))
    if rc.initial is not None and rc.initial.rate is not None:
        parts.append(
            Text(
                f"initial rate until the tank inlets are covered: {f.flow(rc.initial.rate)} "
                f"({rc.initial.basis})"
            )
        )
    for n in rc.notes:
        parts.append(Text(f"note: {n}", style="yellow"))
    if rc.points:
        txt = Text("rates run: ", style="dim")
        for p in rc.points:
            txt.append(f"{f.flow(p.value / 3600.0)}", style="dim")
            txt.append("✓ " if p.ok else "✗ ", style="green" if p.ok else "red")
        parts.append(txt)
    parts.append(
        Text(
            f"  {rc.runs} runs in {_passes(rc.passes)}, {rc.seconds:.1f} s",
            style="dim",
        )
    )
    return Group(*parts)


def rate_view(res: RateResult, f: Fmt) -> RenderableType:
    t = res.terminal
    head = Text(f"{t.name}", style="bold")
    head.append(f"  ·  {t.path}", style="dim")
    parts: list[RenderableType] = [head]
    parts += [case_view(rc, f) for rc in res.cases]
    bad = [rc.case.name for rc in res.cases if not rc.ok]
    summary = Text()
    if not bad:
        summary.append("a safe rate was found for every case", style="bold green")
    else:
        summary.append(
            f"{len(bad)} of {len(res.cases)} cases have no safe rate: " + ", ".join(bad),
            style="bold red",
        )
    parts.append(Panel(summary, border_style="red" if bad else "green"))
    parts.append(Text(CAUTION, style="italic dim"))
    return Group(*parts)


def _m3h(q: float | None) -> float | None:
    if q is None or (isinstance(q, float) and math.isnan(q)):
        return None
    return round(q * 3600.0, 1)


def case_json(rc: RateCheck) -> dict[str, Any]:
    entry: dict[str, Any] = {
        "name": rc.case.name,
        "rate_max_m3h": _m3h(rc.rate_max),
        "governed_by": rc.governed_by,
        "limits": {lim.name: _m3h(lim.rate) for lim in rc.limits},
        "limit_basis": {lim.name: lim.basis for lim in rc.limits},
        "surge_bound": rc.surge.bound,
        "direction": "to-carrier" if rc.direction > 0 else "to-shore",
        "rate_file_m3h": _m3h(rc.rate_file),
        "initial_rate_m3h": _m3h(rc.initial.rate) if rc.initial is not None else None,
        "initial_basis": rc.initial.basis if rc.initial is not None else None,
        "notes": list(rc.notes),
        "problem": rc.problem,
        "samples": [{"rate_m3h": p.value, "ok": p.ok} for p in rc.points],
        "engine": {"passes": rc.passes, "runs": rc.runs, "seconds": round(rc.seconds, 2)},
    }
    if rc.surge_spread is not None:
        entry["spread"] = {
            "rate_max_m3h": _m3h(rc.rate_max_spread),
            "governed_by": rc.governed_by_spread,
            "surge_m3h": _m3h(rc.surge_spread.rate),
            "surge_basis": rc.surge_spread.basis,
            "members": [m.label for m in rc.members],
            "samples": [{"rate_m3h": p.value, "ok": p.ok} for p in rc.points_spread],
        }
    return entry


def rate_json(res: RateResult) -> dict[str, Any]:
    return envelope(res.terminal, res.ok, [case_json(rc) for rc in res.cases], spread=res.spread)
