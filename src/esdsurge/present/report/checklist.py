"""The checklist section of the review pack: the items a review signs, as the study judged them.

Statuses are derived in :mod:`esdsurge.studies.report` from the results; this module only
shows them, with the numbers behind each item formatted by :class:`~esdsurge.present.fmt.Fmt`.
"""

from __future__ import annotations

import math

from esdsurge.present.fmt import Fmt
from esdsurge.present.report.document import Cell, Heading, Para, Section, Table, status_cell
from esdsurge.studies.report import (
    ACTION,
    HOLDS,
    NOT_ASSESSED,
    TOPICS,
    Item,
    Num,
    ReportResult,
)


def volume(f: Fmt, v: float) -> str:
    """A volume [m^3] with at least two significant digits (vapour cavities are small)."""
    digits = 2
    if 0.0 < abs(v) < 0.1:
        digits = min(8, 1 - math.floor(math.log10(abs(v))))
    return f.volume(v, max(digits, 2))


def p_low(f: Fmt, p_abs: float) -> str:
    """An absolute pressure, with a third decimal below 0.1 bar (vapour pressures of fuels)."""
    return f.p_abs(p_abs, 2 if p_abs >= 1e4 else 3 if p_abs >= 1e3 else 4)


def show(num: Num, f: Fmt) -> str:
    """The value of ``num`` as text with its unit (``—`` when there is none)."""
    v = num.value
    if v is None:
        return "—"
    kind = num.kind
    if kind == "p_gauge":
        return f.p_gauge(v)
    if kind == "p_gauge_value":
        return f.p_gauge_value(v)
    if kind == "p_abs":
        return p_low(f, v)
    if kind == "dp":
        return f.dp(v)
    if kind == "time":
        return f.time(v, 1)
    if kind == "flow":
        return f.flow(v)
    if kind == "volume":
        return volume(f, v)
    if kind == "length":
        return f.length(v)
    if kind == "wave_speed":
        return f.wave_speed(v)
    if kind == "speed":
        return f.speed(v)
    if kind == "diameter":
        return f.diameter(v)
    raise ValueError(f"unknown number kind {kind!r}")


def show_all(nums: tuple[Num, ...], f: Fmt, sep: str = "\n") -> str:
    """Every number of an item as ``label value`` lines."""
    return sep.join(f"{n.label}: {show(n, f)}" for n in nums)


def _about(item: Item) -> str:
    parts = [item.claim]
    if item.case:
        parts.append(f"case: {item.case}")
    return "\n".join(parts)


def counts_text(res: ReportResult) -> str:
    n = len(res.checklist)
    return (
        f"{n} items: {res.count(ACTION)} need action, {res.count(NOT_ASSESSED)} not assessed, "
        f"{res.count(HOLDS)} hold."
    )


def checklist_section(res: ReportResult, f: Fmt) -> Section:
    """The checklist, one table per topic, in the order of :data:`TOPICS`."""
    sec = Section("checklist", "Review checklist")
    sec.add(
        Para(
            "Each item is a statement the review signs. Its status comes from the results in "
            "this pack: holds (the results show it), needs action (the results show it does "
            "not, or it cannot hold as the file stands), not assessed (esdsurge cannot say: "
            "no limit given, a study not run, or data only a test or certificate on site can "
            "confirm). The numbers behind each status are beside it; the last column is for "
            "the reviewer's initials.",
            "lead",
        ),
        Para(counts_text(res), "small"),
    )
    for topic, question in TOPICS.items():
        items = [i for i in res.checklist if i.topic == topic]
        if not items:
            continue
        sec.add(Heading(question[:1].upper() + question[1:], f"check-{topic}"))
        rows = []
        for it in items:
            rows.append(
                (
                    status_cell(it.status),
                    Cell(_about(it), strong=it.status == ACTION),
                    show_all(it.numbers, f) or "—",
                    it.why or "—",
                    "",
                )
            )
        sec.add(
            Table(
                ("status", "item", "numbers", "basis / reason", "initials"),
                tuple(rows),
                kind="checklist",
            )
        )
    return sec
