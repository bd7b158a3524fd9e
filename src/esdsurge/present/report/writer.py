"""Atomic writing of a review pack: all or nothing.

Every file of a pack is written into a temporary folder beside the target folder (same parent,
so the same file system) and the folder is moved into place with one ``os.replace`` at the end.
A failure at any step removes the temporary folder and leaves the target as it was: no half
pack, and an old pack replaced with ``--force`` survives a failed rewrite.

An existing target is refused unless ``force``; with ``force`` it is replaced (new pack written,
old one moved aside, new one moved in, old one removed), but only when the target is empty or
holds an earlier esdsurge pack (its ``results.json`` carries :data:`PACK_MARK`): ``--force`` must
never delete a folder that esdsurge did not write.

Hand-written: the standard library has the pieces (``tempfile.mkdtemp``, ``os.replace``,
``shutil.rmtree``) but no "write a folder atomically" helper.
"""

from __future__ import annotations

import json
import os
import shutil
import tempfile
from collections.abc import Callable, Sequence
from pathlib import Path

from esdsurge.errors import UsageError

#: Key and value that ``results.json`` of every pack carries; ``--force`` replaces only a
#: folder that holds one (or an empty folder).
PACK_MARK = ("pack", "esdsurge review pack")

#: Prefixes of the temporary folders beside the target (the new pack, the old one moved aside).
TMP_PREFIX = ".esdsurge-writing-"
OLD_PREFIX = ".esdsurge-replaced-"

#: One step of writing a pack: a name (for messages) and a function that writes into the
#: temporary folder it is given.
Step = tuple[str, Callable[[Path], object]]


def is_pack(folder: Path) -> bool:
    """Whether ``folder`` holds an esdsurge review pack (its ``results.json`` carries the mark)."""
    try:
        data = json.loads((folder / "results.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return False
    return isinstance(data, dict) and data.get(PACK_MARK[0]) == PACK_MARK[1]


def refuse_target(target: Path, force: bool) -> None:
    """Raise :class:`UsageError` when a pack may not be written to ``target``.

    Called before any work (so that a refused folder costs no engine time) and again just
    before the move into place.
    """
    if not target.exists() and not target.is_symlink():
        return
    if target.is_symlink() or not target.is_dir():
        raise UsageError(f"-o {target}: exists and is not a folder; choose another folder")
    if not force:
        raise UsageError(
            f"-o {target}: the folder exists; choose a new folder, or give --force to replace "
            "an earlier pack"
        )
    if any(target.iterdir()) and not is_pack(target):
        raise UsageError(
            f"-o {target}: the folder exists and does not hold an esdsurge pack (no results.json "
            "from esdsurge); --force replaces only an earlier pack or an empty folder"
        )


def write_pack(target: Path, steps: Sequence[Step], *, force: bool = False) -> Path:
    """Run ``steps`` in a temporary folder beside ``target`` and move the result into place.

    Parameters
    ----------
    target : the pack's folder (created, with missing parents)
    steps : ``(name, write)`` pairs; each ``write(folder)`` writes its files into ``folder``
    force : replace an existing pack at ``target``

    Returns
    -------
    Path
        ``target``.

    Raises
    ------
    UsageError
        ``target`` exists (without ``force``), is not a folder, or is a folder that esdsurge
        did not write. Whatever a step raises is raised again after the temporary folder is
        removed.
    """
    target = Path(target)
    refuse_target(target, force)
    parent = target.parent if str(target.parent) else Path(".")
    parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=TMP_PREFIX + target.name + "-", dir=parent))
    try:
        # mkdtemp makes the folder private (0700); a pack gets the usual permissions
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(tmp, 0o777 & ~mask)
        for _name, write in steps:
            write(tmp)
        refuse_target(target, force)
        _move_into_place(tmp, target)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    return target


def _move_into_place(tmp: Path, target: Path) -> None:
    if not target.exists():
        os.replace(tmp, target)
        return
    # replace: move the old pack aside, the new one in, then remove the old one; if the move in
    # fails, the old pack goes back
    old = Path(tempfile.mkdtemp(prefix=OLD_PREFIX + target.name + "-", dir=target.parent))
    os.rmdir(old)
    os.replace(target, old)
    try:
        os.replace(tmp, target)
    except BaseException:
        os.replace(old, target)
        raise
    shutil.rmtree(old, ignore_errors=True)


def write_text(folder: Path, name: str, text: str) -> Path:
    """Write ``text`` (UTF-8, newlines as written) to ``folder / name``."""
    path = folder / name
    path.parent.mkdir(parents=True, exist_ok=True)
    with open(path, "w", encoding="utf-8", newline="\n") as stream:
        stream.write(text)
    return path
