"""The steps that write a pack into its temporary folder, in order.

1. ``figures``: the two PNG figures of each case that ran (``present.plots``);
2. ``diagrams``: one SVG line-up diagram per route;
3. ``report.html`` and ``report.md``: the document, built once, with the figures read back;
4. ``results.json``: every JSON output (check, lint, stroke, rate) plus the checklist and
   the notes; written last, because its mark is what makes a folder a pack.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

from esdsurge import __version__
from esdsurge.model import Close
from esdsurge.present.cautions import CAUTION
from esdsurge.present.check import check_json
from esdsurge.present.fmt import Fmt
from esdsurge.present.lint import lint_json
from esdsurge.present.report.build import build_document
from esdsurge.present.report.diagram import lineup_svg
from esdsurge.present.report.document import Document, Figure
from esdsurge.present.report.html import render_html
from esdsurge.present.report.markdown import render_markdown
from esdsurge.present.report.writer import PACK_MARK, Step, write_text
from esdsurge.studies.report import Num, ReportResult

FIGURES = "figures"

#: JSON unit of each kind of number (values converted from SI as the key names say).
JSON_UNITS: dict[str, tuple[str, float, float]] = {
    # kind: (unit, offset subtracted [SI], divisor)
    "p_gauge": ("barg", math.nan, 1e5),  # offset: the site atmosphere
    "p_gauge_value": ("barg", 0.0, 1e5),
    "p_abs": ("bara", 0.0, 1e5),
    "dp": ("bar", 0.0, 1e5),
    "time": ("s", 0.0, 1.0),
    "flow": ("m3/h", 0.0, 1.0 / 3600.0),
    "volume": ("m3", 0.0, 1.0),
    "length": ("m", 0.0, 1.0),
    "wave_speed": ("m/s", 0.0, 1.0),
    "speed": ("m/s", 0.0, 1.0),
    "diameter": ("m", 0.0, 1.0),
}


def num_json(n: Num, atmosphere_abs: float) -> dict[str, Any]:
    unit, offset, div = JSON_UNITS[n.kind]
    if n.value is None:
        value = None
    else:
        off = atmosphere_abs if math.isnan(offset) else offset
        value = round((n.value - off) / div, 6)
    return {"label": n.label, "value": value, "unit": unit}


def results_json(res: ReportResult, figures: list[str]) -> dict[str, Any]:
    """Everything the JSON outputs hold (check, lint, stroke, rate), the checklist and notes."""
    atm = res.terminal.atmosphere_abs
    stroke = rate = None
    if res.stroke is not None:
        from esdsurge.present.stroke import stroke_json

        stroke = stroke_json(res.stroke)
    if res.rate is not None:
        from esdsurge.present.rate import rate_json

        rate = rate_json(res.rate)
    return {
        PACK_MARK[0]: PACK_MARK[1],
        "esdsurge": __version__,
        "file": res.terminal.path,
        "file_sha256": res.file_sha256,
        "terminal": res.terminal.name,
        "created": res.created,
        "ok": res.ok,
        "spread": res.spread,
        "checklist_counts": {s: res.count(s) for s in ("needs action", "not assessed", "holds")},
        "checklist": [
            {
                "topic": i.topic,
                "claim": i.claim,
                "status": i.status,
                "case": i.case,
                "element": i.element,
                "numbers": [num_json(n, atm) for n in i.numbers],
                "why": i.why,
            }
            for i in res.checklist
        ],
        "notes": [
            {
                "topic": n.topic,
                "subject": n.subject,
                "text": n.text,
                "numbers": [num_json(x, atm) for x in n.numbers],
                "source": n.source,
            }
            for n in res.notes
        ],
        "missing": [{"study": s, "reason": r} for s, r in res.missing],
        "check": check_json(res.check),
        "lint": lint_json(res.derived),
        "stroke": stroke,
        "rate": rate,
        "figures": figures,
        "caution": CAUTION,
    }


def _closing(res: ReportResult) -> set[str]:
    out = set()
    for cc in res.check.cases:
        for e in cc.case.events:
            if isinstance(e, Close) or e.action == "release":
                out.add(e.element)
    return out


def pack_steps(res: ReportResult, f: Fmt) -> list[Step]:
    """The steps that write the pack of ``res`` with formatting ``f``."""
    state: dict[str, Any] = {"pngs": {}, "svgs": {}, "files": []}

    def figures(folder: Path) -> None:
        from esdsurge.present.plots import slug, write_case_plots

        out = folder / FIGURES
        out.mkdir(parents=True, exist_ok=True)
        used: set[str] = set()
        for k, cc in enumerate(res.check.cases, start=1):
            # two case names with the same file-name form get folders of their own
            name = slug(cc.case.name)
            where = out if name not in used else out / f"case-{k}"
            used.add(name)
            paths = write_case_plots(cc, where, res.terminal.atmosphere_abs, f.system)
            state["pngs"][cc.case.name] = paths
            state["files"] += [p.relative_to(folder).as_posix() for p in paths]

    def diagrams(folder: Path) -> None:
        from esdsurge.present.plots import slug

        closing = _closing(res)
        for name, route in res.terminal.routes.items():
            inline = lineup_svg(route, f, closing)
            file = f"{FIGURES}/lineup-{slug(name)}.svg"
            write_text(folder, file, lineup_svg(route, f, closing, standalone=True))
            state["svgs"][name] = Figure(
                file,
                f"Line-up “{name}” as esdsurge reads it, shore end on the left",
                svg=inline,
            )
            state["files"].append(file)

    def document(folder: Path) -> None:
        figs: dict[str, list[Figure]] = {}
        for case, paths in state["pngs"].items():
            caps = [
                f"{case}: pressure against time at the manifold and at the closing element, "
                "with the allowed highest pressure",
                f"{case}: highest and lowest pressure along the route, with each element's "
                "limits and the elevation profile",
            ]
            figs[case] = [
                Figure(p.relative_to(folder).as_posix(), cap, png=p.read_bytes())
                for p, cap in zip(paths, caps, strict=False)
            ]
        state["doc"] = build_document(res, f, figures=figs, diagrams=state["svgs"])

    def html(folder: Path) -> None:
        doc: Document = state["doc"]
        write_text(folder, "report.html", render_html(doc))

    def markdown(folder: Path) -> None:
        write_text(folder, "report.md", render_markdown(state["doc"]))

    def results(folder: Path) -> None:
        data = results_json(res, state["files"])
        write_text(folder, "results.json", json.dumps(data, indent=2, ensure_ascii=False) + "\n")

    return [
        ("figures", figures),
        ("diagrams", diagrams),
        ("document", document),
        ("report.html", html),
        ("report.md", markdown),
        ("results.json", results),
    ]
