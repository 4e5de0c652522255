"""Living hinge (flexure web) across the gap of a hinge line.

A thin web of thickness ``t`` bridges the gap; its free length ``L`` is the gap width. Bent through
the fold angle ``theta`` as a small-length flexural pivot, its outer fibre strain is

    epsilon = t * theta / (2 L)          (Howell, Compliant Mechanisms, Wiley 2001)

so the shortest free length that stays within the material's allowable strain is
``L_min = t * theta / (2 epsilon_allow)``. A web over the allowable is refused with that length.
The web is a separate part ``FLEX-C042`` that moves with panel A; its folded pose is drawn rigid,
so only the flat pose is a faithful shape.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from thickpanel.errors import HingeError

from .base import Box, ExtraPart, HingeContext, HingeDesign, SideFeatures, positive

__all__ = ["FlexureHinge", "flexure_strain", "flexure_min_length"]


def flexure_strain(t: float, theta: float, length: float, play: float = 0.0) -> float:
    """Outer-fibre strain of a flexure web: t theta / (2 L) (Howell 2001) plus, with hinge play
    ``play`` (mm) taken up by the web, the stretch play / L (conservative: all play as tension);
    t, L mm, theta rad."""
    return t * abs(theta) / (2.0 * length) + abs(play) / length


def flexure_min_length(t: float, theta: float, allowable: float, play: float = 0.0) -> float:
    """Shortest free length (mm) keeping the strain (with ``play``, mm) at or below ``allowable``."""
    return (t * abs(theta) / 2.0 + abs(play)) / allowable


@dataclass
class FlexureHinge:
    """Living-hinge web.

    Parameters
    ----------
    web_thickness_mm : float
        0.4 mm default (common practice for polypropylene living hinges, from memory).
    play_mm : float or mapping, optional
        Hinge play the web must take up (one value, or ``{"C042": mm}`` per crease); it adds
        ``play / L`` to the bending strain.
    """

    web_thickness_mm: float = 0.4
    play_mm: Any = None
    name: str = "flexure"

    def design(self, ctx: HingeContext) -> HingeDesign:
        """The web part, after checking its strain against the material's allowable."""
        t = positive(self.name, "web_thickness_mm", self.web_thickness_mm)
        mat = ctx.materials[0]
        if mat.allowable_strain is None:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: material {mat.key or 'unspecified'!r} has no "
                f"allowable strain for "
                f"a living hinge; use a material with one (pp, petg, nylon-12)"
            )
        if t >= ctx.thickness:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: web thickness {t:g} mm must be < panel "
                f"thickness {ctx.thickness:g} mm"
            )
        length = ctx.hinge.gap
        theta = ctx.fold
        pv = self.play_mm.get(ctx.cid, 0.0) if isinstance(self.play_mm, Mapping) else (self.play_mm or 0.0)
        play = positive(self.name, "play_mm", pv, allow_zero=True)
        l_min = flexure_min_length(t, theta, mat.allowable_strain, play)
        if length <= ctx.tol.length:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: the gap is {length:g} mm, no room for a web; a "
                f"free length of at least {l_min:.3f} mm is needed"
            )
        eps = flexure_strain(t, theta, length, play)
        if eps > mat.allowable_strain:
            raise HingeError(
                f"{self.name} hinge on {ctx.cid}: web strain {eps:.4f} (t {t:g} mm, fold "
                f"{abs(theta):.4f} rad, play {play:g} mm, free length {length:g} mm) is over the allowable "
                f"{mat.allowable_strain:g} of {mat.key}; a free length of at least {l_min:.3f} mm "
                f"would pass (widen the gap) or use a thinner web"
            )
        a, b = ctx.hinge.usable
        za = ctx.axis_z
        lo = max(s.z0 for s in ctx.slabs)
        hi = min(s.z1 for s in ctx.slabs)
        zc = min(max(za, lo + 0.5 * t), hi - 0.5 * t)
        g2 = 0.5 * length
        web = Box(a, b, -g2, g2, zc - za - 0.5 * t, zc - za + 0.5 * t)
        part = ExtraPart(
            f"FLEX-{ctx.cid}", "flexure", 0, boxes=(web,), material=mat.key,
            attrs={"length": b - a, "free_length": length, "web_thickness": t, "strain": eps,
                   "min_free_length": l_min},
        )
        info = {"strain": eps, "allowable_strain": mat.allowable_strain, "free_length": length,
                "min_free_length": l_min}
        if self.play_mm is not None:
            info["play_needed_mm"] = play  # taken up by the web: already in the strain above
        return HingeDesign(ctx.hinge.crease, self.name, (SideFeatures(), SideFeatures()), (part,),
                           info)
