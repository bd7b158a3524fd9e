"""Property: any mutation of the demo file gives a Terminal or an InputError, never a traceback."""

from __future__ import annotations

from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from esdsurge.errors import InputError
from esdsurge.model import Terminal
from esdsurge.terminal import loads

JETTY = (Path(__file__).parents[2] / "terminals" / "jetty.yaml").read_text(encoding="utf-8")
LINES = JETTY.splitlines(keepends=True)

#: Scraps of text that are valid somewhere in the format, or plausibly wrong.
JUNK = [
    "",
    " ",
    "-",
    ":",
    "{",
    "]",
    "&a",
    "*a",
    "*arm",
    "<<: *esd",
    "!!binary aGk=",
    "!foo",
    "~",
    "null",
    "true",
    "0",
    "-1",
    "1e999",
    ".nan",
    "1.0e400",
    "2001-01-01",
    "12 in",
    "0 m",
    "-5 m",
    "3 barg",
    "3 bar",
    "9 bara",
    "1 m^",
    "5 m^(1/0)",
    "5 (m",
    "10 %",
    "2980 rpm",
    "[[0 m, 1 m]]",
    "[]",
    "{}",
    "[1, [2, [3]]]",
    "custom",
    "STD",
    "{nps: 3.3, schedule: 40}",
    "valve: x",
    "tank: t",
    "close: shore ESD valve",
    "\t",
    "'",
    '"',
    "\\x00",
    "é",
]


def _value_spans(line: str) -> list[tuple[int, int]]:
    """Spans of values after ': ' or inside flow lists, to swap with each other."""
    spans = []
    start = line.find(": ")
    if start >= 0:
        spans.append((start + 2, len(line.rstrip("\n"))))
    return spans


@st.composite
def mutated(draw: st.DrawFn) -> str:
    lines = list(LINES)
    for _ in range(draw(st.integers(1, 4))):
        op = draw(st.sampled_from(["delete", "duplicate", "insert", "swap", "replace", "chars"]))
        i = draw(st.integers(0, len(lines) - 1))
        if op == "delete":
            del lines[i]
        elif op == "duplicate":
            lines.insert(i, lines[i])
        elif op == "insert":
            indent = " " * draw(st.sampled_from([0, 2, 4, 6, 8]))
            lines.insert(i, indent + draw(st.sampled_from(JUNK)) + "\n")
        elif op == "swap":
            j = draw(st.integers(0, len(lines) - 1))
            a, b = _value_spans(lines[i]), _value_spans(lines[j])
            if a and b:
                va = lines[i][a[0][0] : a[0][1]]
                vb = lines[j][b[0][0] : b[0][1]]
                lines[i] = lines[i][: a[0][0]] + vb + lines[i][a[0][1] :]
                lines[j] = lines[j][: b[0][0]] + va + lines[j][b[0][1] :]
        elif op == "replace":
            spans = _value_spans(lines[i])
            if spans:
                s, e = spans[0]
                lines[i] = lines[i][:s] + draw(st.sampled_from(JUNK)) + lines[i][e:]
        else:
            line = lines[i]
            k = draw(st.integers(0, len(line)))
            junk = draw(st.text(max_size=3))
            lines[i] = line[:k] + junk + line[k + draw(st.integers(0, 3)) :]
        if not lines:
            break
    return "".join(lines)


@settings(
    max_examples=150,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow],
)
@given(mutated())
def test_mutated_file_gives_terminal_or_input_error(text: str) -> None:
    try:
        result = loads(text, "mutated.yaml")
    except InputError as exc:
        assert exc.problems
        for problem in exc.problems:
            assert problem.file == "mutated.yaml"
            assert problem.message
    else:
        assert isinstance(result, Terminal)
