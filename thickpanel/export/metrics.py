"""``metrics.json``: the figures of the array and of the fold state the file is written for.

Every figure is defined once in :mod:`thickpanel.figures`. A build passes the figures it computed
(``figures=``), and the file repeats them unchanged, so the summary (``--json``), the report and
every ``metrics.json`` give the same numbers. Without them (a part set exported from the API) the
file computes the same figures with the same functions from the part set's plan and hinge recipes.

- state figures: ``state_t``, ``fold_deg``, ``box_mm`` (axis-aligned box in the design's frame,
  x, y, z), ``box_corners_mm`` and, for arrays with a hub, ``cylinder_mm`` (enclosing cylinder
  about the hub axis: diameter, height);
- array figures: ``deployed_area_mm2``, ``deployed_diameter_mm`` (largest distance between two
  outline corners of the flat sheet), and, from a build, ``deployed_envelope_mm``,
  ``stowed_envelope_mm`` with ``stowed_state_t``/``stowed_fold_deg`` (only the stowed state's
  figures are called stowed), ``packing_ratio``;
- ``total_mass_g``; ``min_clearance_mm`` with ``min_clearance_lower_bound`` (True: the value is
  only a bound, "at least") and ``min_clearance_text``, the wording every output uses.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from typing import Any

import numpy as np

from ..envelope import diameter
from ..figures import BOX_LABEL, array_points, clearance_figures, hub_axis, state_figures
from ..hardware import hardware_pieces
from ..solids import PartSet
from .bom import CAUTION

__all__ = ["metrics", "metrics_json_bytes"]


def _total_mass(partset: PartSet) -> float | None:
    masses = [p.mass for p in partset.parts]
    if any(m is None for m in masses):
        return None  # some part has no material
    return round(float(sum(m for m in masses if m is not None)), 4)


def _own_state_figures(partset: PartSet, st: Any) -> dict[str, Any]:
    """State figures from the part set itself (no build): its plan's slabs and hinge recipes."""
    plan = partset.plan
    poses = partset.poses(st)
    hw = hardware_pieces(plan, partset.designs) if len(partset.designs) == len(plan.hinges) else []
    pts = array_points(plan.pattern, poses, plan=plan, hardware=hw)
    t = 0.0 if st is None else float(st.t)
    ang = np.asarray(st.angles) if st is not None else np.zeros(0)
    fold = float(np.degrees(np.abs(ang).max())) if ang.size else 0.0
    out = state_figures(pts, t=t, fold_deg=fold, poses=poses, hub=hub_axis(plan.pattern))
    out["envelope"] = BOX_LABEL
    return out


def metrics(partset: PartSet, state: Any = None, clearance: Any = None, *,
            figures: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """The metrics as a dict (lengths mm, areas mm^2, mass g); ``figures`` from a build win."""
    panels = [p for p in partset.parts if p.kind == "panel"]
    area = float(sum(p.area for p in panels))
    corners = np.vstack([p.outline for p in panels if p.outline is not None])
    st = state if state is not None else partset.state
    out: dict[str, Any] = {
        "caution": CAUTION,
        "units": {"length": "mm", "area": "mm^2", "mass": "g", "angle": "deg"},
        "panels": len(panels),
        "parts": len(partset.parts),
        "deployed_area_mm2": round(area, 4),
        "deployed_diameter_mm": round(diameter(corners), 4),
        "total_mass_g": _total_mass(partset),
        "min_clearance_mm": None,
    }
    if figures is None:
        out.update(_own_state_figures(partset, st))
        if clearance is not None:
            out.update(clearance_figures(clearance))
        from ..wrap.metrics import wrap_metrics

        # hub-wrap arrays: deployed diameter about the hub axis and the stowed-annulus figures
        out.update({k: round(v, 6) for k, v in wrap_metrics(partset.plan.pattern, partset.plan).items()})
    else:
        out.update(figures)
    return out


def metrics_json_bytes(partset: PartSet, state: Any = None, clearance: Any = None, *,
                       figures: Mapping[str, Any] | None = None) -> bytes:
    """``metrics.json`` content."""
    data = metrics(partset, state, clearance, figures=figures)
    return (json.dumps(_plain(data), indent=1, sort_keys=True, allow_nan=False) + "\n").encode()


def _plain(x: Any) -> Any:
    """JSON-ready copy: numpy scalars to Python, non-finite floats to None."""
    if isinstance(x, Mapping):
        return {str(k): _plain(v) for k, v in x.items()}
    if isinstance(x, list | tuple):
        return [_plain(v) for v in x]
    if isinstance(x, np.generic):
        x = x.item()
    if isinstance(x, float) and not np.isfinite(x):
        return None
    return x
