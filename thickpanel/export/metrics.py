"""``metrics.json``: deployed area and diameter, stowed envelope, packing ratio, mass, clearance.

- deployed area: sum of the panel outlines (flat), mm^2;
- deployed diameter: largest distance between two outline corners (flat), mm;
- stowed envelope: axis-aligned box of every part in the export's fold state, mm;
- packing ratio: deployed area / stowed footprint, the footprint being the product of the two
  largest envelope extents (the stack's face);
- total mass, g; minimum clearance from a clearance sweep when one is given, mm.
"""

from __future__ import annotations

import json
from typing import Any

import numpy as np

from .. import occ
from ..solids import PartSet
from .bom import CAUTION

__all__ = ["metrics", "metrics_json_bytes"]


def _diameter(points: np.ndarray) -> float:
    if len(points) < 2:
        return 0.0
    try:
        from scipy.spatial import ConvexHull

        pts = points[ConvexHull(points).vertices]
    except Exception:  # degenerate (collinear) point sets: use them all
        pts = points
    d = pts[:, None, :] - pts[None, :, :]
    return float(np.sqrt((d**2).sum(-1)).max())


def _total_mass(partset: PartSet) -> float | None:
    masses = [p.mass for p in partset.parts]
    if any(m is None for m in masses):
        return None  # some part has no material
    return round(float(sum(m for m in masses if m is not None)), 4)


def metrics(partset: PartSet, state: Any = None, clearance: Any = None) -> dict[str, Any]:
    """The metrics as a dict (lengths mm, areas mm^2, mass g)."""
    panels = [p for p in partset.parts if p.kind == "panel"]
    area = float(sum(p.area for p in panels))
    corners = np.vstack([p.outline for p in panels if p.outline is not None])
    st = state if state is not None else partset.state
    shapes = partset.placed(st) if st is not None else [p.frame_shape for p in partset.parts]
    box = occ.bbox(occ.compound(shapes))
    ext = box[1] - box[0]
    e = np.sort(ext)
    footprint = float(e[1] * e[2])
    out: dict[str, Any] = {
        "caution": CAUTION,
        "units": {"length": "mm", "area": "mm^2", "mass": "g"},
        "panels": len(panels),
        "parts": len(partset.parts),
        "deployed_area_mm2": round(area, 4),
        "deployed_diameter_mm": round(_diameter(corners), 4),
        "stowed_state_t": None if st is None or not np.isfinite(st.t) else round(float(st.t), 6),
        "stowed_envelope_mm": [round(float(x), 4) for x in ext],
        "stowed_box_mm": [[round(float(x), 4) for x in row] for row in box],
        "packing_ratio": round(area / footprint, 6) if footprint > 0 else None,
        "total_mass_g": _total_mass(partset),
        "min_clearance_mm": None,
    }
    if clearance is not None:
        mc = float(clearance.min_clearance)
        # JSON has no infinity: a path with no pair of slabs that counts has no minimum
        out["min_clearance_mm"] = round(mc, 6) if np.isfinite(mc) else None
        if getattr(clearance, "lower_bound", False):
            out["min_clearance_lower_bound"] = True
        where = getattr(clearance, "where", None)
        if where is not None:
            out["min_clearance_where"] = str(where)
    return out


def metrics_json_bytes(partset: PartSet, state: Any = None, clearance: Any = None) -> bytes:
    """``metrics.json`` content."""
    return (json.dumps(metrics(partset, state, clearance), indent=1, sort_keys=True) + "\n").encode()
