"""DXF cut profiles per part for waterjet, laser or router (ezdxf), in the flat machining pose.

Layers: ``OUTLINE`` (closed polyline of the blank: notches and vertex reliefs included, the same
outline as the slab of the part's STEP file), ``HOLES`` (circles), ``BEVEL`` and ``BEVEL-BOTTOM``
(where each inclined cut plane meets the top and the bottom face), ``LABEL`` (part id, thickness,
material), ``NOTES`` (each bevel's angle from the face normal and the face it is cut from; the ISO
286-2 limit deviations of every hole and of the pin bores in the part's barrels). Units mm
(``$INSUNITS`` = 4). Pins have no profile (turned parts).
"""

from __future__ import annotations

from typing import Any

import ezdxf
import numpy as np

from hinges.fits import fit as iso_fit

from ..errors import ThickpanelError
from ..geometry2d import polygon_area
from ..pattern import pid
from ..solids import Part
from ..typing import FloatArray
from .dxf_doc import dxf_document_bytes, new_dxf_document
from .shop import blank_outline

__all__ = ["LAYERS", "pin_fits", "profile_dxf_bytes", "fit_text"]

LAYERS = ("OUTLINE", "HOLES", "BEVEL", "BEVEL-BOTTOM", "LABEL", "NOTES")


def pin_fits(parts: Any) -> dict[float, str]:
    """Pin diameter (mm) -> ISO 286 fit name (``H7/g6``) of the machined pins of a part set."""
    out: dict[float, str] = {}
    for p in parts:
        f = str(p.attrs.get("fit", "")) if p.kind == "pin" else ""
        if f and p.attrs.get("process", "machined") == "machined" and p.pins:
            out.setdefault(round(float(p.pins[0]), 6), f)
    return out


def fit_text(diameter: float, fit_name: str, *, hole: bool) -> str:
    """``d1.5 H7 +0.010/+0.000`` (hole) or ``d1.5 g6 -0.002/-0.008`` (pin): ISO 286-2 limits, mm.

    A size outside the fit table gives the nominal diameter and the class alone.
    """
    cls = fit_name.split("/")[0 if hole else 1]
    try:
        f = iso_fit(fit_name, diameter)
    except ThickpanelError:
        return f"d{diameter:g} {cls} (size outside the ISO 286 table)"
    lo, hi = f.hole if hole else f.shaft
    return f"d{diameter:g} {cls} {hi - diameter:+.3f}/{lo - diameter:+.3f}"


def _lines(poly: FloatArray, cut: Any, z: float) -> FloatArray | None:
    """(2, 2): where plane ``cut`` meets the face at height ``z`` inside ``poly``, or None."""
    n = np.asarray(cut.normal, dtype=float)
    nn, c = n[:2], float(cut.offset) - n[2] * z
    vals = poly @ nn - c
    k = len(poly)
    hits = [poly[i] + vals[i] / (vals[i] - vals[(i + 1) % k]) * (poly[(i + 1) % k] - poly[i])
            for i in range(k) if (vals[i] < 0) != (vals[(i + 1) % k] < 0)]
    if len(hits) < 2:
        return None
    d = np.array([-nn[1], nn[0]])
    hs = sorted(hits, key=lambda p: float(p @ d))
    return np.array([hs[0], hs[-1]])


def profile_dxf_bytes(part: Part, slab: Any = None, fits: dict[float, str] | None = None
                      ) -> bytes | None:
    """DXF (R2010, mm) of one part's cut profile, or None for parts without an outline.

    Parameters
    ----------
    part : Part
    slab : Slab, optional
        The part's slab (panels): its cut planes give the vertex reliefs of the outline and the
        bevel lines; without it the part's own outline and bevel lines are drawn.
    fits : dict, optional
        Pin diameter (mm) -> ISO 286 fit name (:func:`pin_fits`); holes and pin bores of those
        diameters are annotated with their limit deviations.
    """
    if part.outline is None:
        return None
    fits = fits or {}
    shift = part.flat_location[:2, 3]
    doc = new_dxf_document()  # ezdxf.new() orders objects by the hash seed
    doc.units = ezdxf.units.MM
    doc.header["$MEASUREMENT"] = 1
    for layer in LAYERS:
        doc.layers.add(layer)
    msp = doc.modelspace()
    outline = blank_outline(part, slab)
    assert outline is not None
    pts = [tuple(map(float, p + shift)) for p in outline]
    msp.add_lwpolyline(pts, close=True, dxfattribs={"layer": "OUTLINE"})
    size = max(2.0, 0.04 * float(np.ptp(outline, axis=0).max()))  # text height, mm
    bonded = part.attrs.get("bonded", ())
    if bonded:  # a backing cut sheet: where each plate is bonded, with its id
        doc.layers.add("BONDED")
        for panel, poly in bonded:
            q = np.asarray(poly, dtype=float) + shift
            msp.add_lwpolyline([tuple(map(float, x)) for x in q], close=True, dxfattribs={"layer": "BONDED"})
            span = float(np.ptp(q, axis=0).min())
            msp.add_text(pid(int(panel)), height=max(0.5, min(0.5 * size, 0.25 * span)),
                         dxfattribs={"layer": "BONDED"}).set_placement(
                tuple(map(float, q.mean(axis=0))), align=ezdxf.enums.TextEntityAlignment.MIDDLE_CENTER)
    lo = outline.min(axis=0) + shift
    centre = outline.mean(axis=0) + shift
    label = f"{part.name}  t = {part.thickness:g} mm"
    if part.material:
        label += f"  {part.material}"
    msp.add_text(label, height=size, dxfattribs={"layer": "LABEL"}).set_placement(
        tuple(map(float, centre)), align=ezdxf.enums.TextEntityAlignment.MIDDLE_CENTER)
    notes: list[str] = []
    for x, y, d in part.holes:
        msp.add_circle((x + shift[0], y + shift[1]), 0.5 * d, dxfattribs={"layer": "HOLES"})
        f = fits.get(round(float(d), 6))
        if f:
            msp.add_text(f"HOLE {fit_text(d, f, hole=True)}", height=0.5 * size,
                         dxfattribs={"layer": "NOTES", "insert": (x + shift[0] + d,
                                                                  y + shift[1] + d)})
    if slab is not None:
        for c in slab.cuts:
            n = np.asarray(c.normal, dtype=float)
            if abs(n[2]) < 1e-9 or np.linalg.norm(n[:2]) < 1e-12:
                continue  # vertical planes are reliefs in the outline; horizontal ones trim z
            ang = float(np.degrees(np.arcsin(min(1.0, abs(n[2]) / np.linalg.norm(n)))))
            side = "top" if n[2] > 0 else "bottom"
            for layer, z in (("BEVEL", slab.z1), ("BEVEL-BOTTOM", slab.z0)):
                seg = _lines(outline, c, z)
                if seg is None:
                    continue
                a, b = (seg + shift).tolist()
                msp.add_line(tuple(a), tuple(b), dxfattribs={"layer": layer})
                if layer == ("BEVEL" if side == "top" else "BEVEL-BOTTOM"):
                    mid = 0.5 * (np.asarray(a) + np.asarray(b))
                    msp.add_text(f"BEVEL {ang:.1f} deg from vertical, cut from the {side} face "
                                 f"({c.label})", height=0.5 * size,
                                 dxfattribs={"layer": "NOTES", "insert": tuple(map(float, mid))})
    else:
        for layer, seg in part.bevels:
            a, b = (seg + shift).tolist()
            msp.add_line(tuple(a), tuple(b), dxfattribs={"layer": layer})
    for d in sorted(set(round(float(x), 6) for x in part.pins)):
        f = fits.get(d)
        if f:
            notes.append(f"PIN BORES (barrels) {fit_text(d, f, hole=True)} mm, pins "
                         f"{fit_text(d, f, hole=False)} mm, fit {f} (ISO 286-2)")
    notes.append(f"outline area {abs(polygon_area(outline)):.2f} mm2; units mm")
    for i, text in enumerate(notes):
        msp.add_text(text, height=0.5 * size, dxfattribs={
            "layer": "NOTES", "insert": (float(lo[0]), float(lo[1]) - (i + 1.5) * size)})
    return dxf_document_bytes(doc)
