"""``plain``: thicken every panel with no accommodation (the baseline that shows what goes wrong).

Hinges stay on the reference surface; slabs keep their full polygons, so the material on the inner
side of every fold meets at once. Kept to show the collisions other methods avoid.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

from ..tolerances import DEFAULT_TOL, Tolerances
from .common import check_target, make_hinge, panel_thicknesses, require_folding, z_range
from .plan import Slab, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

NAME = "plain"


def build(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    reference: str = "mid",
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Plain slabs about the reference surface (``reference``: ``mid``, ``bottom`` or ``top``)."""
    target = check_target(target_fold, method=NAME)
    t = panel_thicknesses(pattern, thickness)
    fc = require_folding(pattern, NAME)
    slabs = []
    for p in range(pattern.n_panels):
        z0, z1 = z_range(reference, float(t[p]))
        poly = tuple((float(x), float(y)) for x, y in pattern.panel_polygon(p))
        slabs.append(Slab(p, poly, z0, z1))
    hinges = []
    for c in fc:
        a, b = pattern.crease_panels[c]
        # the inner material meets at once unless the hinge sits on the inner face
        top_free = min(slabs[a].z1, slabs[b].z1) <= tol.length
        bottom_free = max(slabs[a].z0, slabs[b].z0) >= -tol.length
        hi = math.pi if top_free else 0.0
        lo = -math.pi if bottom_free else 0.0
        hinges.append(make_hinge(pattern, c, z=0.0, face="reference", gap=0.0, fold_range=(lo, hi)))
    return ThickPlan(
        pattern, NAME, tuple(slabs), tuple(hinges), target,
        notes=("no accommodation: slabs meet on the inner side of every fold",),
    )
