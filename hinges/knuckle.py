"""Pin-and-barrel (knuckle) hinge along a hinge line, machined or printed.

Knuckles alternate between panel A (even ones) and panel B (odd ones). Each knuckle is a barrel of
radius ``R`` about the axis, clipped flat where it touches its own panel; each panel edge is cut
back around the barrels: to the chord under its own knuckles (so the barrel fills the notch and
only *touches* the panel) and to ``R + radial clearance`` under the other panel's knuckles, so a
barrel turning about the axis never enters the other panel. The pin is a separate part.

Pin and hole sizes: machined parts use an ISO 286 hole-basis fit (``hinges.fits``; the CAD model
carries the middle of each tolerance zone), printed parts a radial clearance from the material
table, refused below the printer's resolution.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from thickpanel.errors import HingeError

from .base import Barrel, ExtraPart, HingeContext, HingeDesign, Notch, Rod, SideFeatures, knuckle_layout, positive
from .fits import fit as iso_fit

__all__ = ["KnuckleHinge", "STANDARD_PINS_MM", "barrel_geometry"]

#: Preferred dowel-pin diameters tried when no pin diameter is given, mm (ISO 2338 / ISO 8734
#: preferred sizes, from memory).
STANDARD_PINS_MM: tuple[float, ...] = (1.0, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0)


def default_wall(pin_d: float) -> float:
    """Barrel wall around the pin hole, mm: max(0.5, pin / 4) (common practice, not a standard)."""
    return max(0.5, 0.25 * pin_d)


def barrel_geometry(
    ctx: HingeContext, style: str, hole_r: float, radius: float
) -> float:
    """Check that a barrel of ``radius`` reaches both panels; return its chord distance ``clip``.

    The chord sits halfway between hole and outer surface, or at the panel edge (gap / 2) when that
    is farther out. Raises HingeError when the gap is too wide or the axis too far from a panel.
    """
    g2 = 0.5 * ctx.hinge.gap
    clip = max(g2, 0.5 * (hole_r + radius))
    if clip >= radius - ctx.tol.length:
        raise HingeError(
            f"{style} hinge on {ctx.cid}: barrel radius {radius:.3f} mm does not reach across half "
            f"the gap ({g2:.3f} mm); radius must be > {clip:.3f} mm"
        )
    half = math.sqrt(radius * radius - clip * clip)
    za = ctx.axis_z
    for slab in ctx.slabs:
        lo = max(za - half, slab.z0)
        hi = min(za + half, slab.z1)
        for st in slab.standoffs:
            if st.crease == ctx.hinge.crease:
                lo = min(lo, max(za - half, st.z0))
                hi = max(hi, min(za + half, st.z1))
        if hi - lo <= ctx.tol.length:
            raise HingeError(
                f"{style} hinge on {ctx.cid}: the barrel (axis at z = {za:g} mm, contact "
                f"{za - half:.3f}..{za + half:.3f} mm) does not touch panel P{slab.panel:03d} "
                f"(z {slab.z0:g}..{slab.z1:g} mm)"
            )
    return clip


@dataclass
class KnuckleHinge:
    """Pin-and-barrel hinge.

    Parameters
    ----------
    knuckles : int
        Number of knuckles along the hinge line (>= 2 so both panels get one).
    pin_diameter_mm : float or None
        Nominal pin diameter; None picks the largest preferred size whose barrel fits the panel
        thickness.
    wall_mm : float or None
        Barrel wall around the hole; None uses max(0.5, pin / 4).
    knuckle_length_mm : float or None
        None fills the usable hinge length.
    axial_clearance_mm, radial_clearance_mm : float
        Gap between neighbouring knuckles, and between a barrel and the other panel's notch.
    process : str or None
        ``machined`` or ``printed``; None follows panel A's material.
    fit : str
        ISO 286 fit for machined parts (``H7/g6``, ``H7/h6``, ``H8/f7``).
    clearance_mm : float or None
        Radial pin clearance for printed parts; None takes the material's printed clearance.
    printer_resolution_mm : float
        Smallest gap the printer resolves (0.1 mm: common practice for FDM).
    pin_material : str
    length_step_mm : float
        Knuckle lengths that fill the usable length are rounded down to this step (0 = exact), so
        nearly equal hinges share barrels and pin lengths.
    """

    knuckles: int = 3
    pin_diameter_mm: float | None = None
    wall_mm: float | None = None
    knuckle_length_mm: float | None = None
    axial_clearance_mm: float = 0.2
    radial_clearance_mm: float = 0.3
    process: str | None = None
    fit: str = "H7/g6"
    clearance_mm: float | None = None
    printer_resolution_mm: float = 0.1
    pin_material: str = "stainless-304"
    length_step_mm: float = 0.1
    name: str = "knuckle"

    def _pin(self, ctx: HingeContext) -> tuple[float, float]:
        """(pin diameter, wall) fitted to the panel thickness; HingeError when too large."""
        t = ctx.thickness
        if self.pin_diameter_mm is None:
            fitting = [
                d for d in STANDARD_PINS_MM
                if d + 2 * (self.wall_mm or default_wall(d)) <= t + ctx.tol.length
            ]
            if not fitting:
                raise HingeError(
                    f"{self.name} hinge on {ctx.cid}: panel thickness {t:g} mm is too thin for "
                    f"the smallest pin {STANDARD_PINS_MM[0]:g} mm with its barrel wall"
                )
            d = fitting[-1]
        else:
            d = positive(self.name, "pin_diameter_mm", self.pin_diameter_mm)
        wall = default_wall(d) if self.wall_mm is None else positive(self.name, "wall_mm",
                                                                      self.wall_mm)
        if d + 2 * wall > t + ctx.tol.length:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: pin diameter {d:g} mm needs a barrel of "
                f"{d + 2 * wall:g} mm, larger than the panel thickness {t:g} mm allows; pin "
                f"diameter must be <= {t - 2 * wall:g} mm with a {wall:g} mm wall"
            )
        return d, wall

    def _process(self, ctx: HingeContext) -> str:
        proc = self.process or ("printed" if ctx.materials[0].process == "printed" else "machined")
        if proc not in ("machined", "printed"):
            raise HingeError(
                f"{self.name} hinge option process = {proc!r}; allowed: 'machined', 'printed'"
            )
        return proc

    def _clearance(self, ctx: HingeContext) -> float:
        c = self.clearance_mm if self.clearance_mm is not None else ctx.materials[0].printed_clearance
        if c is None:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: material {ctx.materials[0].key or 'unspecified'!r} "
                f"has no printed "
                f"clearance; give clearance_mm"
            )
        res = positive(self.name, "printer_resolution_mm", self.printer_resolution_mm)
        if c < res:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: print clearance {c:g} mm is below the printer "
                f"resolution {res:g} mm; clearance must be >= {res:g} mm"
            )
        if self.axial_clearance_mm < res:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: axial clearance {self.axial_clearance_mm:g} mm is "
                f"below the printer resolution {res:g} mm; it must be >= {res:g} mm"
            )
        return float(c)

    def design(self, ctx: HingeContext) -> HingeDesign:
        """Barrels, notches and the pin part for one hinge line (see the module docstring)."""
        if int(self.knuckles) < 2:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: knuckles = {self.knuckles}; allowed: >= 2 so "
                f"each panel carries one"
            )
        d, wall = self._pin(ctx)
        proc = self._process(ctx)
        if proc == "machined":
            f = iso_fit(self.fit, d)
            hole_d, pin_d, fit_name = f.mean_hole, f.mean_shaft, self.fit
        else:
            c = self._clearance(ctx)
            hole_d, pin_d, fit_name = d + 2 * c, d, f"printed +{c:g} mm radial"
        radius = 0.5 * d + wall
        clip = barrel_geometry(ctx, self.name, 0.5 * hole_d, radius)
        axial = positive(self.name, "axial_clearance_mm", self.axial_clearance_mm, allow_zero=True)
        radial = positive(self.name, "radial_clearance_mm", self.radial_clearance_mm,
                          allow_zero=True)
        segs = knuckle_layout(ctx, self.name, int(self.knuckles), self.knuckle_length_mm, axial,
                              min_length=max(d, 1.0), step=self.length_step_mm)
        sides: list[dict[str, list]] = [{"n": [], "b": []}, {"n": [], "b": []}]
        for i, (s0, s1) in enumerate(segs):
            own, other = i % 2, 1 - i % 2
            sides[own]["b"].append(Barrel(s0, s1, radius, 0.5 * hole_d, clip))
            sides[own]["n"].append(Notch(s0, s1, clip))
            sides[other]["n"].append(Notch(s0 - axial, s1 + axial, radius + radial))
        pin_len = segs[-1][1] - segs[0][0]
        pin = ExtraPart(
            f"PIN-{ctx.cid}", "pin", 0, rods=(Rod(segs[0][0], segs[-1][1], 0.5 * pin_d),),
            material=self.pin_material,
            attrs={"diameter": d, "length": pin_len, "fit": fit_name, "process": proc},
        )
        info = {"knuckles": len(segs), "pin_diameter": d, "fit": fit_name,
                "barrel_diameter": 2 * radius, "knuckle_length": segs[0][1] - segs[0][0]}
        return HingeDesign(
            ctx.hinge.crease, self.name,
            (SideFeatures(notches=_clean(sides[0]["n"]), barrels=tuple(sides[0]["b"])),
             SideFeatures(notches=_clean(sides[1]["n"]), barrels=tuple(sides[1]["b"]))),
            (pin,), info,
        )


def _clean(notches: list[Notch]) -> tuple[Notch, ...]:
    return tuple(sorted(notches, key=lambda n: n.s0))
