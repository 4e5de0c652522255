"""Raw OCP helpers for the solid builder and the exporters (the fast paths of the CAD kernel).

Only :mod:`thickpanel.solids`, :mod:`thickpanel.export` and :mod:`hinges` import this module.
Everything here works on plain ``TopoDS_Shape`` objects and numpy arrays, never on
``cadquery.Workplane`` (an order of magnitude slower per solid). Lengths are mm, angles rad.

Fast paths used (measured in the project's performance notes):

- prisms: polygon wire -> face on a *given* ``gp_Pln`` -> ``MakePrism(..., Copy=False)``;
- hinge barrels: a 2D profile (clipped disk with an optional hole) swept along the hinge axis,
  built once per distinct size and re-used through locations (shared ``TShape``);
- trims: one multi-tool ``BRepAlgoAPI_Cut`` per panel, serial, no fuzzy value.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
from OCP.Bnd import Bnd_Box
from OCP.BRep import BRep_Builder, BRep_Tool
from OCP.BRepAlgoAPI import BRepAlgoAPI_Cut
from OCP.BRepBndLib import BRepBndLib
from OCP.BRepBuilderAPI import (
    BRepBuilderAPI_MakeEdge,
    BRepBuilderAPI_MakeFace,
    BRepBuilderAPI_MakePolygon,
    BRepBuilderAPI_MakeWire,
)
from OCP.BRepCheck import BRepCheck_Analyzer
from OCP.BRepGProp import BRepGProp
from OCP.BRepMesh import BRepMesh_IncrementalMesh
from OCP.BRepPrimAPI import BRepPrimAPI_MakePrism
from OCP.BRepTools import BRepTools
from OCP.GC import GC_MakeArcOfCircle
from OCP.gp import gp_Ax2, gp_Ax3, gp_Circ, gp_Dir, gp_Pln, gp_Pnt, gp_Trsf, gp_Vec
from OCP.GProp import GProp_GProps
from OCP.ShapeFix import ShapeFix_Face
from OCP.TopAbs import TopAbs_FACE, TopAbs_REVERSED, TopAbs_SOLID
from OCP.TopExp import TopExp_Explorer
from OCP.TopLoc import TopLoc_Location
from OCP.TopoDS import TopoDS, TopoDS_Compound, TopoDS_Shape
from OCP.TopTools import TopTools_ListOfShape

from .typing import FloatArray

__all__ = [
    "prism",
    "polygon_face",
    "prism_of_face",
    "cut_many",
    "half_space_box",
    "half_space_patch",
    "barrel_profile_prism",
    "cylinder_along_z",
    "location",
    "moved",
    "compound",
    "solids_of",
    "check_shape",
    "volume",
    "bbox",
    "mesh_arrays",
]


def _pnt(p: Sequence[float]) -> gp_Pnt:
    return gp_Pnt(float(p[0]), float(p[1]), float(p[2]))


def prism(polygon: FloatArray, z0: float, z1: float) -> TopoDS_Shape:
    """Right prism over a planar polygon.

    Parameters
    ----------
    polygon : (k, 2) float, mm
        Outline at height ``z0`` (either orientation; no repeated first point).
    z0, z1 : float, mm
        Bottom and top, ``z1 > z0``.

    Returns
    -------
    TopoDS_Shape
        A solid.
    """
    mk = BRepBuilderAPI_MakePolygon()
    for x, y in polygon:
        mk.Add(gp_Pnt(float(x), float(y), float(z0)))
    mk.Close()
    pln = gp_Pln(gp_Ax3(gp_Pnt(0.0, 0.0, float(z0)), gp_Dir(0.0, 0.0, 1.0)))
    face = BRepBuilderAPI_MakeFace(pln, mk.Wire(), True).Face()
    return BRepPrimAPI_MakePrism(face, gp_Vec(0.0, 0.0, float(z1 - z0)), False).Shape()


def polygon_face(polygon: FloatArray, z: float) -> TopoDS_Shape:
    """Planar face of a polygon at height ``z`` (plane given, so no plane search), mm."""
    mk = BRepBuilderAPI_MakePolygon()
    for x, y in polygon:
        mk.Add(gp_Pnt(float(x), float(y), float(z)))
    mk.Close()
    pln = gp_Pln(gp_Ax3(gp_Pnt(0.0, 0.0, float(z)), gp_Dir(0.0, 0.0, 1.0)))
    return BRepBuilderAPI_MakeFace(pln, mk.Wire(), True).Face()


def prism_of_face(face: TopoDS_Shape, height: float) -> TopoDS_Shape:
    """Extrude a face along +z by ``height`` mm (``Copy=False``)."""
    return BRepPrimAPI_MakePrism(face, gp_Vec(0.0, 0.0, float(height)), False).Shape()


def half_space_box(
    normal: Sequence[float], offset: float, centre: FloatArray, size: float
) -> TopoDS_Shape:
    """A large slab standing for the removed side ``normal . x > offset`` near ``centre``.

    Parameters
    ----------
    normal : (3,) float, unit
    offset : float, mm
    centre : (3,) float, mm
        A point near the part; the slab is a square of side ``2 size`` on the plane, centred at
        the projection of ``centre``, extruded ``size`` along ``normal``.
    size : float, mm
        Must exceed the part's diameter.
    """
    n = np.asarray(normal, dtype=float)
    n = n / np.linalg.norm(n)
    c = np.asarray(centre, dtype=float)
    origin = c - (float(n @ c) - offset) * n
    ref = np.array([1.0, 0.0, 0.0]) if abs(n[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    a = np.cross(n, ref)
    a /= np.linalg.norm(a)
    b = np.cross(n, a)
    corners = [origin + size * (sa * a + sb * b) for sa, sb in ((-1, -1), (1, -1), (1, 1), (-1, 1))]
    mk = BRepBuilderAPI_MakePolygon()
    for p in corners:
        mk.Add(_pnt(p))
    mk.Close()
    pln = gp_Pln(gp_Ax3(_pnt(origin), gp_Dir(*n)))
    face = BRepBuilderAPI_MakeFace(pln, mk.Wire(), True).Face()
    return BRepPrimAPI_MakePrism(face, gp_Vec(*(size * n)), False).Shape()


def half_space_patch(
    normal: Sequence[float], offset: float, points: FloatArray, margin: float
) -> TopoDS_Shape | None:
    """A box standing for the removed side ``normal . x > offset`` of a region, fitted to it.

    Parameters
    ----------
    normal : (3,) float, unit
    offset : float, mm
    points : (n, 3) float, mm
        Vertices of the part of the region beyond the plane (its box hull covers that part).
    margin : float, mm
        Clearance of the box's other faces from the region (> 0, so no face is coplanar).

    Returns
    -------
    TopoDS_Shape or None
        A box on the plane, ``margin`` wider than the points in both in-plane directions and
        reaching ``margin`` past the farthest one; None when no point lies beyond the plane.
    """
    n = np.asarray(normal, dtype=float)
    n = n / np.linalg.norm(n)
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    if len(pts) == 0:
        return None
    ref = np.array([1.0, 0.0, 0.0]) if abs(n[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    a = np.cross(n, ref)
    a /= np.linalg.norm(a)
    b = np.cross(n, a)
    pa, pb, pn = pts @ a, pts @ b, pts @ n - offset
    a0, a1 = pa.min() - margin, pa.max() + margin
    b0, b1 = pb.min() - margin, pb.max() + margin
    base = offset * n
    corners = [base + sa * a + sb * b for sa, sb in ((a0, b0), (a1, b0), (a1, b1), (a0, b1))]
    mk = BRepBuilderAPI_MakePolygon()
    for p in corners:
        mk.Add(_pnt(p))
    mk.Close()
    pln = gp_Pln(gp_Ax3(_pnt(base), gp_Dir(*n)))
    face = BRepBuilderAPI_MakeFace(pln, mk.Wire(), True).Face()
    depth = float(max(pn.max(), 0.0)) + margin
    return BRepPrimAPI_MakePrism(face, gp_Vec(*(depth * n)), False).Shape()


def cut_many(shape: TopoDS_Shape, tools: Sequence[TopoDS_Shape]) -> TopoDS_Shape:
    """``shape`` minus the union of ``tools`` in one serial boolean (no fuzzy value)."""
    if not tools:
        return shape
    args = TopTools_ListOfShape()
    args.Append(shape)
    tl = TopTools_ListOfShape()
    for t in tools:
        tl.Append(t)
    op = BRepAlgoAPI_Cut()
    op.SetArguments(args)
    op.SetTools(tl)
    op.SetRunParallel(False)
    op.Build()
    if not op.IsDone():
        raise RuntimeError("boolean cut failed")
    return op.Shape()


def barrel_profile_prism(
    radius: float, hole: float, clip: float | None, length: float
) -> TopoDS_Shape:
    """A hinge barrel along +z from z = 0 to ``length``, in its local frame.

    The profile lies in the local (x, y) plane: a disk of ``radius`` about the origin, clipped to
    ``x >= clip`` when ``clip`` is given (the chord is where the barrel touches its panel), with a
    concentric hole of radius ``hole`` when ``hole > 0``.

    Parameters
    ----------
    radius, hole : float, mm
        ``0 <= hole < radius``.
    clip : float or None, mm
        ``-radius < clip < -hole`` keeps the hole inside the clipped disk.
    length : float, mm
    """
    pln = gp_Pln(gp_Ax3(gp_Pnt(0, 0, 0), gp_Dir(0, 0, 1)))
    if clip is None:
        outer = BRepBuilderAPI_MakeWire(
            BRepBuilderAPI_MakeEdge(gp_Circ(gp_Ax2(gp_Pnt(0, 0, 0), gp_Dir(0, 0, 1)), radius)).Edge()
        ).Wire()
    else:
        h = math.sqrt(radius * radius - clip * clip)
        p1 = gp_Pnt(clip, -h, 0.0)
        p2 = gp_Pnt(clip, h, 0.0)
        arc = GC_MakeArcOfCircle(p1, gp_Pnt(radius, 0.0, 0.0), p2).Value()
        e_arc = BRepBuilderAPI_MakeEdge(arc).Edge()
        e_chord = BRepBuilderAPI_MakeEdge(p2, p1).Edge()
        outer = BRepBuilderAPI_MakeWire(e_arc, e_chord).Wire()
    mk = BRepBuilderAPI_MakeFace(pln, outer, True)
    if hole > 0:
        circ = gp_Circ(gp_Ax2(gp_Pnt(0, 0, 0), gp_Dir(0, 0, 1)), hole)
        inner = BRepBuilderAPI_MakeWire(BRepBuilderAPI_MakeEdge(circ).Edge()).Wire()
        mk.Add(TopoDS.Wire_s(inner.Reversed()))
    fix = ShapeFix_Face(mk.Face())  # orients the hole wire; run once per distinct barrel size
    fix.Perform()
    return BRepPrimAPI_MakePrism(fix.Face(), gp_Vec(0.0, 0.0, float(length)), False).Shape()


def cylinder_along_z(radius: float, length: float) -> TopoDS_Shape:
    """Solid cylinder from z = 0 to ``length`` about the local z-axis (a pin)."""
    return barrel_profile_prism(radius, 0.0, None, length)


def location(matrix: FloatArray) -> TopLoc_Location:
    """A ``TopLoc_Location`` from a (4, 4) rigid transform (rotation part orthonormal)."""
    m = np.asarray(matrix, dtype=float)
    t = gp_Trsf()
    t.SetValues(
        m[0, 0], m[0, 1], m[0, 2], m[0, 3],
        m[1, 0], m[1, 1], m[1, 2], m[1, 3],
        m[2, 0], m[2, 1], m[2, 2], m[2, 3],
    )  # fmt: skip
    return TopLoc_Location(t)


def moved(shape: TopoDS_Shape, matrix: FloatArray) -> TopoDS_Shape:
    """``shape`` placed by a (4, 4) rigid transform (shares the geometry, no copy)."""
    return shape.Moved(location(matrix))


def compound(shapes: Sequence[TopoDS_Shape]) -> TopoDS_Shape:
    """A ``TopoDS_Compound`` of ``shapes`` (or the single shape itself)."""
    if len(shapes) == 1:
        return shapes[0]
    comp = TopoDS_Compound()
    b = BRep_Builder()
    b.MakeCompound(comp)
    for s in shapes:
        b.Add(comp, s)
    return comp


def solids_of(shape: TopoDS_Shape) -> list[TopoDS_Shape]:
    """The solids of a shape, in exploration order."""
    out = []
    ex = TopExp_Explorer(shape, TopAbs_SOLID)
    while ex.More():
        out.append(ex.Current())
        ex.Next()
    return out


def check_shape(shape: TopoDS_Shape) -> bool:
    """``BRepCheck_Analyzer`` validity of a shape (topology and geometry)."""
    return bool(BRepCheck_Analyzer(shape, True).IsValid())


def volume(shape: TopoDS_Shape) -> float:
    """Volume in mm^3."""
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape, props)
    return float(props.Mass())


def bbox(shape: TopoDS_Shape) -> FloatArray:
    """(2, 3) float, mm: tight-ish axis-aligned box ``[min, max]`` (no enlargement gap)."""
    box = Bnd_Box()
    box.SetGap(0.0)
    BRepBndLib.AddOptimal_s(shape, box, False, False)
    x0, y0, z0, x1, y1, z1 = box.Get()
    return np.array([[x0, y0, z0], [x1, y1, z1]])


def mesh_arrays(
    shape: TopoDS_Shape, *, linear: float, angular: float, merge: float, clean: bool = True
) -> tuple[FloatArray, np.ndarray]:
    """Triangulate a shape: (n, 3) float vertices in mm and (m, 3) int triangles.

    The old triangulation is cleared first (``BRepTools.Clean``) so the given tolerances take
    effect. Vertices shared by neighbouring faces are merged on a grid of ``merge`` mm so that a
    closed solid gives a closed (watertight) mesh. Triangles are oriented outwards.

    Parameters
    ----------
    linear : float, mm
        Chordal deflection of the mesh.
    angular : float, rad
        Angular deflection of the mesh.
    merge : float, mm
        Vertex merge grid.
    clean : bool
        Clear old triangulations first (pass False when the caller already did).
    """
    if clean:
        BRepTools.Clean_s(shape)
    BRepMesh_IncrementalMesh(shape, linear, False, angular, False)
    verts: list[FloatArray] = []
    tris: list[np.ndarray] = []
    base = 0
    ex = TopExp_Explorer(shape, TopAbs_FACE)
    while ex.More():
        face = TopoDS.Face_s(ex.Current())
        loc = TopLoc_Location()
        tri = BRep_Tool.Triangulation_s(face, loc)
        ex.Next()
        if tri is None:
            continue
        trsf = loc.Transformation()
        n = tri.NbNodes()
        pts = np.empty((n, 3))
        for i in range(1, n + 1):
            p = tri.Node(i).Transformed(trsf)
            pts[i - 1] = (p.X(), p.Y(), p.Z())
        m = tri.NbTriangles()
        idx = np.empty((m, 3), dtype=np.int64)
        for i in range(1, m + 1):
            idx[i - 1] = tri.Triangle(i).Get()
        idx -= 1
        if face.Orientation() == TopAbs_REVERSED:
            idx = idx[:, ::-1]
        verts.append(pts)
        tris.append(idx + base)
        base += n
    if not verts:
        return np.zeros((0, 3)), np.zeros((0, 3), dtype=np.int64)
    v = np.vstack(verts)
    f = np.vstack(tris)
    key = np.round(v / merge).astype(np.int64)
    _, first, inverse = np.unique(key, axis=0, return_index=True, return_inverse=True)
    v = v[first]
    f = inverse.reshape(-1)[f]
    keep = (f[:, 0] != f[:, 1]) & (f[:, 1] != f[:, 2]) & (f[:, 0] != f[:, 2])
    return v, f[keep]
