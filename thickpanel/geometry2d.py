"""Planar geometry on plain numpy arrays: polygon area/centroid, segment broad phase and tests.

All lengths are millimetres. Functions take and return plain arrays so they can be reused by the
pattern checks, the segment importer and the layouts.
"""

from __future__ import annotations

import numpy as np

from .typing import BoolArray, FloatArray, IntArray

__all__ = [
    "polygon_area",
    "polygon_centroid",
    "polygon_is_convex",
    "loop_measures",
    "segment_candidate_pairs",
    "segment_pair_relations",
    "point_segment_distance",
    "clip_halfplane",
    "clip_convex",
]


def polygon_area(poly: FloatArray) -> float:
    """Signed area of a closed polygon, positive when counter-clockwise.

    Parameters
    ----------
    poly : (k, 2) float, mm
        Polygon vertices in order, not repeating the first.

    Returns
    -------
    float, mm^2

    Examples
    --------
    >>> polygon_area(np.array([[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]]))
    2.0
    """
    x = poly[:, 0]
    y = poly[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def polygon_centroid(poly: FloatArray) -> FloatArray:
    """Area centroid of a simple polygon, (2,) float in mm (vertex mean if the area is ~0)."""
    x = poly[:, 0]
    y = poly[:, 1]
    xn = np.roll(x, -1)
    yn = np.roll(y, -1)
    cross = x * yn - xn * y
    a = 0.5 * cross.sum()
    if abs(a) < 1e-300:
        return poly.mean(axis=0)
    cx = ((x + xn) * cross).sum() / (6.0 * a)
    cy = ((y + yn) * cross).sum() / (6.0 * a)
    return np.array([cx, cy])


def polygon_is_convex(poly: FloatArray, *, angle_tol: float) -> bool:
    """True when the counter-clockwise polygon has no reflex corner.

    Corners whose turn is within ``angle_tol`` radians of straight count as convex.
    """
    d = np.roll(poly, -1, axis=0) - poly
    dn = np.roll(d, -1, axis=0)
    cross = d[:, 0] * dn[:, 1] - d[:, 1] * dn[:, 0]
    norm = np.linalg.norm(d, axis=1) * np.linalg.norm(dn, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        s = np.where(norm > 0, cross / np.where(norm > 0, norm, 1.0), 0.0)
    return bool(np.all(s >= -np.sin(angle_tol)))


def loop_measures(
    verts: FloatArray, offsets: IntArray, loop_vertices: IntArray, *, angle_tol: float
) -> tuple[FloatArray, FloatArray, BoolArray]:
    """Signed area, centroid and convexity of many closed loops at once (CSR layout).

    Parameters
    ----------
    verts : (n, 2) float, mm
    offsets : (f + 1,) int
        Loop ``q`` is ``loop_vertices[offsets[q]:offsets[q + 1]]``; every loop has >= 1 entry.
    loop_vertices : (e,) int
        Vertex indices of the loops, in order.
    angle_tol : float, rad
        Corners within this of straight count as convex (as :func:`polygon_is_convex`).

    Returns
    -------
    area : (f,) float, mm^2
        Positive for counter-clockwise loops (shoelace formula relative to each loop's first vertex).
    centroid : (f, 2) float, mm
        Area centroid (vertex mean where the area vanishes).
    convex : (f,) bool
    """
    f = len(offsets) - 1
    counts = np.diff(offsets)
    owner = np.repeat(np.arange(f), counts)
    nxt = np.arange(len(loop_vertices)) + 1
    nxt[offsets[1:] - 1] = offsets[:-1]
    ref = verts[loop_vertices[offsets[:-1]]]
    p = verts[loop_vertices] - ref[owner]
    q = p[nxt]
    cross = p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]
    twice = np.bincount(owner, weights=cross, minlength=f)
    area = 0.5 * twice
    cx = np.bincount(owner, weights=(p[:, 0] + q[:, 0]) * cross, minlength=f)
    cy = np.bincount(owner, weights=(p[:, 1] + q[:, 1]) * cross, minlength=f)
    mean = np.stack(
        [np.bincount(owner, weights=p[:, 0], minlength=f), np.bincount(owner, weights=p[:, 1], minlength=f)], 1
    ) / np.maximum(counts, 1)[:, None]
    with np.errstate(invalid="ignore", divide="ignore"):
        cen = np.stack([cx, cy], 1) / (3.0 * twice)[:, None]
    flat = np.abs(twice) < 1e-300
    cen[flat] = mean[flat]
    # convexity: turn from edge k to edge k + 1 never clockwise beyond angle_tol
    d = q - p
    dn = d[nxt]
    turn = d[:, 0] * dn[:, 1] - d[:, 1] * dn[:, 0]
    norm = np.linalg.norm(d, axis=1) * np.linalg.norm(dn, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        sn = np.where(norm > 0, turn / np.where(norm > 0, norm, 1.0), 0.0)
    reflex = np.bincount(owner, weights=(sn < -np.sin(angle_tol)), minlength=f)
    return np.asarray(area, dtype=np.float64), np.asarray(cen + ref, dtype=np.float64), np.asarray(reflex == 0)


def _sweep_pairs(lo: FloatArray, hi: FloatArray) -> IntArray:
    """Sort-and-sweep broad phase on whichever axis gives fewer candidates."""
    m = len(lo)
    best: IntArray | None = None
    for axis in (0, 1):
        order = np.argsort(lo[:, axis], kind="stable")
        slo = lo[order, axis]
        # for each sorted segment i, the candidates are the sorted j > i with lo_j <= hi_i
        end = np.searchsorted(slo, hi[order, axis], side="right")
        counts = np.maximum(end - np.arange(m) - 1, 0)
        total = int(counts.sum())
        if best is not None and total >= len(best):
            continue
        first = np.repeat(np.arange(m), counts)
        offs = np.arange(total) - np.repeat(np.cumsum(counts) - counts, counts)
        second = first + 1 + offs
        i = order[first]
        j = order[second]
        other = 1 - axis
        keep = (lo[i, other] <= hi[j, other]) & (lo[j, other] <= hi[i, other])
        pairs = np.stack([np.minimum(i, j)[keep], np.maximum(i, j)[keep]], axis=1)
        best = pairs
    assert best is not None
    return best


def _grid_pairs(lo: FloatArray, hi: FloatArray, *, max_fill: int) -> IntArray | None:
    """Uniform-grid broad phase; None when long boxes would fill too many cells."""
    m = len(lo)
    ext = np.max(hi - lo, axis=1)
    cell = float(np.median(ext))
    span = float(np.max(hi.max(axis=0) - lo.min(axis=0)))
    if not (cell > 0 and np.isfinite(cell)):
        return None
    base = lo.min(axis=0)
    for _ in range(4):
        c0 = np.floor((lo - base) / cell).astype(np.int64)
        c1 = np.floor((hi - base) / cell).astype(np.int64)
        nxc = c1[:, 0] - c0[:, 0] + 1
        nyc = c1[:, 1] - c0[:, 1] + 1
        count = nxc * nyc
        total = int(count.sum())
        if total <= max_fill * m:
            break
        cell *= 4.0
        if cell > span:
            return None
    else:
        return None
    seg = np.repeat(np.arange(m), count)
    local = np.arange(total) - np.repeat(np.cumsum(count) - count, count)
    cx = c0[seg, 0] + local % nxc[seg]
    cy = c0[seg, 1] + local // nxc[seg]
    key = cx * (int(c1[:, 1].max()) + 1) + cy
    order = np.argsort(key, kind="stable")
    key_s = key[order]
    seg_s = seg[order]
    pos = np.arange(total)
    end = np.searchsorted(key_s, key_s, side="right")
    counts = end - pos - 1
    npair = int(counts.sum())
    first = np.repeat(pos, counts)
    second = first + 1 + (np.arange(npair) - np.repeat(np.cumsum(counts) - counts, counts))
    i = seg_s[first]
    j = seg_s[second]
    a = np.minimum(i, j)
    b = np.maximum(i, j)
    uniq = np.unique(a * m + b)
    a, b = uniq // m, uniq % m
    keep = np.all(lo[a] <= hi[b], axis=1) & np.all(lo[b] <= hi[a], axis=1)
    return np.stack([a[keep], b[keep]], axis=1).astype(np.int64)


def segment_candidate_pairs(a: FloatArray, b: FloatArray, *, pad: float) -> IntArray:
    """Index pairs (i, j), i < j, of segments whose padded bounding boxes overlap.

    A uniform-grid hash (cell = median box size) for large inputs, falling back to a
    sort-and-sweep when a few long segments would fill the grid; fully vectorised.

    Parameters
    ----------
    a, b : (m, 2) float, mm
        Segment end points.
    pad : float, mm
        Each box is grown by this much on every side.

    Returns
    -------
    (p, 2) int
        Sorted by (i, j) for the grid path; every overlapping pair exactly once.
    """
    m = len(a)
    if m < 2:
        return np.zeros((0, 2), dtype=np.int64)
    lo = np.minimum(a, b) - pad
    hi = np.maximum(a, b) + pad
    if m >= 256:
        pairs = _grid_pairs(lo, hi, max_fill=16)
        if pairs is not None:
            return pairs
    return _sweep_pairs(lo, hi)


def point_segment_distance(p: FloatArray, a: FloatArray, b: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Distance from points to segments, row by row, and the segment parameter of the foot.

    Parameters
    ----------
    p, a, b : (k, 2) float, mm

    Returns
    -------
    dist : (k,) float, mm
    s : (k,) float
        Parameter in [0, 1] of the closest point a + s (b - a).
    """
    d = b - a
    dd = np.einsum("ij,ij->i", d, d)
    with np.errstate(invalid="ignore", divide="ignore"):
        s = np.where(dd > 0, np.einsum("ij,ij->i", p - a, d) / np.where(dd > 0, dd, 1.0), 0.0)
    s = np.clip(s, 0.0, 1.0)
    foot = a + s[:, None] * d
    return np.linalg.norm(p - foot, axis=1), s


def segment_pair_relations(
    a: FloatArray, b: FloatArray, pairs: IntArray, *, tol: float
) -> tuple[IntArray, FloatArray, FloatArray]:
    """Classify candidate segment pairs as crossing, T-junction, overlapping or clear.

    End points closer than ``tol`` count as shared.

    Parameters
    ----------
    a, b : (m, 2) float, mm
        Segment end points.
    pairs : (p, 2) int
        Candidate pairs from :func:`segment_candidate_pairs`.
    tol : float, mm
        Merge distance.

    Returns
    -------
    relation : (p,) int
        0 clear or meeting only at a shared end point, 1 proper crossing, 2 T-junction (an end
        point of one lies inside the other), 3 collinear overlap.
    s_i, s_j : (p,) float
        Parameters along segment i and j of the (first) meeting point; NaN where clear.
    """
    i, j = pairs[:, 0], pairs[:, 1]
    p1, p2, q1, q2 = a[i], b[i], a[j], b[j]
    r = p2 - p1
    s = q2 - q1
    rxs = r[:, 0] * s[:, 1] - r[:, 1] * s[:, 0]
    qp = q1 - p1
    qpxr = qp[:, 0] * r[:, 1] - qp[:, 1] * r[:, 0]
    qpxs = qp[:, 0] * s[:, 1] - qp[:, 1] * s[:, 0]
    len_r = np.linalg.norm(r, axis=1)
    len_s = np.linalg.norm(s, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        t_i = qpxs / rxs
        t_j = qpxr / rxs
    n = len(pairs)
    relation = np.zeros(n, dtype=np.int64)
    si = np.full(n, np.nan)
    sj = np.full(n, np.nan)
    # proper crossing: interior parameters on both, away from the ends by more than tol
    with np.errstate(invalid="ignore"):
        mi = tol / np.where(len_r > 0, len_r, 1.0)
        mj = tol / np.where(len_s > 0, len_s, 1.0)
        cross = (
            (np.abs(rxs) > 0)
            & (t_i > mi) & (t_i < 1 - mi)
            & (t_j > mj) & (t_j < 1 - mj)
        )
    relation[cross] = 1
    si[cross] = t_i[cross]
    sj[cross] = t_j[cross]
    # end points lying inside the other segment: T-junctions or overlaps
    tests = ((q1, p1, p2), (q2, p1, p2), (p1, q1, q2), (p2, q1, q2))
    hits = np.zeros((n, 4), dtype=bool)
    params = np.full((n, 4), np.nan)
    for k, (pt, sa, sb) in enumerate(tests):
        dist, par = point_segment_distance(pt, sa, sb)
        seg_len = np.linalg.norm(sb - sa, axis=1)
        margin = tol / np.where(seg_len > 0, seg_len, 1.0)
        inside = (dist < tol) & (par > margin) & (par < 1 - margin)
        hits[:, k] = inside
        params[:, k] = par
    on_i = hits[:, 0] | hits[:, 1]
    on_j = hits[:, 2] | hits[:, 3]
    with np.errstate(invalid="ignore", divide="ignore"):
        sin_angle = np.abs(rxs) / np.where(len_r * len_s > 0, len_r * len_s, 1.0)
    overlap = (on_i | on_j) & (sin_angle < 1e-9)
    tee = (on_i | on_j) & ~overlap & ~cross
    relation[tee] = 2
    relation[overlap & ~cross] = 3
    for k in range(4):
        sel = hits[:, k] & np.isnan(si) & (relation >= 2)
        if k < 2:
            si[sel] = params[sel, k]
            sj[sel] = 0.0 if k == 0 else 1.0
        else:
            sj[sel] = params[sel, k]
            si[sel] = 0.0 if k == 2 else 1.0
    return relation, si, sj


def clip_halfplane(poly: FloatArray, normal: FloatArray, offset: float) -> FloatArray:
    """Part of a polygon where ``normal . x <= offset`` (one Sutherland & Hodgman 1974 pass).

    Parameters
    ----------
    poly : (k, 2) float, mm
        Polygon in order (convex for a single-piece result).
    normal : (2,) float
    offset : float, mm

    Returns
    -------
    (j, 2) float, mm; empty when nothing is kept.
    """
    out = np.asarray(poly, float)
    if len(out) == 0:
        return out.reshape(0, 2)
    side = offset - out @ np.asarray(normal, float)
    res = []
    for k in range(len(out)):
        p, q = out[k], out[(k + 1) % len(out)]
        sp, sq = side[k], side[(k + 1) % len(out)]
        if sp >= 0:
            res.append(p)
        if (sp >= 0) != (sq >= 0):
            res.append(p + (sp / (sp - sq)) * (q - p))
    return np.array(res, dtype=float).reshape(-1, 2)


def clip_convex(subject: FloatArray, clip: FloatArray) -> FloatArray:
    """Intersection of two convex counter-clockwise polygons (Sutherland & Hodgman 1974), (k, 2)."""
    out = np.asarray(subject, float)
    c = np.asarray(clip, float)
    for i in range(len(c)):
        if len(out) == 0:
            break
        a, b = c[i], c[(i + 1) % len(c)]
        e = b - a
        n = np.array([e[1], -e[0]])  # keeps the left side of a -> b
        out = clip_halfplane(out, n, float(n @ a))
    return out
