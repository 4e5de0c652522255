"""Build steps that produce the figures every output reads: the hinge hardware the clearance
sweep and the envelopes include, each hinge line's reach to its crease's stowed fold, and the
figures handed to ``metrics.json`` (the summary's own values, see :mod:`thickpanel.figures`)."""

from __future__ import annotations

import logging
import math
from typing import Any

import numpy as np

from .build_result import BuildResult, api
from .errors import DesignFileError, ThickpanelError
from .tolerances import DEFAULT_TOL

__all__ = ["hardware_for", "hinge_reach", "export_figures", "EXPORT_KEYS"]

log = logging.getLogger("thickpanel")

EXPORT_KEYS = ("panels", "parts", "total_volume_mm3", "total_mass_g", "deployed_area_mm2", "deployed_diameter_mm",
               "envelope", "cylinder", "deployed_envelope_mm", "stowed_envelope_mm", "stowed_diameter_mm",
               "stowed_height_mm", "stowed_state_t", "stowed_fold_deg", "packing_ratio", "min_clearance_mm",
               "min_clearance_lower_bound", "min_clearance_text", "min_clearance_where",
               "diameter_ratio", "packaging_efficiency", "stowed_radius_bound_mm")  # last three: hub-wrap
"""Summary figures every ``metrics.json`` of a build repeats unchanged."""


def _deg(x: float) -> float:
    return float(np.degrees(x))


def resolved_hinge_options(res: BuildResult) -> dict[str, Any]:
    """``[hinge]`` options with ``play_mm = "slack"`` replaced by each hinge's (end-point play, play
    along the hinge) peak over the joint-slack fold, mm (DesignFileError without a slack report)."""
    opts = dict(res.design.hinge.options)
    if opts.get("play_mm") == "slack":
        if res.slack is None:
            raise DesignFileError("[hinge] play_mm = \"slack\" needs the joint-slack play of a locked pattern; "
                                  "this pattern folds rigidly (or the slack stage did not run): give play_mm in mm")
        sl = res.slack
        peak = sl.play_mm.max(axis=0) if sl.play_mm.size else []
        along = sl.along_mm.max(axis=0) if sl.along_mm.size else []
        opts["play_mm"] = {h: (float(v), float(a)) for h, v, a in zip(sl.hinges, peak, along, strict=True)}
    return opts


def hardware_for(res: BuildResult) -> list[Any]:
    """Convex pieces of the design's hinge hardware (barrels, pins, boxes) for the sweep; empty when
    the hinge style adds none or its recipes cannot be made (the solids stage then says why)."""
    d = res.design
    get_style, _ = api("hinges", "get_hinge_style")
    design_fn, _ = api("hinges.plan_designs", "design_hinges")
    pieces_fn, _ = api("hardware", "hardware_pieces")
    if get_style is None or design_fn is None or pieces_fn is None or not res.plan.hinges:
        return []
    cached = res.plan.meta.get(("hardware", d.hinge.style, repr(sorted(d.hinge.options.items()))))
    if cached is not None:
        return list(cached)
    try:
        style = get_style(d.hinge.style, **resolved_hinge_options(res))
        designs = design_fn(res.plan, style, material=d.panels.material or None)
        pieces = list(pieces_fn(res.plan, designs))
    except (ThickpanelError, TypeError, ValueError) as exc:  # DesignFileError is a ThickpanelError
        log.info("hinge hardware left out of the clearance sweep: %s", exc)
        return []
    res.plan.meta[("hardware", d.hinge.style, repr(sorted(d.hinge.options.items())))] = pieces
    return pieces


def hinge_reach(res: BuildResult) -> None:
    """Each hinge line's fold range against its own crease's fold in the stowed state."""
    plan = res.plan
    if plan is None or not plan.hinges:
        return
    from .pattern import cid

    ts = res.stowed_t()
    angles = np.asarray(res.path.at(ts).angles) if res.path is not None and ts is not None else None
    rows = []
    for h in plan.hinges:
        lo, hi = (float(x) for x in h.fold_range)
        if angles is not None:
            need = float(angles[h.crease])
        else:  # no fold path: the pattern's stowed (target) angle of the crease
            ta = plan.pattern.target_angles
            need = float(ta[h.crease]) if h.crease < len(ta) and math.isfinite(float(ta[h.crease])) \
                else math.copysign(float(plan.target_fold), hi if abs(hi) >= abs(lo) else lo)
        eps = DEFAULT_TOL.angle  # bevels sized for a crease's stowed fold reach it exactly
        ok = lo - eps <= need <= hi + eps
        rows.append({"crease": cid(h.crease), "face": h.face, "gap_mm": float(h.gap),
                     "usable_mm": float(h.usable_length), "range_deg": [_deg(lo), _deg(hi)],
                     "stowed_fold_deg": _deg(need), "verdict": "pass" if ok else "fail"})
    res.hinge_rows = rows
    bad = [r["crease"] for r in rows if r["verdict"] == "fail"]
    where = "in the stowed state" if angles is not None else "at their target angles"
    if bad:
        res.check("hinge lines reach their stowed fold", "fail",
                  f"{len(bad)} of {len(rows)} hinge lines cannot reach their crease's fold {where} without their "
                  f"slabs meeting: {', '.join(bad[:8])}" + (" ..." if len(bad) > 8 else ""))
    else:
        res.check("hinge lines reach their stowed fold", "pass",
                  f"all {len(rows)} hinge lines reach their crease's fold {where}")


def export_figures(res: BuildResult, t: float) -> dict[str, Any]:
    """The build's figures for a ``metrics.json`` at fold fraction ``t``: the array figures of the
    summary (same values) and the figures of that state."""
    out = {k: res.metrics[k] for k in EXPORT_KEYS if k in res.metrics}
    st = res.state_figures(t)
    if st is not None:
        out.update(st)
    out["verdict"] = res.verdict
    return out
