"""Separating-axis kernel of the clearance sweep, compiled by numba (cached on disk).

Kept in its own module so that importing the package (or any stage without a sweep) does not load
numba, and so that edits elsewhere do not invalidate the compiled cache. Called through
:func:`thickpanel.collide.sat_gaps`. The separating-axis theorem for convex polyhedra: face normals
of both pieces and cross products of their edge directions (Gottschalk, Lin & Manocha 1996,
"OBBTree", SIGGRAPH; Ericson 2005, *Real-Time Collision Detection*, ch. 4-5 [chapters from memory]).
"""

from __future__ import annotations

import math

import numba

from .typing import FloatArray, IntArray

__all__ = ["gap_on_axis", "sat_kernel"]


@numba.njit(cache=True, fastmath=False)
def gap_on_axis(ax: float, ay: float, az: float, va: FloatArray, vb: FloatArray) -> float:
    """Signed gap (mm) between the projections of point sets ``va`` and ``vb`` on a unit axis."""
    amin = 1e300
    amax = -1e300
    for k in range(va.shape[0]):
        d = va[k, 0] * ax + va[k, 1] * ay + va[k, 2] * az
        amin = min(amin, d)
        amax = max(amax, d)
    bmin = 1e300
    bmax = -1e300
    for k in range(vb.shape[0]):
        d = vb[k, 0] * ax + vb[k, 1] * ay + vb[k, 2] * az
        bmin = min(bmin, d)
        bmax = max(bmax, d)
    return max(bmin - amax, amin - bmax)


@numba.njit(cache=True)
def sat_kernel(
    pi: IntArray, pj: IntArray, v: FloatArray, fn: FloatArray, ed: FloatArray, out: FloatArray
) -> None:
    """``out[k]``: largest gap of pieces ``pi[k]``, ``pj[k]`` over all candidate axes (negative:
    minus the penetration depth); ``v``, ``fn``, ``ed`` are padded vertex, face-normal and edge arrays."""
    for k in range(pi.shape[0]):
        i = pi[k]
        j = pj[k]
        va = v[i]
        vb = v[j]
        best = -1e300
        for f in range(fn.shape[1]):
            g = gap_on_axis(fn[i, f, 0], fn[i, f, 1], fn[i, f, 2], va, vb)
            if g > best:
                best = g
            g = gap_on_axis(fn[j, f, 0], fn[j, f, 1], fn[j, f, 2], va, vb)
            if g > best:
                best = g
        for a in range(ed.shape[1]):
            ex, ey, ez = ed[i, a, 0], ed[i, a, 1], ed[i, a, 2]
            for b in range(ed.shape[1]):
                fx, fy, fz = ed[j, b, 0], ed[j, b, 1], ed[j, b, 2]
                cx = ey * fz - ez * fy
                cy = ez * fx - ex * fz
                cz = ex * fy - ey * fx
                nn = math.sqrt(cx * cx + cy * cy + cz * cz)
                if nn < 1e-9:
                    continue
                g = gap_on_axis(cx / nn, cy / nn, cz / nn, va, vb)
                if g > best:
                    best = g
        out[k] = best
