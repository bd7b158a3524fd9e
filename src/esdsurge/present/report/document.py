"""The review pack as a document: sections of plain blocks, rendered to HTML and to Markdown.

The content is built once (``build.py``) into these blocks; ``html.py`` and ``markdown.py`` only
render them, so that ``report.html`` and ``report.md`` always say the same thing. Every cell
and line is already text: numbers were formatted by :class:`esdsurge.present.fmt.Fmt` when the
blocks were built.

Tones (for the few places that carry a verdict): ``good``, ``bad``, ``open`` (not assessed,
or no answer), ``""`` (none). Renderers show a tone with words and marks first; colour is only a
second cue, so a page printed in black and white loses nothing.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from esdsurge.studies.check import FAIL, FAIL_STEADY, NO_STEADY, PASS
from esdsurge.studies.report import ACTION, HOLDS, NOT_ASSESSED

#: Tone of each verdict and status word.
TONE = {
    PASS: "good",
    FAIL: "bad",
    FAIL_STEADY: "bad",
    NO_STEADY: "open",
    HOLDS: "good",
    ACTION: "bad",
    NOT_ASSESSED: "open",
}

#: Mark shown before a status or verdict word (readable without colour).
MARK = {"good": "✓", "bad": "✗", "open": "?"}


@dataclass(frozen=True)
class Cell:
    """A table cell: text, and optionally a tone (``good``/``bad``/``open``) or ``strong``."""

    text: str
    tone: str = ""
    strong: bool = False


@dataclass(frozen=True)
class Para:
    """A paragraph. ``kind``: ``""``, ``lead`` (opening words of a section), ``small``,
    ``caution``, ``missing`` (a study that could not be included)."""

    text: str
    kind: str = ""


@dataclass(frozen=True)
class Verdict:
    """A verdict or status with a sentence after it."""

    word: str
    tone: str
    text: str = ""


@dataclass(frozen=True)
class Bullets:
    items: tuple[str, ...]


@dataclass(frozen=True)
class Pairs:
    """Label / value rows (a definition list)."""

    rows: tuple[tuple[str, str], ...]


@dataclass(frozen=True)
class Table:
    """A table. ``numeric``: indices of columns set right-aligned; ``kind``: ``""``,
    ``checklist``, ``signoff``, ``compact``."""

    head: tuple[str, ...]
    rows: tuple[tuple[Cell | str, ...], ...]
    numeric: tuple[int, ...] = ()
    caption: str = ""
    kind: str = ""


@dataclass(frozen=True)
class Figure:
    """A figure: a PNG file of the pack (embedded in HTML as a data URI, linked in Markdown),
    or an SVG drawing (inline in HTML; ``file`` is its copy in the pack for Markdown)."""

    file: str
    caption: str
    png: bytes | None = None
    svg: str | None = None


@dataclass(frozen=True)
class Heading:
    """A heading inside a section (one level below the section's own)."""

    text: str
    id: str = ""


Block = Para | Verdict | Bullets | Pairs | Table | Figure | Heading


@dataclass
class Section:
    id: str
    title: str
    blocks: list[Block] = field(default_factory=list)
    children: list[Section] = field(default_factory=list)

    def add(self, *blocks: Block) -> Section:
        self.blocks.extend(blocks)
        return self


@dataclass
class Document:
    title: str
    subtitle: str
    facts: tuple[tuple[str, str], ...]
    sections: list[Section]
    footer: str = ""


def cell(text: str, tone: str = "", strong: bool = False) -> Cell:
    return Cell(text, tone, strong)


def status_cell(word: str) -> Cell:
    """A cell showing a status or verdict word with its mark and tone."""
    tone = TONE.get(word, "")
    mark = MARK.get(tone, "")
    return Cell(f"{mark} {word}".strip(), tone, strong=tone == "bad")
