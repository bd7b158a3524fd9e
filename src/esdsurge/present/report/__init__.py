"""The review pack (``esdsurge report``): HTML, Markdown, JSON and figures, written atomically.

:func:`write_report` takes the result of :func:`esdsurge.studies.report.report` and writes the
pack into a folder: ``report.html`` (self-contained), ``report.md``, ``results.json`` and
``figures/`` (the PNG figures of each case and the line-up diagrams as SVG). Everything goes to
a temporary folder first (:mod:`.writer`); a failure leaves nothing behind.
"""

from __future__ import annotations

from pathlib import Path

from esdsurge.present.fmt import Fmt
from esdsurge.present.report.writer import PACK_MARK, refuse_target, write_pack

__all__ = ["PACK_MARK", "refuse_target", "write_report"]


def write_report(res, target: str | Path, *, units: str = "si", force: bool = False) -> Path:
    """Write the review pack of ``res`` (a ``ReportResult``) into the folder ``target``.

    Parameters
    ----------
    res : the report study's result
    target : the pack's folder; refused when it exists, unless ``force``
    units : ``si`` or ``us`` for the numbers people read (``results.json`` stays SI)
    force : replace an earlier pack at ``target``

    Returns
    -------
    Path
        ``target``.

    Raises
    ------
    UsageError
        ``target`` exists (without ``force``) or cannot be replaced.
    """
    from esdsurge.present.report import steps

    f = Fmt(units, res.terminal.atmosphere_abs)
    return write_pack(Path(target), steps.pack_steps(res, f), force=force)
