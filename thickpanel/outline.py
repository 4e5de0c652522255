"""Panel outlines for the solid builder, in plain numpy (no CAD kernel).

- :func:`notched`: insert hinge notches (staircase steps along the hinge-side edge) into a slab
  outline, so the prism needs no boolean;
- :func:`self_intersects`: simple-polygon test (crossing, touching, collinear overlap);
- :func:`simplify`: drop repeated, straight-through and zero-width spike points;
- :func:`bevel_lines`: where cut planes meet the top and bottom faces.

Lengths mm; outlines are (k, 2) arrays, counter-clockwise.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from .errors import HingeError
from .pattern import cid
from .tolerances import Tolerances
from .typing import FloatArray

if TYPE_CHECKING:
    from hinges.base import HingeDesign, HingeFrame, SideFeatures

    from .thickness.plan import Slab

__all__ = ["notched", "self_intersects", "simplify", "bevel_lines"]


def notched(poly: FloatArray, groups: Sequence[tuple[HingeFrame, int, SideFeatures, HingeDesign]],
             who: str, tol: Tolerances, *, clip: bool = False) -> FloatArray:
    """Insert every hinge notch into the slab outline (no boolean needed).

    With ``clip`` (standoff blocks, shorter than the hinge) notches are clipped to the edge
    instead of refused.
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
    if self_intersects(res, tol.length):
        creases = ", ".join(cid(g[3].crease) for g in groups if g[2].notches)
        raise HingeError(
            f"hinge notches of {creases} overlap on {who}: the usable hinge lengths leave too little "
            f"room at the panel's corners for the knuckles and their clearance notches"
        )
    return res


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
