"""The thick-panel plan: what every thickness method produces and solids/clearance consume.

Frames: every slab is described in its panel's *flat frame*, which is the flat sheet frame
(x, y in the pattern plane, z along the sheet normal, mm). A fold state's ``poses[p]`` (or
:meth:`ThickPlan.poses`) maps that frame to the folded position.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from ..typing import FloatArray

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldState

__all__ = ["CutPlane", "Standoff", "Slab", "HingeLine", "ThickPlan"]

_T_MATCH = 1e-12  # fold fractions this close name the same state


@dataclass(frozen=True)
class CutPlane:
    """A half-space that trims a slab: material is kept where ``normal . x <= offset``.

    Attributes
    ----------
    normal : (3,) float
        Unit outward normal of the removed side, in the panel's flat frame.
    offset : float, mm
    label : str
        What made the cut, e.g. ``bevel C042`` or ``vertex V012``.
    """

    normal: tuple[float, float, float]
    offset: float
    label: str = ""


@dataclass(frozen=True)
class Standoff:
    """A block joining a slab to a hinge axis that lies outside the slab's own z-range.

    Attributes
    ----------
    crease : int
        The hinge line it carries.
    polygon : (k, 2) float, mm
        Footprint in the panel's flat frame (counter-clockwise).
    z0, z1 : float, mm
        Extent along the panel normal.
    """

    crease: int
    polygon: tuple[tuple[float, float], ...]
    z0: float
    z1: float


@dataclass(frozen=True)
class Slab:
    """One thick panel.

    Attributes
    ----------
    panel : int
    polygon : (k, 2) float, mm
        Outline in the flat frame (counter-clockwise), already inset for gaps where the method
        asks for it; the untrimmed prism is ``polygon x [z0, z1]``.
    z0, z1 : float, mm
        Extent along the panel normal relative to the reference surface (z0 < z1).
    cuts : tuple of CutPlane
        Trimming half-spaces (bevels, vertex clearances).
    standoffs : tuple of Standoff
    material : str
        Key into the materials table (``hinges.materials``), empty when not set.
    """

    panel: int
    polygon: tuple[tuple[float, float], ...]
    z0: float
    z1: float
    cuts: tuple[CutPlane, ...] = ()
    standoffs: tuple[Standoff, ...] = ()
    material: str = ""

    @property
    def thickness(self) -> float:
        """z1 - z0, mm."""
        return self.z1 - self.z0

    def polygon_array(self) -> FloatArray:
        """(k, 2) float, mm."""
        return np.asarray(self.polygon, dtype=float)


@dataclass(frozen=True)
class HingeLine:
    """One folding crease with thickness: where its rotation axis sits and how wide its gap is.

    Attributes
    ----------
    crease : int
    panels : (int, int)
        (left, right) panels of the crease's forward direction.
    point : (3,) float, mm
        A point of the rotation axis in the flat frame (the crease's first vertex, shifted).
    direction : (3,) float
        Unit axis direction, along the crease's forward direction.
    face : str
        Where the hinge sits: ``reference`` (z = 0), ``top``, ``bottom`` or ``mid``.
    gap : float, mm
        Width of the gap between the two slabs along this line in the flat state.
    usable : (float, float), mm
        Start and end distance along the crease (from its first vertex) left for hardware
        after vertex clearances.
    fold_range : (float, float), rad
        Signed fold angles this hinge can reach without the slabs colliding across it.
    setback : (float, float), mm
        Distance of the (left, right) slab edges from the axis where standoffs bridge it (the
        offset-panel method); ``gap`` stays the empty width hinge hardware must span.
    """

    crease: int
    panels: tuple[int, int]
    point: tuple[float, float, float]
    direction: tuple[float, float, float]
    face: str
    gap: float
    usable: tuple[float, float]
    fold_range: tuple[float, float]
    setback: tuple[float, float] = (0.0, 0.0)

    @property
    def usable_length(self) -> float:
        """Length left for hinge hardware, mm."""
        return max(0.0, self.usable[1] - self.usable[0])


@dataclass(frozen=True)
class ThickPlan:
    """A thickness method's result for one crease pattern.

    Attributes
    ----------
    pattern : CreasePattern
    method : str
        Registry name of the method (``tapered``, ``offset-panel`` ...).
    slabs : tuple of Slab
        One per panel, in panel order (``Slab.panel`` names it); every method but ``wrap-backing``
        gives every panel one, so ``slabs[p]`` is panel p's; ``wrap-backing`` leaves panels of bare
        backing without a slab.
    hinges : tuple of HingeLine
        One per folding crease (and seam).
    target_fold : float, rad
        Largest fold magnitude the plan was made for.
    notes : tuple of str
        Method remarks for reports (reachable range, layer order ...).
    meta : dict
        Method data (``layers``, ``reachable``, ``sheet_parts`` ...), informative only.
    explicit_poses : tuple of (float, (P, 4, 4) float)
        Slab poses given outright for some fold fractions (e.g. a construction's stowed poses at
        t = 1); :meth:`poses` returns them for a state at that fraction instead of re-composing the
        state's angles. Arrays are read-only.
    follow_state : bool
        Slabs ride the state's own panel poses (``state.poses``) at other fractions, for paths whose
        poses are not composed from fold angles (least-squares deployments with compliant hinges).
    """

    pattern: CreasePattern
    method: str
    slabs: tuple[Slab, ...]
    hinges: tuple[HingeLine, ...]
    target_fold: float
    notes: tuple[str, ...] = ()
    meta: dict = field(default_factory=dict, compare=False)
    explicit_poses: tuple[tuple[float, FloatArray], ...] = field(default=(), compare=False)
    follow_state: bool = field(default=False, compare=False)

    def __post_init__(self) -> None:
        for t, poses in self.explicit_poses:
            arr = np.asarray(poses)
            if not (0.0 <= float(t) <= 1.0) or arr.shape != (self.pattern.n_panels, 4, 4):
                raise ValueError(f"explicit poses at t = {t!r} need 0 <= t <= 1 and shape "
                                 f"({self.pattern.n_panels}, 4, 4); got {arr.shape}")
            if arr.flags.writeable:
                raise ValueError(f"explicit poses at t = {t!r} must be a read-only array")

    def explicit_at(self, t: float) -> FloatArray | None:
        """The explicit poses given for fold fraction ``t`` (exact match within 1e-12), or None."""
        if not math.isfinite(t):
            return None
        for tk, poses in self.explicit_poses:
            if abs(float(tk) - t) <= _T_MATCH:
                return poses
        return None

    def hinge_for(self, crease: int) -> HingeLine:
        """The hinge line on ``crease``."""
        for h in self.hinges:
            if h.crease == crease:
                return h
        from ..errors import ThicknessError
        from ..pattern import cid

        raise ThicknessError(f"crease {cid(crease)} has no hinge line in this {self.method} plan")

    def poses(self, state: FoldState) -> FloatArray:
        """(P, 4, 4) slab poses for a fold state: the state's angles about this plan's hinge axes.

        For methods whose hinges stay on the reference surface this equals ``state.poses``.
        :attr:`explicit_poses` given for the state's fold fraction win; with :attr:`follow_state`
        the state's own poses are used otherwise.
        """
        got = self.explicit_at(float(state.t))
        if got is not None:
            return got
        if self.follow_state:
            return np.asarray(state.poses)
        from ..poses import compose_poses

        m = self.pattern.n_creases
        pts = np.zeros((m, 3))
        dirs = np.zeros((m, 3))
        v = self.pattern.vertices
        c = self.pattern.creases
        pts[:, :2] = v[c[:, 0]]
        d = v[c[:, 1]] - v[c[:, 0]]
        dirs[:, :2] = d / np.linalg.norm(d, axis=1)[:, None]
        for h in self.hinges:
            pts[h.crease] = h.point
            dirs[h.crease] = h.direction
        return compose_poses(
            self.pattern, state.angles, base=state.base_panel, axis_points=pts, axis_dirs=dirs
        )
