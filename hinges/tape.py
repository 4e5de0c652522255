"""Tape (membrane) hinge: a flat strip bonded across the gap of a hinge line.

The gaps come from the thickness plan (the ``membrane-gap`` method sizes them); this style adds the
tape strip ``TAPE-C042`` as a separate flat part on the hinge's face (top, or bottom when the hinge
sits on the bottom face), overlapping each panel by ``overlap_mm``, and optionally a shallow recess
of the tape's thickness in both panels so the tape lies flush. With ``sheet=True`` one membrane
``MEMBRANE`` over the whole outline of the sheet replaces the strips (a separate flat part; it
moves with the base panel in folded states, where only its flat shape is faithful).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from thickpanel.errors import HingeError
from thickpanel.geometry2d import polygon_area

from .base import Box, ExtraPart, HingeContext, HingeDesign, SheetPart, SideFeatures, positive

__all__ = ["TapeHinge"]


@dataclass
class TapeHinge:
    """Tape hinge.

    Parameters
    ----------
    overlap_mm : float
        Bonded width on each panel.
    tape_thickness_mm : float
        0.1 mm default (common practice for polyimide tapes, from memory).
    recess : bool
        Cut a recess of the tape thickness under each strip.
    sheet : bool
        One membrane over the whole sheet instead of strips.
    material : str
    """

    overlap_mm: float = 5.0
    tape_thickness_mm: float = 0.1
    recess: bool = False
    material: str = "polyimide-film"
    sheet: bool = False
    name: str = "tape"

    def plan_parts(self, plan: Any) -> list[SheetPart]:
        """The membrane sheet over the pattern's outer outline (``sheet=True``), else nothing."""
        if not self.sheet:
            return []
        tt = positive(self.name, "tape_thickness_mm", self.tape_thickness_mm)
        cp = plan.pattern
        outer = [f for f in cp.outer_faces]
        if not outer:
            raise HingeError("tape hinge sheet: the pattern has no outer boundary")
        loops = [cp.vertices[cp.face_loop(f)] for f in outer]
        loop = max(loops, key=lambda lp: abs(polygon_area(lp)))
        if polygon_area(loop) < 0:
            loop = loop[::-1]
        top = min(s.z1 for s in plan.slabs)
        z0, z1 = top, top + tt  # recesses apply to strips only
        return [SheetPart("MEMBRANE", "membrane", tuple(map(tuple, loop.tolist())), z0, z1,
                          self.material, {"tape_thickness": tt})]

    def design(self, ctx: HingeContext) -> HingeDesign:
        """The tape part and the optional recesses."""
        ov = positive(self.name, "overlap_mm", self.overlap_mm)
        tt = positive(self.name, "tape_thickness_mm", self.tape_thickness_mm)
        if self.recess and tt >= ctx.thickness:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: a recess of {tt:g} mm must be shallower than the "
                f"panel thickness {ctx.thickness:g} mm"
            )
        a, b = ctx.hinge.usable
        if b - a <= ctx.tol.length:
            raise HingeError(f"{self.name} hinge on {ctx.cid}: no usable hinge length left")
        za = ctx.axis_z
        bottom = ctx.hinge.face == "bottom"
        g2 = 0.5 * ctx.hinge.gap
        sides = [SideFeatures(), SideFeatures()]
        if bottom:
            face = max(s.z0 for s in ctx.slabs)
            w0, w1 = (face, face + tt) if self.recess else (face - tt, face)
        else:
            face = min(s.z1 for s in ctx.slabs)
            w0, w1 = (face - tt, face) if self.recess else (face, face + tt)
        if self.recess:
            ra = Box(a, b, -g2 - ov, -g2, w0 - za, w1 - za)
            rb = Box(a, b, g2, g2 + ov, w0 - za, w1 - za)
            sides = [SideFeatures(recesses=(ra,)), SideFeatures(recesses=(rb,))]
        if self.sheet:
            return HingeDesign(ctx.hinge.crease, self.name, (SideFeatures(), SideFeatures()), (),
                               {"membrane": True})
        strip = Box(a, b, -g2 - ov, g2 + ov, w0 - za, w1 - za)
        part = ExtraPart(
            f"TAPE-{ctx.cid}", "tape", 0, boxes=(strip,), material=self.material,
            attrs={"length": b - a, "width": 2 * (g2 + ov), "tape_thickness": tt},
        )
        return HingeDesign(ctx.hinge.crease, self.name, (sides[0], sides[1]), (part,),
                           {"tape_width": 2 * (g2 + ov), "recess": bool(self.recess)})
