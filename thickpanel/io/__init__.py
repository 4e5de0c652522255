"""Pattern files: our own JSON schema (read and write) and DXF import by layer.

* :func:`read_pattern` / :func:`write_pattern` pick the format from the suffix (``.json`` read and
  write, ``.dxf`` read only).
* :func:`read_dxf` imports LINE and LWPOLYLINE entities whose layer name gives the crease kind.

The JSON schema is documented in ``docs/pattern-json.md``. Every malformed file raises
:class:`~thickpanel.errors.PatternError` naming the file and the offending key, entity or value.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import ExportError, PatternError
from ..tolerances import DEFAULT_TOL, Tolerances
from .dxf_import import DEFAULT_LAYERS, INSUNITS_MM, read_dxf
from .json_format import (
    FORMAT_NAME,
    FORMAT_VERSION,
    SUPPORTED_VERSIONS,
    dumps_pattern,
    loads_pattern,
    pattern_from_dict,
    pattern_to_dict,
    read_json,
    write_json,
)

if TYPE_CHECKING:
    from ..pattern import CreasePattern

__all__ = [
    "read_pattern",
    "write_pattern",
    "read_dxf",
    "read_json",
    "write_json",
    "pattern_to_dict",
    "pattern_from_dict",
    "dumps_pattern",
    "loads_pattern",
    "DEFAULT_LAYERS",
    "INSUNITS_MM",
    "FORMAT_NAME",
    "FORMAT_VERSION",
    "SUPPORTED_VERSIONS",
    "READ_SUFFIXES",
    "WRITE_SUFFIXES",
]

READ_SUFFIXES: tuple[str, ...] = (".json", ".dxf")
WRITE_SUFFIXES: tuple[str, ...] = (".json",)


def read_pattern(path: str | Path, *, tol: Tolerances = DEFAULT_TOL) -> CreasePattern:
    """Read a crease pattern; the format follows the suffix (``.json`` or ``.dxf``).

    Parameters
    ----------
    path : str or Path
    tol : Tolerances
        Passed to the pattern (and to the DXF importer's end-point merging).
    """
    p = Path(path)
    suffix = p.suffix.lower()
    if suffix == ".json":
        return read_json(p, tol=tol)
    if suffix == ".dxf":
        return read_dxf(p, tol=tol)
    raise PatternError(
        f"cannot read pattern file {str(p)!r}: unknown suffix {p.suffix!r}; readable: {', '.join(READ_SUFFIXES)}"
    )


def write_pattern(pattern: CreasePattern, path: str | Path) -> Path:
    """Write ``pattern`` to ``path`` (``.json``), atomically; returns the path written."""
    p = Path(path)
    if p.suffix.lower() != ".json":
        raise ExportError(
            f"cannot write pattern file {str(p)!r}: unknown suffix {p.suffix!r}; writable: "
            f"{', '.join(WRITE_SUFFIXES)} (DXF drawings come from thickpanel.export.drawing)"
        )
    return write_json(pattern, p)
