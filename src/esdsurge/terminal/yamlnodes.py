"""YAML with line numbers: compose a terminal file into a small tree of nodes.

PyYAML's safe loader (libyaml's when available) composes the text into nodes that carry their
position; this module walks those nodes once and turns them into :class:`YMap`, :class:`YSeq`
and :class:`YScalar`, each with its 1-based line. Scalars are built by PyYAML's safe
constructor (so ``12`` is an int, ``true`` a bool and ``"16 in"`` a str), anchors and aliases
give the same Python object wherever the alias appears, and merge keys (``<<: *base``) work as
in ``yaml.safe_load``.

Nothing here raises on bad input: every problem (syntax error, duplicate key, unsupported tag,
alias that contains itself) becomes a :class:`~esdsurge.errors.Problem` in the returned list.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import yaml
from yaml.constructor import SafeConstructor

from esdsurge.errors import Problem

#: libyaml's loader when PyYAML was built with it (ten times faster), else the pure one.
_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

_MAP_TAG = "tag:yaml.org,2002:map"
_SEQ_TAG = "tag:yaml.org,2002:seq"
_MERGE_TAG = "tag:yaml.org,2002:merge"


@dataclass(eq=False)
class YNode:
    """A node of the file with its 1-based line."""

    line: int


@dataclass(eq=False)
class YScalar(YNode):
    """A scalar: ``value`` as YAML's safe constructor builds it, ``text`` as written."""

    value: object = None
    text: str = ""


@dataclass(eq=False)
class YSeq(YNode):
    """A sequence."""

    items: list[YNode] = field(default_factory=list)


@dataclass(eq=False)
class YMap(YNode):
    """A mapping with text keys, in file order; ``key_lines`` gives the line of each key."""

    entries: dict[str, YNode] = field(default_factory=dict)
    key_lines: dict[str, int] = field(default_factory=dict)

    def key_line(self, key: str) -> int:
        return self.key_lines.get(key, self.line)


def describe(node: YNode) -> str:
    """A few words for what a node is, for messages ("a list", "the number 12")."""
    if isinstance(node, YMap):
        return "a mapping"
    if isinstance(node, YSeq):
        return "a list"
    assert isinstance(node, YScalar)
    value = node.value
    if value is None:
        return "nothing (an empty value)"
    if isinstance(value, bool):
        return f"the boolean {node.text}"
    if isinstance(value, int | float):
        return f"the number {node.text}"
    if isinstance(value, str):
        return f"the text {value!r}"
    return f"{node.text!r} (read by YAML as {type(value).__name__})"


def join(path: str, key: str) -> str:
    """Key path of ``key`` under ``path`` (``routes`` + ``loading`` -> ``routes.loading``)."""
    return f"{path}.{key}" if path else key


def index(path: str, i: int) -> str:
    """Key path of item ``i`` (0-based) of the list at ``path``."""
    return f"{path}[{i}]"


def _line(node: yaml.Node) -> int:
    return node.start_mark.line + 1 if node.start_mark is not None else 0


def _error_line(exc: yaml.YAMLError, text: str) -> int:
    mark = getattr(exc, "problem_mark", None) or getattr(exc, "context_mark", None)
    if mark is not None:
        return mark.line + 1
    position = getattr(exc, "position", None)  # ReaderError
    if isinstance(position, int):
        return text.count("\n", 0, position) + 1
    return 0


def _error_text(exc: yaml.YAMLError) -> str:
    if isinstance(exc, yaml.MarkedYAMLError):
        parts = [p for p in (exc.context, exc.problem) if p]
        if exc.context_mark is not None and exc.problem_mark is not None:
            if exc.context_mark.line != exc.problem_mark.line and exc.context:
                parts[0] = f"{exc.context} (from line {exc.context_mark.line + 1})"
        return "; ".join(parts) or str(exc)
    if isinstance(exc, yaml.reader.ReaderError):
        return f"character {exc.character!r} is not allowed in a YAML file ({exc.reason})"
    return str(exc)


class _Walker:
    def __init__(self, file: str):
        self.file = file
        self.problems: list[Problem] = []
        self.done: dict[int, YNode] = {}
        self.busy: set[int] = set()
        self.constructor = SafeConstructor()

    def problem(self, line: int, path: str, message: str) -> None:
        self.problems.append(Problem(self.file, line, path, message))

    def walk(self, node: yaml.Node, path: str) -> YNode:
        key = id(node)
        if key in self.done:
            return self.done[key]
        if key in self.busy:
            self.problem(_line(node), path, "this alias refers to a node that contains it")
            return YScalar(_line(node), None, "")
        self.busy.add(key)
        try:
            if isinstance(node, yaml.MappingNode):
                result: YNode = self._mapping(node, path)
            elif isinstance(node, yaml.SequenceNode):
                result = self._sequence(node, path)
            else:
                result = self._scalar(node, path)
        finally:
            self.busy.discard(key)
        self.done[key] = result
        return result

    def _scalar(self, node: yaml.Node, path: str) -> YScalar:
        line = _line(node)
        try:
            value = self.constructor.construct_object(node, deep=True)
        except (yaml.YAMLError, ValueError, OverflowError, TypeError) as exc:
            reason = exc.problem if isinstance(exc, yaml.MarkedYAMLError) else str(exc)
            self.problem(line, path, f"cannot read {node.value!r}: {reason}")
            value = None
        return YScalar(line, value, str(node.value))

    def _sequence(self, node: yaml.SequenceNode, path: str) -> YSeq:
        line = _line(node)
        if node.tag != _SEQ_TAG:
            self.problem(line, path, f"the YAML tag {node.tag!r} is not supported here")
        return YSeq(line, [self.walk(item, index(path, i)) for i, item in enumerate(node.value)])

    def _mapping(self, node: yaml.MappingNode, path: str) -> YMap:
        line = _line(node)
        if node.tag != _MAP_TAG:
            self.problem(line, path, f"the YAML tag {node.tag!r} is not supported here")
        own = sum(1 for k, _ in node.value if k.tag != _MERGE_TAG)
        if own != len(node.value):
            try:
                self.constructor.flatten_mapping(node)
            except yaml.YAMLError as exc:
                self.problem(line, path, f"cannot merge: {_error_text(exc)}")
                node.value = [(k, v) for k, v in node.value if k.tag != _MERGE_TAG]
        merged = len(node.value) - own
        if merged < len(node.value):  # a block mapping starts at its first own key, which
            line = _line(node.value[merged][0])  # is after any anchor on the line before
        result = YMap(line)
        own_keys: set[str] = set()
        for i, (key_node, value_node) in enumerate(node.value):
            key_line = _line(key_node)
            if not isinstance(key_node, yaml.ScalarNode):
                self.problem(key_line, path, "a key must be plain text, not a list or mapping")
                continue
            key = str(key_node.value)
            if i >= merged:
                if key in own_keys:
                    self.problem(
                        key_line,
                        join(path, key),
                        f"the key {key!r} appears twice in this mapping "
                        f"(first at line {result.key_lines[key]}); keep one",
                    )
                    continue
                own_keys.add(key)
            result.entries[key] = self.walk(value_node, join(path, key))
            result.key_lines[key] = key_line
        return result


def compose(text: str, file: str) -> tuple[YNode | None, list[Problem]]:
    """Compose ``text`` (the content of ``file``) into nodes.

    Returns the root node (``None`` for an empty document or a syntax error) and the
    problems found; the tree is usable wherever no problem was reported.
    """
    try:
        root = yaml.compose(text, Loader=_LOADER)
    except yaml.YAMLError as exc:
        line = _error_line(exc, text)
        return None, [Problem(file, line, "", f"YAML syntax error: {_error_text(exc)}")]
    except RecursionError:
        return None, [Problem(file, 0, "", "the file is nested too deeply to read")]
    if root is None:
        return None, []
    walker = _Walker(file)
    try:
        tree = walker.walk(root, "")
    except RecursionError:
        return None, [Problem(file, 0, "", "the file is nested too deeply to read")]
    return tree, walker.problems
