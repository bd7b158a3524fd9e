"""``report.md``: the same document as Markdown, for version control beside the terminal file.

Tables are pipe tables (line breaks inside a cell as ``<br>``), figures are linked from the
pack's ``figures/`` folder, statuses keep their marks (✓ ✗ ?) so that a diff shows a change of
status at a glance.
"""

from __future__ import annotations

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


def _inline(text: str) -> str:
    """Text for a paragraph or list item (line breaks kept as Markdown hard breaks)."""
    return text.replace("\n", "  \n")


def _cell(c: Cell | str) -> str:
    c = Cell(c) if isinstance(c, str) else c
    text = c.text.replace("|", "\\|").replace("\n", "<br>")
    if c.strong and text:
        text = f"**{text}**"
    return text or " "


def _table(t: Table) -> str:
    lines = []
    if t.caption:
        lines.append(f"*{t.caption}*")
        lines.append("")
    lines.append("| " + " | ".join(_cell(h) for h in t.head) + " |")
    lines.append(
        "|" + "|".join("---:" if i in t.numeric else "---" for i in range(len(t.head))) + "|"
    )
    for row in t.rows:
        lines.append("| " + " | ".join(_cell(c) for c in row) + " |")
    return "\n".join(lines)


def _block(b: Block, level: int) -> str:
    if isinstance(b, Para):
        if b.kind == "caution":
            return "> " + _inline(b.text)
        if b.kind == "missing":
            return "> **" + _inline(b.text) + "**"
        if b.kind == "small":
            return "<small>" + _inline(b.text) + "</small>"
        return _inline(b.text)
    if isinstance(b, Verdict):
        return f"**{b.word.upper()}**" + (f" — {_inline(b.text)}" if b.text else "")
    if isinstance(b, Bullets):
        return "\n".join(f"- {_inline(x)}" for x in b.items)
    if isinstance(b, Pairs):
        return "\n".join(f"- **{k}:** {v if v else '…………………………'}" for k, v in b.rows)
    if isinstance(b, Table):
        return _table(b)
    if isinstance(b, Figure):
        return f"![{b.caption}]({b.file})\n\n*{b.caption}*"
    if isinstance(b, Heading):
        return "#" * (level + 1) + " " + b.text
    raise TypeError(f"unknown block {type(b).__name__}")


def _section(sec: Section, number: str, level: int) -> str:
    out = ["#" * level + f" {number} {sec.title}" + f' <a id="{sec.id}"></a>']
    out += [_block(b, level) for b in sec.blocks]
    for k, child in enumerate(sec.children, start=1):
        out.append(_section(child, f"{number}.{k}", level + 1))
    return "\n\n".join(out)


def render_markdown(doc: Document) -> str:
    """The document as Markdown."""
    head = [f"# {doc.title}: {doc.subtitle}", ""]
    head += [f"- **{k}:** {v}" for k, v in doc.facts]
    head += ["", "**Contents**", ""]
    head += [f"{i}. [{s.title}](#{s.id})" for i, s in enumerate(doc.sections, start=1)]
    body = [_section(s, str(i), 2) for i, s in enumerate(doc.sections, start=1)]
    return (
        "\n".join(head) + "\n\n" + "\n\n".join(body) + f"\n\n---\n\n<small>{doc.footer}</small>\n"
    )
