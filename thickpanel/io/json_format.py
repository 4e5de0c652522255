"""Our JSON schema for a crease pattern (documented in ``docs/pattern-json.md``).

Top-level object::

    {"format": "thickpanel-pattern", "version": 1, "name": "...", "units": "mm",
     "vertices": [[x, y], ...], "creases": [[i, j], ...], "kinds": ["border", ...],
     "target_angles_deg": [null | number, ...],            # optional
     "seams": [{"a": i, "b": j, "kind": "valley", "target_angle_deg": null}]}   # optional

Angles in the file are degrees (``*_deg``), lengths in ``units`` (mm, cm, m or in; written as mm).
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import ExportError, PatternError
from ..limits import MAX_INDEX, MAX_NESTING, coordinate_problem, nesting_depth
from ..pattern import CreasePattern, Seam
from ..tolerances import DEFAULT_TOL, Tolerances

__all__ = [
    "FORMAT_NAME",
    "FORMAT_VERSION",
    "SUPPORTED_VERSIONS",
    "UNITS_MM",
    "pattern_to_dict",
    "pattern_from_dict",
    "dumps_pattern",
    "loads_pattern",
    "read_json",
    "write_json",
]

FORMAT_NAME = "thickpanel-pattern"
FORMAT_VERSION = 1
SUPPORTED_VERSIONS: tuple[int, ...] = (1,)
UNITS_MM: dict[str, float] = {"mm": 1.0, "cm": 10.0, "m": 1000.0, "in": 25.4}
_KEYS = {"format", "version", "name", "units", "vertices", "creases", "kinds", "target_angles_deg", "seams"}
_SEAM_KEYS = {"a", "b", "kind", "target_angle_deg"}


def _num_or_none(x: float) -> float | None:
    return None if not math.isfinite(x) else float(x)


def pattern_to_dict(pattern: CreasePattern) -> dict[str, Any]:
    """The JSON-ready dict of ``pattern`` (lengths mm, angles degrees, NaN as null)."""
    d: dict[str, Any] = {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "name": pattern.name,
        "units": "mm",
        "vertices": pattern.vertices.tolist(),
        "creases": pattern.creases.tolist(),
        "kinds": list(pattern.kinds),
    }
    ta = pattern.target_angles
    if np.isfinite(ta).any():
        d["target_angles_deg"] = [_num_or_none(math.degrees(x)) for x in ta.tolist()]
    if pattern.seams:
        d["seams"] = [
            {"a": s.a, "b": s.b, "kind": s.kind, "target_angle_deg": _num_or_none(math.degrees(s.target_angle))}
            for s in pattern.seams
        ]
    return d


def _where(source: str) -> str:
    return f" in {source}" if source else ""


def _array(d: dict[str, Any], key: str, source: str, cols: int, kind: str) -> np.ndarray:
    val = d[key]
    if not isinstance(val, list):
        raise PatternError(
            f"key {key!r}{_where(source)} must be a list of rows of {cols} {kind}; got {type(val).__name__}"
        )
    for q, row in enumerate(val):
        if not (isinstance(row, list) and len(row) == cols):
            raise PatternError(f"{key}[{q}]{_where(source)} must be a list of {cols} {kind}; got {row!r}")
        for x in row:
            if isinstance(x, bool) or not isinstance(x, (int, float)):
                raise PatternError(f"{key}[{q}]{_where(source)} must hold {kind}; got {row!r}")
            if kind == "integers":
                if not isinstance(x, int):
                    raise PatternError(
                        f"{key}[{q}]{_where(source)} must hold vertex indices (integers); got {row!r}"
                    )
                if not 0 <= x <= MAX_INDEX:
                    raise PatternError(
                        f"{key}[{q}]{_where(source)} holds vertex index {x}; indices run from 0 to at most {MAX_INDEX}"
                    )
            else:
                problem = coordinate_problem(x)
                if problem:
                    raise PatternError(f"{key}[{q}]{_where(source)}: coordinate {problem}")
    dtype = np.int64 if kind == "integers" else np.float64
    return np.asarray(val, dtype=dtype).reshape(-1, cols)


def _angle_list(val: Any, key: str, source: str, n: int) -> np.ndarray:
    if not isinstance(val, list) or len(val) != n:
        got = len(val) if isinstance(val, list) else type(val).__name__
        raise PatternError(f"key {key!r}{_where(source)} must be a list of {n} numbers or null; got {got}")
    out = np.full(n, np.nan)
    for q, x in enumerate(val):
        if x is None:
            continue
        if isinstance(x, bool) or not isinstance(x, (int, float)) or not -180.0 <= x <= 180.0:
            raise PatternError(
                f"{key}[{q}]{_where(source)} must be a number of degrees in -180..180 or null; got {x!r}"
            )
        out[q] = math.radians(x)
    return out


def pattern_from_dict(
    d: Any, *, source: str = "", tol: Tolerances = DEFAULT_TOL, validate: bool = True
) -> CreasePattern:
    """Build a pattern from a dict in the JSON schema; errors name ``source`` and the key."""
    if not isinstance(d, dict):
        raise PatternError(f"pattern file{_where(source)} must hold a JSON object; got {type(d).__name__}")
    fmt = d.get("format")
    if fmt != FORMAT_NAME:
        raise PatternError(f"key 'format'{_where(source)} is {fmt!r}; expected {FORMAT_NAME!r}")
    ver = d.get("version")
    if not isinstance(ver, int) or isinstance(ver, bool) or ver not in SUPPORTED_VERSIONS:
        raise PatternError(
            f"key 'version'{_where(source)} is {ver!r}; supported versions: {', '.join(map(str, SUPPORTED_VERSIONS))}"
        )
    unknown = sorted(set(d) - _KEYS)
    if unknown:
        raise PatternError(f"unknown key {unknown[0]!r}{_where(source)}; allowed keys: {', '.join(sorted(_KEYS))}")
    for key in ("vertices", "creases", "kinds"):
        if key not in d:
            raise PatternError(f"missing key {key!r}{_where(source)}")
    units = d.get("units", "mm")
    if not isinstance(units, str) or units not in UNITS_MM:
        raise PatternError(f"key 'units'{_where(source)} is {units!r}; allowed: {', '.join(UNITS_MM)}")
    name = d.get("name", "")
    if not isinstance(name, str):
        raise PatternError(f"key 'name'{_where(source)} must be a string; got {name!r}")
    verts = _array(d, "vertices", source, 2, "numbers") * UNITS_MM[units]
    creases = _array(d, "creases", source, 2, "integers")
    kinds = d["kinds"]
    if not isinstance(kinds, list) or not all(isinstance(k, str) for k in kinds):
        raise PatternError(f"key 'kinds'{_where(source)} must be a list of strings")
    ta = None
    if "target_angles_deg" in d and d["target_angles_deg"] is not None:
        ta = _angle_list(d["target_angles_deg"], "target_angles_deg", source, len(creases))
    seams: list[Seam] = []
    raw_seams = d.get("seams", []) or []
    if not isinstance(raw_seams, list):
        raise PatternError(f"key 'seams'{_where(source)} must be a list of objects")
    for q, s in enumerate(raw_seams):
        if not isinstance(s, dict) or not {"a", "b"} <= set(s) or set(s) - _SEAM_KEYS:
            raise PatternError(
                f"seams[{q}]{_where(source)} must be an object with keys a, b and optional kind, "
                f"target_angle_deg; got {s!r}"
            )
        for key in ("a", "b"):
            if isinstance(s[key], bool) or not isinstance(s[key], int):
                raise PatternError(f"seams[{q}].{key}{_where(source)} must be a crease index; got {s[key]!r}")
        for key in ("a", "b"):
            if not 0 <= s[key] <= MAX_INDEX:
                raise PatternError(f"seams[{q}].{key}{_where(source)} = {s[key]} is not a crease index")
        t = s.get("target_angle_deg")
        if t is not None and (isinstance(t, bool) or not isinstance(t, (int, float)) or not -180.0 <= t <= 180.0):
            raise PatternError(
                f"seams[{q}].target_angle_deg{_where(source)} must be a number of degrees in -180..180 or null; "
                f"got {t!r}"
            )
        kind = s.get("kind", "valley")
        if not isinstance(kind, str):
            raise PatternError(f"seams[{q}].kind{_where(source)} must be a crease kind (text); got {kind!r}")
        seams.append(
            Seam(int(s["a"]), int(s["b"]), kind, math.radians(t) if t is not None else math.nan)
        )
    try:
        return CreasePattern(verts, creases, kinds, ta, seams=seams, name=name, tol=tol, validate=validate)
    except PatternError as exc:
        raise PatternError(f"{source}: {exc}" if source else str(exc)) from None


def dumps_pattern(pattern: CreasePattern, *, indent: int | None = 1) -> str:
    """JSON text of ``pattern`` (deterministic key order)."""
    return json.dumps(pattern_to_dict(pattern), indent=indent, allow_nan=False) + "\n"


def loads_pattern(text: str, *, source: str = "", tol: Tolerances = DEFAULT_TOL) -> CreasePattern:
    """Parse JSON text into a pattern; syntax errors name ``source``, line and column."""

    def _no_const(c: str) -> None:
        raise PatternError(f"pattern JSON{_where(source)} contains {c}, which is not valid JSON; use null")

    try:
        data = json.loads(text, parse_constant=_no_const)
    except json.JSONDecodeError as exc:
        raise PatternError(
            f"pattern file{_where(source)} is not valid JSON: {exc.msg} at line {exc.lineno} column {exc.colno}"
        ) from None
    except RecursionError:
        raise PatternError(
            f"pattern file{_where(source)} nests arrays or objects too deeply to read; at most {MAX_NESTING} levels"
        ) from None
    except ValueError as exc:  # e.g. an integer literal with more digits than Python converts
        raise PatternError(f"pattern file{_where(source)} is not a readable pattern: {exc}") from None
    if nesting_depth(data) > MAX_NESTING:
        raise PatternError(
            f"pattern file{_where(source)} nests arrays or objects more than {MAX_NESTING} levels deep"
        )
    return pattern_from_dict(data, source=source, tol=tol)


def read_json(path: str | Path, *, tol: Tolerances = DEFAULT_TOL) -> CreasePattern:
    """Read a pattern JSON file."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise PatternError(f"pattern file {str(p)!r} does not exist") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise PatternError(f"cannot read pattern file {str(p)!r}: {exc}") from None
    return loads_pattern(text, source=str(p), tol=tol)


def write_json(pattern: CreasePattern, path: str | Path) -> Path:
    """Write ``pattern`` as JSON through a temporary file renamed into place."""
    p = Path(path)
    data = dumps_pattern(pattern).encode("utf-8")
    try:
        p.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=p.parent)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
            os.replace(tmp, p)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise
    except OSError as exc:
        raise ExportError(f"cannot write pattern file {str(p)!r}: {exc}") from None
    return p
