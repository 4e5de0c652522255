"""Hinge-ready panel solids from a :class:`~thickpanel.thickness.plan.ThickPlan`.

Each slab becomes a prism of its polygon (with the notches its hinge style asks for inserted into
the outline, so they cost no boolean), trimmed by its cut planes (each a box fitted to the part
the plane removes), recesses and holes in *one* multi-tool cut, plus its standoffs and hinge
barrels as separate solids that only touch the panel (the part is a compound of touching solids,
so its volume is the sum of theirs). Barrels and pins
of equal size share one ``TShape`` placed by locations, and so do panels whose whole feature
description is a rotated and translated copy of an earlier panel's (``build_parts(share=...)``;
the rotationally symmetric rings of spiral layouts). Every solid is checked with
``BRepCheck_Analyzer`` before it leaves this module (shared barrels once per size); an invalid one
raises :class:`~thickpanel.errors.GeometryError` naming the part.

Frames: a part's ``frame_shape`` lies in the flat sheet frame (mm); ``shape`` is placed by the
fold state given to :func:`build_parts` (the flat sheet when none); ``flat_location`` moves the
part to its machining pose (bounding box corner at the origin, lying flat).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING, Any

import numpy as np

from hinges import get_hinge_style
from hinges.base import Box, ExtraPart, HingeDesign, HingeFrame, HingeStyle, SideFeatures
from hinges.materials import get_material
from hinges.plan_designs import design_hinges

from . import occ
from .errors import GeometryError
from .geometry2d import polygon_area
from .outline import bevel_lines as _bevel_lines
from .outline import check_notched, describe_panel, rigid_match
from .outline import notched as _notched
from .pattern import cid, pid
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray

if TYPE_CHECKING:
    from OCP.TopoDS import TopoDS_Shape

    from .outline import PanelDescription
    from .poses import FoldState
    from .thickness.plan import Slab, ThickPlan

__all__ = ["Part", "PartSet", "build_parts"]


@dataclass
class Part:
    """One manufactured part.

    Attributes
    ----------
    name : str
        ``P017`` (panel), ``PIN-C042``, ``FLEX-C042``, ``TAPE-C042``.
    kind : str
        ``panel``, ``pin``, ``flexure`` or ``tape``.
    shape : TopoDS_Shape
        Placed in the fold state the part set was built for.
    frame_shape : TopoDS_Shape
        The same part in the flat sheet frame.
    material : str
        Key of :data:`hinges.materials.MATERIALS`.
    volume : float, mm^3
    panel : int
        Panel whose pose the part follows.
    thickness : float, mm
    area : float, mm^2
        Outline area (panels, tapes) or 0.
    outline : (k, 2) float or None, mm
        Cut profile in the flat sheet frame (panels, tapes, flexure webs).
    holes : list of (x, y, diameter), mm
    bevels : list of (layer, (2, 2) float), mm
        Lines where cut planes meet the top (``BEVEL``) or bottom (``BEVEL-BOTTOM``) face.
    hinge_count : int
    pins : tuple of float, mm
        Pin diameters of the part's hinges (panels) or its own diameter (pins).
    attrs : dict
    pieces : list of (key, prototype, (4, 4) matrix)
        The solids of the part: prototype shapes shared between parts (equal keys) and their
        placement in the flat sheet frame. Exporters write each prototype once.
    """

    name: str
    kind: str
    shape: TopoDS_Shape
    frame_shape: TopoDS_Shape
    material: str
    volume: float
    panel: int
    thickness: float = 0.0
    area: float = 0.0
    outline: FloatArray | None = None
    holes: list[tuple[float, float, float]] = field(default_factory=list)
    bevels: list[tuple[str, FloatArray]] = field(default_factory=list)
    hinge_count: int = 0
    pins: tuple[float, ...] = ()
    attrs: dict[str, Any] = field(default_factory=dict)
    pieces: list[tuple[tuple, TopoDS_Shape, FloatArray]] = field(default_factory=list)

    @property
    def mass(self) -> float | None:
        """Mass in g (volume mm^3 x density g/cm^3 / 1000); None when no material is given.

        A density in ``attrs["density_kg_m3"]`` (the design's ``[panels] density``) overrides
        the material table's."""
        given = self.attrs.get("density_kg_m3")
        rho = float(given) / 1000.0 if given else get_material(self.material, who=self.name).density
        return None if math.isnan(rho) else self.volume * rho / 1000.0

    @cached_property
    def flat_location(self) -> FloatArray:
        """(4, 4) float: flat sheet frame -> machining pose (bounding-box corner at the origin)."""
        lo = occ.bbox(self.frame_shape)[0]
        m = np.eye(4)
        m[:3, 3] = -lo
        return m


@dataclass
class PartSet:
    """The parts of one array and what they were built from."""

    parts: list[Part]
    plan: ThickPlan
    hinge_style: str
    designs: tuple[HingeDesign, ...]
    state: FoldState | None = None
    tol: Tolerances = DEFAULT_TOL

    def poses(self, state: FoldState | None) -> FloatArray:
        """(P, 4, 4) poses of the panels for ``state`` (identity for the flat sheet)."""
        if state is None:
            return np.tile(np.eye(4), (self.plan.pattern.n_panels, 1, 1))
        return self.plan.poses(state)

    def in_state(self, state: FoldState | None) -> list[Part]:
        """The parts shown in ``state``: all of them flat (``None`` or t = 0); in a folded state
        the parts marked ``attrs["flat_only"]`` (a flexible backing, not rigid) are left out."""
        t = float(getattr(state, "t", 0.0)) if state is not None else 0.0
        if state is None or t == 0.0:
            return list(self.parts)
        return [p for p in self.parts if not p.attrs.get("flat_only")]

    def placed(self, state: FoldState | None = None) -> list[TopoDS_Shape]:
        """Every part's shape placed for ``state`` (default: the state it was built for), one per
        part in :attr:`parts` order (flat-only parts included; see :meth:`in_state`)."""
        if state is None:
            return [p.shape for p in self.parts]
        poses = self.poses(state)
        return [occ.moved(p.frame_shape, poses[p.panel]) for p in self.parts]

    def __getitem__(self, name: str) -> Part:
        for p in self.parts:
            if p.name == name:
                return p
        raise GeometryError(f"no part named {name!r} in this part set ({len(self.parts)} parts)")


class _Cache:
    """Shared barrel/rod solids per size, validated once each (``share=False``: every request
    makes and checks its own solid under a key of its own)."""

    def __init__(self, share: bool = True) -> None:
        self.shapes: dict[tuple, tuple[TopoDS_Shape, float]] = {}
        self.share = share

    def get(self, key: tuple, make: Any, who: str) -> tuple[TopoDS_Shape, float]:
        if not self.share:
            key = key + ("#", len(self.shapes))
        hit = self.shapes.get(key)
        if hit is None:
            shape = make()
            if not occ.check_shape(shape):
                raise GeometryError(f"{who}: hinge barrel/pin solid {key} is invalid (BRepCheck)")
            hit = (shape, occ.volume(shape))
            self.shapes[key] = hit
        return hit

    def key(self, key: tuple) -> tuple:
        """The key a piece made by the last :meth:`get` of ``key`` carries."""
        return key if self.share else key + ("#", len(self.shapes) - 1)


def _key(*xs: float) -> tuple:
    return tuple(round(float(x), 9) for x in xs)


def _barrel_matrix(frame: HingeFrame, side: int, s0: float) -> FloatArray:
    """Local barrel frame (x away from the owning panel, z along the axis) -> flat frame."""
    sx, sy, sz = frame.s
    sg = 1.0 if side == 0 else -1.0
    ux, uy, uz = (sg * c for c in frame.u)
    ox, oy, oz = frame.origin
    return np.array([
        [ux, sy * uz - sz * uy, sx, ox + s0 * sx],
        [uy, sz * ux - sx * uz, sy, oy + s0 * sy],
        [uz, sx * uy - sy * ux, sz, oz + s0 * sz],
        [0.0, 0.0, 0.0, 1.0],
    ])


def _box_solid(frame: HingeFrame, b: Box) -> TopoDS_Shape:
    rect = np.array([[b.u0, b.s0], [b.u1, b.s0], [b.u1, b.s1], [b.u0, b.s1]])
    m = np.eye(4)
    m[:3, 0], m[:3, 1], m[:3, 2] = frame.u, frame.s, frame.w
    m[:3, 3] = frame.origin
    return occ.moved(occ.prism(rect, b.w0, b.w1), m)


def _box_outline(frame: HingeFrame, b: Box) -> FloatArray:
    pts = [frame.point(s, u, 0.0)[:2] for s, u in ((b.s0, b.u0), (b.s1, b.u0), (b.s1, b.u1),
                                                   (b.s0, b.u1))]
    poly = np.array(pts)
    return poly if polygon_area(poly) > 0 else poly[::-1].copy()


def build_parts(
    plan: ThickPlan,
    *,
    hinge_style: str | HingeStyle = "none",
    hinge_options: Mapping[str, Any] | None = None,
    state: FoldState | None = None,
    material: str | None = None,
    validate: str = "full",
    share: str = "rigid",
    tol: Tolerances = DEFAULT_TOL,
) -> PartSet:
    """Build every panel, pin, tape and flexure part of a thick plan.

    Parameters
    ----------
    plan : ThickPlan
    hinge_style : str or HingeStyle
        Registry name (``none``, ``knuckle``, ``print-in-place``, ``flexure``, ``tape``) or a
        style object.
    hinge_options : mapping, optional
        Options of a named style (see :mod:`hinges`).
    state : FoldState, optional
        Places ``Part.shape``; the flat sheet when None.
    material : str, optional
        Material key for slabs that name none; with neither, parts have no material and no
        mass (hinge styles that need a material then say so).
    validate : str
        ``full`` (default): ``BRepCheck_Analyzer`` on every distinct solid. ``profile``: plain
        (untrimmed) panel prisms are checked through their outline face (``BRepCheck``) and the
        sweep's volume identity, about 8x cheaper on notched outlines; all other solids stay on
        the full check.
    share : str
        How parts share validated prototype solids (each prototype is checked once and placed by
        locations; exporters write it once). ``rigid`` (default): a panel whose whole feature
        description (notched outline, z-range, material, cut planes, hinge features with their
        holes and recesses, standoffs) is a rotated and translated copy of an earlier panel's,
        within ``tol.merge`` mm (``tol.angle`` for plane normals), is that panel's prototype
        placed by the planar motion; reflections are never used (a mirror image of a panel with
        one-sided hinge features is another part). Other panels share untrimmed bodies by
        translation, and barrels and pins of equal size. ``translation``: only the latter.
        ``none``: every solid is made and checked on its own (reference for tests).
    tol : Tolerances

    Returns
    -------
    PartSet
        Panels first (``P000`` ...), then hinge parts in crease order.
    """
    if validate not in ("full", "profile"):
        raise GeometryError(f"validate = {validate!r}; allowed: 'full', 'profile'")
    if share not in ("rigid", "translation", "none"):
        raise GeometryError(f"share = {share!r}; allowed: 'rigid', 'translation', 'none'")
    style = (get_hinge_style(hinge_style, **dict(hinge_options or {}))
             if isinstance(hinge_style, str) else hinge_style)
    mats = {s.panel: s.material or material or "" for s in plan.slabs}
    designs = design_hinges(plan, style, material=material, tol=tol)
    frames: dict[int, HingeFrame] = {}
    per_panel: dict[int, list[tuple[HingeFrame, int, SideFeatures, HingeDesign]]] = {}
    for des, h in zip(designs, plan.hinges, strict=True):
        a, b = h.panels
        frames[h.crease] = fr = HingeFrame.of(h)
        per_panel.setdefault(a, []).append((fr, 0, des.sides[0], des))
        per_panel.setdefault(b, []).append((fr, 1, des.sides[1], des))
    cache = _Cache(share != "none")
    poses = None if state is None else plan.poses(state)
    parts = _panels(plan, per_panel, mats, cache, poses, tol, validate, share == "rigid")
    for des, h in zip(designs, plan.hinges, strict=True):
        fr = frames[h.crease]
        for ex in des.extras:
            parts.append(_extra_part(ex, fr, h.panels[ex.follows], cache, poses))
    sheet_fn = getattr(style, "plan_parts", None)
    # sheets the thickness method made (a backing membrane) and those of the hinge style
    for sp in list(plan.meta.get("sheet_parts", ())) + list(sheet_fn(plan) if callable(sheet_fn) else []):
        parts.append(_sheet_part(sp, plan, state, poses))
    return PartSet(parts, plan, getattr(style, "name", str(hinge_style)), designs, state,
                   tol)


Piece = tuple[tuple, "TopoDS_Shape", FloatArray]


def _translation(xyz: Sequence[float]) -> FloatArray:
    m = np.eye(4)
    m[:3, 3] = xyz
    return m


def _place(pieces: list[Piece]) -> TopoDS_Shape:
    return occ.compound([occ.moved(proto, m) for _, proto, m in pieces])


def _profile_checked_prism(rel: FloatArray, slab: Slab, who: str,
                           tol: Tolerances) -> tuple[TopoDS_Shape, float]:
    """A prism validated through its profile: BRepCheck of the planar face, then the sweep's
    volume identity (area x height) instead of a BRepCheck of the whole solid (about 8x cheaper
    for a notched outline)."""
    face = occ.polygon_face(rel, slab.z0)
    if not occ.check_shape(face):
        raise GeometryError(f"panel {who}: the panel outline face is invalid (BRepCheck)")
    solid = occ.prism_of_face(face, slab.z1 - slab.z0)
    vol = occ.volume(solid)
    want = abs(polygon_area(rel)) * (slab.z1 - slab.z0)
    if abs(vol - want) > tol.length * max(1.0, want):
        raise GeometryError(f"panel {who}: prism volume {vol:g} mm^3 differs from area x height "
                            f"{want:g} mm^3")
    return solid, vol


def _outline(slab: Slab, groups: list, tol: Tolerances,
             check: bool = True) -> tuple[FloatArray, bool]:
    """(k, 2) float, mm: the slab outline, counter-clockwise, with its hinge notches; and
    whether any notch was inserted (``check=False`` then leaves its simple-polygon test out)."""
    poly = slab.polygon_array()
    if polygon_area(poly) < 0:
        poly = poly[::-1].copy()
    out = _notched(poly, groups, pid(slab.panel), tol, check=check)
    return out, out is not poly


def _panels(plan: ThickPlan, per_panel: dict, mats: dict[int, str], cache: _Cache,
            poses: FloatArray | None, tol: Tolerances, validate: str, rigid: bool) -> list[Part]:
    """Every panel part, in slab order; with ``rigid`` congruent panels are placed prototypes.

    The prototype of a class is its first panel in slab order and a copy takes the first
    matching cyclic start of its outline, so the result is deterministic.
    """
    parts: list[Part | None] = []
    descs: dict[int, PanelDescription] = {}
    buckets: dict[tuple, list[int]] = {}
    copies: list[tuple[int, int, FloatArray, FloatArray]] = []
    for k, slab in enumerate(plan.slabs):
        groups = per_panel.get(slab.panel, [])
        poly, cut_in = _outline(slab, groups, tol, check=not rigid)
        if rigid:
            d = describe_panel(slab, poly, groups, mats[slab.panel])
            hit = None
            for q in buckets.get(d.bucket, []):
                m = rigid_match(d, descs[q], tol)
                if m is not None:
                    hit = (q, m)
                    break
            if hit is not None:
                copies.append((k, hit[0], hit[1], poly))
                parts.append(None)
                continue
            if cut_in:  # prototypes only: a rigid copy of a simple outline is simple
                check_notched(poly, groups, pid(slab.panel), tol)
            descs[k] = d
            buckets.setdefault(d.bucket, []).append(k)
        parts.append(_panel_part(slab, poly, groups, mats[slab.panel], cache, poses, tol,
                                 validate))
    renamed: set[int] = set()
    for k, q, m, poly in copies:
        proto = parts[q]
        assert proto is not None
        if q not in renamed:  # the prototype's own solids become shared prototypes
            proto.pieces[:] = [(("rigid", proto.name, j) if key[0] == "unique" else key, shp, mm)
                               for j, (key, shp, mm) in enumerate(proto.pieces)]
            renamed.add(q)
        parts[k] = _copy_part(proto, plan.slabs[k], poly, m, poses)
    return [p for p in parts if p is not None]


def _copy_part(proto: Part, slab: Slab, poly: FloatArray, m: FloatArray,
               poses: FloatArray | None) -> Part:
    """Panel ``slab`` as prototype ``proto`` placed by the rigid motion ``m`` (flat frames)."""
    pieces = [(key, shp, m @ mm) for key, shp, mm in proto.pieces]
    frame_shape = _place(pieces)
    shape = frame_shape if poses is None else occ.moved(frame_shape, poses[slab.panel])
    holes = []
    for x, y, dia in proto.holes:
        xy = m[:2, :2] @ (x, y) + m[:2, 3]
        holes.append((float(xy[0]), float(xy[1]), dia))
    attrs = dict(proto.attrs)
    attrs["prototype"] = proto.name
    return Part(
        pid(slab.panel), "panel", shape, frame_shape, proto.material, proto.volume, slab.panel,
        slab.thickness, proto.area, poly, holes,
        [(layer, seg @ m[:2, :2].T + m[:2, 3]) for layer, seg in proto.bevels],
        proto.hinge_count, proto.pins, attrs, pieces,
    )


def _beyond(poly: FloatArray, z0: float, z1: float, normal: Sequence[float],
            offset: float) -> FloatArray:
    """(n, 3) float, mm: the vertices of prism ``poly x [z0, z1]`` beyond the plane
    ``normal . x = offset`` and the points where its edges cross the plane (the vertices of the
    part a cut removes, so their box hull covers it)."""
    k = len(poly)
    bot = np.column_stack([poly, np.full(k, z0)])
    top = np.column_stack([poly, np.full(k, z1)])
    n = np.asarray(normal, dtype=float)
    ends = np.concatenate([np.stack([bot, np.roll(bot, -1, axis=0)], axis=1),
                           np.stack([top, np.roll(top, -1, axis=0)], axis=1),
                           np.stack([bot, top], axis=1)])  # (3k, 2, 3) edges
    d = ends @ n - offset
    cross = (d[:, 0] > 0) != (d[:, 1] > 0)
    t = d[cross, 0] / (d[cross, 0] - d[cross, 1])
    hits = ends[cross, 0] + t[:, None] * (ends[cross, 1] - ends[cross, 0])
    verts = np.concatenate([bot, top])
    return np.concatenate([verts[verts @ n > offset], hits])


def _panel_part(slab: Slab, poly: FloatArray, groups: list, material: str, cache: _Cache,
                poses: FloatArray | None, tol: Tolerances, validate: str = "full") -> Part:
    who = pid(slab.panel)
    size = 2.0 * (float(np.ptp(poly, axis=0).max()) + slab.thickness) + 1.0
    planes = [t for t in (occ.half_space_patch(c.normal, c.offset,
                                               _beyond(poly, slab.z0, slab.z1, c.normal, c.offset),
                                               slab.thickness) for c in slab.cuts)
              if t is not None]
    tools: list[TopoDS_Shape] = []
    holes: list[tuple[float, float, float]] = []
    for fr, _side, feats, _ in groups:
        tools.extend(_box_solid(fr, r) for r in feats.recesses)
        for hole in feats.holes:
            xy = fr.point(hole.s, hole.u, 0.0)[:2]
            holes.append((float(xy[0]), float(xy[1]), hole.diameter))
            cyl, _ = cache.get(("rod",) + _key(0.5 * hole.diameter, slab.thickness + 2.0),
                               lambda d=hole.diameter: occ.cylinder_along_z(
                                   0.5 * d, slab.thickness + 2.0), who)
            tools.append(occ.moved(cyl, _translation((xy[0], xy[1], slab.z0 - 1.0))))
    pieces: list[Piece] = []
    if planes or tools or not cache.share:
        body = occ.prism(poly, slab.z0, slab.z1)
        try:
            # one multi-tool cut; each plane's tool is a box fitted to what the plane removes
            # (panel-sized half-space slabs all overlap each other, which the boolean intersects
            # pairwise: 4.5x slower on a notched 48-gon hub with 48 bevels, and out of memory on
            # a 24-gon)
            body = occ.cut_many(body, planes + tools) if planes or tools else body
        except RuntimeError:
            raise GeometryError(f"panel {who}: trimming by cuts/recesses/holes failed") from None
        if not occ.check_shape(body):
            raise GeometryError(
                f"panel {who}: the panel solid is invalid (BRepCheck); outline has {len(poly)} "
                f"corners, {len(slab.cuts)} cuts"
            )
        vol = occ.volume(body)
        pieces.append((("unique", who), body, np.eye(4)))
    else:
        # translation-congruent panels share one validated prototype (placed by a location)
        lo = poly.min(axis=0)
        rel = poly - lo
        key = ("body",) + _key(slab.z0, slab.z1) + (
            np.round(rel / tol.merge).astype(np.int64).tobytes(),)

        def make(rel: FloatArray = rel) -> TopoDS_Shape:
            return occ.prism(rel, slab.z0, slab.z1)

        try:
            if validate == "profile" and key not in cache.shapes:
                cache.shapes[key] = _profile_checked_prism(rel, slab, who, tol)
            proto, vol = cache.get(key, make, who)
        except GeometryError:
            raise GeometryError(
                f"panel {who}: the panel solid is invalid (BRepCheck); outline has {len(poly)} "
                f"corners"
            ) from None
        pieces.append((cache.key(key), proto, _translation((lo[0], lo[1], 0.0))))
    if vol <= 0:
        raise GeometryError(f"panel {who}: the panel solid has no volume ({vol:g} mm^3)")
    for st in slab.standoffs:
        fp = np.asarray(st.polygon, dtype=float)
        blk = occ.prism(fp if polygon_area(fp) > 0 else fp[::-1].copy(), st.z0, st.z1)
        # make room for the hinge in the standoff (one multi-tool cut): under this panel's own
        # barrels cut back to the barrel's chord, under the other panel's a cylinder of the notch
        # radius around the axis
        cyl_tools = []
        span = 2.0 * size
        for fr, side, feats, des in groups:
            if des.crease != st.crease:
                continue
            own = {(b.s0, b.s1) for b in feats.barrels}
            for n in feats.notches:
                if (n.s0, n.s1) in own:
                    u0, u1 = (-n.depth, span) if side == 0 else (-span, n.depth)
                    cyl_tools.append(_box_solid(fr, Box(n.s0, n.s1, u0, u1, -span, span)))
                    continue
                proto, _ = cache.get(("rod",) + _key(n.depth, n.s1 - n.s0),
                                     lambda n=n: occ.cylinder_along_z(n.depth, n.s1 - n.s0), who)
                cyl_tools.append(occ.moved(proto, _barrel_matrix(fr, 0, n.s0)))
        if cyl_tools:
            try:
                blk = occ.cut_many(blk, cyl_tools)
            except RuntimeError:
                raise GeometryError(f"panel {who}: clearing the standoff of {cid(st.crease)} "
                                    f"around its hinge failed") from None
        v_st = occ.volume(blk)
        if v_st <= tol.length:
            continue  # the hinge clearance took the whole block
        if not occ.check_shape(blk):
            raise GeometryError(f"panel {who}: standoff for {cid(st.crease)} is invalid (BRepCheck)")
        pieces.append((("unique", who, "standoff", len(pieces)), blk, np.eye(4)))
        vol += v_st
    pins: list[float] = []
    for fr, side, feats, des in groups:
        for br in feats.barrels:
            key = ("barrel",) + _key(br.radius, br.hole, br.clip or -1, br.s1 - br.s0)
            shp, v = cache.get(key, lambda br=br: occ.barrel_profile_prism(
                br.radius, br.hole, -br.clip if br.clip is not None else None, br.s1 - br.s0), who)
            pieces.append((cache.key(key), shp, _barrel_matrix(fr, side, br.s0)))
            vol += v
        for rd in feats.rods:
            key = ("rod",) + _key(rd.radius, rd.s1 - rd.s0)
            shp, v = cache.get(key, lambda rd=rd: occ.cylinder_along_z(rd.radius, rd.s1 - rd.s0),
                               who)
            pieces.append((cache.key(key), shp, _barrel_matrix(fr, side, rd.s0)))
            vol += v
        for bx in feats.boxes:
            b = _box_solid(fr, bx)
            pieces.append((("unique", who, "box", len(pieces)), b, np.eye(4)))
            vol += occ.volume(b)
        if "pin_diameter" in des.info:
            pins.append(float(des.info["pin_diameter"]))
    frame_shape = _place(pieces)
    shape = frame_shape if poses is None else occ.moved(frame_shape, poses[slab.panel])
    return Part(
        who, "panel", shape, frame_shape, material, vol, slab.panel, slab.thickness,
        float(polygon_area(poly)), poly, holes, _bevel_lines(slab, poly), len(groups),
        tuple(pins), {"cuts": len(slab.cuts), "standoffs": len(slab.standoffs), "prototype": who},
        pieces,
    )


def _extra_part(ex: ExtraPart, fr: HingeFrame, panel: int, cache: _Cache,
                poses: FloatArray | None) -> Part:
    pieces: list[Piece] = []
    vol = 0.0
    for rd in ex.rods:
        key = ("rod",) + _key(rd.radius, rd.s1 - rd.s0)
        shp, v = cache.get(key, lambda rd=rd: occ.cylinder_along_z(rd.radius, rd.s1 - rd.s0),
                           ex.name)
        pieces.append((cache.key(key), shp, _barrel_matrix(fr, 0, rd.s0)))
        vol += v
    outline = None
    thick = 0.0
    for bx in ex.boxes:
        b = _box_solid(fr, bx)
        if not occ.check_shape(b):
            raise GeometryError(f"{ex.name}: solid is invalid (BRepCheck)")
        pieces.append((("unique", ex.name, len(pieces)), b, np.eye(4)))
        vol += occ.volume(b)
        outline = _box_outline(fr, bx)
        thick = bx.w1 - bx.w0
    if not pieces:
        raise GeometryError(f"{ex.name}: hinge part has no geometry")
    frame_shape = _place(pieces)
    shape = frame_shape if poses is None else occ.moved(frame_shape, poses[panel])
    diameter = float(ex.attrs.get("diameter", 0.0))
    return Part(
        ex.name, ex.kind, shape, frame_shape, ex.material, vol, panel, thick,
        float(polygon_area(outline)) if outline is not None else 0.0, outline, [], [], 0,
        (diameter,) if diameter else (), dict(ex.attrs), pieces,
    )


def _sheet_part(sp: Any, plan: ThickPlan, state: FoldState | None,
                poses: FloatArray | None) -> Part:
    """A membrane over the whole sheet; it follows the base panel of the state."""
    outline = np.asarray(sp.outline, dtype=float)
    body = occ.prism(outline, sp.z0, sp.z1)
    if not occ.check_shape(body):
        raise GeometryError(f"{sp.name}: membrane solid is invalid (BRepCheck)")
    panel = int(sp.attrs["panel"]) if "panel" in sp.attrs else (
        state.base_panel if state is not None else plan.slabs[0].panel)
    shape = body if poses is None else occ.moved(body, poses[panel])
    return Part(sp.name, sp.kind, shape, body, sp.material, occ.volume(body),
                panel, sp.z1 - sp.z0, float(polygon_area(outline)), outline, [], [], 0, (),
                dict(sp.attrs), [(("unique", sp.name), body, np.eye(4))])
