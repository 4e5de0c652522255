"""Zero-thickness wrapped-hub sheet, constructed from its stowed state (``docs/hub-wrap.md``).

Stowed state: the hub lies flat in z = 0; every other panel stands vertical inside 0 <= z <= h
round the hub prism. Gore i (on hub face i) is accordion-folded ring by ring; the part of each ring
beyond the hub corner P_i (pieces ``A``) and its mirror image in the radial through P_i (pieces
``W``) form a hairpin arm that wraps clockwise round the following hub faces i-1, i-2, ...
(Guest & Pellegrino 1992, "Inextensional wrapping of flat membranes", describe wrapping a sheet round
a polygonal hub this way). The flat sheet is the development of that state.

Flat pieces in gore-i coordinates (x along e_i from P_i, y distance outside hub edge i):

* ``R(i,k)``: 0 <= x <= s, (k-1)h <= y <= kh;
* ``A(i,k,j)``: -(j+1)s <= x <= -js, (k-1)h <= y <= kh, x + y tan(pi/m) >= 0;
* ``W(i,k,j)``: the mirror of A(i,k,j) in the radial through P_i.

Stowed map (affine on each piece, so pieces stay planar and congruent): z(y) = y-(k-1)h for odd k and
kh-y for even k; R: (x, y) -> (P_i + x e_i, z); A: with d = -x, (x, y) -> (P_{i-j} - (d - js) e_{i-j-1}, z);
W: mirror first, then the A map; the hub stays where it is.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..typing import FloatArray
from .geometry import Hub, clip_halfplane, polygon_area

__all__ = ["WrapPiece", "zero_thickness_pieces", "ccw"]


@dataclass(frozen=True)
class WrapPiece:
    """One panel of a wrapped-hub sheet as its construction knows it.

    Attributes
    ----------
    polygon : (k, 2) float, mm
        Flat outline (counter-clockwise).
    pose : (4, 4) float
        Flat sheet frame -> stowed position of the panel's rigid plate, mm.
    plate : (k', 2) float, mm
        Outline of the rigid plate inside ``polygon`` (equal to it at zero thickness).
    kind : str
        ``hub``, ``ring`` (on its own hub face), ``g`` (outer side of an arm hairpin) or ``w`` (inner side).
    gore, ring, segment : int
        Gore or arm index i, ring k (1-based, 0 for the hub) and arm segment j (-1 off the arms).
    out : (2,) float
        Outward unit direction of the layer stack the stowed panel belongs to (zero for the hub).
    rank : float
        Position in that stack along ``out`` (larger is further out; mm in the thick construction);
        decides the sense of 180 deg folds.
    """

    polygon: FloatArray
    pose: FloatArray
    plate: FloatArray
    kind: str
    gore: int
    ring: int
    segment: int
    out: FloatArray
    rank: float


def ccw(poly: FloatArray) -> FloatArray:
    """The polygon (k, 2) listed counter-clockwise."""
    p = np.asarray(poly, dtype=float)
    return p if polygon_area(p) >= 0 else p[::-1].copy()


def _affine_pose(flat: FloatArray, placed: FloatArray) -> FloatArray:
    """Exact rigid pose from three non-collinear flat points and their images (the map is affine)."""
    from .geometry import kabsch_pose

    pose, _ = kabsch_pose(flat, placed)
    return pose


def zero_thickness_pieces(m: int, rings: int, h: float, circumradius: float, *,
                          area_tol: float = 1e-9) -> list[WrapPiece]:
    """All panels of the zero-thickness sheet with their stowed poses.

    Parameters
    ----------
    m, rings : int
    h : float, mm
        Ring height.
    circumradius : float, mm
        Hub circumradius R_h.
    area_tol : float, mm^2
        Pieces smaller than this are not panels (the empty corner of a wrap line's last piece).
    """
    hub = Hub(m, circumradius)
    s, tn = hub.s, hub.tan
    pieces: list[WrapPiece] = []
    pieces.append(WrapPiece(hub.P.copy(), np.eye(4), hub.P.copy(), "hub", -1, 0, -1, np.zeros(2), 0.0))
    r = rings
    for i in range(m):
        for k in range(1, r + 1):
            y0, y1 = (k - 1) * h, k * h
            odd = k % 2 == 1

            def zmap(y: FloatArray, y0: float = y0, y1: float = y1, odd: bool = odd) -> FloatArray:
                return y - y0 if odd else y1 - y

            # R(i,k)
            loc = np.array([[0.0, y0], [s, y0], [s, y1], [0.0, y1]])
            flat = hub.local_to_flat(i, loc[:, 0], loc[:, 1])
            placed = np.column_stack([hub.P[i] + np.outer(loc[:, 0], hub.e[i]), zmap(loc[:, 1])])
            flat, placed = flat[::-1], placed[::-1]  # local (x, y) is left-handed in the sheet
            pieces.append(WrapPiece(flat, _affine_pose(flat, placed), flat, "ring", i, k, -1, hub.n[i], float(k)))
            j = 0
            while j * s < y1 * tn:
                rect = np.array([[-(j + 1) * s, y0], [-j * s, y0], [-j * s, y1], [-(j + 1) * s, y1]])
                loc = clip_halfplane(rect, np.array([-1.0, -tn]), 0.0)  # keep x + y tan >= 0
                if len(loc) >= 3 and polygon_area(loc) > area_tol:
                    face = hub.idx(i - j - 1)
                    d = -loc[:, 0]
                    base = hub.P[hub.idx(i - j)]
                    placed = np.column_stack([base - np.outer(d - j * s, hub.e[face]), zmap(loc[:, 1])])
                    flat_a = hub.local_to_flat(i, loc[:, 0], loc[:, 1])[::-1]
                    placed = placed[::-1]
                    pose_a = _affine_pose(flat_a, placed)
                    # ranks: face stack 1..r, then arm j's hairpins w^r..w^1 | g^1..g^r
                    base_rank = r + 2 * r * j
                    pieces.append(WrapPiece(flat_a, pose_a, flat_a, "g", i, k, j, hub.n[face],
                                            float(base_rank + r + k)))
                    flat_w = hub.reflect(i, flat_a)[::-1]  # a mirror reverses the sense
                    placed_w = placed[::-1]
                    pieces.append(WrapPiece(flat_w, _affine_pose(flat_w, placed_w), flat_w, "w", i, k, j, hub.n[face],
                                            float(base_rank + (r - k + 1))))
                j += 1
    return pieces
