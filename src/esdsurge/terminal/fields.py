"""Reading the fields of one mapping: unknown keys, required keys, values and their problems.

:class:`Reader` collects every problem of a file; :class:`Fields` reads one mapping of it and
turns each failed value into a problem at the value's line and key path, so that reading goes
on and the user sees every problem at once.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Iterable
from typing import TypeVar

from esdsurge.errors import Problem
from esdsurge.model import Where
from esdsurge.terminal import quantities as q
from esdsurge.terminal.yamlnodes import YMap, YNode, YScalar, YSeq, describe, index, join

T = TypeVar("T")

#: A check of a parsed value: returns a message saying what is valid, or ``None`` when fine.
Check = Callable[[float], str | None]


def did_you_mean(word: str, valid: Iterable[str]) -> str:
    """``" (did you mean 'length'?)"`` when a valid word is close to ``word``, else ``""``."""
    near = difflib.get_close_matches(word, list(valid), n=3, cutoff=0.6)
    if not near:
        return ""
    return " (did you mean " + " or ".join(repr(n) for n in near) + "?)"


def nearest_names(word: str, valid: Iterable[str], what: str) -> str:
    """A message part naming the valid names nearest to ``word`` (or all of them if few)."""
    names = list(valid)
    if not names:
        return f"there is no {what} to name here"
    near = difflib.get_close_matches(word, names, n=3, cutoff=0.4)
    if near:
        return "nearest: " + ", ".join(repr(n) for n in near)
    shown = ", ".join(repr(n) for n in names[:12])
    more = f" (and {len(names) - 12} more)" if len(names) > 12 else ""
    return f"valid {what}s: {shown}{more}"


def positive(value: float) -> str | None:
    return None if value > 0.0 else "must be greater than zero"


def not_negative(value: float) -> str | None:
    return None if value >= 0.0 else "must not be negative"


def between(low: float, high: float, text: str) -> Check:
    def check(value: float) -> str | None:
        return None if low <= value <= high else f"must be between {text}"

    return check


class Reader:
    """The state of reading one file: its name, its problems and the site's atmosphere."""

    def __init__(self, file: str):
        self.file = file
        self.problems: list[Problem] = []
        self.atmosphere_abs = 101_325.0
        self.temperature = 293.15

    def problem(self, line: int, path: str, message: str) -> None:
        self.problems.append(Problem(self.file, line, path, message))

    def where(self, line: int, path: str) -> Where:
        return Where(self.file, line, path)

    def mapping(self, node: YNode | None, path: str, example: str) -> YMap | None:
        """``node`` if it is a mapping, else a problem (and ``None``)."""
        if isinstance(node, YMap):
            return node
        line = node.line if node is not None else 0
        got = describe(node) if node is not None else "nothing"
        self.problem(line, path, f"expected a mapping, e.g. {example}; got {got}")
        return None

    def sequence(self, node: YNode, path: str, example: str) -> YSeq | None:
        """``node`` if it is a list, else a problem (and ``None``)."""
        if isinstance(node, YSeq):
            return node
        self.problem(node.line, path, f"expected a list, e.g. {example}; got {describe(node)}")
        return None

    def scalar(self, node: YNode, path: str, parse: Callable[[object], T]) -> T | None:
        """Parse a scalar node; a problem (and ``None``) when it is not one or does not parse."""
        if not isinstance(node, YScalar):
            self.problem(node.line, path, f"expected a single value, got {describe(node)}")
            return None
        try:
            return parse(node.value)
        except q.QuantityError as exc:
            self.problem(node.line, path, str(exc))
            return None

    def pairs(
        self,
        node: YNode,
        path: str,
        parse: tuple[Callable[[object], float], Callable[[object], float]],
        example: str,
        min_points: int = 0,
    ) -> list[tuple[float, float]] | None:
        """A list of two-item lists (``[[0 m, 4 m], [85 m, 6 m]]``) parsed item by item."""
        seq = self.sequence(node, path, example)
        if seq is None:
            return None
        points: list[tuple[float, float]] = []
        ok = True
        for i, item in enumerate(seq.items):
            item_path = index(path, i)
            if not isinstance(item, YSeq) or len(item.items) != 2:
                self.problem(item.line, item_path, f"expected a pair of values, e.g. {example}")
                ok = False
                continue
            first = self.scalar(item.items[0], index(item_path, 0), parse[0])
            second = self.scalar(item.items[1], index(item_path, 1), parse[1])
            if first is None or second is None:
                ok = False
                continue
            points.append((first, second))
        if ok and len(points) < min_points:
            self.problem(seq.line, path, f"needs at least {min_points} points, got {len(points)}")
            return None
        return points if ok else None


class Fields:
    """One mapping of the file, read key by key.

    ``allowed`` lists the keys that may appear; any other is reported with a "did you mean".
    ``failed`` turns true once a value of this mapping has a problem.
    """

    def __init__(self, reader: Reader, node: YMap, path: str, allowed: Iterable[str]):
        self.reader = reader
        self.node = node
        self.path = path
        self.allowed = list(allowed)
        self.failed = False
        for key in node.entries:
            if key not in self.allowed:
                self.failed = True
                reader.problem(
                    node.key_line(key),
                    self.key_path(key),
                    f"unknown key {key!r}{did_you_mean(key, self.allowed)}; "
                    f"valid keys here: {', '.join(self.allowed)}",
                )

    def has(self, key: str) -> bool:
        return key in self.node.entries

    def line(self, key: str | None = None) -> int:
        if key is None or key not in self.node.entries:
            return self.node.line
        return self.node.entries[key].line or self.node.key_line(key)

    def key_path(self, key: str) -> str:
        return join(self.path, key)

    def problem(self, key: str | None, message: str) -> None:
        """A problem at ``key`` (its line and path), or at the mapping itself for ``None``."""
        self.failed = True
        if key is None:
            self.reader.problem(self.node.line, self.path, message)
        else:
            line = self.node.key_line(key) if key not in self.node.entries else self.line(key)
            self.reader.problem(line, self.key_path(key), message)

    def missing(self, key: str, example: str) -> None:
        self.failed = True
        self.reader.problem(
            self.node.line, self.key_path(key), f"missing required key {key!r}, e.g. {example}"
        )

    def value(
        self,
        key: str,
        parse: Callable[[object], T],
        *,
        required: str | None = None,
        check: Callable[[T], str | None] | None = None,
    ) -> T | None:
        """The parsed value of ``key``; ``None`` when absent or when it has a problem.

        ``required`` is an example (``"length: 1350 m"``): the key must then be present.
        ``check`` returns a message when a parsed value is not valid.
        """
        node = self.node.entries.get(key)
        if node is None:
            if required is not None:
                self.missing(key, required)
            return None
        before = len(self.reader.problems)
        result = self.reader.scalar(node, self.key_path(key), parse)
        if result is None:
            if len(self.reader.problems) == before:  # YAML null
                self.problem(key, f"a value is needed here, e.g. {required or key + ': ...'}")
            self.failed = True
            return None
        if check is not None:
            message = check(result)
            if message is not None:
                self.problem(key, f"{self.written(key)} {message}")
                return None
        return result

    def written(self, key: str) -> str:
        """The value of ``key`` as written, quoted, for messages."""
        node = self.node.entries.get(key)
        if isinstance(node, YScalar):
            return repr(node.value) if isinstance(node.value, str) else node.text
        return key

    def text(self, key: str, *, required: str | None = None) -> str | None:
        """A text value (numbers are taken as their text, e.g. a name ``12``)."""

        def parse(value: object) -> str:
            if isinstance(value, str) and value.strip():
                return value.strip()
            if isinstance(value, int | float) and not isinstance(value, bool):
                return str(value)
            raise q.QuantityError(f"expected a text, e.g. {required or key + ': ...'}")

        return self.value(key, parse, required=required)

    def choice(
        self, key: str, options: Iterable[str], *, required: str | None = None
    ) -> str | None:
        """A text that must be one of ``options``."""
        opts = list(options)
        value = self.text(key, required=required)
        if value is None:
            return None
        if value not in opts:
            self.problem(
                key,
                f"{value!r} is not valid{did_you_mean(value, opts)}; valid: {', '.join(opts)}",
            )
            return None
        return value

    def flag(self, key: str) -> bool | None:
        def parse(value: object) -> bool:
            if isinstance(value, bool):
                return value
            raise q.QuantityError(f"expected true or false, e.g. {key}: true")

        return self.value(key, parse)
