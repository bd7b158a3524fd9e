"""``report.html``: one self-contained file — inline CSS, figures as data URIs, no scripts.

Nothing in the page refers to anything outside it: no stylesheet or font links, no scripts, no
``src`` other than ``data:`` URIs, and no web addresses (a source text that quotes one is shown
without its scheme). The print stylesheet sets A4 pages, keeps rows and figures whole and turns
every tone to black: statuses are words with marks (✓ ✗ ?) first, colour second.
"""

from __future__ import annotations

import base64
import re
from html import escape

from esdsurge.present.report.document import (
    Block,
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
)

CSS = """
:root { --ink:#1f2328; --soft:#5b6169; --rule:#d4d7db; --faint:#f4f5f6;
  --good:#1d6b3c; --bad:#a3201b; --open:#76590a; }
* { box-sizing:border-box; }
html { -webkit-text-size-adjust:100%; }
body { margin:0; color:var(--ink); background:#fff;
  font:15px/1.55 system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif; }
.page { max-width:1060px; margin:0 auto; padding:28px 32px 60px; }
header.cover { border-bottom:2px solid var(--ink); padding-bottom:14px; margin-bottom:18px; }
.kicker { text-transform:uppercase; letter-spacing:.14em; font-size:12px; color:var(--soft);
  margin:0 0 4px; }
h1 { font-size:28px; line-height:1.2; margin:0 0 12px; font-weight:650; }
dl.facts { display:grid; grid-template-columns:max-content 1fr; gap:2px 18px; margin:0;
  font-size:13px; }
dl.facts dt { color:var(--soft); }
dl.facts dd { margin:0; overflow-wrap:anywhere; }
nav.toc { font-size:14px; margin:0 0 10px; }
nav.toc ol { columns:2; column-gap:40px; margin:4px 0 0; padding-left:22px; }
nav.toc a { color:inherit; text-decoration:none; }
nav.toc a:hover { text-decoration:underline; }
section.top { margin-top:34px; }
h2 { font-size:21px; font-weight:650; margin:0 0 10px; padding-top:10px;
  border-top:1px solid var(--rule); }
h2 .num, h3 .num { color:var(--soft); font-weight:500; margin-right:.45em; }
h3 { font-size:17px; font-weight:650; margin:26px 0 8px; }
h4 { font-size:14px; font-weight:650; margin:18px 0 6px; text-transform:none; }
p { margin:0 0 10px; max-width:78ch; }
p.lead { color:#30353b; }
p.small { font-size:12.5px; color:var(--soft); max-width:none; }
p.caution { border:1px solid var(--ink); padding:10px 14px; font-size:14px; max-width:none; }
p.missing { border:1px dashed var(--bad); padding:8px 12px; color:var(--bad); max-width:none;
  font-weight:600; }
ul { margin:0 0 12px; padding-left:22px; }
li { margin:2px 0; max-width:90ch; }
dl.pairs { display:grid; grid-template-columns:max-content 1fr; gap:3px 16px; margin:0 0 12px;
  font-size:14px; }
dl.pairs dt { color:var(--soft); }
dl.pairs dd { margin:0; min-height:1.4em; }
.tablewrap { overflow-x:auto; margin:6px 0 16px; }
table { border-collapse:collapse; width:100%; font-size:13px; line-height:1.4;
  font-variant-numeric:tabular-nums; }
caption { caption-side:top; text-align:left; font-size:12.5px; color:var(--soft);
  padding:0 0 4px; }
th { text-align:left; font-weight:600; border-bottom:1.5px solid var(--ink); padding:5px 8px;
  vertical-align:bottom; }
td { border-bottom:1px solid var(--rule); padding:5px 8px; vertical-align:top; }
td.n, th.n { text-align:right; white-space:nowrap; }
tr:last-child td { border-bottom:1.5px solid var(--ink); }
td.strong { font-weight:650; }
.tone-good { color:var(--good); }
.tone-bad { color:var(--bad); font-weight:650; }
.tone-open { color:var(--open); font-style:italic; }
td.status { white-space:nowrap; }
table.checklist { table-layout:fixed; }
table.checklist th:nth-child(1) { width:8.6em; }
table.checklist th:nth-child(2) { width:31%; }
table.checklist th:nth-child(3) { width:24%; }
table.checklist th:nth-child(5) { width:5.5em; }
table.checklist td { overflow-wrap:anywhere; }
table.checklist td:last-child { border-left:1px dotted var(--rule); }
table.compact { font-size:12.5px; }
table.signoff td { height:3.2em; border:1px solid var(--ink); }
table.signoff th { border:1px solid var(--ink); border-bottom-width:1.5px; }
table.signoff td:first-child { font-weight:600; width:9em; }
.verdict { border-left:5px solid var(--soft); padding:6px 12px; margin:4px 0 12px;
  background:var(--faint); }
.verdict.tone-good { border-color:var(--good); color:var(--ink); }
.verdict.tone-bad { border-color:var(--bad); color:var(--ink); font-weight:400; }
.verdict.tone-open { border-color:var(--open); color:var(--ink); font-style:normal; }
.verdict .word { font-weight:700; text-transform:uppercase; letter-spacing:.05em;
  margin-right:.6em; }
.verdict.tone-good .word { color:var(--good); }
.verdict.tone-bad .word { color:var(--bad); }
.verdict.tone-open .word { color:var(--open); }
figure { margin:10px 0 18px; }
figure img { max-width:100%; height:auto; display:block; border:1px solid var(--rule); }
figure svg { display:block; border:1px solid var(--rule); background:#fff; }
figcaption { font-size:12.5px; color:var(--soft); margin-top:4px; }
footer { margin-top:40px; border-top:1px solid var(--rule); padding-top:8px; font-size:12px;
  color:var(--soft); }
@media print {
  @page { size:A4; margin:15mm 13mm 16mm; }
  body { font-size:10pt; }
  .page { max-width:none; padding:0; }
  h1 { font-size:20pt; }
  h2 { font-size:14pt; break-after:avoid; }
  h3, h4 { break-after:avoid; }
  section.case { break-before:page; }
  #checklist, #cases, #signoff { break-before:page; }
  table { font-size:8.5pt; }
  tr, figure, .verdict, p.caution, dl.pairs { break-inside:avoid; }
  thead { display:table-header-group; }
  .tablewrap { overflow:visible; }
  nav.toc ol { columns:2; }
  .tone-good, .tone-bad, .tone-open, .verdict .word, p.missing { color:#000 !important; }
  .verdict { background:none; border-left-color:#000 !important; }
  p.missing { border-color:#000; }
  a { color:inherit; text-decoration:none; }
  figure img { border:none; }
}
"""

_SCHEME = re.compile(r"\bhttps?://", re.IGNORECASE)


def _t(text: str) -> str:
    """Escaped text; line breaks kept; web addresses shown without their scheme."""
    return escape(_SCHEME.sub("", text)).replace("\n", "<br>")


def _cell(c: Cell | str, numeric: bool) -> str:
    if isinstance(c, str):
        c = Cell(c)
    cls = []
    if numeric:
        cls.append("n")
    if c.tone:
        cls.append(f"tone-{c.tone}")
        if c.text[:1] in "✓✗?":
            cls.append("status")
    if c.strong:
        cls.append("strong")
    attr = f' class="{" ".join(cls)}"' if cls else ""
    return f"<td{attr}>{_t(c.text)}</td>"


def _table(t: Table) -> str:
    cls = f' class="{t.kind}"' if t.kind else ""
    out = [f'<div class="tablewrap"><table{cls}>']
    if t.caption:
        out.append(f"<caption>{_t(t.caption)}</caption>")
    out.append("<thead><tr>")
    for i, h in enumerate(t.head):
        num = ' class="n"' if i in t.numeric else ""
        out.append(f'<th scope="col"{num}>{_t(h)}</th>')
    out.append("</tr></thead><tbody>")
    for row in t.rows:
        out.append("<tr>" + "".join(_cell(c, i in t.numeric) for i, c in enumerate(row)) + "</tr>")
    out.append("</tbody></table></div>")
    return "".join(out)


def _figure(fig: Figure) -> str:
    if fig.svg is not None:
        body = fig.svg
    elif fig.png is not None:
        data = base64.b64encode(fig.png).decode("ascii")
        body = f'<img alt="{escape(fig.caption)}" src="data:image/png;base64,{data}">'
    else:
        body = ""
    return f"<figure>{body}<figcaption>{_t(fig.caption)}</figcaption></figure>"


def _block(b: Block) -> str:
    if isinstance(b, Para):
        cls = f' class="{b.kind}"' if b.kind else ""
        return f"<p{cls}>{_t(b.text)}</p>"
    if isinstance(b, Verdict):
        text = f" {_t(b.text)}" if b.text else ""
        return (
            f'<div class="verdict tone-{b.tone or "open"}"><span class="word">'
            f"{_t(b.word)}</span>{text}</div>"
        )
    if isinstance(b, Bullets):
        return "<ul>" + "".join(f"<li>{_t(x)}</li>" for x in b.items) + "</ul>"
    if isinstance(b, Pairs):
        rows = "".join(f"<dt>{_t(k)}</dt><dd>{_t(v)}</dd>" for k, v in b.rows)
        return f'<dl class="pairs">{rows}</dl>'
    if isinstance(b, Table):
        return _table(b)
    if isinstance(b, Figure):
        return _figure(b)
    if isinstance(b, Heading):
        idattr = f' id="{escape(b.id)}"' if b.id else ""
        return f"<h4{idattr}>{_t(b.text)}</h4>"
    raise TypeError(f"unknown block {type(b).__name__}")


def _section(sec: Section, number: str, level: int) -> str:
    tag = "h2" if level == 2 else "h3"
    cls = "top" if level == 2 else "case" if sec.id.startswith("case-") else "sub"
    out = [
        f'<section id="{escape(sec.id)}" class="{cls}">',
        f'<{tag}><span class="num">{number}</span>{_t(sec.title)}</{tag}>',
    ]
    out += [_block(b) for b in sec.blocks]
    for k, child in enumerate(sec.children, start=1):
        out.append(_section(child, f"{number}.{k}", level + 1))
    out.append("</section>")
    return "\n".join(out)


def render_html(doc: Document) -> str:
    """The document as one self-contained HTML page."""
    facts = "".join(f"<dt>{_t(k)}</dt><dd>{_t(v)}</dd>" for k, v in doc.facts)
    toc = "".join(f'<li><a href="#{escape(s.id)}">{_t(s.title)}</a></li>' for s in doc.sections)
    body = "\n".join(_section(s, str(i), 2) for i, s in enumerate(doc.sections, start=1))
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f'<meta name="generator" content="esdsurge">\n'
        f"<title>{_t(doc.title)} — {_t(doc.subtitle)}</title>\n"
        f'<style>{CSS}</style>\n</head>\n<body>\n<div class="page">\n'
        f'<header class="cover"><p class="kicker">{_t(doc.title)}</p>'
        f"<h1>{_t(doc.subtitle)}</h1>"
        f'<dl class="facts">{facts}</dl></header>\n'
        f'<nav class="toc" aria-label="contents"><strong>Contents</strong><ol>{toc}</ol></nav>\n'
        f"<main>\n{body}\n</main>\n"
        f"<footer>{_t(doc.footer)}</footer>\n"
        "</div>\n</body>\n</html>\n"
    )
