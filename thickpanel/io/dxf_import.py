"""DXF import: LINE and LWPOLYLINE entities whose layer name gives the crease kind.

Default layer names are the plain kind words (``mountain``, ``valley``, ``border``, ``cut``,
``flat``), matched without regard to case. Pass ``layers={"FOLD-M": "mountain", ...}`` to use
other names (the mapping replaces the defaults; merge with :data:`DEFAULT_LAYERS` to extend them).
Entities on other layers are ignored and counted in the log. Coordinates are converted to mm from
the drawing's ``$INSUNITS`` header (unitless drawings are taken as mm). Z coordinates are dropped:
a crease pattern is flat. Block references (INSERT) are expanded. Creases on fold layers
(mountain, valley, flat) must be straight: curves there (ARC, CIRCLE, ELLIPSE, SPLINE, polyline arc
segments) are refused, naming entity type, layer and count. On border and cut layers curves are
flattened to chords within :data:`CHORD_MM`. Text, dimensions and other annotation are skipped.
"""

from __future__ import annotations

import logging
from collections.abc import Iterator, Mapping
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import PatternError
from ..pattern import KINDS, CreasePattern
from ..tolerances import DEFAULT_TOL, Tolerances

__all__ = ["DEFAULT_LAYERS", "INSUNITS_MM", "CHORD_MM", "ANNOTATION_TYPES", "read_dxf"]

log = logging.getLogger("thickpanel")

DEFAULT_LAYERS: dict[str, str] = {k: k for k in KINDS}

# $INSUNITS code -> (millimetres per drawing unit, name); codes from the DXF reference
# (AutoCAD DXF Reference, HEADER section, $INSUNITS).
INSUNITS_MM: dict[int, tuple[float, str]] = {
    0: (1.0, "unitless (taken as mm)"),
    1: (25.4, "inches"),
    2: (304.8, "feet"),
    4: (1.0, "millimetres"),
    5: (10.0, "centimetres"),
    6: (1000.0, "metres"),
    8: (25.4e-6, "microinches"),
    9: (0.0254, "mils"),
    10: (914.4, "yards"),
    13: (1e-3, "microns"),
    14: (100.0, "decimetres"),
}


def read_dxf(
    path: str | Path,
    layers: Mapping[str, str] | None = None,
    *,
    split: bool = True,
    name: str | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Read a crease pattern from the model space of a DXF drawing.

    Parameters
    ----------
    path : str or Path
    layers : mapping of layer name -> crease kind, optional
        Defaults to :data:`DEFAULT_LAYERS`. Matching ignores case.
    split : bool
        Split lines at crossings and T-junctions (see :func:`thickpanel.segments.pattern_from_segments`).
    name : str, optional
        Pattern name; defaults to the file stem.
    tol : Tolerances

    Returns
    -------
    CreasePattern
        Coordinates in mm.
    """
    import ezdxf
    from ezdxf.lldxf.const import DXFError

    from ..segments import pattern_from_segments

    p = Path(path)
    mapping = dict(DEFAULT_LAYERS if layers is None else layers)
    for layer, kind in mapping.items():
        if not isinstance(kind, str):
            raise PatternError(f"layer mapping {layer!r} -> {kind!r}: the kind must be text; valid kinds: "
                               f"{', '.join(KINDS)}")
        if kind not in KINDS:
            raise PatternError(f"layer mapping {layer!r} -> {kind!r}: unknown kind; valid kinds: {', '.join(KINDS)}")
    lookup = {str(k).lower(): v for k, v in mapping.items()}
    if not p.exists():
        raise PatternError(f"DXF file {str(p)!r} does not exist")
    try:
        doc = ezdxf.readfile(str(p))
    except (OSError, DXFError, UnicodeDecodeError, ValueError) as exc:
        raise PatternError(f"cannot read DXF file {str(p)!r}: {type(exc).__name__}: {exc}") from None
    except Exception as exc:  # ezdxf raises bare StopIteration, KeyError ... on truncated files
        raise PatternError(f"cannot read DXF file {str(p)!r}: the file is truncated or malformed "
                           f"({type(exc).__name__})") from None
    try:
        code = int(doc.header.get("$INSUNITS", 0) or 0)
    except (TypeError, ValueError):
        code = -1
    if code not in INSUNITS_MM:
        raise PatternError(
            f"DXF file {str(p)!r} has $INSUNITS = {code}; supported codes: "
            + ", ".join(f"{c} ({n})" for c, (_, n) in INSUNITS_MM.items())
        )
    scale, unit_name = INSUNITS_MM[code]
    segs: list[tuple[tuple[float, float], tuple[float, float]]] = []
    kinds: list[str] = []
    ignored: dict[str, int] = {}
    refused: dict[tuple[str, str], int] = {}
    seen_layers: set[str] = set()
    for e in _entities(doc.modelspace(), str(p)):
        etype = e.dxftype()
        if etype in ANNOTATION_TYPES:
            continue
        layer = str(e.dxf.layer)
        seen_layers.add(layer)
        found_kind = lookup.get(layer.lower())
        if found_kind is None:
            ignored[layer] = ignored.get(layer, 0) + 1
            continue
        kind = found_kind
        try:
            pts_list = _entity_polylines(e, kind, str(p), layer)
        except PatternError:
            raise
        except Exception as exc:  # an entity ezdxf cannot evaluate (degenerate spline ...)
            raise PatternError(f"DXF file {str(p)!r}: {etype} #{e.dxf.handle} on layer {layer!r} cannot be "
                               f"read ({type(exc).__name__}: {exc})") from None
        if pts_list is None:
            refused[(etype, layer)] = refused.get((etype, layer), 0) + 1
            continue
        for xy in pts_list:
            for q in range(len(xy) - 1):
                segs.append((xy[q], xy[q + 1]))
                kinds.append(kind)
    if refused:
        items = "; ".join(f"{n} {t} on layer {lay!r}" for (t, lay), n in sorted(refused.items()))
        raise PatternError(
            f"DXF file {str(p)!r} has curved entities on fold layers ({items}); creases must be straight "
            "lines (LINE, LWPOLYLINE or POLYLINE without arcs). Curves are read only on border and cut "
            f"layers, flattened to chords within {CHORD_MM:g} mm"
        )
    if ignored:
        log.info("DXF %s: ignored entities on layers %s", p, ignored)
    if not segs:
        found = ", ".join(sorted(seen_layers)) or "none"
        raise PatternError(
            f"DXF file {str(p)!r} has no LINE or LWPOLYLINE on a usable layer; layers with lines: {found}; "
            f"usable layer names: {', '.join(sorted(mapping))} (pass layers={{name: kind}} to map others)"
        )
    arr = np.asarray(segs, dtype=np.float64) * scale
    bad = np.nonzero(~np.all(np.isfinite(arr.reshape(-1, 4)), axis=1))[0]
    if len(bad):
        raise PatternError(f"DXF file {str(p)!r}: segment {int(bad[0])} has a non-finite coordinate "
                           f"{arr[int(bad[0])].tolist()}")
    log.info("DXF %s: %d segments, units %s", p, len(arr), unit_name)
    try:
        return pattern_from_segments(arr, kinds, split=split, name=p.stem if name is None else name, tol=tol)
    except PatternError as exc:
        raise PatternError(f"{str(p)!r}: {exc}") from None


#: Chord tolerance, mm in drawing units scaled to mm, for curves (ARC, CIRCLE, ELLIPSE, SPLINE,
#: arc segments of polylines) on border and cut layers: the flattened outline stays within this
#: distance of the curve. 0.05 mm is below common laser- and water-jet kerf widths [practice].
CHORD_MM = 0.05

#: Entity types that carry no crease geometry (text, dimensions, hatches, points ...); skipped.
ANNOTATION_TYPES = frozenset(
    {"TEXT", "MTEXT", "DIMENSION", "ATTRIB", "ATTDEF", "POINT", "HATCH", "LEADER", "MLEADER", "MULTILEADER",
     "VIEWPORT", "IMAGE", "WIPEOUT", "SOLID", "TRACE", "3DFACE", "TOLERANCE", "XLINE", "RAY"}
)
_CURVES = frozenset({"ARC", "CIRCLE", "ELLIPSE", "SPLINE"})
_MAX_BLOCK_DEPTH = 8
_STRAIGHT_KINDS = ("mountain", "valley", "flat")


def _entities(space: Any, path: str, depth: int = 0) -> Iterator[Any]:
    """Entities of ``space`` with block references (INSERT) expanded into their placed contents."""
    for e in space:
        if e.dxftype() == "INSERT":
            if depth >= _MAX_BLOCK_DEPTH:
                raise PatternError(f"DXF file {path!r}: block references nest more than {_MAX_BLOCK_DEPTH} deep")
            try:
                parts = list(e.virtual_entities())
            except Exception as exc:
                raise PatternError(f"DXF file {path!r}: block reference #{e.dxf.handle} cannot be expanded "
                                   f"({type(exc).__name__}: {exc})") from None
            yield from _entities(parts, path, depth + 1)
        else:
            yield e


def _entity_polylines(e: Any, kind: str, path: str, layer: str) -> list[list[tuple[float, float]]] | None:
    """Point runs of one entity in drawing units; None for a curve on a fold layer (refused by the caller).

    Raises PatternError for an entity type that is neither geometry nor annotation.
    """
    etype = e.dxftype()
    curved_ok = kind not in _STRAIGHT_KINDS
    if etype == "LINE":
        s, t = e.dxf.start, e.dxf.end
        return [[(float(s[0]), float(s[1])), (float(t[0]), float(t[1]))]]
    if etype in ("LWPOLYLINE", "POLYLINE"):
        if etype == "POLYLINE" and not e.is_2d_polyline:
            if e.is_3d_polyline:
                xy = [(float(v[0]), float(v[1])) for v in e.points()]
                if e.is_closed and len(xy) > 2:
                    xy.append(xy[0])
                return [xy]
            raise PatternError(f"DXF file {path!r}: POLYLINE #{e.dxf.handle} on layer {layer!r} is a mesh or "
                               "face polyline; creases must be lines")
        has_arc = _has_bulge(e)
        if has_arc and not curved_ok:
            return None
        if has_arc:
            return [[(float(v[0]), float(v[1])) for v in e.flattening(CHORD_MM)]]
        if etype == "LWPOLYLINE":
            xy = [(float(x), float(y)) for x, y, _ in e.get_points(format="xyb")]
            closed = bool(e.closed)
        else:
            xy = [(float(v[0]), float(v[1])) for v in e.points()]
            closed = bool(e.is_closed)
        if closed and len(xy) > 2:
            xy.append(xy[0])
        return [xy]
    if etype in _CURVES:
        if not curved_ok:
            return None
        return [[(float(v[0]), float(v[1])) for v in e.flattening(CHORD_MM)]]
    raise PatternError(f"DXF file {path!r}: entity type {etype} (#{e.dxf.handle}) on layer {layer!r} is not "
                       "supported; use LINE, LWPOLYLINE or POLYLINE (curves on border and cut layers only)")


def _has_bulge(e: Any) -> bool:
    if e.dxftype() == "LWPOLYLINE":
        pts = list(e.get_points(format="xyb"))
        return any(abs(b) > 0 for _, _, b in pts[:-1]) or bool(e.closed and pts and abs(pts[-1][2]) > 0)
    return any(abs(v.dxf.get("bulge", 0.0)) > 0 for v in e.vertices)
