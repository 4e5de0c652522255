"""``hinge-shift``: every hinge moved to its valley-side face (the face inside the fold).

A hinge on the face inside the fold lets the two slabs turn through 0..180 deg before their inner
faces meet; the shift moves the axis off the reference surface, which is exact only when all folds
are parallel (a single fold or a pleat stack): at a vertex where non-parallel creases meet, the
shifted axes no longer meet and the sheet locks. [mem] (Lang et al. 2018, Appl. Mech. Rev.
70(1):010805, review of thickness-accommodation techniques.)
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

from ..errors import ThicknessError
from ..pattern import cid
from ..tolerances import DEFAULT_TOL, Tolerances
from .common import check_target, face_hinge_range, make_hinge, panel_thicknesses, require_folding
from .plan import Slab, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

NAME = "hinge-shift"


def check_parallel(pattern: CreasePattern, creases: list[int], *, tol: Tolerances = DEFAULT_TOL) -> None:
    """Raise unless every folding crease is parallel to the first (single or parallel folds)."""
    d = pattern.crease_directions
    ref = d[creases[0]]
    for c in creases[1:]:
        s = abs(float(ref[0] * d[c, 1] - ref[1] * d[c, 0]))
        if s > math.sin(tol.angle * 1e3):
            ang = math.degrees(math.asin(min(1.0, s)))
            raise ThicknessError(
                f"method {NAME} needs single or parallel folds; crease {cid(c)} is at {ang:.4g} deg to crease "
                f"{cid(creases[0])} (allowed: 0 deg)"
            )


def build(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Slabs on top of the reference surface (z in [0, t]); valley hinges on the top face, mountain
    hinges on the bottom face, both on the face inside the fold."""
    target = check_target(target_fold, method=NAME)
    t = panel_thicknesses(pattern, thickness)
    fc = require_folding(pattern, NAME)
    check_parallel(pattern, fc, tol=tol)
    cp = pattern.crease_panels
    slabs = [
        Slab(p, tuple((float(x), float(y)) for x, y in pattern.panel_polygon(p)), 0.0, float(t[p]))
        for p in range(pattern.n_panels)
    ]
    hinges = []
    for c in fc:
        a, b = int(cp[c, 0]), int(cp[c, 1])
        valley = pattern.kinds[c] == "valley"
        if valley:
            z = float(min(t[a], t[b]))
            if abs(t[a] - t[b]) > tol.length:
                raise ThicknessError(
                    f"method {NAME}: the valley hinge {cid(c)} needs equal thickness on both sides "
                    f"(got {t[a]:g} and {t[b]:g} mm)"
                )
            face = "top"
        else:
            z, face = 0.0, "bottom"
        rng = face_hinge_range(face, face, "top" if valley else "bottom")
        hinges.append(
            make_hinge(pattern, c, z=z, face=face, gap=0.0, fold_range=(0.0, rng) if valley else (-rng, 0.0))
        )
    return ThickPlan(
        pattern, NAME, tuple(slabs), tuple(hinges), target,
        notes=("hinges on the face inside each fold; exact for single or parallel folds only",),
    )
