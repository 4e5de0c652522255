"""Print-in-place knuckle hinge: a captive pin printed with panel A's knuckles.

Panel A carries the even knuckles as solid barrels and the pin segments that run through panel
B's (odd) knuckles; panel B's knuckles have a hole of pin radius + printed clearance. With an odd
knuckle count every pin segment ends in a knuckle of panel A at both ends, so the flat array prints
as one plate and folds after printing. The clearance comes from the material table (0.3 mm radial
is the common FDM starting point, see ``../shared/REFERENCES.md`` section 7) and is refused below
the printer's resolution.
"""

from __future__ import annotations

from dataclasses import dataclass

from thickpanel.errors import HingeError

from .base import Barrel, HingeContext, HingeDesign, Notch, Rod, SideFeatures, knuckle_layout, positive
from .knuckle import KnuckleHinge, barrel_geometry

__all__ = ["PrintInPlaceHinge"]


@dataclass
class PrintInPlaceHinge(KnuckleHinge):
    """Knuckle hinge with a captive printed pin (options as :class:`KnuckleHinge`)."""

    process: str | None = "printed"
    pin_material: str = ""
    name: str = "print-in-place"

    def design(self, ctx: HingeContext) -> HingeDesign:
        """Solid A barrels with pin segments, holed B barrels, notches on both panels."""
        n = int(self.knuckles)
        if n < 3 or n % 2 == 0:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: knuckles = {n}; allowed: an odd number >= 3 so "
                f"every pin segment ends in a knuckle of panel A"
            )
        d, wall = self._pin(ctx)
        c = self._clearance(ctx)
        hole_r = 0.5 * d + c
        radius = hole_r + wall
        clip = barrel_geometry(ctx, self.name, hole_r, radius)
        axial = positive(self.name, "axial_clearance_mm", self.axial_clearance_mm)
        radial = positive(self.name, "radial_clearance_mm", self.radial_clearance_mm,
                          allow_zero=True)
        segs = knuckle_layout(ctx, self.name, n, self.knuckle_length_mm, axial,
                              min_length=max(d, 1.0), step=self.length_step_mm)
        a_b, b_b, a_n, b_n, rods = [], [], [], [], []
        for i, (s0, s1) in enumerate(segs):
            if i % 2 == 0:
                a_b.append(Barrel(s0, s1, radius, 0.0, clip))
                a_n.append(Notch(s0, s1, clip))
                b_n.append(Notch(s0 - axial, s1 + axial, radius + radial))
            else:
                b_b.append(Barrel(s0, s1, radius, hole_r, clip))
                b_n.append(Notch(s0, s1, clip))
                a_n.append(Notch(s0 - axial, s1 + axial, radius + radial))
                rods.append(Rod(s0 - axial, s1 + axial, 0.5 * d))
        info = {"knuckles": n, "pin_diameter": d, "fit": f"printed +{c:g} mm radial",
                "barrel_diameter": 2 * radius, "knuckle_length": segs[0][1] - segs[0][0],
                "captive_pin": True}
        return HingeDesign(
            ctx.hinge.crease, self.name,
            (SideFeatures(notches=tuple(sorted(a_n, key=lambda x: x.s0)), barrels=tuple(a_b),
                          rods=tuple(rods)),
             SideFeatures(notches=tuple(sorted(b_n, key=lambda x: x.s0)), barrels=tuple(b_b))),
            (), info,
        )
