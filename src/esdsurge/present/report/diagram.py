"""A line-up diagram drawn by esdsurge: the route's elements in order, as SVG.

One symbol per element, shore end on the left, carrier end on the right, the name under each;
lengths of the lines above them. Drawn in black and grey only, so that it prints the same in
black and white; a valve that closes in one of the cases is drawn filled.

Symbols: tank (box with a liquid surface), pump (circle with an arrow in the direction it
pushes), pipe (straight line), loading arm (a raised line over its apex), hose (a wavy line),
valve (bow-tie), emergency release coupling (two half bow-ties either side of a break), manifold
(flange pair with the shore/carrier boundary as a dashed line), surge relief valve (a branch up
through an upright bow-tie to a small relief tank), accumulator (a branch up to a round-ended
vessel, liquid below its gas). A kind without a symbol of its own is drawn as a plain line.

Hand-written SVG: a few shapes in a row; a plotting library would add nothing but fonts and
margins to fight.
"""

from __future__ import annotations

import math
from html import escape

from esdsurge.model import Arm, Element, Hose, Pipe, Pump, Route
from esdsurge.present.fmt import Fmt

#: Width of each kind's slot, relative [-].
SLOT = {
    "tank": 1.0,
    "pump": 0.9,
    "pipe": 1.45,
    "arm": 1.3,
    "hose": 1.2,
    "valve": 0.85,
    "coupling": 0.95,
    "manifold": 0.85,
    "relief": 0.85,
    "accumulator": 0.85,
}

WIDTH = 1000
LINE_Y = 92
INK = "#1d1d1d"
GREY = "#6b6b6b"
FONT = "font-family:system-ui,-apple-system,'Segoe UI',Roboto,Helvetica,Arial,sans-serif"


def _kind(e: Element) -> str:
    return "arm" if isinstance(e, Arm) else e.kind


def _wrap(text: str, chars: int) -> list[str]:
    """Split a name into lines of about ``chars`` characters at spaces (at most three)."""
    words = text.split()
    lines: list[str] = []
    cur = ""
    for w in words:
        if cur and len(cur) + 1 + len(w) > chars:
            lines.append(cur)
            cur = w
        else:
            cur = f"{cur} {w}".strip()
    if cur:
        lines.append(cur)
    if len(lines) > 3:
        lines = lines[:2] + [" ".join(lines[2:])]
    return lines


def _valve(cx: float, cy: float, size: float, filled: bool) -> str:
    h = size * 0.55
    fill = INK if filled else "#ffffff"
    return (
        f'<path d="M{cx - size:.1f},{cy - h:.1f} L{cx + size:.1f},{cy + h:.1f} '
        f'L{cx + size:.1f},{cy - h:.1f} L{cx - size:.1f},{cy + h:.1f} Z" '
        f'fill="{fill}" stroke="{INK}" stroke-width="1.6" stroke-linejoin="round"/>'
        f'<line x1="{cx:.1f}" y1="{cy:.1f}" x2="{cx:.1f}" y2="{cy - 2.2 * h:.1f}" '
        f'stroke="{INK}" stroke-width="1.4"/>'
        f'<rect x="{cx - 6:.1f}" y="{cy - 2.2 * h - 7:.1f}" width="12" height="7" '
        f'fill="#ffffff" stroke="{INK}" stroke-width="1.2"/>'
    )


def _symbol(e: Element, x0: float, x1: float, closing: set[str]) -> str:
    """SVG of one element in the slot from ``x0`` to ``x1``."""
    y = LINE_Y
    cx = (x0 + x1) / 2
    kind = _kind(e)
    line = f'stroke="{INK}" stroke-width="4" stroke-linecap="butt"'
    if kind == "tank":
        w, h = min(46.0, (x1 - x0) * 0.7), 52.0
        top = y - h + 14
        level = top + 16
        return (
            f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>'
            f'<rect x="{cx - w / 2:.1f}" y="{top:.1f}" width="{w:.1f}" height="{h:.1f}" '
            f'fill="#ffffff" stroke="{INK}" stroke-width="1.6"/>'
            f'<rect x="{cx - w / 2 + 1:.1f}" y="{level:.1f}" width="{w - 2:.1f}" '
            f'height="{top + h - level - 1:.1f}" fill="#d9d9d9"/>'
            f'<line x1="{cx - w / 2:.1f}" y1="{level:.1f}" x2="{cx + w / 2:.1f}" '
            f'y2="{level:.1f}" stroke="{INK}" stroke-width="1"/>'
        )
    if kind == "pump":
        r = 15.0
        assert isinstance(e, Pump)
        d = 1 if e.pushes >= 0 else -1
        tri = (
            f"M{cx - 7 * d:.1f},{y - 8:.1f} L{cx + 9 * d:.1f},{y:.1f} "
            f"L{cx - 7 * d:.1f},{y + 8:.1f} Z"
        )
        return (
            f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>'
            f'<circle cx="{cx:.1f}" cy="{y}" r="{r}" fill="#ffffff" stroke="{INK}" '
            'stroke-width="1.6"/>'
            f'<path d="{tri}" fill="{INK}"/>'
        )
    if kind == "pipe":
        return f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>'
    if kind == "arm":
        pad = (x1 - x0) * 0.18
        return (
            f'<polyline points="{x0:.1f},{y} {x0 + pad:.1f},{y} {cx:.1f},{y - 38} '
            f'{x1 - pad:.1f},{y} {x1:.1f},{y}" fill="none" {line} stroke-linejoin="round"/>'
            f'<circle cx="{cx:.1f}" cy="{y - 38}" r="3.2" fill="#ffffff" stroke="{INK}" '
            'stroke-width="1.4"/>'
        )
    if kind == "hose":
        n = 4
        span = x1 - x0 - 10
        pts = []
        for k in range(0, 41):
            t = k / 40
            pts.append(f"{x0 + 5 + t * span:.1f},{y + 7 * math.sin(t * n * 2 * math.pi):.1f}")
        return (
            f'<line x1="{x0:.1f}" y1="{y}" x2="{x0 + 5:.1f}" y2="{y}" {line}/>'
            f'<line x1="{x1 - 5:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>'
            f'<polyline points="{" ".join(pts)}" fill="none" stroke="{INK}" '
            'stroke-width="3" stroke-linejoin="round"/>'
        )
    if kind == "valve":
        return f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>' + _valve(
            cx, y, 12.0, e.name in closing
        )
    if kind == "coupling":
        fill = INK if e.name in closing else "#ffffff"
        g = 5.0
        s = 11.0
        h = 7.0
        left = (
            f'<path d="M{cx - g - s:.1f},{y - h:.1f} L{cx - g:.1f},{y:.1f} '
            f'L{cx - g - s:.1f},{y + h:.1f} Z" fill="{fill}" stroke="{INK}" stroke-width="1.5"/>'
        )
        right = (
            f'<path d="M{cx + g + s:.1f},{y - h:.1f} L{cx + g:.1f},{y:.1f} '
            f'L{cx + g + s:.1f},{y + h:.1f} Z" fill="{fill}" stroke="{INK}" stroke-width="1.5"/>'
        )
        brk = (
            f'<polyline points="{cx - 2:.1f},{y - 16} {cx + 2:.1f},{y - 6} {cx - 2:.1f},{y + 6} '
            f'{cx + 2:.1f},{y + 16}" fill="none" stroke="{INK}" stroke-width="1.2"/>'
        )
        return (
            f'<line x1="{x0:.1f}" y1="{y}" x2="{cx - g - s:.1f}" y2="{y}" {line}/>'
            f'<line x1="{cx + g + s:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>'
            + left
            + right
            + brk
        )
    if kind == "manifold":
        return (
            f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>'
            f'<rect x="{cx - 6:.1f}" y="{y - 13}" width="4" height="26" fill="{INK}"/>'
            f'<rect x="{cx + 2:.1f}" y="{y - 13}" width="4" height="26" fill="{INK}"/>'
            f'<line x1="{cx:.1f}" y1="{y - 62}" x2="{cx:.1f}" y2="{y + 24}" stroke="{GREY}" '
            'stroke-width="1" stroke-dasharray="4 3"/>'
        )
    if kind == "relief":
        return f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>' + _relief(cx, y)
    if kind == "accumulator":
        return f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>' + _accumulator(cx, y)
    return f'<line x1="{x0:.1f}" y1="{y}" x2="{x1:.1f}" y2="{y}" {line}/>'


def _relief(cx: float, y: float) -> str:
    """A branch up from the line through an upright bow-tie (the relief valve) to a tank."""
    branch = f'stroke="{INK}" stroke-width="2.2"'
    vy = y - 24.0  # valve centre
    s, h = 8.0, 5.5
    tank_w, tank_h = 24.0, 14.0
    top = y - 62.0
    return (
        f'<line x1="{cx:.1f}" y1="{y}" x2="{cx:.1f}" y2="{top + tank_h:.1f}" {branch}/>'
        f'<path d="M{cx - h:.1f},{vy - s:.1f} L{cx + h:.1f},{vy + s:.1f} '
        f'L{cx - h:.1f},{vy + s:.1f} L{cx + h:.1f},{vy - s:.1f} Z" fill="#ffffff" '
        f'stroke="{INK}" stroke-width="1.4" stroke-linejoin="round"/>'
        f'<rect x="{cx - tank_w / 2:.1f}" y="{top:.1f}" width="{tank_w:.1f}" '
        f'height="{tank_h:.1f}" fill="#ffffff" stroke="{INK}" stroke-width="1.4"/>'
        f'<rect x="{cx - tank_w / 2 + 1:.1f}" y="{top + tank_h - 5:.1f}" '
        f'width="{tank_w - 2:.1f}" height="4" fill="#d9d9d9"/>'
    )


def _accumulator(cx: float, y: float) -> str:
    """A branch up from the line to a round-ended vessel, liquid (grey) below the gas."""
    branch = f'stroke="{INK}" stroke-width="2.2"'
    w, h = 20.0, 40.0
    bottom = y - 18.0
    top = bottom - h
    level = top + h * 0.6
    return (
        f'<line x1="{cx:.1f}" y1="{y}" x2="{cx:.1f}" y2="{bottom:.1f}" {branch}/>'
        f'<rect x="{cx - w / 2:.1f}" y="{top:.1f}" width="{w:.1f}" height="{h:.1f}" '
        f'rx="{w / 2:.1f}" fill="#ffffff" stroke="{INK}" stroke-width="1.6"/>'
        f'<path d="M{cx - w / 2 + 1:.1f},{level:.1f} L{cx + w / 2 - 1:.1f},{level:.1f} '
        f"L{cx + w / 2 - 1:.1f},{bottom - w / 2:.1f} A{w / 2 - 1:.1f},{w / 2 - 1:.1f} 0 0 1 "
        f'{cx - w / 2 + 1:.1f},{bottom - w / 2:.1f} Z" fill="#d9d9d9"/>'
        f'<line x1="{cx - w / 2:.1f}" y1="{level:.1f}" x2="{cx + w / 2:.1f}" y2="{level:.1f}" '
        f'stroke="{INK}" stroke-width="1"/>'
    )


def lineup_svg(
    route: Route, f: Fmt, closing: set[str] | None = None, *, standalone: bool = False
) -> str:
    """The line-up of ``route`` as an SVG drawing.

    Parameters
    ----------
    route : the route (elements from the shore end to the carrier end)
    f : number formatting (lengths)
    closing : names of the valves and couplings that close in one of the cases (drawn filled)
    standalone : a complete SVG file (with the XML namespace) rather than an element for
        inline use in HTML
    """
    closing = closing or set()
    elements = route.elements
    weights = [SLOT.get(_kind(e), 1.0) for e in elements]
    margin = 14.0
    unit = (WIDTH - 2 * margin) / sum(weights)
    xs = [margin]
    for w in weights:
        xs.append(xs[-1] + w * unit)
    name_lines = [
        _wrap(e.name, max(7, int((xs[i + 1] - xs[i] - 6) / 7.0))) for i, e in enumerate(elements)
    ]
    rows = max((len(n) for n in name_lines), default=1)
    height = LINE_Y + 34 + rows * 14 + 30
    parts = []
    for i, e in enumerate(elements):
        x0, x1 = xs[i], xs[i + 1]
        cx = (x0 + x1) / 2
        parts.append(f"<g><title>{escape(e.name)} ({_kind(e)})</title>")
        parts.append(_symbol(e, x0, x1, closing))
        ty = LINE_Y + 36
        for k, text in enumerate(name_lines[i]):
            parts.append(
                f'<text x="{cx:.1f}" y="{ty + 14 * k:.1f}" text-anchor="middle" '
                f'font-size="12" fill="{INK}">{escape(text)}</text>'
            )
        if isinstance(e, Pipe | Hose):
            top = LINE_Y - (50 if isinstance(e, Arm) else 14)
            parts.append(
                f'<text x="{cx:.1f}" y="{top:.1f}" text-anchor="middle" font-size="11" '
                f'fill="{GREY}">{escape(f.length(e.length))}</text>'
            )
        parts.append("</g>")
        if e.kind == "manifold":
            parts.append(
                f'<text x="{cx - 6:.1f}" y="{LINE_Y - 52}" text-anchor="end" font-size="11" '
                f'fill="{GREY}">shore</text>'
                f'<text x="{cx + 6:.1f}" y="{LINE_Y - 52}" text-anchor="start" '
                f'font-size="11" fill="{GREY}">carrier</text>'
            )
    legend_y = height - 10
    parts.append(
        f'<text x="{margin:.1f}" y="{legend_y}" font-size="11" fill="{GREY}">'
        "shore end left, carrier end right · filled valve: closes in a case · arrow in the "
        "pump: the way it pushes · lengths above the lines</text>"
    )
    ns = ' xmlns="http://www.w3.org/2000/svg"' if standalone else ""
    head = (
        f'<svg{ns} viewBox="0 0 {WIDTH} {height}" width="100%" role="img" '
        f'aria-label="line-up {escape(route.name)}" style="{FONT};max-width:{WIDTH}px">'
    )
    body = head + f"<title>line-up {escape(route.name)}</title>" + "".join(parts) + "</svg>"
    if standalone:
        return '<?xml version="1.0" encoding="UTF-8"?>\n' + body + "\n"
    return body
