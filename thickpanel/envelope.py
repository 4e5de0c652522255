"""Sizes of a deployed or stowed array from point sets: boxes, cylinders, diameter, packing.

One home for these measures, used by the build's figures (:mod:`thickpanel.figures`), which the
summary, ``metrics.json``, the report and the command line all read. Pure numpy/scipy; lengths in
mm. Any layout can call them on its own points (a hub-wrapped array, for instance, reports its
stowed diameter and height from :func:`enclosing_cylinder`).

- :func:`box_extents` / :func:`box_corners`: the axis-aligned box in the frame the points are
  given in (for an array: the design's frame, the fold's fixed panel staying where it is drawn);
- :func:`enclosing_cylinder`: the smallest cylinder *about a given axis* holding the points
  (diameter = twice the largest distance from the axis, height = extent along it);
- :func:`principal_extents`: a box along the points' principal axes. It is neither the
  axis-aligned box nor the minimum-volume box (a square's principal axes are arbitrary), so the
  build does not report it.
"""

from __future__ import annotations

import numpy as np

from .typing import FloatArray

__all__ = ["box_extents", "box_corners", "enclosing_cylinder", "principal_frame", "principal_extents",
           "diameter", "packing_ratio"]


def box_corners(pts: FloatArray) -> FloatArray:
    """(2, 3) float, mm: lowest and highest corner of the axis-aligned box of (k, 3) points.

    Examples
    --------
    >>> box_corners([[0.0, 1.0, 2.0], [3.0, -1.0, 2.5]]).tolist()
    [[0.0, -1.0, 2.0], [3.0, 1.0, 2.5]]
    """
    p = np.asarray(pts, dtype=float).reshape(-1, 3)
    if not len(p):
        raise ValueError("box of an empty point set")
    return np.vstack([p.min(axis=0), p.max(axis=0)])


def box_extents(pts: FloatArray) -> FloatArray:
    """(3,) float, mm: x, y and z extents of the axis-aligned box of (k, 3) points (in that order).

    Examples
    --------
    >>> box_extents([[0.0, 0.0, 0.0], [240.0, 240.0, 3.0]]).tolist()
    [240.0, 240.0, 3.0]
    """
    lo, hi = box_corners(pts)
    return np.asarray(hi - lo)


def enclosing_cylinder(pts: FloatArray, point: FloatArray, direction: FloatArray) -> tuple[float, float]:
    """``(diameter, height)`` in mm of the smallest cylinder about the axis through ``point`` along
    ``direction`` that holds the (k, 3) points.

    The diameter is twice the largest distance of a point from the axis; the height is the extent
    of the points along the axis. The axis is given, not fitted: for a disc it is the hub axis.

    Examples
    --------
    >>> enclosing_cylinder([[3.0, 4.0, 0.0], [0.0, 0.0, 7.0]], [0, 0, 0], [0, 0, 2.0])
    (10.0, 7.0)
    """
    p = np.asarray(pts, dtype=float).reshape(-1, 3) - np.asarray(point, dtype=float)
    d = np.asarray(direction, dtype=float)
    n = float(np.linalg.norm(d))
    if not len(p) or not (n > 0 and np.isfinite(n)):
        raise ValueError(f"enclosing cylinder needs points and a non-zero axis direction (got {direction!r})")
    d = d / n
    along = p @ d
    radial = np.linalg.norm(p - along[:, None] * d, axis=1)
    return float(2.0 * radial.max()), float(along.max() - along.min())


def principal_frame(pts: FloatArray) -> FloatArray:
    """(k, 3) points expressed in their principal axes (largest spread first), mm.

    The box along these axes is not the smallest possible box, and for symmetric point sets (a
    square sheet) the axes are arbitrary; the build reports :func:`box_extents` instead.
    """
    p = np.asarray(pts, dtype=float)
    c = p - p.mean(axis=0)
    _, _, vt = np.linalg.svd(c, full_matrices=False)
    return np.asarray(c @ vt.T)


def principal_extents(pts: FloatArray) -> FloatArray:
    """(3,) float, mm: extents of the points along their principal axes, largest first."""
    q = principal_frame(pts)
    return np.sort(q.max(axis=0) - q.min(axis=0))[::-1]


def diameter(points: FloatArray) -> float:
    """Largest distance between two of the points, mm (over their convex hull)."""
    pts = np.asarray(points, dtype=float)
    if len(pts) < 2:
        return 0.0
    try:
        from scipy.spatial import ConvexHull

        pts = pts[ConvexHull(pts).vertices]
    except Exception:  # degenerate (collinear or coplanar in 3-D) point sets: use them all
        pass
    d = pts[:, None, :] - pts[None, :, :]
    return float(np.sqrt((d**2).sum(-1)).max())


def packing_ratio(deployed_area: float, stowed_extents: FloatArray) -> float | None:
    """Deployed panel area over the stowed footprint: the product of the two largest extents of
    the stowed box (``stowed_extents``, mm; area in mm^2).

    Returns None when the footprint is zero.
    """
    e = np.sort(np.asarray(stowed_extents, dtype=float))[::-1]
    foot = float(e[0] * e[1])
    return float(deployed_area / foot) if foot > 0 else None
