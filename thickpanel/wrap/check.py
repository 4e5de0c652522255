"""Checks of a wrapped-hub construction in its stowed state: plate clearance, isometry, volume bound.

The plates are convex prisms (plate outline x [-t/2, t/2] about the panel's reference plane) placed by
the construction's stowed poses. Every pair of plates is tested, neighbours across a fold included:
the separating-axis test gives the penetration depth of overlapping pairs (and a lower bound of the
distance otherwise), and the exact polytope distance is measured for the pairs within ``margin``
(Gottschalk, Lin & Manocha 1996; Ericson 2005, *Real-Time Collision Detection*, ch. 5), through the
same kernels as the clearance engine (:mod:`thickpanel.collide`). Pure numpy/scipy.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..collide import exact_distance, pack_pieces, piece_from_points, sat_gaps, sweep_pairs
from ..pattern import CreasePattern, pid
from ..typing import FloatArray
from .geometry import polygon_area
from .sheet import wrap_info

__all__ = ["StowedCheck", "check_stowed", "isometry_error", "stowed_radius_bound"]


@dataclass(frozen=True)
class StowedCheck:
    """Clearance of the stowed plates.

    Attributes
    ----------
    min_distance : float, mm
        Smallest distance between two plates (exact for the pairs measured; pairs farther apart than
        ``margin`` are not measured and count as at least ``margin``).
    pair : tuple of str
        The two panels at ``min_distance``.
    max_penetration : float, mm
        Deepest overlap of two plates (0 when none overlap).
    pairs_measured : int
    margin : float, mm
    outer_radius : float, mm
        Largest distance of a plate corner from the hub axis (enclosing cylinder radius).
    z_range : (float, float), mm
        Lowest and highest plate corner.
    """

    min_distance: float
    pair: tuple[str, str]
    max_penetration: float
    pairs_measured: int
    margin: float
    outer_radius: float
    z_range: tuple[float, float]


def _posed_corners(poly: FloatArray, pose: FloatArray, z0: float, z1: float) -> FloatArray:
    k = len(poly)
    pts = np.vstack([np.column_stack([poly, np.full(k, z0)]), np.column_stack([poly, np.full(k, z1)])])
    return pts @ pose[:3, :3].T + pose[:3, 3]


def check_stowed(pattern: CreasePattern, *, margin: float = 5.0, include_hub: bool = True) -> StowedCheck:
    """Clearance of every pair of stowed plates of a ``hub-wrap`` sheet.

    Parameters
    ----------
    pattern : CreasePattern
        Built by the ``hub-wrap`` layout with ``panel_thickness > 0``.
    margin : float, mm
        Pairs whose boxes are farther apart than this are not measured exactly.
    include_hub : bool
        Test the hub plate as well.
    """
    info = wrap_info(pattern)
    if info is None:
        raise ValueError("not a hub-wrap sheet (no construction data)")
    t = float(info.params["panel_thickness"])
    owners, pieces, corners = [], [], []
    for p, pc in enumerate(info.pieces):
        if len(pc.plate) < 3 or (pc.kind == "hub" and not include_hub):
            continue
        pts = _posed_corners(np.asarray(pc.plate), info.stowed_poses[p], -t / 2.0, t / 2.0)
        corners.append(pts)
        pieces.append(piece_from_points(p, pts, label=pid(p)))
        owners.append(p)
    packed = pack_pieces(pieces)
    lo = np.array([c.min(axis=0) for c in corners])
    hi = np.array([c.max(axis=0) for c in corners])
    pairs = sweep_pairs(lo, hi, pad=margin / 2.0)
    gaps = sat_gaps(pairs, packed.verts, packed.normals, packed.edges)
    pen = float(max(0.0, -gaps.min())) if len(gaps) else 0.0
    best, where = math.inf, ("", "")
    for (a, b), g in zip(pairs, gaps, strict=True):
        if g > margin or g > best:
            continue
        pa, pb = packed.pieces[a], packed.pieces[b]
        d = 0.0 if g < 0 else exact_distance(pa.vertices, pa.triangles, pb.vertices, pb.triangles)
        if d < best:
            best, where = d, (pid(owners[a]), pid(owners[b]))
    allc = np.vstack(corners) if corners else np.zeros((1, 3))
    ring_c = np.vstack([c for c, o in zip(corners, owners, strict=True) if info.pieces[o].kind != "hub"])
    return StowedCheck(
        min_distance=best if best < math.inf else margin, pair=where, max_penetration=pen,
        pairs_measured=len(pairs), margin=margin,
        outer_radius=float(np.linalg.norm(ring_c[:, :2], axis=1).max()),
        z_range=(float(allc[:, 2].min()), float(allc[:, 2].max())),
    )


def isometry_error(pattern: CreasePattern) -> float:
    """Largest change (mm) of any distance between two corners of one plate, flat vs stowed."""
    info = wrap_info(pattern)
    if info is None:
        raise ValueError("not a hub-wrap sheet (no construction data)")
    worst = 0.0
    for p, pc in enumerate(info.pieces):
        q = np.asarray(pc.plate, dtype=float)
        if len(q) < 2:
            continue
        flat = np.column_stack([q, np.zeros(len(q))])
        st = flat @ info.stowed_poses[p][:3, :3].T + info.stowed_poses[p][:3, 3]
        d0 = np.linalg.norm(flat[:, None] - flat[None], axis=2)
        d1 = np.linalg.norm(st[:, None] - st[None], axis=2)
        worst = max(worst, float(np.abs(d1 - d0).max()))
    return worst


def stowed_radius_bound(hub_circumradius: float, sides: int, panel_area: float, thickness: float,
                        height: float) -> float:
    """Volume-conservation lower bound of the stowed radius (mm): ``sqrt(R_h^2 + A t / (pi H))``.

    The panels outside the hub (area ``A``, thickness ``t``) must fit in the annulus between a
    cylinder of the hub's circumradius and the stowed cylinder over the stowed height ``H``.
    """
    return math.sqrt(hub_circumradius**2 + panel_area * thickness / (math.pi * height))


def plate_area_outside_hub(pattern: CreasePattern) -> float:
    """Total area (mm^2) of the plates outside the hub."""
    info = wrap_info(pattern)
    if info is None:
        raise ValueError("not a hub-wrap sheet (no construction data)")
    return float(sum(abs(polygon_area(pc.plate)) for pc in info.pieces if pc.kind != "hub" and len(pc.plate) >= 3))


@dataclass(frozen=True)
class BackingStrain:
    """How far the stowed plates pull the bare backing between them.

    Attributes
    ----------
    stretch : float, mm
        Largest excess of the stowed distance between two facing plate edge points over the flat
        width of backing between them (> 0: the backing would have to stretch there).
    crease : int
        Where it occurs (-1 when nothing was measured).
    by_label : dict
        Largest excess per crease class (``accordion``, ``bend``, ``radial`` ...), mm.
    """

    stretch: float
    crease: int
    by_label: dict


def backing_strain(pattern: CreasePattern, *, samples: int = 5) -> BackingStrain:
    """Compare, along every crease between two plates, the flat backing width with the stowed gap.

    At ``samples`` points along each crease, the nearest points of the two plates (flat) are mapped
    to the stowed state; the backing between them is inextensible, so their stowed distance must not
    exceed their flat distance.
    """
    info = wrap_info(pattern)
    if info is None:
        raise ValueError("not a hub-wrap sheet (no construction data)")
    v, cr, cpan = pattern.vertices, pattern.creases, pattern.crease_panels
    worst, where = -math.inf, -1
    by: dict[str, float] = {}
    ts = (np.arange(samples) + 0.5) / samples
    for c in range(pattern.n_creases):
        a, b = (int(x) for x in cpan[c])
        if a < 0 or b < 0:
            continue
        pa, pb = info.pieces[a].plate, info.pieces[b].plate
        if len(pa) < 3 or len(pb) < 3:
            continue
        q = v[cr[c, 0]] + np.outer(ts, v[cr[c, 1]] - v[cr[c, 0]])
        na = np.array([_nearest_on_polygon(x, pa) for x in q])
        nb = np.array([_nearest_on_polygon(x, pb) for x in q])
        sa = np.column_stack([na, np.zeros(len(na))]) @ info.stowed_poses[a][:3, :3].T + info.stowed_poses[a][:3, 3]
        sb = np.column_stack([nb, np.zeros(len(nb))]) @ info.stowed_poses[b][:3, :3].T + info.stowed_poses[b][:3, 3]
        ex = float((np.linalg.norm(sa - sb, axis=1) - np.linalg.norm(na - nb, axis=1)).max())
        lb = info.labels[c]
        by[lb] = max(by.get(lb, -math.inf), ex)
        if ex > worst:
            worst, where = ex, c
    return BackingStrain(worst if where >= 0 else 0.0, where, by)


def _nearest_on_polygon(q: FloatArray, poly: FloatArray) -> FloatArray:
    a = np.asarray(poly, dtype=float)
    b = np.roll(a, -1, axis=0)
    ab = b - a
    tt = np.clip(((q - a) * ab).sum(axis=1) / (ab * ab).sum(axis=1), 0.0, 1.0)
    pts = a + tt[:, None] * ab
    return pts[int(np.argmin(np.linalg.norm(pts - q, axis=1)))]
