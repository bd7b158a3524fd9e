"""Human and JSON views of ``esdsurge lint`` (reads a ``Derived``; computes nothing)."""

from __future__ import annotations

from typing import Any

from rich.console import Group, RenderableType
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from esdsurge import __version__
from esdsurge.present.cautions import CAUTION
from esdsurge.present.fmt import Fmt
from esdsurge.present.jsonout import rounded
from esdsurge.steady import ElementState
from esdsurge.studies.derive import CaseDerived, Derived, RouteDerived

KIND_MARK = {
    "tank": "▭",
    "pump": "◎",
    "pipe": "═",
    "arm": "╱",
    "hose": "∿",
    "valve": "⋈",
    "coupling": "⊘",
    "manifold": "╋",
    "relief": "↥",
    "accumulator": "◒",
}


def _route_table(rd: RouteDerived, f: Fmt) -> Panel:
    t = Table(box=None, pad_edge=False, expand=False, header_style="bold")
    t.add_column("", no_wrap=True)
    t.add_column("element", no_wrap=True)
    t.add_column("kind")
    t.add_column("length", justify="right")
    t.add_column("bore", justify="right")
    t.add_column("wave speed", justify="right")
    t.add_column("2L/a", justify="right")
    t.add_column("elevation in → out", justify="right")
    for ln in rd.lines:
        a = f.wave_speed(ln.wave_speed)
        if ln.wave_speed is not None and ln.wave_speed_given:
            a += " (given)"
        t.add_row(
            KIND_MARK.get(ln.kind, "·"),
            ln.name,
            ln.kind,
            f.length(ln.length) if ln.length else "",
            f.diameter(ln.diameter) if ln.diameter else "",
            a if ln.wave_speed else "",
            f.time(ln.period) if ln.period else "",
            f"{f.elevation(ln.z_in)} → {f.elevation(ln.z_out)}"
            if ln.length
            else f.elevation(ln.z_in),
        )
    title = f"route [b]{rd.route.name}[/b] — wave speeds for {rd.product}"
    foot = f"pipeline period of the route 2ΣL/a = {f.time(rd.period)}"
    return Panel(Group(t, Text(foot, style="dim")), title=title, title_align="left")


def _case_block(cd: CaseDerived, f: Fmt) -> Panel:
    c = cd.case

    def pump_head(es: ElementState) -> float:
        assert cd.steady is not None
        return cd.steady.pump_heads.get(es.name, 0.0)

    lines: list[RenderableType] = []
    head = Text()
    head.append(f"route {c.route}, product {c.product} ")
    head.append(
        f"({f.density(cd.fluid.density)}, sound speed {f.wave_speed(cd.fluid.sound_speed)}, "
    )
    head.append(f"vapour pressure {f.p_abs(cd.fluid.vapour_pressure_abs, 3)})")
    lines.append(head)
    if cd.steady is None:
        lines.append(Text(f"no steady state: {cd.problem}", style="bold red"))
        return Panel(Group(*lines), title=f"case [b]{c.name}[/b]", title_align="left")
    s = cd.steady
    rate = Text()
    rate.append("transfer rate ", style="bold")
    rate.append(f.flow(s.flow))
    rate.append(" towards the carrier" if s.flow >= 0 else " towards the shore")
    if s.rate_requested is not None:
        rate.append(f"; unthrottled the route would pass {f.flow(s.natural_flow)}")
    if s.throttled_head > 0:
        rate.append(f"; throttled head {f.head(s.throttled_head)} at {s.throttle_at} discharge")
    lines.append(rate)

    t = Table(box=None, pad_edge=False, header_style="bold")
    t.add_column("element", no_wrap=True)
    t.add_column("velocity / head", justify="right")
    t.add_column("pressure in", justify="right")
    t.add_column("pressure out", justify="right")
    t.add_column("lowest along", justify="right")
    t.add_column("allowed", justify="right")
    for es in s.elements:
        if es.kind == "tank":
            continue
        lim = cd.limits.get(es.name)
        allowed = ""
        if lim is not None and lim.steady_max_gauge is not None:
            allowed = f"≤ {f.p_gauge_value(lim.steady_max_gauge)}"
        low = f.p_abs(es.p_min_abs)
        if es.x_p_min and es.kind in ("pipe", "arm", "hose"):
            low += f" @ {f.length(es.x_p_min)}"
        t.add_row(
            es.name,
            f.speed(abs(es.velocity)) if es.kind != "pump" else f"adds {f.head(pump_head(es))}",
            f.p_gauge(es.p_in_abs),
            f.p_gauge(es.p_out_abs),
            low,
            allowed,
        )
    lines.append(t)
    for b in cd.breaches:
        word = "above" if b.what == "max" else "below"
        lines.append(
            Text(
                f"FAILS BEFORE ANY SURGE: {b.element} at steady state "
                f"{f.p_gauge(b.pressure_abs) if b.what == 'max' else f.p_abs(b.pressure_abs)} "
                f"is {word} its limit ({f.basis(b.basis)})",
                style="bold red",
            )
        )
    h = cd.hand
    if h is not None:
        ht = Table(box=None, pad_edge=False, show_header=False)
        ht.add_column(style="bold")
        ht.add_column()
        ht.add_row("first closing", f"{h.valve}, stroke {f.time(h.stroke, 1)}")
        ht.add_row(
            "liquid side",
            f"{f.length(h.side_length)} back to the source, 2L/a = {f.time(h.side_period)} "
            f"(equivalent a = {f.wave_speed(h.wave_speed)})",
        )
        ht.add_row(
            "instant closure",
            f"Joukowsky ρaV = {f.dp(h.joukowsky_instant)} in {h.governing} "
            f"(V = {f.speed(h.velocity)}, a = {f.wave_speed(h.local_wave_speed)})",
        )
        ht.add_row(
            "effective closure",
            f"{f.time(h.effective_closure)} of the {f.time(h.stroke, 1)} stroke "
            f"({'within' if h.regime == 'rapid' else 'longer than'} 2L/a: {h.regime})",
        )
        ht.add_row(
            "estimate",
            f"{'Joukowsky' if h.regime == 'rapid' else 'Michaud'} rise ≈ {f.dp(h.estimate)} "
            "above the running pressure",
        )
        lines.append(Panel(ht, title="hand checks", title_align="left", border_style="dim"))
    style = "red" if cd.breaches else "none"
    return Panel(
        Group(*lines), title=f"case [b]{c.name}[/b]", title_align="left", border_style=style
    )


def lint_view(d: Derived, f: Fmt) -> RenderableType:
    """The whole ``lint`` summary as one renderable."""
    parts: list[RenderableType] = [
        Text(f"{d.terminal.name}  ·  {d.terminal.path}", style="bold"),
        Text(
            f"site atmosphere {f.p_abs(d.terminal.atmosphere_abs, 4)}, "
            f"temperature {f.temperature(d.terminal.temperature)}; file is valid",
            style="dim",
        ),
    ]
    parts += [_route_table(rd, f) for rd in d.routes.values()]
    parts += [_case_block(cd, f) for cd in d.cases]
    parts.append(Text(CAUTION, style="italic dim"))
    return Group(*parts)


_r = rounded


def lint_json(d: Derived) -> dict[str, Any]:
    """The ``lint --json`` object (keys per DESIGN.md; extra keys allowed)."""
    atm = d.terminal.atmosphere_abs
    routes: dict[str, Any] = {}
    for name, rd in d.routes.items():
        items = []
        for ln, e in zip(rd.lines, rd.route.elements, strict=True):
            items.append(
                {
                    "name": ln.name,
                    "kind": ln.kind,
                    "length_m": _r(ln.length),
                    "inside_diameter_m": _r(ln.diameter, 5),
                    "wall_m": _r(getattr(e, "wall", None), 5),
                    "wave_speed_m_s": _r(ln.wave_speed, 2),
                    "wave_speed_given": ln.wave_speed_given,
                    "period_s": _r(ln.period),
                    "z_in_m": _r(ln.z_in, 3),
                    "z_out_m": _r(ln.z_out, 3),
                }
            )
        routes[name] = items
    cases = []
    for cd in d.cases:
        entry: dict[str, Any] = {
            "name": cd.case.name,
            "route": cd.case.route,
            "product": cd.case.product,
            "rate_m3h": None,
            "elements": [],
            "joukowsky_instant_bar": None,
            "effective_closure_s": None,
            "problem": cd.problem,
        }
        if cd.steady is not None:
            s = cd.steady
            entry["rate_m3h"] = _r(abs(s.flow) * 3600, 3)
            entry["direction"] = "to-carrier" if s.flow >= 0 else "to-shore"
            entry["natural_rate_m3h"] = _r(abs(s.natural_flow) * 3600, 3)
            entry["throttled_head_m"] = _r(s.throttled_head, 3)
            entry["throttle_at"] = s.throttle_at
            entry["elements"] = [
                {
                    "name": es.name,
                    "kind": es.kind,
                    "velocity_m_s": _r(es.velocity, 4),
                    "p_in_barg": _r((es.p_in_abs - atm) / 1e5),
                    "p_out_barg": _r((es.p_out_abs - atm) / 1e5),
                    "p_min_bara": _r(es.p_min_abs / 1e5),
                    "x_p_min_m": _r(es.x_p_min, 2),
                    "friction_factor": _r(es.friction_factor, 6),
                }
                for es in s.elements
            ]
            entry["fails_before_surge"] = [
                {
                    "element": b.element,
                    "limit": b.what,
                    "pressure_bara": _r(b.pressure_abs / 1e5),
                    "limit_bara": _r(b.limit_abs / 1e5),
                    "basis": str(b.basis),
                }
                for b in cd.breaches
            ]
        if cd.hand is not None:
            h = cd.hand
            entry["closing_element"] = h.valve
            entry["joukowsky_element"] = h.governing
            entry["joukowsky_instant_bar"] = _r(h.joukowsky_instant / 1e5)
            entry["effective_closure_s"] = _r(h.effective_closure)
            entry["stroke_s"] = _r(h.stroke)
            entry["side_period_s"] = _r(h.side_period)
            entry["estimate_bar"] = _r(h.estimate / 1e5)
            entry["regime"] = h.regime
        cases.append(entry)
    return {
        "esdsurge": __version__,
        "file": d.terminal.path,
        "terminal": d.terminal.name,
        "routes": routes,
        "cases": cases,
    }
