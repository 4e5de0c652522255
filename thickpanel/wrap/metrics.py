"""Stowed-state figures of a wrapped-hub array (one source for the report, ``--json`` and
``metrics.json``).

All about the hub axis (the z axis through the hub centre, the origin of the flat sheet):

* ``deployed_diameter_mm``: diameter of the smallest circle about the hub centre holding the flat
  sheet (its circumscribed outline);
* ``stowed_diameter_mm``: diameter of the enclosing cylinder about the hub axis of every stowed slab
  (exact: the largest distance of a convex prism from an axis is reached at a corner);
* ``stowed_height_mm``: extent of the stowed slabs along the hub axis;
* ``diameter_ratio``: deployed / stowed diameter;
* ``packaging_efficiency``: volume of the slabs outside the hub / volume of the stowed annulus
  between the hub prism and the enclosing cylinder over the stowed height,
  ``V / ((pi R_s^2 - A_hub) H)``;
* ``stowed_radius_bound_mm``: the volume-conservation lower bound on the stowed radius,
  ``sqrt(R_h^2 + A t / (pi H))`` with A the plate area outside the hub and t the plate thickness
  (``A t`` = the volume the annulus must hold; our derivation: pi (R_s^2 - R_h^2) H >= A t).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from ..geometry2d import polygon_area
from ..typing import FloatArray
from .sheet import wrap_info

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..thickness.plan import ThickPlan

__all__ = ["wrap_metrics", "WRAP_METRIC_KEYS"]

WRAP_METRIC_KEYS = ("deployed_diameter_mm", "stowed_diameter_mm", "stowed_height_mm", "diameter_ratio",
                    "packaging_efficiency", "stowed_radius_bound_mm")


def _corners(poly: FloatArray, z0: float, z1: float, pose: FloatArray) -> FloatArray:
    n = len(poly)
    h = np.vstack([np.column_stack([poly, np.full(n, z), np.ones(n)]) for z in (z0, z1)])
    return (h @ pose.T)[:, :3]


def wrap_metrics(pattern: CreasePattern, plan: ThickPlan | None = None, *,
                 stowed_poses: FloatArray | None = None, thickness: float | None = None,
                 cylinder: tuple[float, float] | None = None) -> dict[str, float]:
    """The stowed-state figures of a hub-wrap array (keys :data:`WRAP_METRIC_KEYS`, mm).

    Parameters
    ----------
    pattern : CreasePattern
        Made by the ``hub-wrap`` layout.
    plan : ThickPlan, optional
        Slabs (plates and their z-ranges); without it the construction's plates with
        ``thickness`` (default the layout's panel thickness) centred on the reference plane.
    stowed_poses : (P, 4, 4) float, optional
        Default the plan's explicit poses at t = 1, else the construction's stowed poses.
    thickness : float, mm, optional
    cylinder : (float, float), mm, optional
        ``(stowed diameter, stowed height)`` already computed by the build
        (:func:`thickpanel.figures.array_figures`, the same enclosing cylinder about the hub axis,
        hinge hardware included); the ratio, efficiency and bound then use these values.

    Returns
    -------
    dict
        Empty when the pattern is not a hub-wrap sheet.
    """
    info = wrap_info(pattern)
    if info is None:
        return {}
    if stowed_poses is None:
        got = plan.explicit_at(1.0) if plan is not None else None
        stowed_poses = np.asarray(got if got is not None else info.stowed_poses, dtype=float)
    if plan is not None:
        slabs = [(sl.panel, sl.polygon_array(), sl.z0, sl.z1) for sl in plan.slabs]
    else:
        t = float(info.params.get("panel_thickness", 0.0)) if thickness is None else float(thickness)
        slabs = [(p, np.asarray(pc.plate, dtype=float), -t / 2.0, t / 2.0) for p, pc in enumerate(info.pieces)]
    hub_panels = {p for p, pc in enumerate(info.pieces) if pc.kind == "hub"}
    if cylinder is not None:
        r_s, height = float(cylinder[0]) / 2.0, float(cylinder[1])
    else:
        pts = np.vstack([_corners(poly, z0, z1, stowed_poses[p]) for p, poly, z0, z1 in slabs])
        r_s = float(np.hypot(pts[:, 0], pts[:, 1]).max())
        height = float(np.ptp(pts[:, 2]))
    outline = pattern.vertices
    r_d = float(np.hypot(outline[:, 0], outline[:, 1]).max())
    area_out = 0.0
    vol_out = 0.0
    for p, poly, z0, z1 in slabs:
        if p in hub_panels:
            continue
        a = abs(float(polygon_area(poly)))
        area_out += a
        vol_out += a * (z1 - z0)
    rh = float(info.params["hub_circumradius"])
    m = int(info.params["sides"])
    hub_area = 0.5 * m * rh * rh * math.sin(2.0 * math.pi / m)
    annulus = (math.pi * r_s * r_s - hub_area) * height
    t_eff = vol_out / area_out if area_out > 0 else 0.0
    bound = math.sqrt(rh * rh + area_out * t_eff / (math.pi * height)) if height > 0 else math.inf
    return {
        "deployed_diameter_mm": 2.0 * r_d,
        "stowed_diameter_mm": 2.0 * r_s,
        "stowed_height_mm": height,
        "diameter_ratio": r_d / r_s if r_s > 0 else math.inf,
        "packaging_efficiency": vol_out / annulus if annulus > 0 else 0.0,
        "stowed_radius_bound_mm": bound,
    }
