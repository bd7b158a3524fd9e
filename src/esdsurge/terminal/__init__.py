"""Reading terminal files (format 1): YAML with units in, frozen SI model objects out.

>>> from esdsurge.terminal import loads
>>> t = loads('''
... format: 1
... terminal: demo
... products: {water: {density: 998 kg/m^3, bulk_modulus: 2.2 GPa,
...                    vapour_pressure: 2.3 kPaa, viscosity: 1 mPa*s}}
... routes:
...   r:
...     - tank: upper
...       surface: 10 m
...     - pipe: line
...       length: 100 m
...       size: {nps: 4, schedule: 40}
...     - valve: end valve
...       type: gate
...       k_open: 0.2
...     - tank: lower
...       surface: 0 m
... cases:
...   - {name: c, route: r, product: water, events: [{close: end valve, stroke: 2 s}]}
... ''')
>>> t.routes["r"].elements[1].length, t.cases[0].events[0].stroke
(100.0, 2.0)

Pint and YAML live here and nowhere else; every problem in a file is collected and raised as
one :class:`~esdsurge.errors.InputError`.
"""

from __future__ import annotations

import os

from esdsurge.errors import InputError, Problem
from esdsurge.model import Terminal
from esdsurge.terminal.build import build
from esdsurge.terminal.fields import Reader
from esdsurge.terminal.yamlnodes import compose

__all__ = ["load", "loads"]


def loads(text: str, path: str = "<string>") -> Terminal:
    """Read a terminal file from its text; ``path`` names it in messages and in the model.

    Raises
    ------
    InputError
        With every problem found in the file.
    """
    root, problems = compose(text, path)
    if problems:
        raise InputError(problems)
    reader = Reader(path)
    terminal = build(root, reader)
    if terminal is None:
        raise InputError(sorted(reader.problems, key=lambda p: p.line))
    return terminal


def load(path: str | os.PathLike[str]) -> Terminal:
    """Read a terminal file.

    Raises
    ------
    InputError
        The file cannot be read (missing, a directory, not UTF-8) or has problems; every
        problem found is listed.
    """
    name = os.fspath(path)
    try:
        with open(name, "rb") as stream:
            data = stream.read()
    except IsADirectoryError:
        raise InputError([Problem(name, 0, "", "is a directory, not a terminal file")]) from None
    except FileNotFoundError:
        raise InputError([Problem(name, 0, "", "no such file")]) from None
    except OSError as exc:
        raise InputError([Problem(name, 0, "", f"cannot read the file: {exc.strerror}")]) from None
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        raise InputError(
            [Problem(name, line, "", f"the file is not UTF-8 text (byte {data[exc.start]:#04x})")]
        ) from None
    return loads(text, name)
