"""The one file writer of the exporters: temp file in the same folder, then an atomic rename.

A file appears under its final name only when it is complete; on any failure the temp file is
removed and :class:`~thickpanel.errors.ExportError` names the path.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Mapping
from pathlib import Path

from ..errors import ExportError

__all__ = ["file_mode", "write_atomic", "write_all"]


def file_mode() -> int:
    """Permission bits of a new file: ``0o666`` less the process umask (0644 under umask 022).

    ``mkstemp`` creates owner-only (0600) files; the exporters give their files the mode a plain
    ``open`` would, so a shop's other accounts can read them.
    """
    old = os.umask(0o022)
    os.umask(old)
    return 0o666 & ~old


def write_atomic(path: str | os.PathLike[str], data: bytes) -> Path:
    """Write ``data`` to ``path`` through a temp file in the same folder and ``os.replace``.

    Parameters
    ----------
    path : path-like
        Target file; its folder is created when missing.
    data : bytes

    Returns
    -------
    Path
        The written path.
    """
    p = Path(path)
    try:
        p.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=p.parent)
    except OSError as exc:
        raise ExportError(f"cannot write {p}: folder {p.parent} is not writable ({exc})") from None
    try:
        os.fchmod(fd, file_mode())
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, p)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        if isinstance(exc, Exception):
            raise ExportError(f"cannot write {p}: {exc}") from None
        raise
    return p


def write_all(out_dir: str | os.PathLike[str], files: Mapping[str, bytes]) -> list[Path]:
    """Write every ``relative name -> bytes`` entry under ``out_dir``, all or nothing.

    Files are written in sorted name order; when one fails, the files this call already wrote are
    removed again before :class:`ExportError` is raised (files that existed before and were
    overwritten are not restored).
    """
    root = Path(out_dir)
    done: list[Path] = []
    try:
        for name in sorted(files):
            done.append(write_atomic(root / name, files[name]))
    except BaseException:
        for q in done:
            try:
                q.unlink()
            except OSError:
                pass
        raise
    return done
