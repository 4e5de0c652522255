"""DXF import: LINE and LWPOLYLINE entities whose layer name gives the crease kind.

Default layer names are the plain kind words (``mountain``, ``valley``, ``border``, ``cut``,
``flat``), matched without regard to case. Pass ``layers={"FOLD-M": "mountain", ...}`` to use
other names (the mapping replaces the defaults; merge with :data:`DEFAULT_LAYERS` to extend them).
Entities on other layers are ignored and counted in the log. Coordinates are converted to mm from
the drawing's ``$INSUNITS`` header (unitless drawings are taken as mm). Z coordinates are dropped:
a crease pattern is flat. Arc segments (LWPOLYLINE bulges) are refused: creases are straight.
"""

from __future__ import annotations

import logging
from collections.abc import Mapping
from pathlib import Path

import numpy as np

from ..errors import PatternError
from ..pattern import KINDS, CreasePattern
from ..tolerances import DEFAULT_TOL, Tolerances

__all__ = ["DEFAULT_LAYERS", "INSUNITS_MM", "read_dxf"]

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
    from ezdxf.entities import LWPolyline
    from ezdxf.lldxf.const import DXFError

    from ..segments import pattern_from_segments

    p = Path(path)
    mapping = dict(DEFAULT_LAYERS if layers is None else layers)
    for layer, kind in mapping.items():
        if kind not in KINDS:
            raise PatternError(f"layer mapping {layer!r} -> {kind!r}: unknown kind; valid kinds: {', '.join(KINDS)}")
    lookup = {str(k).lower(): v for k, v in mapping.items()}
    if not p.exists():
        raise PatternError(f"DXF file {str(p)!r} does not exist")
    try:
        doc = ezdxf.readfile(str(p))
    except (OSError, DXFError, UnicodeDecodeError, ValueError) as exc:
        raise PatternError(f"cannot read DXF file {str(p)!r}: {type(exc).__name__}: {exc}") from None
    code = int(doc.header.get("$INSUNITS", 0) or 0)
    if code not in INSUNITS_MM:
        raise PatternError(
            f"DXF file {str(p)!r} has $INSUNITS = {code}; supported codes: "
            + ", ".join(f"{c} ({n})" for c, (_, n) in INSUNITS_MM.items())
        )
    scale, unit_name = INSUNITS_MM[code]
    segs: list[tuple[tuple[float, float], tuple[float, float]]] = []
    kinds: list[str] = []
    ignored: dict[str, int] = {}
    seen_layers: set[str] = set()
    for e in doc.modelspace():
        etype = e.dxftype()
        if etype not in ("LINE", "LWPOLYLINE"):
            continue
        layer = str(e.dxf.layer)
        seen_layers.add(layer)
        found_kind = lookup.get(layer.lower())
        if found_kind is None:
            ignored[layer] = ignored.get(layer, 0) + 1
            continue
        kind = found_kind
        if etype == "LINE":
            s, t = e.dxf.start, e.dxf.end
            segs.append(((s[0], s[1]), (t[0], t[1])))
            kinds.append(kind)
        else:
            assert isinstance(e, LWPolyline)
            pts = list(e.get_points(format="xyb"))
            if any(abs(b) > 0 for _, _, b in pts[:-1]) or (e.closed and pts and abs(pts[-1][2]) > 0):
                raise PatternError(
                    f"DXF file {str(p)!r}: LWPOLYLINE #{e.dxf.handle} on layer {layer!r} has an arc segment "
                    "(bulge); creases must be straight lines"
                )
            xy = [(x, y) for x, y, _ in pts]
            if e.closed and len(xy) > 2:
                xy.append(xy[0])
            for q in range(len(xy) - 1):
                segs.append((xy[q], xy[q + 1]))
                kinds.append(kind)
    if ignored:
        log.info("DXF %s: ignored entities on layers %s", p, ignored)
    if not segs:
        found = ", ".join(sorted(seen_layers)) or "none"
        raise PatternError(
            f"DXF file {str(p)!r} has no LINE or LWPOLYLINE on a usable layer; layers with lines: {found}; "
            f"usable layer names: {', '.join(sorted(mapping))} (pass layers={{name: kind}} to map others)"
        )
    arr = np.asarray(segs, dtype=np.float64) * scale
    log.info("DXF %s: %d segments, units %s", p, len(arr), unit_name)
    try:
        return pattern_from_segments(arr, kinds, split=split, name=p.stem if name is None else name, tol=tol)
    except PatternError as exc:
        raise PatternError(f"{str(p)!r}: {exc}") from None
