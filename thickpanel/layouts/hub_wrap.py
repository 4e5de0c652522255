"""The ``hub-wrap`` layout: a disc of panels that wraps round a regular polygonal hub.

Built from its stowed state (:mod:`thickpanel.wrap.zero` for zero thickness,
:mod:`thickpanel.wrap.thick` for plates of a given thickness on a backing membrane); see
``docs/hub-wrap.md``. The construction's stowed poses, plate outlines and backing gaps are kept beside
the pattern (:func:`thickpanel.wrap.sheet.wrap_info`).
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import PatternError
from ..pattern import CreasePattern
from ..tolerances import DEFAULT_TOL, Tolerances
from ..wrap.geometry import Hub, WrapSpec
from ..wrap.sheet import GapsFn, build_sheet, mirrored, wrap_info
from ..wrap.zero import zero_thickness_pieces
from . import register_layout, register_panel_estimate
from .assignment import LayoutInfo, attach_info

__all__ = ["hub_wrap", "hub_wrap_panels", "deployed_circumradius", "reference_sheet"]

MAX_SIDES = 64
MAX_RINGS = 200


def _length(key: str, v: object, *, allow_zero: bool = False) -> float:
    if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(float(v)):
        raise PatternError(f"hub-wrap: {key} = {v!r} must be a finite length in mm")
    x = float(v)
    if x < 0 or (x == 0 and not allow_zero):
        raise PatternError(f"hub-wrap: {key} = {v!r} mm is out of range; allowed: {'>= 0' if allow_zero else '> 0'} mm")
    return x


def _count(key: str, v: object, lo: int, hi: int) -> int:
    if isinstance(v, bool) or not isinstance(v, int):
        raise PatternError(f"hub-wrap: {key} = {v!r} must be a whole number in {lo}..{hi}")
    if not lo <= v <= hi:
        raise PatternError(f"hub-wrap: {key} = {v} is out of range; allowed: {lo}..{hi}")
    return int(v)


def resolve_spec(sides: object = 6, rings: object = 4, ring_height: object = None, hub_circumradius: object = None,
                 hub_inradius: object = None, outer_diameter: object = None, wrap: object = "ccw") -> WrapSpec:
    """Check the user's parameters and resolve the alternatives (hub inradius, outer diameter)."""
    m = _count("sides", sides, 3, MAX_SIDES)
    r = _count("rings", rings, 1, MAX_RINGS)
    if (hub_circumradius is None) == (hub_inradius is None):
        raise PatternError("hub-wrap: give exactly one of hub_circumradius and hub_inradius (mm)")
    cos = math.cos(math.pi / m)
    rh = _length("hub_circumradius", hub_circumradius) if hub_circumradius is not None else \
        _length("hub_inradius", hub_inradius) / cos
    if (ring_height is None) == (outer_diameter is None):
        raise PatternError("hub-wrap: give exactly one of ring_height and outer_diameter (mm)")
    if ring_height is not None:
        h = _length("ring_height", ring_height)
    else:
        d = _length("outer_diameter", outer_diameter)
        h = (d / 2.0 * cos - rh * cos) / r
        if h <= 0:
            raise PatternError(f"hub-wrap: outer_diameter = {d:g} mm leaves no room for rings round a hub of "
                               f"circumradius {rh:g} mm (needs > {2 * rh:g} mm)")
    if str(wrap) not in ("ccw", "cw"):
        raise PatternError(f"hub-wrap: wrap = {wrap!r} must be 'ccw' or 'cw'")
    return WrapSpec(m, r, h, rh, str(wrap))


def deployed_circumradius(spec: WrapSpec, extra: float = 0.0) -> float:
    """Circumradius (mm) of the deployed outline: ``(a + r h + extra) / cos(pi/m)``.

    ``extra`` is the flat width the thick construction adds outside the hub (backing strips).
    """
    a = spec.hub_circumradius * math.cos(math.pi / spec.sides)
    return (a + spec.rings * spec.ring_height + extra) / math.cos(math.pi / spec.sides)


def hub_wrap_panels(sides: int = 6, rings: int = 4, ring_height: float | None = None,
                    hub_circumradius: float | None = None, hub_inradius: float | None = None,
                    outer_diameter: float | None = None, **_: object) -> int:
    """Panel count of the zero-thickness sheet, ``1 + m (r + 2 sum_k ceil(k h tan(pi/m) / s))`` (the thick
    sheet has fewer)."""
    spec = resolve_spec(sides, rings, ring_height, hub_circumradius, hub_inradius, outer_diameter)
    hub = Hub(spec.sides, spec.hub_circumradius)
    per = sum(math.ceil(k * spec.ring_height * hub.tan / hub.s - 1e-12) for k in range(1, spec.rings + 1))
    return 1 + spec.sides * (spec.rings + 2 * per)


def hub_wrap(
    sides: int = 6,
    rings: int = 4,
    ring_height: float | None = None,
    hub_circumradius: float | None = None,
    *,
    hub_inradius: float | None = None,
    outer_diameter: float | None = None,
    wrap: str = "ccw",
    panel_thickness: float = 0.0,
    backing_thickness: float = 0.05,
    layer_gap: float = 0.1,
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Flat sheet of a disc that wraps round a regular polygonal hub.

    Parameters
    ----------
    sides : int
        Hub sides m, 3..64 (one gore and one wrapped arm per side).
    rings : int
        Accordion rings r per gore, 1..200.
    ring_height : float, mm
        Radial width of a ring in the zero-thickness sheet = stowed height of a layer. Give this or
        ``outer_diameter``.
    hub_circumradius, hub_inradius : float, mm
        The hub's size (give one).
    outer_diameter : float, mm
        Deployed circumscribed diameter of the zero-thickness sheet (sets ``ring_height``).
    wrap : {'ccw', 'cw'}
        Sense of the sheet: ``ccw`` wraps the arms clockwise round the hub seen from +z; ``cw`` is the
        mirror image.
    panel_thickness : float, mm
        Plate thickness t. 0 gives the zero-thickness reference sheet; t > 0 the thick construction
        (plates on a backing membrane, layers nested in the stowed state).
    backing_thickness : float, mm
        Backing membrane thickness (thick construction only).
    layer_gap : float, mm
        Clearance kept between neighbouring stowed layers (thick construction only).
    name : str
    tol : Tolerances

    Returns
    -------
    CreasePattern
        Crease classes (``layout_info``): ``hub``, ``accordion``, ``radial``, ``u-turn``, ``bend``,
        ``border``; the hub corners are the exempt vertices. Stowed poses and plates:
        :func:`thickpanel.wrap.sheet.wrap_info`.
    """
    spec = resolve_spec(sides, rings, ring_height, hub_circumradius, hub_inradius, outer_diameter, wrap)
    t = _length("panel_thickness", panel_thickness, allow_zero=True)
    tm = _length("backing_thickness", backing_thickness, allow_zero=True)
    gap = _length("layer_gap", layer_gap, allow_zero=True)
    hub = Hub(spec.sides, spec.hub_circumradius)
    params: dict[str, float | str] = {
        "sides": float(spec.sides), "rings": float(spec.rings), "ring_height": spec.ring_height,
        "hub_circumradius": spec.hub_circumradius, "hub_inradius": hub.a, "hub_side": hub.s,
        "panel_thickness": t, "backing_thickness": tm if t > 0 else 0.0, "layer_gap": gap if t > 0 else 0.0,
        "wrap": spec.wrap,
    }
    if t == 0:
        pieces = zero_thickness_pieces(spec.sides, spec.rings, spec.ring_height, spec.hub_circumradius)
        rd = deployed_circumradius(spec)
        outline = rd * hub.u
        extra: dict = {"stowed_height": spec.ring_height}
        gaps_fn: GapsFn | None = None
    else:
        from ..wrap.thick import thick_sheet

        pieces, outline, extra, gaps_fn = thick_sheet(spec, t, tm, gap, tol=tol)
        rd = float(np.linalg.norm(outline, axis=1).max())
    params["deployed_diameter"] = 2.0 * rd
    if spec.wrap == "cw":
        pieces, outline = mirrored(pieces, outline)
    cp = build_sheet(pieces, outline, name=name or "hub-wrap", params=params, gaps_fn=gaps_fn, extra=extra,
                     tol=tol)
    info = wrap_info(cp)
    assert info is not None
    arm = np.array([_gore_of(cp, c, info) for c in range(cp.n_creases)], dtype=np.int64)
    attach_info(cp, LayoutInfo(info.labels, arm, spec.sides, {k: float(v) for k, v in params.items()
                                                              if not isinstance(v, str)},
                               0.0, info.hub_vertices))
    return cp


def reference_sheet(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> CreasePattern | None:
    """The zero-thickness sheet of the same hub, rings, ring height and sense as a thick ``hub-wrap``
    sheet (the sheet itself when it has zero thickness; None for other patterns)."""
    info = wrap_info(pattern)
    if info is None:
        return None
    p = info.params
    if float(p.get("panel_thickness", 0.0)) <= 0:
        return pattern
    return hub_wrap(int(p["sides"]), int(p["rings"]), float(p["ring_height"]), float(p["hub_circumradius"]),
                    wrap=str(p.get("wrap", "ccw")), name=f"{pattern.name} (zero-thickness reference)", tol=tol)


def _gore_of(cp: CreasePattern, c: int, info: object) -> int:
    pcs = info.pieces  # type: ignore[attr-defined]
    for p in cp.crease_panels[c]:
        if p >= 0 and pcs[int(p)].gore >= 0:
            return int(pcs[int(p)].gore)
    return 0


register_layout("hub-wrap", hub_wrap)
register_panel_estimate("hub-wrap", hub_wrap_panels)
