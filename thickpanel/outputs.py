"""Output folders of a build: checked before any work, cleaned up when a build fails.

A build writes many files (exports per fold state, drawings, the report). Either all of them are
written or none: :func:`prepare_out_dir` checks the folder can be made and written to (and that no
path component is longer than common file systems allow) before the pipeline starts, and
:func:`remove_outputs` takes away what a failed run wrote, then the folders it created.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Iterable
from pathlib import Path

from .errors import ExportError

__all__ = ["MAX_COMPONENT_BYTES", "prepare_out_dir", "remove_outputs"]

#: Longest file or folder name, bytes (ext4, XFS, APFS and NTFS allow 255). Output files add up to
#: about 40 characters to the design name, so the folder components are checked against it too.
MAX_COMPONENT_BYTES = 255


def prepare_out_dir(out_dir: Path) -> list[Path]:
    """Check that ``out_dir`` can hold the build's files; create it. Returns the folders created.

    Temporary files (``.*.tmp``) left in it by an earlier run that was killed mid-write are removed.

    Raises
    ------
    ExportError
        A path component too long, a file where a folder must be, or a folder that cannot be
        created or written to. Nothing is left behind.
    """
    for part in out_dir.parts:
        if len(os.fsencode(part)) > MAX_COMPONENT_BYTES:
            raise ExportError(f"output folder {str(out_dir)!r}: the name {part[:40]!r}... has "
                              f"{len(os.fsencode(part))} bytes; file systems allow {MAX_COMPONENT_BYTES}")
    missing: list[Path] = []
    q = out_dir
    while not q.exists():
        missing.append(q)
        if q.parent == q:
            break
        q = q.parent
    if q.exists() and not q.is_dir():
        raise ExportError(f"output folder {str(out_dir)!r}: {str(q)!r} is a file, not a folder")
    created: list[Path] = []
    try:
        for d in reversed(missing):
            d.mkdir()
            created.append(d)
        for stale in out_dir.rglob(".*.tmp"):  # left by a run that was killed mid-write
            if stale.is_file():
                stale.unlink()
        fd, probe = tempfile.mkstemp(prefix=".write-check.", suffix=".tmp", dir=out_dir)
        os.close(fd)
        os.unlink(probe)
    except OSError as exc:
        remove_outputs((), created)
        raise ExportError(f"output folder {str(out_dir)!r} cannot be written: {exc.strerror or exc}") from None
    return created


def remove_outputs(files: Iterable[Path], created: Iterable[Path]) -> None:
    """Remove ``files`` (written by this run), their leftover temporary files, then the ``created``
    folders (deepest first) and every folder below them that is left empty."""
    dirs: set[Path] = set()
    for f in files:
        p = Path(f)
        dirs.add(p.parent)
        try:
            p.unlink()
        except OSError:
            pass
    for d in sorted(dirs, key=lambda x: len(x.parts), reverse=True):
        for tmp in d.glob(".*.tmp") if d.is_dir() else ():
            try:
                tmp.unlink()
            except OSError:
                pass
    roots = list(created)
    for root in sorted(roots, key=lambda x: len(x.parts), reverse=True):
        if not root.is_dir():
            continue
        for sub in sorted((x for x in root.rglob("*") if x.is_dir()), key=lambda x: len(x.parts), reverse=True):
            try:
                sub.rmdir()
            except OSError:
                pass
        try:
            root.rmdir()
        except OSError:
            pass
    for d in sorted(dirs, key=lambda x: len(x.parts), reverse=True):  # state folders made inside old ones
        try:
            if d.is_dir() and not any(d.iterdir()):
                d.rmdir()
        except OSError:
            pass
