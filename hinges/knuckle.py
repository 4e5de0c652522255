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
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from thickpanel.errors import HingeError

from .base import Barrel, ExtraPart, HingeContext, HingeDesign, Notch, Rod, SideFeatures, knuckle_layout, positive
from .fits import PLAY_FITS, fit_for_play
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
    play_mm : float or mapping, optional
        Play budget the hinge must give (e.g. from :func:`thickpanel.slack.joint_slack`): one value
        for every hinge or ``{"C042": across}`` / ``{"C042": (across, along)}`` per crease, mm.
        ``across`` is radial play: machined hinges take the tightest ISO 286 fit of
        :data:`hinges.fits.PLAY_FITS` whose smallest diametral clearance covers it, else an
        oversize hole (pin + play, the fit named in the info); printed ones at least half of it as
        radial clearance. ``along`` widens the axial clearance. A budget the barrel cannot carry
        (hole leaving less than the wall's half) is refused naming the hinge and the play.
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
    play_mm: Any = None
    name: str = "knuckle"

    def _play(self, ctx: HingeContext) -> tuple[float, float] | None:
        """(across, along) play budget of this hinge, mm, or None."""
        v = self.play_mm.get(ctx.cid) if isinstance(self.play_mm, Mapping) else self.play_mm
        if v is None:
            return None
        try:
            across, along = (float(v), 0.0) if isinstance(v, int | float) else (float(v[0]), float(v[1]))
        except (TypeError, ValueError, IndexError):
            raise HingeError(
                f"{self.name} hinge option play_mm for {ctx.cid} = {v!r}; give mm or (across, along) mm"
            ) from None
        if not (across >= 0.0 and along >= 0.0 and math.isfinite(across + along)):
            raise HingeError(
                f"{self.name} hinge option play_mm for {ctx.cid} = {v!r}; values must be finite and >= 0 mm"
            )
        return across, along

    def _sized_hole(self, ctx: HingeContext, d: float, wall: float, across: float) -> tuple[float, float, str, float]:
        """(hole, pin, fit label, smallest diametral clearance) of a machined hinge with radial play."""
        f = fit_for_play(across, d)
        if f is not None:
            return f.mean_hole, f.mean_shaft, f"{f.name} (play {across:g} mm)", f.min_clearance
        base = iso_fit("H7/h6", d)
        hole = d + across + 0.5 * (base.hole[1] - base.hole[0])
        left = 0.5 * (d + 2 * wall - hole)
        if left < 0.5 * wall:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: play budget {across:.4g} mm needs a pin hole of {hole:.3f} mm in a "
                f"{d + 2 * wall:g} mm barrel ({left:.3f} mm wall, below half the {wall:g} mm wall); no knuckle of "
                f"this {ctx.thickness:g} mm panel can carry it; use thicker panels, a flexure or tape hinge, "
                "or less play"
            )
        return (hole, base.mean_shaft, f"oversize hole {hole:.3f} mm (play {across:g} mm; no fit of "
                f"{', '.join(PLAY_FITS)} is that loose)", hole - 0.5 * (base.hole[1] - base.hole[0]) - base.shaft[1])

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
        play = self._play(ctx)
        if proc == "machined":
            if play is None:
                f = iso_fit(self.fit, d)
                hole_d, pin_d, fit_name, given = f.mean_hole, f.mean_shaft, self.fit, f.min_clearance
            else:
                hole_d, pin_d, fit_name, given = self._sized_hole(ctx, d, wall, play[0])
        else:
            c = self._clearance(ctx) if play is None else max(self._clearance(ctx), 0.5 * play[0])
            hole_d, pin_d, fit_name, given = d + 2 * c, d, f"printed +{c:g} mm radial", 2 * c
        radius = 0.5 * d + wall
        clip = barrel_geometry(ctx, self.name, 0.5 * hole_d, radius)
        axial = positive(self.name, "axial_clearance_mm", self.axial_clearance_mm, allow_zero=True)
        if play is not None:
            axial = max(axial, play[1])
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
        if play is not None:  # the hinge table's "play needed / play provided" columns
            info.update(play_needed_mm=play[0], play_provided_mm=given, play_along_needed_mm=play[1],
                        play_along_provided_mm=axial)
        return HingeDesign(
            ctx.hinge.crease, self.name,
            (SideFeatures(notches=_clean(sides[0]["n"]), barrels=tuple(sides[0]["b"])),
             SideFeatures(notches=_clean(sides[1]["n"]), barrels=tuple(sides[1]["b"]))),
            (pin,), info,
        )


def _clean(notches: list[Notch]) -> tuple[Notch, ...]:
    return tuple(sorted(notches, key=lambda n: n.s0))
