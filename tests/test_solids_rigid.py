"""Prototype sharing by rigid planar motions: spiral plans built with and without sharing.

A log-spiral grid is N-fold rotationally symmetric about its centre (the origin), so the panels
of one ring are rotated copies; ``build_parts(share="rigid")`` places one validated prototype per
class. Checks: the shared and unshared builds agree part by part (volumes and boxes), every
placement is a proper rotation by a multiple of 2 pi / N about the centre, volumes equal an
independent numerical integral of the trimmed prisms, mirror images are never shared, and a
STEP round trip keeps names and volumes.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from tests.test_export import read_step
from tests.test_solids import clipped_disk_area
from thickpanel import occ
from thickpanel.errors import GeometryError
from thickpanel.export import export_parts
from thickpanel.geometry2d import polygon_area
from thickpanel.layouts import make_layout
from thickpanel.outline import rigid_fits
from thickpanel.solids import build_parts
from thickpanel.thickness import make_plan

ARMS = 8
KNUCKLE = {"knuckle_length_mm": 5.0}


@pytest.fixture(scope="module")
def spiral_plan():
    # 8 arms x 3 rings: 33 panels (hub, 8 inner triangles, 2 x 8 kites, 8 border triangles)
    cp = make_layout("log-spiral", arms=ARMS, rings=3, outer_diameter=1200.0)
    return make_plan(cp, "tapered", thickness=3.0, target_fold=math.radians(90))


@pytest.fixture(scope="module")
def spiral_sets(spiral_plan):
    return {share: build_parts(spiral_plan, hinge_style="knuckle", hinge_options=KNUCKLE,
                               share=share)
            for share in ("rigid", "translation", "none")}


def _clip(poly: np.ndarray, a: np.ndarray, c: float) -> np.ndarray:
    """Polygon clipped to the half-plane a . p <= c (Sutherland & Hodgman 1974, "Reentrant
    polygon clipping", CACM 17(1)); a non-convex subject may gain zero-width bridges along the
    line, which add no shoelace area."""
    if len(poly) == 0:
        return poly
    d = poly @ a - c
    nxt = np.roll(poly, -1, axis=0)
    dn = np.roll(d, -1)
    inside = d <= 0
    cross = (d <= 0) != (dn <= 0)
    t = np.divide(d, d - dn, out=np.zeros_like(d), where=cross)
    x = poly + t[:, None] * (nxt - poly)
    pts = np.stack([poly, x], axis=1)
    keep = np.stack([inside, cross], axis=1)
    return pts[keep]


def _trimmed_prism_volume(outline: np.ndarray, z0: float, z1: float, cuts, n: int = 400) -> float:
    """Volume of outline x [z0, z1] with every cut's side n . x > offset removed: Cavalieri's
    principle (volume = integral of the section area over z) with composite Simpson's rule
    (Abramowitz & Stegun 1964, 25.4.6); sections by half-plane clipping."""
    zs = np.linspace(z0, z1, 2 * n + 1)
    areas = []
    for z in zs:
        p = np.asarray(outline, dtype=float)
        for cut in cuts:
            nx, ny, nz = cut.normal
            p = _clip(p, np.array([nx, ny]), cut.offset - nz * z)
        areas.append(abs(polygon_area(p)) if len(p) >= 3 else 0.0)
    w = np.ones(2 * n + 1)
    w[1:-1:2], w[2:-1:2] = 4.0, 2.0
    return float((zs[1] - zs[0]) / 3.0 * (w @ np.array(areas)))


def _barrel_volumes(ps) -> dict[int, float]:
    """Per panel: sum of its barrels, clipped disk minus hole x length (circular segment area,
    CRC Standard Mathematical Tables; see tests/test_solids.py)."""
    out: dict[int, float] = {}
    for des, h in zip(ps.designs, ps.plan.hinges, strict=True):
        for side, panel in enumerate(h.panels):
            for b in des.sides[side].barrels:
                v = (b.s1 - b.s0) * (clipped_disk_area(b.radius, b.clip) - math.pi * b.hole ** 2)
                out[panel] = out.get(panel, 0.0) + v
    return out


def test_rigid_sharing_gives_the_same_parts_as_building_each_alone(spiral_sets):
    # A rigid motion preserves volume and distances (Euclidean isometry; Coxeter 1969,
    # Introduction to Geometry, ch. 3, from memory): the shared build must reproduce the
    # unshared one, measured by OCP's BRepGProp / BRepBndLib on the independent solids.
    rigid, none = spiral_sets["rigid"], spiral_sets["none"]
    assert [p.name for p in rigid.parts] == [p.name for p in none.parts]
    for a, b in zip(rigid.parts, none.parts, strict=True):
        assert occ.volume(a.frame_shape) == pytest.approx(occ.volume(b.frame_shape), rel=1e-9)
        assert a.volume == pytest.approx(b.volume, rel=1e-9)
        assert np.allclose(occ.bbox(a.frame_shape), occ.bbox(b.frame_shape), atol=1e-4)
        assert np.allclose(a.outline if a.outline is not None else 0.0,
                           b.outline if b.outline is not None else 0.0, atol=1e-9)
    panels = [p for p in rigid.parts if p.kind == "panel"]
    protos = {p.attrs["prototype"] for p in panels}
    # one class per ring position and mountain/valley parity of the arm, plus the hub: 4 x 2 + 1
    assert len(protos) == 9
    n_solids = len({k for p in rigid.parts for k, _, _ in p.pieces})
    assert n_solids < len({k for p in spiral_sets["translation"].parts for k, _, _ in p.pieces})


def test_placements_are_rotations_about_the_centre_by_multiples_of_the_symmetry_angle(
        spiral_sets):
    # The grid is invariant under rotation by 2 pi / N about its centre (logarithmic-spiral
    # lattice, N arms); a proper rotation has determinant +1 (never a reflection).
    ps = spiral_sets["rigid"]
    by_name = {p.name: p for p in ps.parts}
    for p in ps.parts:
        if p.kind != "panel" or p.attrs["prototype"] == p.name:
            continue
        q = by_name[p.attrs["prototype"]]
        m = p.pieces[0][2] @ np.linalg.inv(q.pieces[0][2])
        assert np.linalg.det(m[:3, :3]) == pytest.approx(1.0, abs=1e-12)
        assert np.allclose(m[2], [0, 0, 1, 0]) and np.allclose(m[:3, 2], [0, 0, 1])
        steps = math.atan2(m[1, 0], m[0, 0]) / (2 * math.pi / ARMS)
        assert steps == pytest.approx(round(steps), abs=1e-9) and round(steps) % ARMS != 0
        assert np.allclose(m[:2, 3], 0.0, atol=1e-6)  # about the centre
        for (ka, _, ma), (kb, _, mb) in zip(p.pieces, q.pieces, strict=True):
            assert ka == kb and np.allclose(ma, m @ mb)


def test_every_placed_volume_is_its_prototypes_and_the_analytic_value(spiral_sets, spiral_plan):
    ps = spiral_sets["rigid"]
    by_name = {p.name: p for p in ps.parts}
    barrels = _barrel_volumes(ps)
    slabs = {s.panel: s for s in spiral_plan.slabs}
    for p in ps.parts:
        if p.kind != "panel":
            continue
        proto = by_name[p.attrs["prototype"]]
        assert p.volume == proto.volume
        assert occ.volume(p.frame_shape) == pytest.approx(proto.volume, rel=1e-9)
        s = slabs[p.panel]
        body = _trimmed_prism_volume(p.outline, s.z0, s.z1, s.cuts)
        assert p.volume == pytest.approx(body + barrels.get(p.panel, 0.0), rel=2e-6)
        # the bevels really remove material: well below notched area x thickness
        assert body < abs(polygon_area(p.outline)) * s.thickness


def test_mirror_images_are_never_fitted():
    # A reflection has determinant -1 and is not a rotation plus translation (Coxeter 1969,
    # from memory). Scalene triangle: the rotated copy fits once, at the rotation angle; its
    # mirror image never fits.
    tri = np.array([[0.0, 0.0], [7.0, 0.0], [2.0, 3.0]])
    a = math.radians(40.0)
    r = np.array([[math.cos(a), -math.sin(a)], [math.sin(a), math.cos(a)]])
    moved = np.roll(tri @ r.T + [5.0, -2.0], 1, axis=0)
    fits = rigid_fits(tri, moved, 1e-6)
    assert len(fits) == 1
    i, rr, t = fits[0]
    assert np.allclose(rr, r, atol=1e-12) and np.allclose(t, [5.0, -2.0], atol=1e-12)
    assert np.allclose(moved, np.roll(tri, -i, axis=0) @ rr.T + t)
    mirror = (tri * [-1.0, 1.0])[::-1]  # reflected, re-ordered counter-clockwise
    assert polygon_area(mirror) > 0
    assert rigid_fits(tri, mirror, 1e-6) == []


def test_flipped_bevels_are_other_parts(spiral_sets, spiral_plan):
    # P000 and P002 have congruent outlines (same area) but bevels on opposite faces (mountain
    # vs valley neighbours): only a flip, not a planar rotation, would carry one onto the other.
    ps = spiral_sets["rigid"]
    a, b = ps["P000"], ps["P002"]
    assert abs(polygon_area(spiral_plan.slabs[0].polygon_array())) == pytest.approx(
        abs(polygon_area(spiral_plan.slabs[2].polygon_array())), rel=1e-12)
    nz = {round(c.normal[2], 9) for c in spiral_plan.slabs[0].cuts}
    nz2 = {round(c.normal[2], 9) for c in spiral_plan.slabs[2].cuts}
    assert nz == nz2 and len(nz) == 2  # both faces bevelled, on different edges
    assert a.attrs["prototype"] != b.attrs["prototype"]


def test_step_round_trip_of_a_shared_spiral_keeps_names_and_volumes(spiral_sets, tmp_path):
    # ISO 10303-21 file read back with OCP's STEPCAFControl_Reader (names on)
    ps = spiral_sets["rigid"]
    export_parts(ps, tmp_path, ["step"], name="spiral")
    comps = read_step(tmp_path / "assembly.step")
    assert sorted(comps) == sorted(p.name for p in ps.parts)
    for p in ps.parts:
        assert occ.volume(comps[p.name]) == pytest.approx(p.volume, rel=1e-6)
        assert np.allclose(occ.bbox(comps[p.name]), occ.bbox(p.shape), atol=1e-3)
    text = (tmp_path / "assembly.step").read_text()
    distinct = len({k for p in ps.parts for k, _, _ in p.pieces})
    assert text.count("MANIFOLD_SOLID_BREP(") == distinct  # each prototype written once


def test_share_option_is_checked(spiral_plan):
    with pytest.raises(GeometryError, match="share"):
        build_parts(spiral_plan, share="mirror")
