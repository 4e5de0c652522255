"""The headline figures of an array, computed once and read by every output (pure numpy/scipy).

The build (:mod:`thickpanel.build`) computes these figures once per run and stores them in its
metrics; the command line's table, ``--json``, the HTML report and every ``metrics.json`` read
those values, so a figure is the same number everywhere. Without a build (a part set exported
from the API), ``metrics.json`` computes them with these same functions.

Figures of one fold state (keys of :func:`state_figures`):

- ``state_t``: the state's fold fraction; ``fold_deg``: its largest crease fold, deg;
- ``box_mm``: x, y and z extents of the axis-aligned box in the design's frame (the fold's fixed
  panel stays where the design draws it), mm, over every slab (cut planes and standoffs included)
  and every piece of hinge hardware (:mod:`thickpanel.hardware`, disks by their circumscribed
  polygons, so the box holds the built parts and exceeds them by at most 0.9 % of a barrel radius);
- ``box_corners_mm``: that box's lowest and highest corner, mm;
- ``cylinder_mm`` (arrays with a hub only): ``[diameter, height]`` of the enclosing cylinder about
  the hub axis, mm.

Array figures (:func:`array_figures`): ``deployed_*`` from the deployed state (t = 0) and
``stowed_*`` only from the stowed state (the last state of the fold path): the boxes
``deployed_envelope_mm`` / ``stowed_envelope_mm``, for arrays with a hub ``stowed_diameter_mm`` and
``stowed_height_mm`` (the stowed state's enclosing cylinder about the hub axis; any layout with a
hub axis reports these two names), the packing ratio (deployed panel area over the product of the
two largest stowed box extents) and the clearance. ``deployed_diameter_mm`` (the summary's) is the
largest distance between two vertices of the flat sheet.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from .envelope import box_corners, box_extents, enclosing_cylinder, packing_ratio
from .typing import FloatArray

if TYPE_CHECKING:
    from .collide import Piece
    from .pattern import CreasePattern
    from .thickness.plan import ThickPlan

__all__ = [
    "BOX_LABEL",
    "CYLINDER_LABEL",
    "array_points",
    "hub_axis",
    "state_figures",
    "array_figures",
    "clearance_figures",
    "clearance_text",
    "length_text",
]

BOX_LABEL = "axis-aligned box in the design's frame (x, y, z)"
CYLINDER_LABEL = "enclosing cylinder about the hub axis (diameter, height)"

_ROUND = 4  # decimals of mm figures (0.1 um: far below any manufacturing tolerance)


def array_points(
    pattern: CreasePattern, poses: FloatArray, *, plan: ThickPlan | None = None,
    hardware: Sequence[Piece] = (),
) -> FloatArray:
    """(k, 3) float, mm: corners of every slab piece and hardware piece placed by ``poses``
    ((P, 4, 4) panel poses), or of the bare panels when there is no ``plan``."""
    if plan is None:
        out = []
        for p in pattern.panels:
            poly = pattern.panel_polygon(p.index)
            h = np.column_stack([poly, np.zeros(len(poly)), np.ones(len(poly))])
            out.append((h @ poses[p.index].T)[:, :3])
        return np.vstack(out)
    from .clearance import plan_pieces

    pieces = list(plan_pieces(plan)) + list(hardware)
    pts = [p.vertices @ poses[p.owner][:3, :3].T + poses[p.owner][:3, 3] for p in pieces]
    return np.vstack(pts)


def hub_axis(pattern: CreasePattern) -> tuple[int, FloatArray, FloatArray] | None:
    """``(panel, point, direction)`` of the hub axis in the flat sheet frame, or None.

    A pattern has a hub when its layout says so (creases labelled ``hub`` or a ``hub_diameter``
    parameter, :func:`thickpanel.layouts.assignment.layout_info`); its axis is the sheet normal
    through the origin (layouts centre the hub there), carried by the panel that holds the origin.
    """
    from .layouts.assignment import layout_info

    info = layout_info(pattern)
    if info is None or not ("hub" in info.labels or "hub_diameter" in info.params):
        return None
    for p in pattern.panels:
        poly = np.asarray(pattern.panel_polygon(p.index), dtype=float)
        if _inside(poly, 0.0, 0.0):
            return p.index, np.zeros(3), np.array([0.0, 0.0, 1.0])
    return None


def _inside(poly: FloatArray, x: float, y: float) -> bool:
    """Even-odd point-in-polygon test (ray crossing)."""
    xs, ys = poly[:, 0], poly[:, 1]
    xn, yn = np.roll(xs, -1), np.roll(ys, -1)
    cross = (ys > y) != (yn > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xc = xs + (y - ys) * (xn - xs) / (yn - ys)
    return bool(np.count_nonzero(cross & (x < xc)) % 2)


def _r(x: float) -> float:
    return round(float(x), _ROUND)


def state_figures(
    points: FloatArray, *, t: float, fold_deg: float, poses: FloatArray | None = None,
    hub: tuple[int, FloatArray, FloatArray] | None = None,
) -> dict[str, Any]:
    """Figures of one fold state from its placed points (see the module docstring).

    Parameters
    ----------
    points : (k, 3) float, mm
        From :func:`array_points`.
    t : float
        Fold fraction of the state.
    fold_deg : float
        Largest crease fold of the state, deg.
    poses : (P, 4, 4) float, optional
        Panel poses of the state; needed with ``hub``.
    hub : (panel, point, direction), optional
        From :func:`hub_axis`.
    """
    lo, hi = box_corners(points)
    out: dict[str, Any] = {
        "state_t": _r(t) if math.isfinite(t) else None,
        "fold_deg": _r(fold_deg),
        "box_mm": [_r(x) for x in box_extents(points)],
        "box_corners_mm": [[_r(x) for x in lo], [_r(x) for x in hi]],
    }
    if hub is not None and poses is not None:
        k, pt, d = hub
        m = poses[k]
        dia, height = enclosing_cylinder(points, m[:3, :3] @ pt + m[:3, 3], m[:3, :3] @ d)
        out["cylinder_mm"] = [_r(dia), _r(height)]
    return out


def array_figures(deployed: dict[str, Any] | None, stowed: dict[str, Any] | None, area_mm2: float) -> dict[str, Any]:
    """``deployed_*`` and ``stowed_*`` figures and the packing ratio from two :func:`state_figures`.

    ``stowed`` must be the figures of the stowed state (the last state of the fold path).
    """
    out: dict[str, Any] = {"envelope": BOX_LABEL}
    for label, f in (("deployed", deployed), ("stowed", stowed)):
        if f is None:
            continue
        out[f"{label}_envelope_mm"] = list(f["box_mm"])
        if label == "stowed":
            out["stowed_state_t"] = f["state_t"]
            out["stowed_fold_deg"] = f["fold_deg"]
            if "cylinder_mm" in f:
                out["cylinder"] = CYLINDER_LABEL
                out["stowed_diameter_mm"], out["stowed_height_mm"] = f["cylinder_mm"]
    if stowed is not None:
        pr = packing_ratio(area_mm2, stowed["box_mm"])
        out["packing_ratio"] = None if pr is None else round(pr, 6)
    return out


def clearance_figures(rep: Any) -> dict[str, Any]:
    """``min_clearance_mm``, ``min_clearance_lower_bound``, ``min_clearance_where`` and
    ``min_clearance_text`` of a clearance report (``None`` value when no pair counts)."""
    mc = float(rep.min_clearance)
    bound = bool(getattr(rep, "lower_bound", False))
    where = getattr(rep, "where", None)
    out: dict[str, Any] = {
        "min_clearance_mm": round(mc, 6) if math.isfinite(mc) else None,
        "min_clearance_lower_bound": bound,
        "min_clearance_text": clearance_text(mc, bound, where),
    }
    w = _where(where)
    if w is not None and not bound:
        out["min_clearance_where"] = {"pair": [w[0], w[1]], "t": round(w[2], 6)}
    return out


def _where(where: Any) -> tuple[str, str, float] | None:
    """``((a, b), t)`` -> ``(a, b, t)``; None for anything else."""
    try:
        (a, b), t = where
        return str(a), str(b), float(t)
    except (TypeError, ValueError):
        return None


def length_text(mm: float | None, lower_bound: bool = False, digits: int = 3) -> str:
    """``"0.918 mm"`` or ``"at least 15 mm"`` (a bound, never printed as a measured value)."""
    if mm is None or not math.isfinite(mm):
        return "no pair of parts to measure"
    if lower_bound:
        return f"at least {mm:g} mm"
    return f"{mm:.{digits}f} mm"


def clearance_text(mm: float | None, lower_bound: bool, where: Any = None) -> str:
    """The one wording of a minimum clearance, used by every output."""
    if lower_bound:
        return f"at least {mm:g} mm (no two parts came within the {mm:g} mm search margin in some state)"
    text = length_text(mm, False)
    w = _where(where)
    if w is not None and mm is not None and math.isfinite(mm):
        text += f" between {w[0]} and {w[1]} at t = {w[2]:.3f}"
    return text
