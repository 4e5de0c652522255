"""DXF cut profiles per part for waterjet, laser or router (ezdxf), in the flat machining pose.

Layers: ``OUTLINE`` (closed polyline of the blank, notches included), ``HOLES`` (circles),
``BEVEL`` and ``BEVEL-BOTTOM`` (where each cut plane meets the top and the bottom face). Units mm
(``$INSUNITS`` = 4). Pins have no profile (turned parts).
"""

from __future__ import annotations

import io
import re

import ezdxf
import numpy as np

from ..solids import Part

__all__ = ["LAYERS", "profile_dxf_bytes"]

LAYERS = ("OUTLINE", "HOLES", "BEVEL", "BEVEL-BOTTOM")
_STAMP = re.compile(r"(\d+\.\d+\.\d+\w*) @ \d{4}-\d\d-\d\dT[\d:.]+[+-]\d\d:\d\d")


def profile_dxf_bytes(part: Part) -> bytes | None:
    """DXF (R2010, mm) of one part's cut profile, or None for parts without an outline."""
    if part.outline is None:
        return None
    shift = part.flat_location[:2, 3]
    doc = ezdxf.new("R2010", setup=False)
    doc.units = ezdxf.units.MM
    doc.header["$MEASUREMENT"] = 1
    for layer in LAYERS:
        doc.layers.add(layer)
    msp = doc.modelspace()
    pts = [tuple(map(float, p + shift)) for p in np.asarray(part.outline)]
    msp.add_lwpolyline(pts, close=True, dxfattribs={"layer": "OUTLINE"})
    for x, y, d in part.holes:
        msp.add_circle((x + shift[0], y + shift[1]), 0.5 * d, dxfattribs={"layer": "HOLES"})
    for layer, seg in part.bevels:
        a, b = (seg + shift).tolist()
        msp.add_line(tuple(a), tuple(b), dxfattribs={"layer": layer})
    buf = io.StringIO()
    old = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True  # no time stamps or random GUIDs
    try:
        doc.write(buf)
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = old
    # ezdxf stamps its version with the write time; fix it so equal input gives equal bytes
    text = _STAMP.sub(r"\1 @ 2000-01-01T00:00:00+00:00", buf.getvalue())
    return text.encode("utf-8")
