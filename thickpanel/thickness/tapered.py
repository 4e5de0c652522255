"""``tapered``: hinges on the reference surface, inner-side bevels by the final-fold bisector planes.

Each crease cuts the material on its inner side by the plane through the crease line that bisects
the inner dihedral at the crease's final fold (Tachi 2011, "Rigid-foldable thick origami",
Origami 5). The bevel width on a face at distance ``t_in`` from the reference surface is
``w = t_in tan(rho_max / 2)``, so ``rho_max = 2 atan(w / t_in)``; a full flat fold (pi) needs an
infinite bevel and is refused with the largest reachable fold in the message.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import ThicknessError
from ..pattern import cid, pid
from ..tolerances import DEFAULT_TOL, Tolerances
from .common import (
    centroid_bound,
    edge_cut,
    final_angles,
    inradius,
    make_hinge,
    panel_thicknesses,
    require_folding,
    z_range,
)
from .plan import Slab, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

NAME = "tapered"


def bevel_width(t_in: float, rho_max: float) -> float:
    """Bevel width (mm) on a face ``t_in`` (mm) from the hinge for a final fold ``rho_max`` (rad):
    ``t_in tan(rho_max / 2)`` (Tachi 2011)."""
    return t_in * math.tan(abs(rho_max) / 2.0)


def reachable_fold(t_in: float, w: float) -> float:
    """Largest fold (rad) a bevel of width ``w`` (mm) on a face ``t_in`` (mm) from the hinge allows:
    ``2 atan(w / t_in)`` (Tachi 2011)."""
    return 2.0 * math.atan2(w, t_in)


def reachable_limit(pattern: CreasePattern, t: np.ndarray, reference: str) -> tuple[float, int]:
    """Largest fold (rad) every panel can be bevelled for, and the panel that limits it.

    A bevel wider than the panel's inradius would cut the panel through; the limit is
    ``2 atan(r / t_in)`` with ``r`` the inradius.
    """
    best, where = math.pi, -1
    for p in range(pattern.n_panels):
        z0, z1 = z_range(reference, float(t[p]))
        t_in = max(z1, -z0)
        lim = reachable_fold(t_in, inradius(pattern.panel_polygon(p)))
        if lim < best:
            best, where = lim, p
    return best, where


def build(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    reference: str = "mid",
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Tapered slabs bevelled for each crease's final fold angle.

    Parameters
    ----------
    reference : {"mid", "bottom", "top"}
        Where the reference surface (and every hinge) sits within the slab thickness.
    """
    t = panel_thicknesses(pattern, thickness)
    if not (isinstance(target_fold, (int, float)) and math.isfinite(target_fold) and target_fold > 0):
        raise ThicknessError(f"target_fold = {target_fold!r} rad is out of range; allowed: 0 < target_fold < pi")
    target = float(target_fold)
    if target >= math.pi - tol.angle:
        lim, p = reachable_limit(pattern, t, reference)
        raise ThicknessError(
            f"method tapered cannot reach target_fold = {math.degrees(target):.4g} deg: a flat fold needs an "
            f"infinite bevel; reachable limit {math.degrees(lim):.4g} deg (2 atan(inradius / t_in), "
            f"set by panel {pid(p)})"
        )
    fc = require_folding(pattern, NAME)
    ang = final_angles(pattern, target, path)
    cp = pattern.crease_panels
    cuts: list[list] = [[] for _ in range(pattern.n_panels)]
    radius_cache: dict[int, float] = {}

    def radius(p: int) -> float:
        # exact inradius only when the cheap centroid bound cannot settle it
        if p not in radius_cache:
            radius_cache[p] = inradius(pattern.panel_polygon(p))
        return radius_cache[p]

    hinges = []
    for c in fc:
        rho = float(ang[c])
        if abs(rho) <= tol.angle:
            rho = target if pattern.kinds[c] == "valley" else -target
        side = 1 if rho > 0 else -1
        for p in (int(cp[c, 0]), int(cp[c, 1])):
            z0, z1 = z_range(reference, float(t[p]))
            t_in = z1 if side > 0 else -z0
            if t_in <= tol.length:
                continue
            w = bevel_width(t_in, rho)
            if pattern.panels[p].convex and w <= centroid_bound(pattern.panel_polygon(p)):
                r = w
            else:
                r = radius(p)
            if w > r:
                raise ThicknessError(
                    f"bevel of {w:.4g} mm on panel {pid(p)} along crease {cid(c)} exceeds the panel's inradius "
                    f"{r:.4g} mm; reachable limit for this crease {math.degrees(reachable_fold(t_in, r)):.4g} deg, "
                    f"asked {math.degrees(abs(rho)):.4g} deg"
                )
            cuts[p].append(edge_cut(pattern, p, c, angle=rho, z_ref=0.0, side=side, label=f"bevel {cid(c)}"))
        rng = (0.0, abs(rho)) if rho > 0 else (-abs(rho), 0.0)
        hinges.append(make_hinge(pattern, c, z=0.0, face="reference", gap=0.0, fold_range=rng))
    slabs = []
    for p in range(pattern.n_panels):
        z0, z1 = z_range(reference, float(t[p]))
        poly = tuple((float(x), float(y)) for x, y in pattern.panel_polygon(p))
        slabs.append(Slab(p, poly, z0, z1, cuts=tuple(cuts[p])))
    return ThickPlan(
        pattern, NAME, tuple(slabs), tuple(hinges), target,
        notes=(f"bevels sized for each crease's final fold; reachable fold {math.degrees(target):.4g} deg",),
    )
