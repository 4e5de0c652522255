"""Hinge hardware in the clearance sweep, the neighbour policy, verdict words and the margin.

Outside sources: the area of a regular n-gon circumscribed about a circle of radius r is
n r^2 tan(pi / n) (CRC Standard Mathematical Tables, regular polygons); solid volumes by OCP
``BRepGProp`` (Open CASCADE Technology); convex hull volumes by scipy's Qhull (Barber, Dobkin &
Huhdanpaa 1996).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.spatial import ConvexHull

from tests.test_solids_plans import plain_plan, two_panels
from thickpanel.build_result import overall_verdict
from thickpanel.clearance import clearance, counted_neighbours, hinged_keys, neighbour_keys, plan_pieces
from thickpanel.collide import pack_pieces
from thickpanel.hardware import DISK_SIDES, hardware_pieces

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "examples"


@pytest.fixture(scope="module")
def knuckle_pair():
    from hinges import get_hinge_style
    from hinges.plan_designs import design_hinges

    plan = plain_plan(two_panels(), 3.0, 0.5)
    designs = design_hinges(plan, get_hinge_style("knuckle"), material="al-6061-t6")
    return plan, designs, hardware_pieces(plan, designs)


def test_pin_piece_is_the_circumscribed_polygon_prism(knuckle_pair):
    plan, designs, pieces = knuckle_pair
    (rod,) = [r for d in designs for ex in d.extras for r in ex.rods]
    (pin,) = [p for p in pieces if p.label.startswith("PIN-")]
    n, r, length = DISK_SIDES, rod.radius, rod.s1 - rod.s0
    # circumscribed regular n-gon: area n r^2 tan(pi / n) (CRC Standard Mathematical Tables)
    assert ConvexHull(pin.vertices).volume == pytest.approx(n * r * r * math.tan(math.pi / n) * length, rel=1e-9)
    assert set(pin.joins) == set(plan.hinges[0].panels)
    # the built pin (OCP volume pi r^2 L) lies inside its piece: every piece vertex is at least r
    # from the axis, and the piece's volume exceeds the cylinder's by tan(pi/n) / (pi/n) - 1
    from thickpanel import occ
    from thickpanel.solids import build_parts

    ps = build_parts(plan, hinge_style="knuckle", material="al-6061-t6")
    vol = occ.volume(ps[f"PIN-C{plan.hinges[0].crease:03d}"].frame_shape)
    assert vol == pytest.approx(math.pi * r * r * length, rel=1e-6)
    assert ConvexHull(pin.vertices).volume / vol == pytest.approx(math.tan(math.pi / n) / (math.pi / n), rel=1e-6)


def test_hardware_is_not_compared_with_the_panels_it_joins(knuckle_pair):
    # the pin sits inside the barrels of both panels and the barrels in each other's notches: with
    # hardware the sweep of a plain two-panel fold still reports no contact
    from tests.thickness_fixtures import hinge_path

    plan, _designs, pieces = knuckle_pair
    path = hinge_path(plan.pattern, math.radians(90.0), n=7)
    rep = clearance(plan, path, extra_pieces=pieces)
    assert rep.first_contact is None and not rep.collides
    arrays = pack_pieces(plan_pieces(plan) + pieces)
    i = len(arrays.pieces) - 1  # the pin, riding with one of the two panels
    pin = arrays.pieces[i]
    assert pin.label.startswith("PIN-")
    other = next(k for k, p in enumerate(arrays.pieces) if p.owner not in (pin.owner,) and not p.joins)
    assert arrays.pieces[other].owner in pin.joins  # the other panel of the hinge: never compared
    assert bool(arrays.skipped(np.array([i]), np.array([other]))[0])


@pytest.fixture(scope="module")
def reflector():
    from thickpanel.build import run_pipeline
    from thickpanel.design import load_design

    return run_pipeline(load_design(EX / "reflector-backing.toml"), command="check",
                        stages=("pattern", "fold path", "method", "clearance"))


def test_vertex_only_neighbours_apart_when_flat_are_measured(reflector):
    # P000 (centre square) shares a vertex with all eight other panels but a hinge line with four;
    # the corner reliefs keep it apart from the other four in the flat sheet, so those pairs count
    # with their distance (the closest pair of the stowed backing is one of them)
    plan = reflector.plan
    n = plan.pattern.n_panels
    arrays = pack_pieces(plan_pieces(plan) + reflector.hardware)
    counted = set(counted_neighbours(plan, arrays).tolist())
    hinged = set(hinged_keys(plan).tolist())
    shares = set(neighbour_keys(plan).tolist())
    p0 = {k for k in shares if k // n == 0}
    assert len(p0) == 8 and len(p0 & hinged) == 4
    assert p0 & counted == p0 & hinged
    (a, b), _t = reflector.clearance.where
    assert a == "P000" and (b in ("P005", "P007"))
    assert reflector.metrics["min_clearance_lower_bound"] is False


def test_required_clearance_above_the_search_margin_is_measured():
    # miura-reference's sweep margin is five thicknesses (10 mm) and its closest non-adjacent
    # parts stay farther apart: asking for 30 mm widens the search to 60 mm, so the check quotes
    # a measured distance (below 30 mm: a fail with its pair), never "at least 10 mm"
    from thickpanel.build import run_pipeline
    from thickpanel.design import load_design

    d = load_design(EX / "miura-reference.toml")
    import dataclasses

    d = dataclasses.replace(d, checks=dataclasses.replace(d.checks, min_clearance=30.0))
    res = run_pipeline(d, command="check", stages=("pattern", "fold path", "method", "clearance"))
    m = res.metrics
    assert res.clearance.margin == pytest.approx(60.0)
    assert m["min_clearance_lower_bound"] is False and m["min_clearance_mm"] < 30.0
    assert not m["min_clearance_text"].startswith("at least")
    row = next(c for c in res.checks if c["check"] == "clearance over the fold")
    assert row["verdict"] == "fail" and res.verdict == "FAIL"


def test_overall_verdict_words():
    def rows(*vs):
        return [{"check": f"c{k}", "verdict": v, "detail": ""} for k, v in enumerate(vs)]

    assert overall_verdict(rows("pass", "info", "warn", "does not apply")) == "PASS"
    assert overall_verdict(rows("pass", "not proven")) == "NOT PROVEN"
    assert overall_verdict(rows("pass", "could not run")) == "NOT PROVEN"
    assert overall_verdict(rows("not proven", "fail")) == "FAIL"
