"""The one exception hierarchy of esdsurge.

Library code raises these; only the command line (``esdsurge.cli``) catches them, prints the
message and chooses the exit status. A limit exceeded is never an exception: it is a verdict in
the results.
"""

from __future__ import annotations

from dataclasses import dataclass


class EsdsurgeError(Exception):
    """Base of every error esdsurge raises on purpose."""


@dataclass(frozen=True)
class Problem:
    """One thing wrong in an input file.

    ``file`` and ``line`` locate it (line 1-based, 0 when unknown), ``path`` is the key path in
    the file (``routes.loading[3].wall``) and ``message`` says what is wrong and what is valid.
    """

    file: str
    line: int
    path: str
    message: str

    def __str__(self) -> str:
        where = f"{self.file}:{self.line}" if self.line else self.file
        key = f" {self.path}:" if self.path else ""
        return f"{where}:{key} {self.message}"


class InputError(EsdsurgeError):
    """A terminal file (or a command-line value) that cannot be used; exit status 2.

    Carries every problem found, so that the user can mend them all at once.
    """

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


class UsageError(EsdsurgeError):
    """A command-line request that cannot be met (unknown case name, bad option value)."""


class PhysicsRangeError(EsdsurgeError, ValueError):
    """A value outside the range where a physics function or its source is valid."""


class SteadyStateError(EsdsurgeError):
    """No steady operating point exists for a case as given (e.g. an unreachable rate)."""
