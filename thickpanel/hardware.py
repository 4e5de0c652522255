"""Hinge hardware as convex pieces for the clearance sweep (pure numpy/scipy).

A hinge style's recipe (:class:`hinges.base.HingeDesign`) describes knuckle barrels, rods (pins),
and boxes in the hinge frame of its hinge line (``s`` along the axis, ``u`` from panel A to B,
``w`` the sheet normal). :func:`hardware_pieces` turns each of them into one convex
:class:`~thickpanel.collide.Piece` in the flat frame of the panel it moves with:

- a barrel is the prism of its disk, clipped at its chord, over ``s0..s1``; the hole is filled
  (the distance to a barrel is the distance to its outside);
- a rod is the prism of its disk over ``s0..s1``;
- a box is its six planes.

Disks are replaced by the *circumscribed* regular polygon of ``sides`` sides, so every piece
contains its solid and a distance measured to the pieces is never larger than the distance to the
built solids (it is smaller by at most ``r (1 / cos(pi / sides) - 1)``: 0.86 % of the radius for
24 sides). Every piece ``joins`` the two panels of its hinge line: the sweep never compares it
with them (the barrels sit in those panels' notches and the pin in the barrels; their fit is the
hinge style's own check). Sheet parts (tapes, flexure webs, membranes) are not modelled.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from .collide import Piece, make_piece
from .pattern import cid, pid
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray

if TYPE_CHECKING:
    from .thickness.plan import HingeLine, ThickPlan

__all__ = ["hardware_pieces", "DISK_SIDES"]

DISK_SIDES = 24
"""Sides of the polygon circumscribed about every barrel and rod disk (common practice, no source)."""


def _frame(h: HingeLine) -> tuple[FloatArray, FloatArray]:
    """(3, 3) columns (s, u, w) and (3,) origin of the hinge frame of ``h``."""
    from hinges.base import HingeFrame  # pure recipes; imported here to keep the module graph flat

    m = HingeFrame.of(h).matrix()
    return m[:3, :3], m[:3, 3]


def _to_flat(rot: FloatArray, origin: FloatArray, nq: FloatArray, dq: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Half-spaces ``nq . q <= dq`` in hinge coordinates -> flat frame normals and offsets."""
    n = nq @ rot.T
    return n, dq + n @ origin


def _disk(s0: float, s1: float, radius: float, sides: int, clip: tuple[float, float] | None
          ) -> tuple[FloatArray, FloatArray]:
    """Half-spaces (hinge coordinates) of a circumscribed disk prism; ``clip = (sign, c)`` keeps
    ``sign * u <= c``."""
    th = (np.arange(sides) + 0.5) * (2.0 * math.pi / sides)
    # edges tangent to the circle: the polygon's inradius is the disk's radius
    nq: list[FloatArray] = [np.column_stack([np.zeros(sides), np.cos(th), np.sin(th)]),
                            np.array([[1.0, 0, 0], [-1.0, 0, 0]])]
    dq: list[FloatArray] = [np.full(sides, float(radius)), np.array([s1, -s0], dtype=float)]
    if clip is not None:
        nq.append(np.array([[0.0, clip[0], 0.0]]))
        dq.append(np.array([clip[1]], dtype=float))
    return np.vstack(nq), np.concatenate(dq)


def _box(b: Any) -> tuple[FloatArray, FloatArray]:
    nq = np.vstack([np.eye(3), -np.eye(3)])
    dq = np.array([b.s1, b.u1, b.w1, -b.s0, -b.u0, -b.w0], dtype=float)
    return nq, dq


def hardware_pieces(
    plan: ThickPlan, designs: Sequence[Any], *, sides: int = DISK_SIDES, tol: Tolerances = DEFAULT_TOL
) -> list[Piece]:
    """Convex pieces of the barrels, rods and boxes of ``designs`` (one per ``plan.hinges`` entry).

    Parameters
    ----------
    plan : ThickPlan
    designs : sequence of hinges.base.HingeDesign
        In ``plan.hinges`` order (as :func:`hinges.plan_designs.design_hinges` returns them).
    sides : int
        Sides of the polygon circumscribed about each disk (>= 6).
    tol : Tolerances

    Returns
    -------
    list of Piece
        Owned by the panel each feature moves with, labelled ``barrel of C004 on P005`` etc.
    """
    if sides < 6:
        raise ValueError(f"sides = {sides}; allowed: an integer >= 6")
    if len(designs) != len(plan.hinges):
        raise ValueError(f"{len(designs)} hinge designs for {len(plan.hinges)} hinge lines")
    out: list[Piece] = []
    for des, h in zip(designs, plan.hinges, strict=True):
        rot, origin = _frame(h)
        joins = (int(h.panels[0]), int(h.panels[1]))
        who = cid(h.crease)

        feats_: list[tuple[int, tuple[FloatArray, FloatArray], str]] = []
        for side, feats in enumerate(des.sides):
            owner = joins[side]
            sign = -1.0 if side == 0 else 1.0  # side 0 (A) keeps u >= -clip, side 1 keeps u <= clip
            for br in feats.barrels:
                clip = None if br.clip is None else (sign, float(br.clip))
                feats_.append((owner, _disk(br.s0, br.s1, br.radius, sides, clip), f"barrel of {who} on {pid(owner)}"))
            for rd in feats.rods:
                feats_.append((owner, _disk(rd.s0, rd.s1, rd.radius, sides, None), f"rod of {who} on {pid(owner)}"))
            for bx in feats.boxes:
                feats_.append((owner, _box(bx), f"box of {who} on {pid(owner)}"))
        for ex in des.extras:
            owner = joins[ex.follows]
            feats_ += [(owner, _disk(rd.s0, rd.s1, rd.radius, sides, None), ex.name) for rd in ex.rods]
            feats_ += [(owner, _box(bx), ex.name) for bx in ex.boxes]
        for owner, (nq, dq), label in feats_:
            n, d = _to_flat(rot, origin, nq, dq)
            out.append(make_piece(owner, n, d, label=label, joins=joins, tol=tol))
    return out
