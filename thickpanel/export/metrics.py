"""``metrics.json``: deployed area and diameter, stowed envelope, packing ratio, mass, clearance.

- deployed area: sum of the panel outlines (flat), mm^2;
- deployed diameter: largest distance between two outline corners (flat), mm;
- stowed envelope: extents along the principal axes of every part in the export's fold state
  (panel outlines at their slab faces, hardware by its box), largest first, mm; so it does not
  depend on which panel the fold kept still. ``stowed_box_mm`` is the axis-aligned box in the
  assembly frame, for placing the array in CAD;
- packing ratio: deployed area / stowed footprint, the footprint being the product of the two
  largest envelope extents (the stack's face); the measures live in :mod:`thickpanel.envelope`;
- total mass, g; minimum clearance from a clearance sweep when one is given, mm.
"""

from __future__ import annotations

import json
from typing import Any

import numpy as np

from .. import occ
from ..envelope import diameter, packing_ratio, principal_extents
from ..solids import PartSet
from .bom import CAUTION

__all__ = ["metrics", "metrics_json_bytes"]


def _part_points(partset: PartSet, state: Any) -> np.ndarray:
    """(k, 3) points of every part placed for ``state``: panel outlines at both slab faces,
    other parts by the corners of their box in the panel frame, mm."""
    poses = partset.poses(state)
    slabs = {sl.panel: sl for sl in partset.plan.slabs}
    out = []
    for p in partset.in_state(state):
        if p.kind == "panel" and p.outline is not None:
            sl = slabs[p.panel]
            o = np.asarray(p.outline, dtype=float)
            pts = np.vstack([np.column_stack([o, np.full(len(o), z)]) for z in (sl.z0, sl.z1)])
        else:
            b = occ.bbox(p.frame_shape)
            pts = np.array([[b[i, 0], b[j, 1], b[k, 2]] for i in (0, 1) for j in (0, 1) for k in (0, 1)])
        pose = poses[p.panel]
        out.append(pts @ pose[:3, :3].T + pose[:3, 3])
    return np.vstack(out)


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
    shapes = partset.placed(st) if st is not None else [p.frame_shape for p in partset.in_state(None)]
    box = occ.bbox(occ.compound(shapes))
    ext = principal_extents(_part_points(partset, st))
    out: dict[str, Any] = {
        "caution": CAUTION,
        "units": {"length": "mm", "area": "mm^2", "mass": "g"},
        "panels": len(panels),
        "parts": len(partset.parts),
        "deployed_area_mm2": round(area, 4),
        "deployed_diameter_mm": round(diameter(corners), 4),
        "stowed_state_t": None if st is None or not np.isfinite(st.t) else round(float(st.t), 6),
        "stowed_envelope_mm": [round(float(x), 4) for x in ext],
        "stowed_box_mm": [[round(float(x), 4) for x in row] for row in box],
        "packing_ratio": None if (pr := packing_ratio(area, ext)) is None else round(pr, 6),
        "total_mass_g": _total_mass(partset),
        "min_clearance_mm": None,
    }
    from ..wrap.metrics import wrap_metrics

    # hub-wrap arrays: diameters about the hub axis and the stowed-annulus figures (one source)
    out.update({k: round(v, 6) for k, v in wrap_metrics(partset.plan.pattern, partset.plan).items()})
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
