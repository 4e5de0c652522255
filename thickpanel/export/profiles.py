"""DXF cut profiles per part for waterjet, laser or router (ezdxf), in the flat machining pose.

Layers: ``OUTLINE`` (closed polyline of the blank, notches included), ``HOLES`` (circles),
``BEVEL`` and ``BEVEL-BOTTOM`` (where each cut plane meets the top and the bottom face). Units mm
(``$INSUNITS`` = 4). Pins have no profile (turned parts).
"""

from __future__ import annotations

import ezdxf
import numpy as np

from ..solids import Part
from .dxf_doc import dxf_document_bytes, new_dxf_document

__all__ = ["LAYERS", "profile_dxf_bytes"]

LAYERS = ("OUTLINE", "HOLES", "BEVEL", "BEVEL-BOTTOM")


def profile_dxf_bytes(part: Part) -> bytes | None:
    """DXF (R2010, mm) of one part's cut profile, or None for parts without an outline."""
    if part.outline is None:
        return None
    shift = part.flat_location[:2, 3]
    doc = new_dxf_document()  # ezdxf.new() orders objects by the hash seed
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
    return dxf_document_bytes(doc)
