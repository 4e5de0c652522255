"""Sizes of a deployed or stowed array from point sets: principal-axis envelope, diameter, packing.

One home for these measures, used by the build summary and by ``metrics.json`` so that both
report the same numbers. Pure numpy/scipy; lengths in mm.
"""

from __future__ import annotations

import numpy as np

from .typing import FloatArray

__all__ = ["principal_frame", "principal_extents", "diameter", "packing_ratio"]


def principal_frame(pts: FloatArray) -> FloatArray:
    """(k, 3) points expressed in their principal axes (largest spread first), mm.

    The envelope of a folded array then does not depend on which panel the fold kept still. The
    box is aligned with the principal axes of the points, not the smallest possible box.
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
    """Deployed panel area over the stowed footprint (product of the two largest extents).

    Returns None when the footprint is zero.
    """
    e = np.sort(np.asarray(stowed_extents, dtype=float))[::-1]
    foot = float(e[0] * e[1])
    return float(deployed_area / foot) if foot > 0 else None
