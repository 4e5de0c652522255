"""Helpers shared by the thickness methods: validation, final fold angles, hinge lines, cuts.

All lengths mm, angles rad. Every error is a :class:`~thickpanel.errors.ThicknessError` naming the
panel, crease or parameter, the value and the allowed range.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import ThicknessError
from ..pattern import cid, pid, vid
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray
from .plan import CutPlane, HingeLine

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

__all__ = [
    "panel_thicknesses",
    "inradius",
    "final_angles",
    "check_target",
    "folding_creases",
    "make_hinge",
    "edge_cut",
    "vertex_cuts",
    "vertex_clearance_radius",
    "sector_angles",
    "inset_polygon",
    "centroid_bound",
    "z_range",
    "face_hinge_range",
]


def _positive_finite(name: str, value: Any) -> float:
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise ThicknessError(f"{name} must be a number in mm; got {value!r}")
    x = float(value)
    if not (math.isfinite(x) and x > 0):
        raise ThicknessError(f"{name} = {value!r} mm is out of range; allowed: a finite length > 0 mm")
    return x


def inradius(poly: FloatArray) -> float:
    """Radius of the largest circle inside a simple counter-clockwise polygon, mm.

    Exact for convex polygons (Chebyshev centre by linear programming); for non-convex polygons
    the largest circle inside the convex parts, a lower bound.

    Parameters
    ----------
    poly : (k, 2) float, mm
    """
    from scipy.optimize import linprog

    from ..collide import convex_parts

    best = 0.0
    for part in convex_parts(poly):
        d = np.roll(part, -1, axis=0) - part
        ln = np.linalg.norm(d, axis=1)
        ok = ln > 0
        n = np.stack([d[ok, 1], -d[ok, 0]], axis=1) / ln[ok, None]  # outward normals (ccw)
        off = np.einsum("ij,ij->i", n, part[ok])
        # quick lower bound: centroid distance to the edge lines
        c = part.mean(axis=0)
        quick = float(np.min(off - n @ c))
        a_ub = np.column_stack([n, np.ones(len(n))])
        res = linprog([0.0, 0.0, -1.0], A_ub=a_ub, b_ub=off, bounds=[(None, None), (None, None), (0, None)])
        r = float(-res.fun) if res.status == 0 else quick
        best = max(best, r, quick)
    return best


def centroid_bound(poly: FloatArray) -> float:
    """Distance (mm) from the vertex mean to the nearest edge line of a convex (k, 2) polygon:
    a cheap lower bound of its inradius."""
    d = np.roll(poly, -1, axis=0) - poly
    ln = np.linalg.norm(d, axis=1)
    ok = ln > 0
    n = np.stack([d[ok, 1], -d[ok, 0]], axis=1) / ln[ok, None]
    c = poly.mean(axis=0)
    return float(np.min(np.einsum("ij,ij->i", n, poly[ok] - c)))


def panel_thicknesses(
    pattern: CreasePattern, thickness: float | Mapping[Any, float], *, check_inradius: bool = True
) -> FloatArray:
    """(P,) float, mm: validated thickness of every panel.

    Parameters
    ----------
    thickness : float or mapping
        One thickness for every panel, or a mapping from panel index or id (``P017``) to mm;
        panels missing from a mapping raise.
    check_inradius : bool
        Refuse a thickness larger than the panel's inradius (a slab thicker than it is wide).
    """
    n = pattern.n_panels
    if isinstance(thickness, Mapping):
        out = np.full(n, np.nan)
        for key, val in thickness.items():
            if isinstance(key, str) and key.upper().startswith("P") and key[1:].isdigit():
                p = int(key[1:])
            elif isinstance(key, numbers.Integral) and not isinstance(key, bool):
                p = int(key)
            else:
                raise ThicknessError(f"thickness key {key!r} is not a panel index or id like P017")
            if not (0 <= p < n):
                raise ThicknessError(f"thickness given for panel {pid(p)}; panels are P000..{pid(n - 1)}")
            out[p] = _positive_finite(f"thickness of panel {pid(p)}", val)
        missing = np.nonzero(np.isnan(out))[0]
        if len(missing):
            raise ThicknessError(
                "no thickness given for panels " + ", ".join(pid(p) for p in missing[:5])
                + (" ..." if len(missing) > 5 else "")
            )
    else:
        out = np.full(n, _positive_finite("thickness", thickness))
    if check_inradius:
        for p in range(n):
            poly = pattern.panel_polygon(p)
            # cheap acceptance first: a convex panel whose centroid is farther than the thickness
            # from every edge line certainly has an inradius at least that large
            if pattern.panels[p].convex and out[p] <= centroid_bound(poly):
                continue
            r = inradius(poly)
            if out[p] > r:
                raise ThicknessError(
                    f"thickness {out[p]:g} mm of panel {pid(p)} exceeds its inradius {r:.4g} mm; "
                    f"allowed: 0 < thickness <= {r:.4g} mm"
                )
    return out


def folding_creases(pattern: CreasePattern) -> list[int]:
    """Indices of the folding creases (mountain/valley with a panel on each side) and seams."""
    cp = pattern.crease_panels
    out = [
        c for c in range(pattern.n_creases)
        if pattern.folding[c] and cp[c, 0] >= 0 and cp[c, 1] >= 0 and cp[c, 0] != cp[c, 1]
    ]
    return out


def final_angles(pattern: CreasePattern, target_fold: float, path: FoldPath | None) -> FloatArray:
    """(m,) float, rad: signed fold angle of every crease at the end of the fold.

    From the last state of ``path`` when given (scaled so that its largest magnitude equals
    ``target_fold``), else the pattern's target angles where given, else ``+-target_fold`` by kind.
    """
    m = pattern.n_creases
    if path is not None and len(path.states):
        ang = np.array(path.states[-1].angles, dtype=float)
        big = float(np.max(np.abs(ang))) if m else 0.0
        if big > 0:
            ang = ang * (target_fold / big)
        return ang
    out = np.zeros(m)
    ta = pattern.target_angles
    for c in range(m):
        kind = pattern.kinds[c]
        if kind not in ("mountain", "valley"):
            continue
        if np.isfinite(ta[c]):
            out[c] = ta[c] * (target_fold / max(float(np.nanmax(np.abs(ta))), 1e-300))
        else:
            out[c] = target_fold if kind == "valley" else -target_fold
    for s in pattern.seams:
        out[s.a] = target_fold if s.kind == "valley" else -target_fold
    return out


def check_target(target_fold: Any, *, method: str, limit: float = math.pi, inclusive: bool = True) -> float:
    """Validate ``target_fold`` (rad) against the method's reachable limit; returns it as float."""
    if isinstance(target_fold, bool) or not isinstance(target_fold, numbers.Real):
        raise ThicknessError(f"target_fold must be a number in rad; got {target_fold!r}")
    x = float(target_fold)
    ok = math.isfinite(x) and x > 0 and (x <= limit if inclusive else x < limit)
    if not ok:
        rel = "<=" if inclusive else "<"
        raise ThicknessError(
            f"target_fold = {x:g} rad ({math.degrees(x):.4g} deg) is out of range for method {method}; "
            f"allowed: 0 < target_fold {rel} {limit:.6g} rad ({math.degrees(limit):.4g} deg)"
        )
    return x


def sector_angles(pattern: CreasePattern, v: int) -> tuple[tuple[int, ...], FloatArray]:
    """Creases at vertex ``v`` counter-clockwise and the (k,) sector angles (rad) between them.

    Sector ``i`` lies between crease ``i`` and crease ``i + 1`` (cyclic).
    """
    offsets, creases, angles = pattern.star
    cs = tuple(int(x) for x in creases[offsets[v] : offsets[v + 1]])
    a = np.asarray(angles[offsets[v] : offsets[v + 1]], dtype=float)
    sec = (np.roll(a, -1) - a) % (2 * math.pi)
    return cs, sec


def make_hinge(
    pattern: CreasePattern,
    c: int,
    *,
    z: float,
    face: str,
    gap: float,
    fold_range: tuple[float, float],
    clear: tuple[float, float] = (0.0, 0.0),
    shift: tuple[float, float] = (0.0, 0.0),
    setback: tuple[float, float] = (0.0, 0.0),
) -> HingeLine:
    """A :class:`HingeLine` on crease ``c`` at height ``z`` (mm) in the flat frame.

    ``shift`` moves the axis in the sheet plane (mm, along the crease's left normal), ``clear``
    trims the usable length at the first and second vertex (mm), ``setback`` records how far the
    (left, right) slab edges stand back from the axis (mm).
    """
    v0, v1 = pattern.creases[c]
    p0 = pattern.vertices[v0]
    d = pattern.vertices[v1] - p0
    ln = float(np.linalg.norm(d))
    u = d / ln
    left = np.array([-u[1], u[0]])
    pt = p0 + left * shift[0]
    cp = pattern.crease_panels
    return HingeLine(
        crease=int(c),
        panels=(int(cp[c, 0]), int(cp[c, 1])),
        point=(float(pt[0]), float(pt[1]), float(z)),
        direction=(float(u[0]), float(u[1]), 0.0),
        face=face,
        gap=float(gap),
        usable=(float(clear[0]), float(max(clear[0], ln - clear[1]))),
        fold_range=(float(fold_range[0]), float(fold_range[1])),
        setback=(float(setback[0]), float(setback[1])),
    )


def edge_cut(
    pattern: CreasePattern, p: int, c: int, *, angle: float, z_ref: float, side: int, label: str
) -> CutPlane:
    """Bevel of panel ``p`` along crease ``c``: the plane through the crease line at height ``z_ref``
    leaning by ``angle/2`` from the vertical towards the panel, removing the material on the inner
    side (``side`` +1: above ``z_ref``, -1: below).

    The plane bisects the inner dihedral of a fold by ``angle`` (Tachi 2011, Origami 5).
    """
    v0, v1 = pattern.creases[c]
    a = pattern.vertices[v0]
    d = pattern.vertices[v1] - a
    u = d / np.linalg.norm(d)
    inward = np.array([-u[1], u[0]])  # left normal
    if int(pattern.crease_panels[c, 0]) != p:
        inward = -inward
    h = math.tan(abs(angle) / 2.0)
    # plane: keep points with  -inward . (x - a) + side * h * (z - z_ref) <= 0  (normalised)
    n = np.array([-inward[0], -inward[1], side * h])
    n = n / np.linalg.norm(n)
    off = float(n[:2] @ a + n[2] * z_ref)
    return CutPlane((float(n[0]), float(n[1]), float(n[2])), off, label)


def vertex_clearance_radius(sector: float, stack: float) -> float:
    """Distance (mm) from a vertex at which a corner of sector angle ``sector`` (rad) is cut so that
    a stack of height ``stack`` (mm) can pass the vertex: ``stack / (2 tan(sector / 2))``, floored
    at ``stack / 2``. [derived] from the rule that no vertex whose panels keep full thickness to
    the vertex folds flat (Lang et al. 2018, Appl. Mech. Rev. 70(1):010805).
    """
    s = max(sector, 1e-6)
    return max(stack / (2.0 * math.tan(min(s, math.pi - 1e-6) / 2.0)), stack / 2.0)


def vertex_cuts(
    pattern: CreasePattern, p: int, radii: Mapping[int, float], *, tol: Tolerances = DEFAULT_TOL
) -> list[CutPlane]:
    """Vertical cut planes chamfering panel ``p``'s corners at the vertices in ``radii`` (mm)."""
    out: list[CutPlane] = []
    loop = pattern.panels[p].loop
    pts = pattern.vertices[list(loop)]
    k = len(loop)
    for i, v in enumerate(loop):
        r = radii.get(int(v), 0.0)
        if r <= tol.length:
            continue
        a = pts[i]
        e1 = pts[(i + 1) % k] - a
        e2 = pts[(i - 1) % k] - a
        b = e1 / np.linalg.norm(e1) + e2 / np.linalg.norm(e2)
        nb = float(np.linalg.norm(b))
        if nb <= tol.angle:
            continue
        b = b / nb  # into the panel
        n = (-float(b[0]), -float(b[1]), 0.0)
        off = float(-(b @ a) - r)
        out.append(CutPlane(n, off, f"vertex {vid(int(v))}"))
    return out


def require_folding(pattern: CreasePattern, method: str) -> list[int]:
    """Folding creases, refusing a pattern that has none."""
    fc = folding_creases(pattern)
    if not fc:
        raise ThicknessError(f"method {method}: the pattern has no mountain or valley crease between two panels")
    return fc


def describe_crease(c: int) -> str:
    """Id text of a crease (kept for messages)."""
    return cid(c)


REFERENCES = ("mid", "bottom", "top")


def z_range(reference: str, t: float) -> tuple[float, float]:
    """Slab z-range (mm) for a thickness ``t`` with the reference surface at its ``mid``, ``bottom``
    or ``top`` face."""
    if reference == "mid":
        return (-t / 2.0, t / 2.0)
    if reference == "bottom":
        return (0.0, t)
    if reference == "top":
        return (-t, 0.0)
    raise ThicknessError(f"reference = {reference!r} is not one of {', '.join(REFERENCES)}")


def face_hinge_range(face_a: str, face_b: str, inner: str) -> float:
    """Largest fold magnitude (rad) a hinge on ``face_a`` of one slab and ``face_b`` of the other
    reaches before the slabs meet, when the fold's inner side is ``inner`` (``top``/``bottom``).

    Both on the inner face: pi; on opposite faces (top of one, bottom of the other): pi/2; both on
    the outer face: 0. [derived] (Lang et al. 2018, Appl. Mech. Rev. 70(1):010805, section on
    hinge placement).
    """
    on_inner = (face_a == inner) + (face_b == inner)
    if face_a == face_b:
        return math.pi if on_inner == 2 else 0.0
    return math.pi / 2.0


def inset_polygon(
    pattern: CreasePattern, p: int, inset: Mapping[tuple[int, int], float], *, tol: Tolerances
) -> np.ndarray:
    """Panel ``p``'s polygon with each edge moved inwards by its inset (mm), corners re-intersected."""
    poly = pattern.panel_polygon(p)
    edges = pattern.panels[p].edges
    k = len(poly)
    d = np.roll(poly, -1, axis=0) - poly
    n = np.stack([d[:, 1], -d[:, 0]], axis=1) / np.linalg.norm(d, axis=1)[:, None]  # outward
    off = np.einsum("ij,ij->i", n, poly) - np.array([inset.get((p, int(e)), 0.0) for e in edges])
    out = np.empty_like(poly)
    for i in range(k):
        j = (i - 1) % k
        m = np.array([n[j], n[i]])
        if abs(np.linalg.det(m)) < tol.angle:
            out[i] = poly[i] - n[i] * (np.einsum("i,i", n[i], poly[i]) - off[i])
        else:
            out[i] = np.linalg.solve(m, [off[j], off[i]])
    from ..geometry2d import polygon_area

    if polygon_area(out) <= tol.area:
        raise ThicknessError(f"insets {sorted(set(inset.values()))} mm leave no area of panel {pid(p)}")
    return out
