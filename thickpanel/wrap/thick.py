"""Thick wrapped-hub sheet: rigid plates on a backing membrane whose stowed layers nest.

Our own construction after the zero-thickness one (:mod:`thickpanel.wrap.zero`); Zirbel et al. 2013
("Accommodating thickness in origami-based deployable arrays", J. Mech. Des. 135(11)) name its kind:
separate panels bonded to a flexible backing with specified widths at the fold lines. Outline:

* **Stowed layers.** Every ring of the sheet is one closed loop round the hub at stowed height z.
  On hub face f the rings stand at offsets ``o_k = (k - 1/2) p`` (``p`` = layer pitch = plate +
  backing + layer gap). Each hub corner carries a hairpin arm (sides ``g`` outside, ``w`` inside)
  that leaves the corner along the extended hub edge (segment 0) and wraps backwards over the
  following faces (segments 1, 2, ...), each segment one plate wide, with the layer order
  ``w^r .. w^1 | g^1 .. g^r`` from the hub outwards. A segment carries only the rings whose
  hairpin reaches it (the arm *tapers*), and sits on top of the face stack and of the arms' earlier
  segments already on that face.
* **Flat sheet by unrolling.** The flat sheet keeps the zero-thickness outline (offset polygons of
  the hub), widened by the bare backing strips: a quarter circle ``pi p/4`` at the hub, a half
  circle ``pi p/2`` at every accordion fold. Along each ring the flat arc length equals the arc
  length of the stowed mid-surface path, so every vertical crease is a straight line normal to its
  hub edge and every plate is isometric to its stowed place. The hairpin tips sit on the radial
  lines; their bare strip is wide enough for the distance between the two tip plates at every
  height (no stretching).
* **Plates** are cut back from every bend by ``(t/2 + c) tan(theta/2)`` (theta the turning angle) so
  that neighbouring plates of a layer do not meet inside the bend; the bare backing between them is
  the mid-surface path through the bend.

The stowed state is computed directly; no rigid folding path exists (see ``docs/hub-wrap.md``).
Pure numpy.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import PatternError
from ..pattern import CreasePattern
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray
from .geometry import Hub, WrapSpec, clip_halfplane, kabsch_pose, polygon_area
from .sheet import GapsFn
from .zero import WrapPiece, ccw

__all__ = ["thick_sheet", "ArmLayout"]


_ITER = 8  # arm-taper fixed-point iterations
_STRIP_ITER = 12  # strip-width fixed-point iterations
_SAMPLES = 65  # heights sampled per ring for tip widths and misfits
_MIN_PLATE = 1e-3  # mm^2: smaller plates are dropped (their region stays bare backing)


@dataclass
class ArmLayout:
    """Layer offsets of one arm (the same for every arm by symmetry).

    ``present[j]`` lists the rings in segment j >= 1 (index 0 unused); ``base[j]`` is the offset of
    the segment's innermost layer from its hub face (mm, plate mid-surface minus p/2).
    """

    present: list[list[int]]
    base: list[float]


def _levels(spec: WrapSpec, p: float, wh: float, wa: list[float]) -> list[tuple[float, float]]:
    """Flat plate levels (Y0, Y1) of every ring band for a hub strip ``wh`` and accordion strips ``wa``."""
    h = spec.ring_height
    bands = []
    y = wh
    for k in range(1, spec.rings + 1):
        tall = h - (p / 2.0 if k == 1 else 0.0)
        bands.append((y, y + tall))
        y += tall + (wa[k - 1] if k < spec.rings else 0.0)
    return bands


def _z_of(spec: WrapSpec, k: int, band: tuple[float, float], p: float, y: FloatArray) -> FloatArray:
    """Stowed height of flat level y in ring k's band."""
    y0 = band[0]
    if k % 2 == 1:
        return (p / 2.0 if k == 1 else 0.0) + (np.asarray(y) - y0)
    return spec.ring_height - (np.asarray(y) - y0)


def _offsets(arm: ArmLayout, j: int, k: int, p: float, r: int) -> tuple[float, float]:
    """(w, g) offsets of ring k in segment j, as if k were present there when it is not."""
    ring = sorted(set(arm.present[j]) | {k}) if j < len(arm.present) else [k]
    base = arm.base[j] if j < len(arm.base) else arm.base[-1] + 2 * len(arm.present[-1]) * p
    n = len(ring)
    kj = min(ring)
    return base + (r - k + 0.5) * p, base + (n + (k - kj) + 0.5) * p


def _layout(present: list[list[int]], r: int, p: float) -> ArmLayout:
    base = [0.0, r * p]
    for j in range(2, len(present)):
        base.append(base[-1] + 2 * len(present[j - 1]) * p)
    return ArmLayout(present, base)


def _paths(hub: Hub, arm: ArmLayout, k: int, p: float, r: int,
           extra_segments: int = 1) -> tuple[FloatArray, FloatArray]:
    """Corner points of ring k's g path (arm 0, from Q_{1,k}) and w path (arm 0, from Q_{0,k}).

    Segments where ring k is present come first; ``extra_segments`` hypothetical ones follow (for
    the reach test).
    """
    o = (k - 0.5) * p
    segs = [j for j in range(1, len(arm.present)) if k in arm.present[j]]
    last = segs[-1] if segs else 0
    segs += list(range(last + 1, last + 1 + extra_segments))
    g = [hub.line_meet(0, o, 1, -o)]
    w = [hub.line_meet(-1, o, 0, -o)]
    gf, gofs, wf, wofs = 0, o, 0, -o
    for j in segs:
        wo, go = _offsets(arm, j, k, p, r)
        g.append(hub.line_meet(gf, gofs, -j, go))
        w.append(hub.line_meet(wf, wofs, -j, wo))
        gf, gofs, wf, wofs = -j, go, -j, wo
    return np.array(g), np.array(w)


def _cum(pts: FloatArray) -> FloatArray:
    return np.concatenate([[0.0], np.cumsum(np.linalg.norm(np.diff(pts, axis=0), axis=1))])


def _point(pts: FloatArray, cum: FloatArray, sigma: FloatArray) -> FloatArray:
    """Points (k, 2) at arc lengths ``sigma`` (k,) along the polyline (extended straight past both ends)."""
    sigma = np.atleast_1d(np.asarray(sigma, dtype=float))
    d = np.diff(pts, axis=0)
    d /= np.sqrt((d * d).sum(axis=1))[:, None]
    j = np.searchsorted(cum, sigma, side="right") - 1
    j = np.minimum(np.maximum(j, 0), len(pts) - 2)
    return pts[j] + (sigma - cum[j])[:, None] * d[j]


def _seg_frame(pts: FloatArray, cum: FloatArray, j: int) -> tuple[FloatArray, FloatArray, float]:
    """Base point, unit direction and start arc length of polyline piece j."""
    d = pts[j + 1] - pts[j]
    return pts[j], d / np.linalg.norm(d), float(cum[j])


@dataclass
class _Ring:
    k: int
    g: FloatArray  # g path corners (arm 0), the last point a hypothetical next bend
    w: FloatArray
    gc: FloatArray
    wc: FloatArray
    nseg: int  # segments present
    xq: float  # flat x of the u-turn (gore coordinates)
    mu: float  # half width of the bare tip strip, mm
    band: tuple[float, float]
    reach_g: float = 0.0
    reach_w: float = 0.0


def thick_sheet(spec: WrapSpec, t: float, tm: float, gap: float, *, tol: Tolerances = DEFAULT_TOL
                ) -> tuple[list[WrapPiece], FloatArray, dict, GapsFn]:
    """Plates, outline, construction data and a gap function of the thick wrapped-hub sheet.

    Parameters
    ----------
    spec : WrapSpec
    t : float, mm
        Plate thickness (> 0).
    tm : float, mm
        Backing thickness.
    gap : float, mm
        Clearance between neighbouring stowed layers.

    Raises
    ------
    PatternError
        When the layers cannot nest (a ring whose stowed loop is longer than its flat band), naming
        the ring and the shortfall in mm.
    """
    hub = Hub(spec.sides, spec.hub_circumradius)
    m, r, h = spec.sides, spec.rings, spec.ring_height
    p = t + tm + gap
    c = (tm + gap) / 2.0
    theta = 2.0 * math.pi / m
    e_b = (t / 2.0 + c) * math.tan(theta / 2.0)  # plate set-back at a bend of turning angle theta
    e_u = (t / 2.0 + c) / math.tan(theta / 2.0)  # at the acute u-turn (interior angle 2 pi / m)
    if r * p >= h:
        raise PatternError(f"hub-wrap: ring 1 cannot nest: the face stack of {r} layers at pitch {p:g} mm is "
                           f"{r * p:g} mm deep, over ring_height = {h:g} mm by {r * p - h + 1e-9:.3g} mm; use "
                           "thinner panels (panel_thickness), fewer rings or taller rings")
    tn = hub.tan
    # first guess of the arm's taper: ring k reaches segment j when (j - 1) s < k h tan(pi/m)
    nseg = max(1, math.ceil(r * h * tn / hub.s) + 1)
    present: list[list[int]] = [[]] + [[k for k in range(1, r + 1) if (j - 1) * hub.s < k * h * tn]
                                       for j in range(1, nseg + 1)]
    present = [present[0]] + [pr for pr in present[1:] if pr]
    # bare strips: nominal quarter / half circles, widened until the rings' shear along them needs no stretch
    wh, wa = math.pi * p / 4.0, [math.pi * p / 2.0] * max(r - 1, 0)
    rings: list[_Ring] = []
    shortfall = 0.0
    warm: dict[int, float] | None = None
    for it in range(_STRIP_ITER + 1):
        bands = _levels(spec, p, wh, wa)
        rings, present = _settle(spec, hub, present, bands, p, warm)
        warm = {rg.k: rg.xq for rg in rings}
        wh2, wa2 = _strip_widths(hub, rings, p)
        shortfall = max([wh2 - wh] + [b - a for a, b in zip(wa, wa2, strict=True)])
        if shortfall <= 1e-6 or it == _STRIP_ITER:  # the last pass keeps bands and strips consistent
            break
        wh, wa = max(wh, wh2), [max(a, b) for a, b in zip(wa, wa2, strict=True)]  # widths only grow
    arm = _layout(present, r, p)
    pieces = _pieces(spec, hub, rings, arm, p, t, e_b, e_u, wh, wa, bands)
    y_out = bands[-1][1]
    outline = (hub.a + y_out) / math.cos(math.pi / m) * hub.u
    extra = {
        "layer_pitch": p, "bend_setback": e_b, "u_turn_setback": e_u, "hub_strip": wh, "accordion_strips": list(wa),
        "tip_strip": [2.0 * rg.mu for rg in rings], "arm_rings": [list(x) for x in present[1:]],
        "arm_base": list(arm.base[1:]),
        "stowed_height": h, "strip_shortfall": max(shortfall, 0.0),
    }

    def gaps_fn(cp: CreasePattern, ordered: list[WrapPiece], labels: list[str]) -> FloatArray:
        return _gaps(cp, ordered)

    return pieces, outline, extra, gaps_fn


def _settle(spec: WrapSpec, hub: Hub, present: list[list[int]], bands: list[tuple[float, float]],
            p: float, warm: dict[int, float] | None = None) -> tuple[list[_Ring], list[list[int]]]:
    """Rings (paths, u-turn places, tip strips) and the arm taper, iterated until the taper is settled."""
    r = spec.rings
    rings: list[_Ring] = []
    for _ in range(_ITER):
        arm = _layout(present, r, p)
        rings = []
        for k in range(1, r + 1):
            g, w = _paths(hub, arm, k, p, r)
            ring = _Ring(k, g, w, _cum(g), _cum(w), sum(1 for j in range(1, len(present)) if k in present[j]),
                         0.0, 0.0, bands[k - 1])
            _place_u_turn(ring, rings[-1] if rings else None, hub, p, (warm or {}).get(k))
            rings.append(ring)
        new: list[list[int]] = [[]] + [[rg.k for rg in rings if _reaches(rg, j)] for j in range(1, len(present) + 1)]
        width = max(len(new), len(present))
        merged = [sorted(set(a) | set(b)) for a, b in zip(present + [[]] * (width - len(present)),
                                                          new + [[]] * (width - len(new)), strict=True)]
        while len(merged) > 1 and not merged[-1]:
            merged.pop()
        if merged == present:  # the taper is settled (it only grows, so this ends)
            break
        present = merged
    return rings, present


def _top_view(rg: _Ring, hub: Hub, x: FloatArray) -> FloatArray:
    """Stowed top-view points (k, 2) of ring rg's mid-surface at gore-0 flat positions ``x``."""
    x = np.asarray(x, dtype=float)
    out = np.empty((len(x), 2))
    gs = x <= rg.xq
    out[gs] = _point(rg.g, rg.gc, rg.xq - x[gs])
    if (~gs).any():
        out[~gs] = _point(rg.w, rg.wc, x[~gs] - rg.xq) @ _rot2(2.0 * math.pi / hub.m).T
    return out


def _strip_need(lower: _Ring | None, upper: _Ring, hub: Hub, p: float) -> float:
    """Bare strip width below ring ``upper`` (the hub strip when ``lower`` is None) that lets facing plate
    edges sit where the stowed rings put them.

    Facing points across a strip (same gore coordinate x) are a chord ``d`` apart when stowed; with
    no shear that is the layer spacing and the strip a quarter (hub) or half (accordion) circle. A
    shear ``sigma = sqrt(d^2 - d0^2)`` along the fold is taken by a skewed loop of length
    ``sqrt(arc^2 + sigma^2)``.
    """
    tn, s = hub.tan, hub.s
    n = 129
    if lower is None:  # hub edge (z = 0) to ring 1's lower edge (z = p/2), along the hub edge
        x = np.linspace(0.0, s, n)
        d = np.linalg.norm(_top_view(upper, hub, x) - (hub.P[0] + np.outer(x, hub.e[0])), axis=1)
        arc, d0 = math.pi * p / 4.0, p / 2.0
        sig2 = max(0.0, float((d**2).max()) - d0**2)
        return math.sqrt(arc**2 + sig2)
    else:
        yl, yu = lower.band[1], upper.band[0]
        l_lo, l_hi = -yl * tn + lower.mu, s + yl * tn - lower.mu  # plate edges along the strip
        u_lo, u_hi = -yu * tn + upper.mu, s + yu * tn - upper.mu
        lo, hi = max(l_lo, u_lo), min(l_hi, u_hi)
        # the chord peaks where one ring has turned a bend and the other not yet: sample the bends too
        bends = np.concatenate([np.concatenate([rg.xq - rg.gc[1:], rg.xq + rg.wc[1:], [rg.xq]])
                                for rg in (lower, upper)])
        x = np.concatenate([np.linspace(lo, hi, n), bends - 1e-6, bends + 1e-6])
        x = x[(x >= lo) & (x <= hi)]
        d = np.linalg.norm(_top_view(lower, hub, x) - _top_view(upper, hub, x), axis=1) if len(x) else np.zeros(1)
        arc, d0 = math.pi * p / 2.0, p
        # where one plate runs on past the other's tip, its edge points face bare backing: the strip
        # must still span, straight, from the other's tip corner to every such point
        extra = 0.0
        for a_end, b_from, b_to, a_ring, b_ring in ((l_lo, u_lo, l_lo, lower, upper), (u_lo, l_lo, u_lo, upper, lower),
                                                    (l_hi, l_hi, u_hi, lower, upper), (u_hi, u_hi, l_hi, upper, lower)):
            if b_to - b_from <= 1e-9:
                continue
            xb = np.linspace(b_from, b_to, 33)
            pa = _top_view(a_ring, hub, np.array([a_end]))
            dd = np.linalg.norm(_top_view(b_ring, hub, xb) - pa, axis=1)
            extra = max(extra, float(np.max(dd**2 - (xb - a_end) ** 2)))
        sig2 = max(0.0, float((d**2).max()) - d0**2)
        return max(math.sqrt(arc**2 + sig2), math.sqrt(max(extra, 0.0)))


def _strip_widths(hub: Hub, rings: list[_Ring], p: float) -> tuple[float, list[float]]:
    """Bare strip widths (hub, accordions) the settled rings need (see :func:`_strip_need`)."""
    return _strip_need(None, rings[0], hub, p), [_strip_need(a, b, hub, p) for a, b in zip(rings[:-1], rings[1:],
                                                                                            strict=True)]


def _reaches(rg: _Ring, j: int) -> bool:
    """Ring reaches arm segment j (its tip passes the bend that starts it) at some height."""
    return (j < len(rg.gc) and rg.reach_g > rg.gc[j]) or (j < len(rg.wc) and rg.reach_w > rg.wc[j])


def _place_u_turn(rg: _Ring, lower: _Ring | None, hub: Hub, p: float, start: float | None = None) -> None:
    """Choose the u-turn's flat position: the narrowest bare backing in all, tip strip plus the strip
    that joins the ring to the one below it (or to the hub)."""
    from scipy.optimize import minimize_scalar

    tn = hub.tan
    x0 = float((rg.g[0] - hub.P[0]) @ hub.e[0])  # aligned with the hub edge

    def bare(xq: float) -> float:
        rg.xq = float(xq)
        _tip_width(rg, hub, tn)
        return 2.0 * rg.mu + _strip_need(lower, rg, hub, p)

    span = hub.s
    if start is None:
        grid = np.linspace(x0 - span / 2.0, x0 + span, 25)
    else:  # warm start from the previous pass (the strips changed a little)
        grid = np.linspace(start - span / 16.0, start + span / 16.0, 5)
    best = float(grid[int(np.argmin([bare(x) for x in grid]))])
    step = float(grid[1] - grid[0])
    res = minimize_scalar(bare, bounds=(best - step, best + step), method="bounded", options={"xatol": 1e-7})
    bare(float(res.x) if res.fun <= bare(best) else best)


def _tip_width(rg: _Ring, hub: Hub, tn: float) -> None:
    """Half width of the bare tip strip: wide enough for the tip plates' distance at every height.

    The two tip plates face each other across the hairpin, ``delta`` apart normal to the arm, and
    possibly skewed along it; the backing joining them is a half circle over ``delta`` drawn out
    along the skew: ``sqrt((pi delta / 2)^2 + skew^2)``. In the flat sheet the strip bends round the
    radial corner, so its straight width there is ``2 mu cos(pi/m)``, which must also reach the
    stowed distance of the tip plates.
    """
    ys = np.linspace(rg.band[0], rg.band[1], _SAMPLES)
    mu = 0.0
    for _ in range(50):
        sg = rg.xq + ys * tn - mu
        sw = np.maximum(hub.s + ys * tn - mu - rg.xq, 0.0)
        gp = _point(rg.g, rg.gc, sg)
        gd = _point(rg.g, rg.gc, sg + 1.0) - gp
        diff = gp - _point(rg.w, rg.wc, sw)
        delta = np.abs(gd[:, 0] * diff[:, 1] - gd[:, 1] * diff[:, 0])
        skew2 = np.maximum((diff**2).sum(axis=1) - delta**2, 0.0)
        # and the flat chord across the radial corner (2 mu cos(pi/m)) must reach the stowed distance
        chord = np.sqrt((diff**2).sum(axis=1)) / math.cos(math.pi / hub.m)
        need = 0.5 * float(np.maximum(np.sqrt((math.pi * delta / 2.0) ** 2 + skew2), chord).max())
        if need <= mu + 1e-9:
            break
        mu = need
    rg.mu = mu
    rg.reach_g = float(rg.xq + rg.band[1] * tn - mu)
    rg.reach_w = float(hub.s + rg.band[1] * tn - mu - rg.xq)


def _rot2(phi: float) -> FloatArray:
    c, s = math.cos(phi), math.sin(phi)
    return np.array([[c, -s], [s, c]])


def _band_box(xa: float, xb: float, y0: float, y1: float) -> FloatArray:
    return np.array([[xa, y0], [xb, y0], [xb, y1], [xa, y1]])


def _wedge(poly: FloatArray, tn: float, s: float, inset: float) -> FloatArray:
    """Clip a gore-local polygon to the ring's wedge between the two radials, ``inset`` inside each."""
    poly = clip_halfplane(poly, np.array([-1.0, -tn]), -inset)  # x + y tan >= inset
    return clip_halfplane(poly, np.array([1.0, -tn]), s - inset)  # x - y tan <= s - inset


def _pieces(spec: WrapSpec, hub: Hub, rings: list[_Ring], arm: ArmLayout, p: float, t: float, e_b: float,
            e_u: float, wh: float, wa: list[float], bands: list[tuple[float, float]]) -> list[WrapPiece]:
    m, r = spec.sides, spec.rings
    tn, s = hub.tan, hub.s
    rot1 = _rot2(2.0 * math.pi / m)
    gore0: list[WrapPiece] = []
    for rg in rings:
        k = rg.k
        y0, y1 = rg.band
        ye0 = y0 - (wh / 2.0 if k == 1 else wa[k - 2] / 2.0)
        ye1 = y1 + (wa[k - 1] / 2.0 if k < r else 0.0)
        n = rg.nseg
        left, right = -ye1 * tn - 1.0, s + ye1 * tn + 1.0  # just beyond the two radials
        xg = [rg.xq - rg.gc[j] for j in range(1, n + 1)]
        xw = [rg.xq + rg.wc[j] for j in range(1, n + 1)]
        # zones: (x from, x to, set-back left, set-back right, side, polyline piece)
        zones: list[tuple[float, float, float, float, str, int]] = []
        for j in range(n, 0, -1):
            zones.append((xg[j] if j < n else left, xg[j - 1], e_b if j < n else 0.0, e_b, "g", j))
        zones.append((xg[0] if n else left, rg.xq, e_b if n else 0.0, e_u, "ring", 0))
        zones.append((rg.xq, xw[0] if n else right, e_u, e_b if n else 0.0, "w", 0))
        for j in range(1, n + 1):
            zones.append((xw[j - 1], xw[j] if j < n else right, e_b, e_b if j < n else 0.0, "w", j))
        for xa, xb, sa, sb, side, j in zones:
            if xb - xa <= 1e-9:  # a bend beyond the radial (only the other side of the hairpin reaches it)
                continue
            panel = _wedge(_band_box(xa, xb, ye0, ye1), tn, s, 0.0)
            plate = _wedge(_band_box(xa + sa, xb - sb, y0, y1), tn, s, rg.mu)
            if len(panel) < 3 or abs(polygon_area(panel)) < _MIN_PLATE:
                continue
            if len(plate) < 3 or abs(polygon_area(plate)) < _MIN_PLATE:
                plate = np.zeros((0, 2))
            gore0.append(_piece(hub, spec, rg, side, j, panel, plate, rot1, p))
    pieces: list[WrapPiece] = []
    hub_panel = (hub.a + wh / 2.0) / math.cos(math.pi / m) * hub.u
    pieces.append(WrapPiece(hub_panel, np.eye(4), hub.P.copy(), "hub", -1, 0, -1, np.zeros(2), 0.0))
    for i in range(m):
        rot = _rot2(2.0 * math.pi * i / m)
        r4 = np.eye(4)
        r4[:2, :2] = rot
        for pc in gore0:
            plate = pc.plate @ rot.T if len(pc.plate) else pc.plate
            pieces.append(WrapPiece(pc.polygon @ rot.T, r4 @ pc.pose @ r4.T, plate,
                                    pc.kind, (i + 1) % m if pc.kind == "w" else i, pc.ring, pc.segment,
                                    pc.out @ rot.T, pc.rank))
    return pieces


def _piece(hub: Hub, spec: WrapSpec, rg: _Ring, side: str, j: int, panel: FloatArray, plate: FloatArray,
           rot1: FloatArray, p: float) -> WrapPiece:
    """One panel of gore 0 (ring rg.k) with the stowed pose of its plate."""
    if side == "w":
        base, d, c0 = _seg_frame(rg.w, rg.wc, j)
        base, d = rot1 @ base, rot1 @ d  # the w side on gore 0's line belongs to arm 1
    else:
        base, d, c0 = _seg_frame(rg.g, rg.gc, j)
    ref = plate if len(plate) else panel
    x, y = ref[:, 0], ref[:, 1]
    sigma = (x - rg.xq) if side == "w" else (rg.xq - x)
    top = base + np.outer(sigma - c0, d)
    z = _z_of(spec, rg.k, rg.band, p, y)
    flat = hub.local_to_flat(0, x, y)
    pose, res = kabsch_pose(flat, np.column_stack([top, z]))
    if res > 1e-6 * max(1.0, hub.R):
        raise PatternError(f"hub-wrap: internal: plate of ring {rg.k} ({side}{j}) is not isometric "
                           f"(residual {res:.3g} mm)")
    face = 0 if (side == "ring") else (-j if side == "g" else 1 - j)
    out = hub.n[hub.idx(face)]
    rank = float(top.mean(axis=0) @ out - hub.a)
    kind = {"g": "g", "w": "w", "ring": "ring"}[side]
    poly = ccw(hub.local_to_flat(0, panel[:, 0], panel[:, 1]))
    pl = ccw(hub.local_to_flat(0, plate[:, 0], plate[:, 1])) if len(plate) else np.zeros((0, 2))
    return WrapPiece(poly, pose, pl, kind, 0, rg.k, j if side != "ring" else -1, out, rank)


def _gaps(cp: CreasePattern, ordered: list[WrapPiece]) -> FloatArray:
    """Bare backing width across every crease: distance from the crease midpoint to the two plates."""
    v, cr, pan = cp.vertices, cp.creases, cp.crease_panels
    out = np.zeros(len(cr))
    for c in range(len(cr)):
        mid = v[cr[c]].mean(axis=0)
        tot = 0.0
        for side in pan[c]:
            if side < 0:
                continue
            tot += _dist_to_polygon(mid, ordered[int(side)].plate)
        out[c] = tot
    return out


def _dist_to_polygon(q: FloatArray, poly: FloatArray) -> float:
    """Distance (mm) from a point to a convex polygon (0 inside; inf for an empty polygon)."""
    poly = np.asarray(poly, dtype=float)
    if len(poly) < 3:
        return float("inf")
    a = poly
    b = np.roll(poly, -1, axis=0)
    ab = b - a
    cross = ab[:, 0] * (q[1] - a[:, 1]) - ab[:, 1] * (q[0] - a[:, 0])
    if np.all(cross >= -1e-12):
        return 0.0
    tt = np.clip(((q - a) * ab).sum(axis=1) / (ab * ab).sum(axis=1), 0.0, 1.0)
    return float(np.linalg.norm(a + tt[:, None] * ab - q, axis=1).min())
