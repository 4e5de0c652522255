"""``wrap-backing``: rigid plates bonded to a backing membrane, for ``hub-wrap`` sheets only.

Zirbel et al. 2013 ("Accommodating thickness in origami-based deployable arrays", J. Mech. Des.
135(11):111005, doi:10.1115/1.4025372) name, for wrapped arrays, bonding separate panels to a
flexible backing with specified widths at the fold lines. The ``hub-wrap`` layout's construction
(:mod:`thickpanel.wrap`) already decides every plate outline, the bare backing width at each fold
and the stowed pose of every plate; this method turns that into a :class:`ThickPlan`:

* slabs = the construction's plates, centred on each panel's reference plane (z from -t/2 to t/2);
  a panel whose plate the construction dropped (a sliver where an arm tapers) stays bare backing and
  has no slab (``meta["bare_panels"]``);
* one hinge line per folding crease between two plates on the backing's mid-plane, with ``gap`` = the bare backing
  width of the construction;
* the backing itself as a flat sheet part ``BACKING`` under the plates (``meta["sheet_parts"]``),
  with the plate outlines where each plate is bonded;
* slab poses: the construction's explicit stowed poses at t = 1 and identity at t = 0
  (:attr:`ThickPlan.explicit_poses`); in between the slabs ride the fold path's own panel poses
  (:attr:`ThickPlan.follow_state`, the least-misfit deployment of :mod:`thickpanel.wrap.deploy`).

A zero-thickness sheet (``panel_thickness = 0``) gets plates of the design thickness on the
reference sheet; its layers coincide when stowed, so the clearance check reports them as
penetrating (said in the plan's notes): build the sheet with ``panel_thickness > 0`` to nest them.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import ThicknessError
from ..pattern import cid, pid
from ..tolerances import DEFAULT_TOL, Tolerances
from .common import check_target, make_hinge
from .plan import Slab, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

NAME = "wrap-backing"
#: Thinnest backing accepted, mm: the thinnest common polyimide film gauge is 25 um (common
#: practice, no source; from memory).
MIN_BACKING_MM = 0.025


def applies(pattern: CreasePattern) -> tuple[bool, str]:
    """Whether the method applies (only to sheets made by the ``hub-wrap`` layout) and why."""
    from ..wrap.sheet import wrap_info

    if wrap_info(pattern) is None:
        return False, ("applies only to sheets made by the hub-wrap layout (its plates, backing gaps and stowed "
                       "poses come from that construction)")
    return True, "plates on the hub-wrap construction's backing membrane; stowed poses from the construction"


def build(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    backing_material: str = "polyimide-film",
    backing_thickness: float | None = None,
    min_backing: float = MIN_BACKING_MM,
    max_span_ratio: float | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Plates on the backing membrane of a ``hub-wrap`` sheet.

    Parameters
    ----------
    thickness : float, mm
        Plate thickness; must equal the layout's ``panel_thickness`` when that is > 0.
    backing_material : str
        Key of the materials table (``hinges.materials``).
    backing_thickness : float, mm, optional
        Must equal the layout's ``backing_thickness`` on a thick sheet; default that value (on a
        zero-thickness sheet: 0.05 mm).
    min_backing : float, mm
        Thinnest backing accepted (default :data:`MIN_BACKING_MM`).
    max_span_ratio : float, optional
        Widest bare gap accepted per backing thickness (gap / backing thickness), a limit the user
        states for the film chosen (no default: the widest strips, at the hairpin tips, grow with
        the design's size and there is no general figure we could cite).

    Raises
    ------
    ThicknessError
        Not a hub-wrap sheet; thickness or backing not matching the layout; a backing thinner than
        ``min_backing`` or too thin for the widest bare gap (``max_span_ratio``); an unknown
        backing material.
    """
    from hinges.base import SheetPart
    from hinges.materials import MATERIALS

    from ..wrap.sheet import wrap_info

    ok, why = applies(pattern)
    if not ok:
        raise ThicknessError(f"{NAME} does not apply: {why}")
    info = wrap_info(pattern)
    assert info is not None
    target = check_target(target_fold, method=NAME)
    if isinstance(thickness, Mapping) or isinstance(thickness, bool) or not isinstance(thickness, int | float):
        raise ThicknessError(f"{NAME}: thickness must be one plate thickness in mm (the layout's panel_thickness); "
                             f"got {thickness!r}")
    t = float(thickness)
    if not (math.isfinite(t) and t > 0):
        raise ThicknessError(f"{NAME}: thickness = {thickness!r} mm is out of range; allowed: > 0 mm")
    t_layout = float(info.params.get("panel_thickness", 0.0))
    if t_layout > 0 and abs(t - t_layout) > tol.length:
        raise ThicknessError(f"{NAME}: thickness = {t:g} mm differs from the layout's panel_thickness = "
                             f"{t_layout:g} mm; state it once ([panels] thickness)")
    tm_layout = float(info.params.get("backing_thickness", 0.0))
    tm = float(backing_thickness) if backing_thickness is not None else (tm_layout if t_layout > 0 else 0.05)
    if not math.isfinite(tm) or tm <= 0:
        raise ThicknessError(f"{NAME}: backing_thickness = {backing_thickness!r} mm is out of range; allowed: > 0 mm")
    if t_layout > 0 and abs(tm - tm_layout) > tol.length:
        raise ThicknessError(f"{NAME}: backing_thickness = {tm:g} mm differs from the layout's backing_thickness = "
                             f"{tm_layout:g} mm")
    if tm < min_backing:
        raise ThicknessError(f"{NAME}: backing_thickness = {tm:g} mm is below the minimum min_backing = "
                             f"{min_backing:g} mm")
    plated = [p for p, pc in enumerate(info.pieces) if len(pc.plate) >= 3]
    bare = [p for p in range(pattern.n_panels) if p not in set(plated)]
    cpn = pattern.crease_panels
    both = np.array([c for c in range(pattern.n_creases) if cpn[c, 0] in plated and cpn[c, 1] in plated], dtype=int)
    gaps = np.asarray(info.gaps, dtype=float)
    span = np.where(np.isin(np.arange(len(gaps)), both) & np.isfinite(gaps), gaps, 0.0)
    if max_span_ratio is not None and not (math.isfinite(max_span_ratio) and max_span_ratio > 0):
        raise ThicknessError(f"{NAME}: max_span_ratio = {max_span_ratio!r} is out of range; allowed: > 0")
    if max_span_ratio is not None and span.size and float(span.max()) > max_span_ratio * tm:
        c = int(np.argmax(span))
        raise ThicknessError(f"{NAME}: backing_thickness = {tm:g} mm is too thin for the bare gap of "
                             f"{gaps[c]:.4g} mm at crease {cid(c)}; allowed: gap <= max_span_ratio "
                             f"({max_span_ratio:g}) x "
                             f"backing thickness, so backing_thickness >= {gaps[c] / max_span_ratio:.4g} mm")
    if backing_material not in MATERIALS:
        names = ", ".join(sorted(k for k in MATERIALS if k))
        raise ThicknessError(f"{NAME}: backing_material = {backing_material!r} is not in the materials table "
                             f"(available: {names})")
    slabs = []
    for p in plated:  # panels whose plate the construction dropped stay bare backing (no slab)
        poly = np.asarray(info.pieces[p].plate, dtype=float)
        slabs.append(Slab(p, tuple((float(x), float(y)) for x, y in poly), -t / 2.0, t / 2.0))
    rho = np.nan_to_num(np.asarray(pattern.target_angles, dtype=float))
    zb = -t / 2.0 - tm / 2.0  # backing mid-plane under the plates
    hinges = []
    for c in both.tolist():
        if pattern.kinds[c] not in ("mountain", "valley"):
            continue
        r = float(rho[c])
        hinges.append(make_hinge(pattern, c, z=zb, face="membrane", gap=float(gaps[c]) if gaps.size else 0.0,
                                 fold_range=(min(0.0, r), max(0.0, r))))
    outline = _outline(pattern)
    hub = next(p for p, pc in enumerate(info.pieces) if pc.kind == "hub")
    backing = SheetPart("BACKING", "membrane", tuple((float(x), float(y)) for x, y in outline), -t / 2.0 - tm,
                        -t / 2.0, backing_material,
                        {"backing_thickness": tm, "flat_only": True, "cut_sheet": True, "panel": hub,
                         "bonded": tuple((s.panel, s.polygon) for s in slabs),
                         "note": "flexible backing: shown flat only; not rigid, so left out of folded assemblies"})
    stowed = np.array(info.stowed_poses, dtype=float)
    stowed.setflags(write=False)
    flat = np.tile(np.eye(4), (pattern.n_panels, 1, 1))
    flat.setflags(write=False)
    notes = [f"plates {t:g} mm on a {tm:g} mm {backing_material} backing; bare backing widths from the hub-wrap "
             "construction; stowed poses from the construction (not re-composed from fold angles)"]
    if bare:
        notes.append(f"{len(bare)} panels carry no plate (bare backing where the construction dropped a sliver "
                     f"plate): {', '.join(pid(p) for p in bare[:12])}{' ...' if len(bare) > 12 else ''}")
    if t_layout == 0:
        notes.append("zero-thickness reference sheet: its stowed layers coincide, so plates of this thickness "
                     "overlap when stowed; build the sheet with [layout] panel_thickness > 0 to nest them")
    return ThickPlan(pattern, NAME, tuple(slabs), tuple(hinges), target, notes=tuple(notes),
                     meta={"sheet_parts": (backing,), "backing_thickness": tm, "backing_material": backing_material,
                           "reachable": target, "zero_thickness_sheet": t_layout == 0,
                           "bare_panels": tuple(bare)},
                     explicit_poses=((0.0, flat), (1.0, stowed)), follow_state=True)


def _outline(pattern: CreasePattern) -> np.ndarray:
    """The sheet's outer boundary, counter-clockwise (mm)."""
    from ..geometry2d import polygon_area

    loops = [pattern.vertices[pattern.face_loop(f)] for f in pattern.outer_faces]
    if not loops:
        raise ThicknessError(f"{NAME}: the pattern has no outer boundary")
    loop = max(loops, key=lambda lp: abs(polygon_area(lp)))
    return loop if polygon_area(loop) >= 0 else loop[::-1]
