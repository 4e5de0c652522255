"""Panel outlines for the solid builder, in plain numpy (no CAD kernel).

- :func:`notched`: insert hinge notches (staircase steps along the hinge-side edge) into a slab
  outline, so the prism needs no boolean;
- :func:`self_intersects`: simple-polygon test (crossing, touching, collinear overlap);
- :func:`simplify`: drop repeated, straight-through and zero-width spike points;
- :func:`bevel_lines`: where cut planes meet the top and bottom faces;
- :func:`rigid_fits`: the proper planar motions (rotation about the sheet normal and translation,
  never a reflection) that carry one outline onto another, vertex for vertex;
- :func:`describe_panel` / :func:`rigid_match`: a panel's full feature description and the
  rigid motion, if any, that carries a prototype's description onto it (prototype sharing).

Lengths mm; outlines are (k, 2) arrays, counter-clockwise.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import partial
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import HingeError
from .pattern import cid
from .tolerances import Tolerances
from .typing import FloatArray

if TYPE_CHECKING:
    from hinges.base import HingeDesign, HingeFrame, SideFeatures

    from .thickness.plan import Slab

__all__ = [
    "notched", "check_notched", "self_intersects", "simplify", "bevel_lines", "rigid_fits", "PanelDescription",
    "describe_panel", "rigid_match",
]


def notched(poly: FloatArray, groups: Sequence[tuple[HingeFrame, int, SideFeatures, HingeDesign]],
             who: str, tol: Tolerances, *, clip: bool = False, check: bool = True) -> FloatArray:
    """Insert every hinge notch into the slab outline (no boolean needed).

    With ``clip`` (standoff blocks, shorter than the hinge) notches are clipped to the edge
    instead of refused. ``check=False`` leaves out the simple-polygon test (the caller runs
    :func:`check_notched`, e.g. only on prototypes: a rigid copy of a simple polygon is simple).
    """
    inserts: dict[int, list[tuple[float, int, tuple[float, float]]]] = {}
    pts_l = [(float(x), float(y)) for x, y in poly]
    k = len(pts_l)
    for frame, side, feats, des in groups:
        if not feats.notches:
            continue
        px, py = frame.origin[0], frame.origin[1]
        dx, dy = frame.s[0], frame.s[1]
        sg = -1.0 if side == 0 else 1.0
        mx, my = sg * frame.u[0], sg * frame.u[1]
        off = [(x - px) * mx + (y - py) * my for x, y in pts_l]
        i = min(range(k), key=lambda j: max(abs(off[j]), abs(off[(j + 1) % k])))
        (ax, ay), (bx, by) = pts_l[i], pts_l[(i + 1) % k]
        sa = (ax - px) * dx + (ay - py) * dy
        sb = (bx - px) * dx + (by - py) * dy
        lo, hi = min(sa, sb), max(sa, sb)
        seq = inserts.setdefault(i, [])
        for n in feats.notches:
            s0, s1 = n.s0, n.s1
            if clip:
                s0, s1 = max(s0, lo), min(s1, hi)
                if s1 - s0 <= tol.length:
                    continue
            if s0 < lo - tol.length or s1 > hi + tol.length:
                raise HingeError(
                    f"hinge notch {s0:.3f}..{s1:.3f} mm of {cid(des.crease)} runs past the edge "
                    f"of {who} ({lo:.3f}..{hi:.3f} mm along the hinge); knuckles are longer than "
                    f"the edge"
                )
            ends = []
            for s_at in (s0, s1):
                t = (s_at - sa) / (sb - sa)
                ex, ey = ax + t * (bx - ax), ay + t * (by - ay)
                ends.append((t, (ex, ey), (px + s_at * dx + n.depth * mx,
                                           py + s_at * dy + n.depth * my),
                             (ex - px) * mx + (ey - py) * my))
            if any(n.depth <= e_off + tol.length for *_, e_off in ends):
                continue  # the edge is already behind this depth: nothing to cut
            (t0, e0, i0, _), (t1, e1, i1, _) = ends if sb >= sa else ends[::-1]
            seq.extend([(t0, 0, e0), (t0, 1, i0), (t0, 2, i1), (t0, 3, e1)])  # keyed by start
    if not inserts:
        return poly
    out: list[tuple[float, float]] = []
    for j in range(k):
        out.append(pts_l[j])
        for _, _, pt in sorted(inserts.get(j, []), key=lambda x: (x[0], x[1])):
            out.append(pt)
    res = simplify(np.array(out), tol)
    if check:
        check_notched(res, groups, who, tol)
    return res


def check_notched(poly: FloatArray, groups: Sequence[tuple[HingeFrame, int, SideFeatures,
                                                           HingeDesign]],
                  who: str, tol: Tolerances) -> None:
    """HingeError naming the panel and creases when the notched outline is not simple."""
    if self_intersects(poly, tol.length):
        creases = ", ".join(cid(g[3].crease) for g in groups if g[2].notches)
        raise HingeError(
            f"hinge notches of {creases} overlap on {who}: the usable hinge lengths leave too little "
            f"room at the panel's corners for the knuckles and their clearance notches"
        )


def self_intersects(poly: FloatArray, eps: float) -> bool:
    """True when two non-adjacent edges of a closed polygon cross, touch or overlap.

    ``eps`` (mm) is the distance below which a point counts as on a line. Vectorised over all
    edge pairs.
    """
    k = len(poly)
    a = poly
    b = np.concatenate([poly[1:], poly[:1]])
    d = b - a
    ln = np.maximum(np.hypot(d[:, 0], d[:, 1]), eps)

    def side(i_a: FloatArray, i_d: FloatArray, i_ln: FloatArray, p: FloatArray) -> FloatArray:
        """Signed distance of points p from the lines (broadcast), mm."""
        return (i_d[..., 0] * (p[..., 1] - i_a[..., 1])
                - i_d[..., 1] * (p[..., 0] - i_a[..., 0])) / i_ln

    A, D, L = a[:, None, :], d[:, None, :], ln[:, None]
    C, E = a[None, :, :], b[None, :, :]
    s1, s2 = side(A, D, L, C), side(A, D, L, E)
    s3 = side(C, d[None, :, :], ln[None, :], A)
    s4 = side(C, d[None, :, :], ln[None, :], A + D)
    proper = (s1 * s2 < 0) & (s3 * s4 < 0) & (np.abs(s1) > eps) & (np.abs(s2) > eps) \
        & (np.abs(s3) > eps) & (np.abs(s4) > eps)
    col = (np.abs(s1) <= eps) & (np.abs(s2) <= eps)
    u = d / ln[:, None]
    t_c = ((C - A) * u[:, None, :]).sum(-1)
    t_e = ((E - A) * u[:, None, :]).sum(-1)
    overlap = col & (np.maximum(t_c, t_e) > eps) & (np.minimum(t_c, t_e) < L - eps)
    # a vertex of one edge on another, non-adjacent edge (a T-junction)
    touch = ((np.abs(s1) <= eps) & (t_c >= -eps) & (t_c <= L + eps)) \
        | ((np.abs(s2) <= eps) & (t_e >= -eps) & (t_e <= L + eps))
    hit = proper | overlap | touch
    i, j = np.triu_indices(k, 2)
    keep = ~((i == 0) & (j == k - 1))
    return bool(hit[i[keep], j[keep]].any())


def simplify(poly: FloatArray, tol: Tolerances) -> FloatArray:
    """Drop repeated points, straight-through points and zero-width spikes (collinear)."""
    p = np.asarray(poly, dtype=float)
    while len(p) > 3:
        prev = np.concatenate([p[-1:], p[:-1]])
        u = p - prev
        keep = np.hypot(u[:, 0], u[:, 1]) > tol.merge
        if not keep.all():
            p = p[keep]
            continue
        v = np.concatenate([u[1:], u[:1]])
        cross = u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0]
        scale = np.maximum(np.hypot(u[:, 0], u[:, 1]), np.hypot(v[:, 0], v[:, 1]))
        flat = np.abs(cross) <= tol.length * scale
        if not flat.any():
            break
        # remove flagged points that do not follow another flagged point, then look again
        drop = flat & ~np.concatenate([flat[-1:], flat[:-1]])
        if not drop.any():
            drop = flat.copy()
            drop[1:] = False
        p = p[~drop]
    return p


def bevel_lines(slab: Slab, poly: FloatArray) -> list[tuple[str, FloatArray]]:
    """Where each cut plane meets the top and bottom faces, clipped to the outline."""
    out = []
    k = len(poly)
    for cut in slab.cuts:
        n = np.asarray(cut.normal, dtype=float)
        for layer, z in (("BEVEL", slab.z1), ("BEVEL-BOTTOM", slab.z0)):
            c = cut.offset - n[2] * z
            nn = n[:2]
            if np.linalg.norm(nn) == 0:
                continue
            vals = poly @ nn - c
            hits = []
            for i in range(k):
                va, vb = vals[i], vals[(i + 1) % k]
                if (va < 0) != (vb < 0):
                    t = va / (va - vb)
                    hits.append(poly[i] + t * (poly[(i + 1) % k] - poly[i]))
            if len(hits) >= 2:
                d = np.array([-nn[1], nn[0]])
                hs = sorted(hits, key=lambda p: float(p @ d))
                out.append((layer, np.array([hs[0], hs[-1]])))
    return out


def rigid_fits(src: FloatArray, dst: FloatArray,
               eps: float) -> list[tuple[int, FloatArray, FloatArray]]:
    """Proper rigid motions of the plane that carry outline ``src`` onto outline ``dst``.

    For every cyclic start ``i`` the rotation is the least-squares (Kabsch) fit of the centred
    vertex sets ``src[(j + i) % k] -> dst[j]``; a 2D rotation has determinant +1, so a mirror
    image never fits (a reflected panel is a different part). A start is kept when every vertex
    lands within ``eps`` of its partner.

    Parameters
    ----------
    src, dst : (k, 2) float, mm
        Outlines in the same orientation (counter-clockwise); different vertex counts never fit.
    eps : float, mm

    Returns
    -------
    list of (i, R, t)
        In increasing ``i``; ``R`` (2, 2) and ``t`` (2,) mm with ``dst[j] = R src[(j + i) % k] + t``.
    """
    a = np.asarray(dst, dtype=float)
    b0 = np.asarray(src, dtype=float)
    k = len(a)
    if len(b0) != k or k < 3:
        return []
    ca, cb = a.mean(axis=0), b0.mean(axis=0)
    a_c = a - ca
    # a rigid motion keeps each vertex's distance from the vertex centroid: only starts whose
    # first two vertices agree in that distance can fit
    ra, rb = np.hypot(*a_c.T), np.hypot(*(b0 - cb).T)
    starts = np.flatnonzero((np.abs(rb - ra[0]) <= eps) & (np.abs(np.roll(rb, -1) - ra[1]) <= eps))
    if len(starts) == 0:
        return []
    idx = (starts[:, None] + np.arange(k)[None, :]) % k
    b = b0[idx] - cb  # (shift, vertex, 2)
    cross = (b[..., 0] * a_c[None, :, 1] - b[..., 1] * a_c[None, :, 0]).sum(axis=1)
    dot = (b * a_c[None]).sum(axis=(1, 2))
    th = np.arctan2(cross, dot)
    c, s = np.cos(th)[:, None], np.sin(th)[:, None]
    rx = c * b[..., 0] - s * b[..., 1]
    ry = s * b[..., 0] + c * b[..., 1]
    res = np.hypot(rx - a_c[None, :, 0], ry - a_c[None, :, 1]).max(axis=1)
    out = []
    for n in np.flatnonzero(res <= eps):
        r = np.array([[math.cos(th[n]), -math.sin(th[n])], [math.sin(th[n]), math.cos(th[n])]])
        out.append((int(starts[n]), r, ca - r @ cb))
    return out


@dataclass
class PanelDescription:
    """A panel's full feature description in its flat sheet frame, for congruence tests.

    ``planes`` (c, 4): cut normals and offsets; ``frames`` (g, 4, 3): hinge frame origin and
    s, u, w axes of each hinge group; ``feats`` (g,): side, feature counts and pin diameter of
    each group (exact), ``values`` (g,): the hinge-frame numbers of its features (mm);
    ``standoffs``: (group index, (k, 2) footprint, z0, z1).
    """

    poly: FloatArray
    z: tuple[float, float]
    material: str
    planes: FloatArray
    frames: FloatArray
    feats: list[tuple]
    values: list[FloatArray]
    standoffs: list[tuple[int, FloatArray, float, float]]
    bucket: tuple


_FEATURES = ("notches", "barrels", "rods", "boxes", "recesses", "holes")


def _feature_numbers(feats: SideFeatures) -> tuple[tuple, FloatArray]:
    """(exact signature, numbers) of one side's features in hinge coordinates."""
    sig: list[Any] = []
    vals: list[float] = []
    for name in _FEATURES:
        items = getattr(feats, name)
        sig.append(len(items))
        for it in items:
            for x in vars(it).values():  # the fields of a frozen dataclass, in order
                sig.append(x is None)
                vals.append(0.0 if x is None else float(x))
    return tuple(sig), np.asarray(vals)


def describe_panel(slab: Slab, poly: FloatArray, groups: list, material: str) -> PanelDescription:
    """The full feature description of one panel in its flat sheet frame (see
    :class:`PanelDescription`), for :func:`rigid_match`.

    Parameters
    ----------
    slab : Slab
    poly : (k, 2) float, mm
        The slab outline with its hinge notches, counter-clockwise.
    groups : list of (HingeFrame, side, SideFeatures, HingeDesign)
        The panel's hinge lines, as the solid builder collects them.
    material : str
    """
    planes = np.array([[*c.normal, c.offset] for c in slab.cuts], dtype=float).reshape(-1, 4)
    frames = np.array([[fr.origin, fr.s, fr.u, fr.w] for fr, *_ in groups],
                      dtype=float).reshape(-1, 4, 3)
    feats, values = [], []
    for _fr, side, sf, des in groups:
        sig, vals = _feature_numbers(sf)
        feats.append((side, sig, des.info.get("pin_diameter")))
        values.append(vals)
    creases = [g[3].crease for g in groups]
    standoffs = [(creases.index(st.crease) if st.crease in creases else -1,
                  np.asarray(st.polygon, dtype=float), st.z0, st.z1) for st in slab.standoffs]
    nxt = poly[np.r_[1:len(poly), 0]]
    d = nxt - poly
    perimeter = float(np.hypot(d[:, 0], d[:, 1]).sum())
    area = 0.5 * float(poly[:, 0] @ nxt[:, 1] - nxt[:, 0] @ poly[:, 1])  # shoelace formula
    # coarse bucket: only decides which earlier panels are compared, never whether they match
    bucket = (len(poly), len(planes), len(groups), len(standoffs), material,
              round(area, _BUCKET_DIGITS), round(perimeter, _BUCKET_DIGITS))
    return PanelDescription(poly, (slab.z0, slab.z1), material, planes, frames, feats, values, standoffs,
                 bucket)


#: decimals of mm (mm^2) of the coarse buckets that pick candidate prototypes; a copy that falls
#: into a neighbouring bucket is only built on its own, congruence is always tested with ``tol``
_BUCKET_DIGITS = 3


def _pair(n_a: int, n_b: int, ok: Callable[[int, int], bool]) -> list[int] | None:
    """Greedy one-to-one pairing of items 0..n_a-1 with 0..n_b-1 under ``ok(i, j)``."""
    if n_a != n_b:
        return None
    free = list(range(n_b))
    out = []
    for i in range(n_a):
        j = next((j for j in free if ok(i, j)), None)
        if j is None:
            return None
        free.remove(j)
        out.append(j)
    return out


def _plane_ok(ok: np.ndarray, i: int, j: int) -> bool:
    return bool(ok[i, j])


def _group_ok(geo: np.ndarray, p: PanelDescription, q: PanelDescription, tol: Tolerances, i: int,
              j: int) -> bool:
    return bool(geo[i, j] and p.feats[i] == q.feats[j]
                and np.abs(p.values[i] - q.values[j]).max(initial=0.0) <= tol.merge)


def _standoff_ok(st: list, q: list, gmap: list[int], tol: Tolerances, i: int, j: int) -> bool:
    (g, fp, z0, z1), (gq, fq, zq0, zq1) = st[i], q[j]
    same_group = (g < 0 and gq < 0) or (g >= 0 and gmap[g] == gq)
    return bool(same_group and fp.shape == fq.shape and np.abs(fp - fq).max() <= tol.merge
                and abs(z0 - zq0) <= tol.merge and abs(z1 - zq1) <= tol.merge)


def rigid_match(p: PanelDescription, q: PanelDescription, tol: Tolerances) -> FloatArray | None:
    """The proper rigid motion carrying prototype ``q`` onto panel ``p``, or None.

    Tries the planar motions of :func:`rigid_fits` (outline vertices within ``tol.merge`` mm) in
    order and keeps the first under which every feature of ``p``, carried into ``q``'s frame,
    equals one of ``q``'s: z-range and material, cut planes (normals within ``tol.angle``,
    offsets within ``tol.merge``), hinge groups (frame origin and axes, side, feature counts and
    hinge-frame numbers, pin size) and standoffs (footprint, z-range, hinge group).

    Returns
    -------
    (4, 4) float or None
        ``x_p = M x_q`` between the two flat sheet frames (mm): a rotation about z and a
        translation in the sheet plane.
    """
    if p.bucket != q.bucket or p.material != q.material:
        return None
    if abs(p.z[0] - q.z[0]) > tol.merge or abs(p.z[1] - q.z[1]) > tol.merge:
        return None
    for _i, r, t in rigid_fits(p.poly, q.poly, tol.merge):
        r3 = np.eye(3)
        r3[:2, :2] = r
        t3 = np.array([t[0], t[1], 0.0])
        n = p.planes[:, :3] @ r3.T  # p's features carried into q's frame
        pl = np.column_stack([n, p.planes[:, 3] + n @ t3])
        if len(pl) != len(q.planes):
            return None
        ok = ((np.abs(pl[:, None, :3] - q.planes[None, :, :3]).max(axis=-1, initial=0.0)
               <= tol.angle) & (np.abs(pl[:, None, 3] - q.planes[None, :, 3]) <= tol.merge))
        if _pair(len(pl), len(q.planes), partial(_plane_ok, ok)) is None:
            continue
        fr = p.frames @ r3.T
        fr[:, 0] += t3
        if len(fr) != len(q.frames):
            return None
        geo = ((np.abs(fr[:, None, 0] - q.frames[None, :, 0]).max(axis=-1, initial=0.0)
                <= tol.merge)
               & (np.abs(fr[:, None, 1:] - q.frames[None, :, 1:]).max(axis=(-2, -1), initial=0.0)
                  <= tol.angle))
        gmap = _pair(len(fr), len(q.frames), partial(_group_ok, geo, p, q, tol))
        if gmap is None:
            continue
        st = [(g, fp @ r.T + t, z0, z1) for g, fp, z0, z1 in p.standoffs]
        if _pair(len(st), len(q.standoffs),
                 partial(_standoff_ok, st, q.standoffs, gmap, tol)) is None:
            continue
        m = np.eye(4)  # x_p = R^T (x_q - t)
        m[:2, :2] = r.T
        m[:2, 3] = -r.T @ t
        return m
    return None
