"""Shared fixtures of the terminal-file reader tests."""

from __future__ import annotations

import re
from collections.abc import Callable
from pathlib import Path

import pytest

from esdsurge.errors import InputError, Problem
from esdsurge.terminal import loads

JETTY_PATH = Path(__file__).parents[2] / "terminals" / "jetty.yaml"


def _edit(text: str, pattern: str, replacement: str) -> str:
    new, count = re.subn(pattern, replacement, text)
    assert count == 1, f"{pattern!r} matches {count} times"
    return new


@pytest.fixture(scope="session")
def jetty_text() -> str:
    """The demo terminal file, as text."""
    return JETTY_PATH.read_text(encoding="utf-8")


@pytest.fixture(scope="session")
def edited(jetty_text: str) -> Callable[..., str]:
    """The demo file with ``(pattern, replacement)`` edits (``re.sub``), each matching once.

    Patterns name keys and element names rather than values, so that the tests keep working
    when the demo's numbers are tuned.
    """

    def run(*edits: tuple[str, str]) -> str:
        text = jetty_text
        for pattern, replacement in edits:
            text = _edit(text, pattern, replacement)
        return text

    return run


@pytest.fixture(scope="session")
def written(jetty_text: str) -> Callable[[str, str], str]:
    """The value of ``key`` as written in the demo file for the element named ``name``."""

    def run(name: str, key: str) -> str:
        block = re.search(rf": {re.escape(name)}\n((?:      .*\n)*)", jetty_text)
        assert block is not None, name
        value = re.search(rf"^      {key}: (.*)$", block.group(1), re.M)
        assert value is not None, (name, key)
        return value.group(1)

    return run


@pytest.fixture(scope="session")
def line_of() -> Callable[[str, str], int]:
    """1-based line where a snippet (occurring once) starts in a text."""

    def run(text: str, snippet: str) -> int:
        assert text.count(snippet) == 1, f"{snippet!r} occurs {text.count(snippet)} times"
        return text[: text.index(snippet)].count("\n") + 1

    return run


@pytest.fixture(scope="session")
def problems_of() -> Callable[[str], list[Problem]]:
    """The problems of a file text that must not load."""

    def run(text: str, path: str = "jetty.yaml") -> list[Problem]:
        with pytest.raises(InputError) as info:
            loads(text, path)
        return info.value.problems

    return run
