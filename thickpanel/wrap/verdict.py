"""Rigid-foldability verdict of a wrapped-hub sheet from its structure (no path following).

The general solver (:func:`thickpanel.kinematics.rigid_foldability`) works on any pattern but costs
too much on thousands of panels. A ``hub-wrap`` sheet is locked for a structural reason that can be
checked on the pattern itself (``docs/hub-wrap.md``, section "Rigid foldability"):

1. straight crease crossings: degree-4 vertices where two straight crease lines cross (the
   accordion lines cross the perpendicular rays and wrap lines). Rigid panels at such a vertex can
   fold only one of the two lines at a time unless the folded one is at +-180 deg;
2. in the stowed state both lines of every crossing are folded (the accordion by 180 deg, the other
   by 2 pi/m or 180 deg), so a rigid path would have to fold every accordion first with the
   crossing lines flat;
3. with those flat each hub corner acts as a degree-3 vertex, which holds its radial fold at 0;
   the radial chevron vertices are generic degree-4 flat-foldable vertices, where one zero fold
   forces zero at all four, so the accordions cannot fold either;
4. hence no rigid folding path leaves the flat state towards the stowed one. This agrees with the
   published statement that the zero-thickness wrapped-hub pattern is not rigidly foldable (Lang,
   Magleby & Howell 2016, "Single degree-of-freedom rigidly foldable cut origami flashers",
   J. Mechanisms Robotics 8(3):031005).

Where the sheet has no straight crossing (one ring only) the premise of step 1 fails; the verdict
then falls back on the general solver for small sheets and says ``unknown`` for large ones.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import FoldError
from ..pattern import CreasePattern, vid
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import IntArray
from ..verdicts import RigidVerdict
from .sheet import wrap_info

__all__ = ["wrap_rigidity", "straight_crossings", "SOLVER_PANEL_LIMIT"]

SOLVER_PANEL_LIMIT = 400  # panels: above this the general solver is not run as a fallback


def straight_crossings(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> IntArray:
    """Interior degree-4 vertices where two straight lines of folded creases cross.

    A vertex counts when its four creases form two opposite pairs (directions pi apart within
    ``tol.angle``) and all four fold in the stowed state (non-zero target angle).
    """
    offsets, creases, dirs = pattern.star
    rho = np.nan_to_num(np.asarray(pattern.target_angles, dtype=float))
    out = []
    for v in np.asarray(pattern.interior_vertices).tolist():
        lo, hi = offsets[v], offsets[v + 1]
        if hi - lo != 4:
            continue
        th = dirs[lo:hi]
        cs = creases[lo:hi]
        opp = all(abs(abs(math.remainder(float(th[k + 2] - th[k]), 2 * math.pi)) - math.pi) < tol.angle
                  for k in range(2))
        if opp and bool(np.all(np.abs(rho[cs]) > tol.angle)):
            out.append(v)
    return np.array(out, dtype=np.int64)


def wrap_rigidity(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> RigidVerdict:
    """``locked`` with the structural reason for a hub-wrap sheet (see the module docstring).

    ``where`` lists the hub corners first, then the straight crossings (at most 16 ids in all).

    Raises
    ------
    FoldError
        The pattern was not made by the ``hub-wrap`` layout.
    """
    info = wrap_info(pattern)
    if info is None:
        raise FoldError("the structural rigidity verdict needs a sheet made by the hub-wrap layout")
    cross = straight_crossings(pattern, tol=tol)
    hub = [vid(v) for v in info.hub_vertices]
    if len(cross) == 0 and float(info.params.get("panel_thickness", 0.0)) > 0:
        # the thick sheet splits every reference crease line by its bare backing strips; the argument
        # runs on the zero-thickness reference sheet it is the development of (same stowed state)
        from ..layouts.hub_wrap import hub_wrap

        ref = hub_wrap(int(info.params["sides"]), int(info.params["rings"]), float(info.params["ring_height"]),
                       float(info.params["hub_circumradius"]), wrap=str(info.params.get("wrap", "ccw")), tol=tol)
        n_ref = len(straight_crossings(ref, tol=tol))
        if n_ref:
            on = (f" (on the zero-thickness reference sheet of the same hub, rings and ring height, {n_ref} "
                  "crossings: the thick sheet is its development with bare backing strips along the creases, "
                  "whose panels cannot fold rigidly either)")
            return RigidVerdict("locked", 0, tuple(hub)[:16], _reason(n_ref, len(hub)) + on, 0.0)
    if len(cross) == 0:
        if pattern.n_panels <= SOLVER_PANEL_LIMIT:
            from ..kinematics import rigid_foldability

            v = rigid_foldability(pattern, tol=tol)
            return RigidVerdict(v.kind, v.dof, v.where, "no straight crease crossing, so the structural argument "
                                f"does not apply; general solver: {v.reason}", v.reach)
        return RigidVerdict("unknown", -1, tuple(hub), "no straight crease crossing, so the structural argument "
                            f"does not apply, and {pattern.n_panels} panels are more than the general solver is "
                            f"run on here ({SOLVER_PANEL_LIMIT})")
    where = tuple(hub) + tuple(vid(int(v)) for v in cross)
    return RigidVerdict("locked", 0, where[:16], _reason(len(cross), len(hub)), 0.0)


def _reason(n_cross: int, n_hub: int) -> str:
    return (
        f"not rigidly foldable with ideal hinges: {n_cross} straight crease crossings fold both lines in the "
        "stowed state, but rigid panels fold only one line of a crossing at a time unless it is at 180 deg; "
        "a rigid path would have to fold the accordions first with the crossing lines flat, which holds each "
        f"hub corner ({n_hub}) as a degree-3 vertex with its radial fold at 0 and, through the "
        "flat-foldable degree-4 radial vertices, every accordion at 0 too; so no rigid path leaves the flat "
        "state (structural argument of the hub-wrap construction; Lang, Magleby & Howell 2016 state that the "
        "zero-thickness wrapped-hub pattern is not rigidly foldable). The stowed state is computed directly "
        "and the deployment needs compliant hinges (see the compliance figures)"
    )
