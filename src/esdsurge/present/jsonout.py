"""Shared pieces of the JSON outputs: rounding and the common envelope of every command."""

from __future__ import annotations

import math
from typing import Any

from esdsurge import __version__
from esdsurge.model import Terminal
from esdsurge.present.cautions import CAUTION


def rounded(x: float | None, n: int = 4) -> float | None:
    """``x`` rounded to ``n`` decimals; ``None`` for a missing value or NaN (not valid JSON)."""
    if x is None:
        return None
    x = float(x)
    return None if math.isnan(x) else round(x, n)


def envelope(terminal: Terminal, ok: bool, cases: list[dict[str, Any]], **extra: Any) -> dict:
    """The object every ``--json`` output shares: version, file, verdict, cases, caution."""
    return {
        "esdsurge": __version__,
        "file": terminal.path,
        "terminal": terminal.name,
        "ok": ok,
        **extra,
        "cases": cases,
        "caution": CAUTION,
    }
