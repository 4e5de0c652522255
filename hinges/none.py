"""``none`` hinge style: plain panels for users who fit their own hardware.

Optionally drills ``holes_per_hinge`` through holes of ``hole_diameter_mm`` in each panel,
``hole_inset_mm`` from the hinge-side edge, spread evenly along the usable hinge length, as
mounting points for bought-in hinges.
"""

from __future__ import annotations

from dataclasses import dataclass

from thickpanel.errors import HingeError

from .base import HingeContext, HingeDesign, Hole, SideFeatures, positive

__all__ = ["NoHinge"]


@dataclass
class NoHinge:
    """No hinge hardware; optional mounting holes (0 diameter = none)."""

    hole_diameter_mm: float = 0.0
    hole_inset_mm: float = 4.0
    holes_per_hinge: int = 2
    name: str = "none"

    def design(self, ctx: HingeContext) -> HingeDesign:
        """Nothing, or the mounting holes."""
        dia = positive(self.name, "hole_diameter_mm", self.hole_diameter_mm, allow_zero=True)
        if dia == 0:
            return HingeDesign(ctx.hinge.crease, self.name, (SideFeatures(), SideFeatures()))
        inset = positive(self.name, "hole_inset_mm", self.hole_inset_mm)
        k = int(self.holes_per_hinge)
        if k < 1:
            raise HingeError(f"{self.name} hinge option holes_per_hinge = {k}; allowed: >= 1")
        if inset <= 0.5 * dia:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: hole inset {inset:g} mm must exceed the hole "
                f"radius {0.5 * dia:g} mm"
            )
        a, b = ctx.hinge.usable
        if b - a < k * dia:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: {k} holes of {dia:g} mm do not fit the usable "
                f"hinge length {max(b - a, 0):g} mm"
            )
        ss = [a + (b - a) * (i + 0.5) / k for i in range(k)]
        u = 0.5 * ctx.hinge.gap + inset
        ha = tuple(Hole(s, -u, dia) for s in ss)
        hb = tuple(Hole(s, u, dia) for s in ss)
        return HingeDesign(ctx.hinge.crease, self.name,
                           (SideFeatures(holes=ha), SideFeatures(holes=hb)), (),
                           {"holes": k, "hole_diameter": dia})
