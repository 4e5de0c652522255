"""What a shop receives per part: its machining pose, one fused solid, the real cut outline.

- :func:`shop_location` is the pose of a part's own files (per-part STEP and STL, 3MF plates):
  panels lie in their flat machining pose (``Part.flat_location``); a pin lies along +x with its
  box corner at the origin, whatever the direction of its hinge line in the pattern.
- :func:`one_piece` glue-fuses the touching solids of a part (slab, standoffs, barrels) into one
  solid, the form a machinist or printer takes as one piece (``BRepAlgoAPI_Fuse`` with
  ``BOPAlgo_GlueShift``, then ``ShapeUpgrade_UnifySameDomain``; PERF-NOTES section 2 found the
  glue fuse the fast path). The assembly STEP keeps the unfused, shared prototypes (fast).
- :func:`cut_outline` is the blank a 2D cutter cuts: the notched outline clipped by every cut
  plane of the slab at the face where the plane removes least, so vertex reliefs (vertical cut
  planes) are in it and bevels are drawn as lines on top of it.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from OCP.BOPAlgo import BOPAlgo_GlueEnum
from OCP.BRepAdaptor import BRepAdaptor_Curve, BRepAdaptor_Surface
from OCP.BRepAlgoAPI import BRepAlgoAPI_Fuse
from OCP.BRepGProp import BRepGProp
from OCP.BRepTools import BRepTools, BRepTools_WireExplorer
from OCP.GeomAbs import GeomAbs_Line, GeomAbs_Plane
from OCP.GProp import GProp_GProps
from OCP.ShapeUpgrade import ShapeUpgrade_UnifySameDomain
from OCP.TopAbs import TopAbs_FACE, TopAbs_REVERSED
from OCP.TopExp import TopExp_Explorer
from OCP.TopoDS import TopoDS, TopoDS_Shape
from OCP.TopTools import TopTools_ListOfShape

from .. import occ
from ..errors import ExportError
from ..geometry2d import polygon_area
from ..typing import FloatArray

__all__ = ["shop_location", "one_piece", "cut_outline", "clip_half_plane", "face_outline", "clear_cache",
           "blank_outline"]

_FUSED: dict[int, tuple[Any, TopoDS_Shape]] = {}


def clear_cache() -> None:
    """Forget the fused solids kept between the formats of one export."""
    _FUSED.clear()


def _pin_pose(part: Any) -> FloatArray | None:
    """(4, 4) pose laying a one-rod pin along +x (box corner at the origin), or None."""
    if part.kind != "pin" or len(part.pieces) != 1 or part.pieces[0][0][0] != "rod":
        return None
    _, proto, m = part.pieces[0]
    lo, hi = occ.bbox(proto)  # the rod prototype runs along its local z from 0 to its length
    r = 0.5 * float(hi[0] - lo[0])
    lay = np.array([[0.0, 0.0, 1.0, 0.0],   # local z (pin axis) -> +x
                    [0.0, 1.0, 0.0, r],
                    [-1.0, 0.0, 0.0, r],
                    [0.0, 0.0, 0.0, 1.0]])
    lay[0, 3] = -float(lo[2])
    return lay @ np.linalg.inv(np.asarray(m, dtype=float))


def shop_location(part: Any) -> FloatArray:
    """(4, 4) float: flat sheet frame -> the pose of the part's own files.

    Pins (one rod) lie along +x from x = 0 to their length, centred on y = z = radius; every
    other part takes ``Part.flat_location`` (bounding-box corner at the origin, sheet plane
    horizontal).
    """
    pose = _pin_pose(part)
    return part.flat_location if pose is None else pose


def one_piece(part: Any) -> TopoDS_Shape:
    """The part's solids glue-fused into one solid, in the flat sheet frame.

    Solids that do not touch the rest (a barrel standing off its slab) stay separate solids of
    the returned compound, so the part is never silently changed; ``len(occ.solids_of(...))``
    tells them apart.

    Raises
    ------
    ExportError
        When the fuse itself fails.
    """
    hit = _FUSED.get(id(part))
    if hit is not None and hit[0] is part:
        return hit[1]
    shape = _fuse(part)
    _FUSED[id(part)] = (part, shape)
    return shape


def _fuse(part: Any) -> TopoDS_Shape:
    shapes = [occ.moved(proto, m) for _, proto, m in part.pieces]
    if len(shapes) == 1:
        return shapes[0]
    args, tools = TopTools_ListOfShape(), TopTools_ListOfShape()
    args.Append(shapes[0])
    for s in shapes[1:]:
        tools.Append(s)
    fuse = BRepAlgoAPI_Fuse()
    fuse.SetArguments(args)
    fuse.SetTools(tools)
    fuse.SetGlue(BOPAlgo_GlueEnum.BOPAlgo_GlueShift)
    fuse.SetRunParallel(False)
    fuse.Build()
    if not fuse.IsDone():
        raise ExportError(f"part {part.name}: fusing its {len(shapes)} solids into one failed")
    unify = ShapeUpgrade_UnifySameDomain(fuse.Shape(), True, True, False)
    unify.Build()
    out = unify.Shape()
    solids = occ.solids_of(out)
    return solids[0] if len(solids) == 1 else out


def clip_half_plane(poly: FloatArray, normal: FloatArray, offset: float) -> FloatArray:
    """(k, 2) float, mm: ``poly`` clipped to ``normal . p <= offset`` (Sutherland-Hodgman).

    Exact for a single half-plane: the result is the polygon's part on the kept side, corners where
    the boundary line crosses its edges.
    """
    p = np.asarray(poly, dtype=float)
    n = np.asarray(normal, dtype=float)
    d = p @ n - offset
    out: list[FloatArray] = []
    for i in range(len(p)):
        j = (i + 1) % len(p)
        if d[i] <= 0:
            out.append(p[i])
        if (d[i] < 0 < d[j]) or (d[j] < 0 < d[i]):
            out.append(p[i] + (p[j] - p[i]) * (d[i] / (d[i] - d[j])))
    res = np.array(out) if out else np.zeros((0, 2))
    if len(res) > 1:  # drop repeated corners (a vertex on the line)
        keep = np.linalg.norm(res - np.roll(res, -1, axis=0), axis=1) > 1e-12
        res = res[keep]
    return res


def cut_outline(part: Any, slab: Any | None) -> FloatArray | None:
    """(k, 2) float, mm, flat sheet frame: the blank outline of a part, or None without one.

    The notched outline (``Part.outline``) clipped by each cut plane of ``slab`` (``n . x <=
    offset``) at whichever slab face (``z0`` or ``z1``) the plane keeps more of: a vertical plane
    (a vertex relief) cuts through, an inclined plane (a bevel) leaves the blank whole at its wider
    face.
    """
    if part.outline is None:
        return None
    poly = np.asarray(part.outline, dtype=float)
    if slab is None or not getattr(slab, "cuts", ()):
        return poly
    for c in slab.cuts:
        nrm = np.asarray(c.normal, dtype=float)
        nz = float(nrm[2])
        z = slab.z0 if nz * slab.z0 <= nz * slab.z1 else slab.z1  # the face the plane keeps most of
        if np.linalg.norm(nrm[:2]) < 1e-12:
            continue  # a plane parallel to the faces trims thickness, not the outline
        poly = clip_half_plane(poly, nrm[:2], float(c.offset) - nz * z)
    if len(poly) < 3 or abs(polygon_area(poly)) <= 0:
        raise ExportError(f"part {part.name}: its cut planes leave no outline")
    return poly


def _wire_points(face: Any, step: float) -> FloatArray:
    """(k, 2): the outer wire of a planar face as a polygon (curved edges sampled every ``step``)."""
    pts: list[tuple[float, float]] = []
    wex = BRepTools_WireExplorer(BRepTools.OuterWire_s(face), face)
    while wex.More():
        edge = wex.Current()
        c = BRepAdaptor_Curve(edge)
        a, b = c.FirstParameter(), c.LastParameter()
        if edge.Orientation() == TopAbs_REVERSED:
            a, b = b, a
        n = 1 if c.GetType() == GeomAbs_Line else max(2, int(abs(b - a) * 10 / step) + 2)
        for i in range(n):
            p = c.Value(a + (b - a) * i / n)
            pts.append((p.X(), p.Y()))
        wex.Next()
    poly = np.array(pts)
    if polygon_area(poly) < 0:
        poly = poly[::-1].copy()
    return poly


def face_outline(shape: TopoDS_Shape, heights: tuple[float, float], *, eps: float = 1e-6,
                 step: float = 0.5) -> tuple[FloatArray, float] | None:
    """The largest face of ``shape`` lying in a plane ``z = h`` for ``h`` in ``heights``.

    Returns
    -------
    (outline, area) or None
        Outline (k, 2) float, mm, counter-clockwise (outer wire; holes not included) and the face's
        area in mm^2 (holes subtracted, by ``BRepGProp``); None when no such face exists.
    """
    best: tuple[float, Any] | None = None
    ex = TopExp_Explorer(shape, TopAbs_FACE)
    while ex.More():
        f = TopoDS.Face_s(ex.Current())
        ex.Next()
        srf = BRepAdaptor_Surface(f)
        if srf.GetType() != GeomAbs_Plane:
            continue
        pl = srf.Plane()
        if abs(abs(pl.Axis().Direction().Z()) - 1.0) > 1e-9:
            continue
        if min(abs(pl.Location().Z() - h) for h in heights) > eps:
            continue
        props = GProp_GProps()
        BRepGProp.SurfaceProperties_s(f, props)
        if best is None or props.Mass() > best[0] + eps:
            best = (float(props.Mass()), f)
    if best is None:
        return None
    return _wire_points(best[1], step), best[0]


def blank_outline(part: Any, slab: Any | None) -> FloatArray | None:
    """(k, 2) float, mm, flat sheet frame: the outline a 2D cutter cuts for a panel part.

    The outer wire of the largest face of the part's one-piece solid (:func:`one_piece`) lying in
    its slab's top or bottom plane: the notched outline with its vertex reliefs and any in-plane
    tabs that the fuse joined to it, exactly the face of the part's STEP file. Without a slab, or
    when no such face exists, :func:`cut_outline`.
    """
    if part.outline is None:
        return None
    if slab is not None:
        hit = face_outline(one_piece(part), (float(slab.z0), float(slab.z1)))
        if hit is not None:
            return hit[0]
    return cut_outline(part, slab)
