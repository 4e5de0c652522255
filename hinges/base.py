"""What a hinge style is: a recipe that says what it adds to panel A, to panel B, and which extra
parts it needs, and that checks its own feasibility.

Styles describe their features in the *hinge frame* of one hinge line, never in CAD objects, so the
recipes are plain data (no OCP import here):

- origin: the hinge axis point (flat sheet frame, mm);
- ``s``: along the axis (the crease's forward direction), measured from the axis point, so a
  hinge line's ``usable`` interval is directly an ``s`` interval;
- ``u``: in the sheet plane, from panel A (left of the crease) towards panel B (right);
- ``w``: the sheet normal (+z), measured from the axis.

Panel A is ``hinge.panels[0]``, panel B ``hinge.panels[1]``. The solid builder
(:mod:`thickpanel.solids`) turns these recipes into solids.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Protocol

import numpy as np

from thickpanel.errors import HingeError
from thickpanel.pattern import cid
from thickpanel.tolerances import DEFAULT_TOL, Tolerances
from thickpanel.typing import FloatArray

from .materials import Material

if TYPE_CHECKING:
    from thickpanel.thickness.plan import HingeLine, Slab

__all__ = [
    "HingeFrame",
    "Notch",
    "Barrel",
    "Rod",
    "Box",
    "Hole",
    "SideFeatures",
    "ExtraPart",
    "HingeDesign",
    "SheetPart",
    "HingeContext",
    "HingeStyle",
    "knuckle_layout",
    "positive",
]


def _t3(v: Any) -> tuple[float, float, float]:
    return (float(v[0]), float(v[1]), float(v[2]))


@dataclass(frozen=True)
class HingeFrame:
    """Orthonormal frame of a hinge line (see the module docstring), flat sheet frame, mm."""

    origin: tuple[float, float, float]
    s: tuple[float, float, float]
    u: tuple[float, float, float]
    w: tuple[float, float, float]

    @classmethod
    def of(cls, hinge: HingeLine) -> HingeFrame:
        """The frame of ``hinge``: ``u = s x w`` points from panel A to panel B."""
        dx, dy, dz = (float(c) for c in hinge.direction)
        n = math.sqrt(dx * dx + dy * dy + dz * dz)
        dx, dy, dz = dx / n, dy / n, dz / n
        ux, uy = dy, -dx  # d x (0, 0, 1)
        nu = math.hypot(ux, uy)
        ux, uy = ux / nu, uy / nu
        w = (-dz * uy, dz * ux, ux * dy - uy * dx)  # u x d
        return cls(_t3(hinge.point), (dx, dy, dz), (ux, uy, 0.0), w)

    def matrix(self) -> FloatArray:
        """(4, 4) float: hinge frame (s, u, w) -> flat sheet frame."""
        m = np.eye(4)
        m[:3, 0] = self.s
        m[:3, 1] = self.u
        m[:3, 2] = self.w
        m[:3, 3] = self.origin
        return m

    def point(self, s: float, u: float, w: float) -> FloatArray:
        """(3,) float: the flat-frame point at hinge coordinates (s, u, w), mm."""
        return (np.asarray(self.origin) + s * np.asarray(self.s) + u * np.asarray(self.u)
                + w * np.asarray(self.w))


@dataclass(frozen=True)
class Notch:
    """Cut the panel's hinge-side edge back to ``depth`` mm from the axis over ``s0..s1``."""

    s0: float
    s1: float
    depth: float


@dataclass(frozen=True)
class Barrel:
    """A knuckle on the axis over ``s0..s1``: disk of ``radius`` with a ``hole`` (0 = solid).

    ``clip`` is the distance from the axis of the flat chord on the owning panel's side, where the
    barrel touches the panel (``None`` keeps the full disk, for parts that are not attached).
    """

    s0: float
    s1: float
    radius: float
    hole: float
    clip: float | None


@dataclass(frozen=True)
class Rod:
    """A solid cylinder of ``radius`` on the axis over ``s0..s1`` (a pin)."""

    s0: float
    s1: float
    radius: float


@dataclass(frozen=True)
class Box:
    """A box in hinge coordinates: ``s0..s1`` x ``u0..u1`` x ``w0..w1`` (mm)."""

    s0: float
    s1: float
    u0: float
    u1: float
    w0: float
    w1: float


@dataclass(frozen=True)
class Hole:
    """A through hole of ``diameter`` at hinge coordinates (``s``, ``u``), along the sheet normal."""

    s: float
    u: float
    diameter: float


@dataclass(frozen=True)
class SideFeatures:
    """What a hinge adds to (or removes from) one of its two panels."""

    notches: tuple[Notch, ...] = ()
    barrels: tuple[Barrel, ...] = ()
    rods: tuple[Rod, ...] = ()
    boxes: tuple[Box, ...] = ()
    recesses: tuple[Box, ...] = ()
    holes: tuple[Hole, ...] = ()


@dataclass(frozen=True)
class ExtraPart:
    """A separate part a hinge needs (pin, tape, flexure web).

    Attributes
    ----------
    name : str
        Part id, e.g. ``PIN-C042``.
    kind : str
        ``pin``, ``tape`` or ``flexure``.
    follows : int
        0 or 1: the part moves with panel A or panel B when the array folds.
    rods, boxes : tuple
        Its geometry in the hinge frame.
    material : str
    attrs : dict
        Bill-of-materials data (``diameter``, ``length``, ``fit`` ...).
    """

    name: str
    kind: str
    follows: int
    rods: tuple[Rod, ...] = ()
    boxes: tuple[Box, ...] = ()
    material: str = ""
    attrs: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class SheetPart:
    """A flat part spanning the whole array (a membrane), made once per plan.

    Attributes
    ----------
    name, kind, material : str
    outline : (k, 2) float, mm
        Counter-clockwise outline in the flat sheet frame.
    z0, z1 : float, mm
    attrs : dict
    """

    name: str
    kind: str
    outline: tuple[tuple[float, float], ...]
    z0: float
    z1: float
    material: str = ""
    attrs: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class HingeDesign:
    """A style's answer for one hinge line: features of panel A and B, extra parts, BOM data."""

    crease: int
    style: str
    sides: tuple[SideFeatures, SideFeatures]
    extras: tuple[ExtraPart, ...] = ()
    info: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class HingeContext:
    """Everything a style may look at for one hinge line.

    Attributes
    ----------
    hinge : HingeLine
    slabs : (Slab, Slab)
        Panel A and panel B.
    materials : (Material, Material)
    fold : float, rad
        Largest fold magnitude this hinge sees.
    tol : Tolerances
    """

    hinge: HingeLine
    slabs: tuple[Slab, Slab]
    materials: tuple[Material, Material]
    fold: float
    tol: Tolerances = DEFAULT_TOL

    @property
    def thickness(self) -> float:
        """Thinner of the two slabs, mm."""
        return min(s.thickness for s in self.slabs)

    @property
    def cid(self) -> str:
        """Crease id, e.g. ``C042``."""
        return cid(self.hinge.crease)

    @property
    def axis_z(self) -> float:
        """Height of the axis in the flat frame, mm."""
        return float(self.hinge.point[2])


class HingeStyle(Protocol):
    """A hinge style: ``name`` and ``design(ctx) -> HingeDesign`` (raises HingeError if unfit)."""

    name: str

    def design(self, ctx: HingeContext) -> HingeDesign:  # pragma: no cover - protocol
        ...


def positive(style: str, name: str, value: Any, *, allow_zero: bool = False) -> float:
    """Validate an option: a finite number > 0 (or >= 0), else HingeError naming it."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise HingeError(f"{style} hinge option {name} = {value!r} must be a number") from None
    ok = x >= 0 if allow_zero else x > 0
    if not (ok and np.isfinite(x)):
        rng = ">= 0" if allow_zero else "> 0"
        raise HingeError(f"{style} hinge option {name} = {value!r} is out of range; allowed: {rng}")
    return x


def knuckle_layout(
    ctx: HingeContext, style: str, n: int, length: float | None, axial: float, min_length: float,
    step: float = 0.0,
) -> list[tuple[float, float]]:
    """``n`` knuckle intervals (s0, s1) centred in the usable length, separated by ``axial`` mm.

    An ``axial`` margin is kept at both ends of the usable length too, so that the clearance
    notches around the end knuckles stay inside it. With ``step`` > 0 a knuckle length that fills
    the usable length is rounded down to a multiple of ``step`` mm, so that hinges of nearly equal
    length share one barrel (and one pin length).

    Raises HingeError naming the crease when they do not fit the usable hinge length.
    """
    a, b = ctx.hinge.usable
    a, b = a + axial, b - axial  # the other panel's clearance notches stay inside the usable length
    usable = max(0.0, b - a)
    if n < 1:
        raise HingeError(f"{style} hinge on {ctx.cid}: knuckles = {n}; allowed: >= 1")
    k_max = (usable - (n - 1) * axial) / n
    if length is None:
        k = k_max
        if step > 0:
            k = math.floor(k / step + ctx.tol.length) * step
    else:
        k = length
        need = n * k + (n - 1) * axial
        if need > usable + ctx.tol.length:
            raise HingeError(
                f"{style} hinge on {ctx.cid}: {n} knuckles of {k:g} mm with {axial:g} mm gaps need "
                f"{need:g} mm, longer than the usable hinge length less end clearances "
                f"{usable:g} mm; knuckle length "
                f"must be <= {max(k_max, 0):.3f} mm"
            )
    if k < min_length:
        raise HingeError(
            f"{style} hinge on {ctx.cid}: knuckles would be {k:.3f} mm long, shorter than the "
            f"minimum {min_length:g} mm (usable hinge length {usable:g} mm, {n} knuckles); use "
            f"fewer knuckles or a longer crease"
        )
    start = a + 0.5 * (usable - (n * k + (n - 1) * axial))
    return [(start + i * (k + axial), start + i * (k + axial) + k) for i in range(n)]
