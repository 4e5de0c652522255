"""Tape (membrane) hinge: a flat strip bonded across the gap of a hinge line.

The gaps come from the thickness plan (the ``membrane-gap`` method sizes them); this style adds the
tape strip ``TAPE-C042`` as a separate flat part on the hinge's face (top, or bottom when the hinge
sits on the bottom face), overlapping each panel by ``overlap_mm``, and optionally a shallow recess
of the tape's thickness in both panels so the tape lies flush.
"""

from __future__ import annotations

from dataclasses import dataclass

from thickpanel.errors import HingeError

from .base import Box, ExtraPart, HingeContext, HingeDesign, SideFeatures, positive

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
        Cut a recess of the tape thickness under the tape.
    material : str
    """

    overlap_mm: float = 5.0
    tape_thickness_mm: float = 0.1
    recess: bool = False
    material: str = "polyimide-film"
    name: str = "tape"

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
        strip = Box(a, b, -g2 - ov, g2 + ov, w0 - za, w1 - za)
        part = ExtraPart(
            f"TAPE-{ctx.cid}", "tape", 0, boxes=(strip,), material=self.material,
            attrs={"length": b - a, "width": 2 * (g2 + ov), "tape_thickness": tt},
        )
        return HingeDesign(ctx.hinge.crease, self.name, (sides[0], sides[1]), (part,),
                           {"tape_width": 2 * (g2 + ov), "recess": bool(self.recess)})
