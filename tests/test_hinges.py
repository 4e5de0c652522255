"""Hinge styles: registry, feasibility errors, flexure strain (Howell 2001), knuckle layout."""

from __future__ import annotations

import math

import pytest

import hinges
from hinges.base import HingeContext
from hinges.flexure import flexure_min_length, flexure_strain
from hinges.materials import MATERIALS, get_material
from tests.test_solids_plans import plain_plan, two_panels
from thickpanel.errors import HingeError


def ctx(t=3.0, gap=0.5, material="al-6061-t6", fold=math.pi / 2, face="top"):
    plan = plain_plan(two_panels(), t, gap, face=face)
    m = get_material(material)
    return HingeContext(plan.hinges[0], (plan.slabs[0], plan.slabs[1]), (m, m), fold)


def test_registry_lists_the_five_styles_and_rejects_unknown_names():
    assert hinges.available_hinge_styles() == ["flexure", "knuckle", "none", "print-in-place",
                                               "tape"]
    with pytest.raises(HingeError, match="unknown hinge style 'hinged'.*knuckle"):
        hinges.get_hinge_style("hinged")
    with pytest.raises(HingeError, match="no option pin_mm"):
        hinges.get_hinge_style("knuckle", pin_mm=2)


def test_register_a_third_party_style():
    class Dummy:
        name = "dummy-test"

        def design(self, c):
            return hinges.get_hinge_style("none").design(c)

    hinges.register_hinge_style("dummy-test", Dummy)
    assert "dummy-test" in hinges.available_hinge_styles()
    with pytest.raises(HingeError, match="already registered"):
        hinges.register_hinge_style("dummy-test", Dummy)


def test_flexure_strain_matches_beam_bending_formula():
    # Howell, Compliant Mechanisms (Wiley 2001), small-length flexural pivot: eps = t theta / 2L.
    # Worked by hand: t = 0.4 mm, theta = pi/2, L = 5 mm -> eps = 0.4 * 1.5708 / 10 = 0.062832
    assert flexure_strain(0.4, math.pi / 2, 5.0) == pytest.approx(0.0628319, rel=1e-6)
    # inverse: L_min for eps_allow = 0.06 -> 0.4 * 1.5708 / 0.12 = 5.23599 mm
    assert flexure_min_length(0.4, math.pi / 2, 0.06) == pytest.approx(5.235988, rel=1e-6)
    # the formula is the outer-fibre strain of a beam bent to radius rho = L / theta:
    # eps = (t / 2) / rho (Gere & Timoshenko, Mechanics of Materials, pure bending)
    t, th, L = 0.3, 2.0, 7.0
    assert flexure_strain(t, th, L) == pytest.approx((t / 2) / (L / th), rel=1e-12)


def test_flexure_refuses_strain_over_allowable_and_says_what_length_passes():
    c = ctx(gap=0.5, material="pp")
    with pytest.raises(HingeError) as e:
        hinges.get_hinge_style("flexure", web_thickness_mm=0.4).design(c)
    msg = str(e.value)
    assert "C006" in msg and "over the allowable 0.06" in msg
    assert "5.236 mm would pass" in msg  # 0.4 * (pi/2) / (2 * 0.06), Howell 2001 formula
    ok = hinges.get_hinge_style("flexure", web_thickness_mm=0.4).design(ctx(gap=6.0,
                                                                            material="pp"))
    assert ok.extras[0].name == "FLEX-C006"
    assert ok.info["strain"] == pytest.approx(0.4 * (math.pi / 2) / 12.0)


def test_flexure_needs_a_material_with_an_allowable_strain():
    with pytest.raises(HingeError, match="al-6061-t6.*no allowable strain"):
        hinges.get_hinge_style("flexure").design(ctx(gap=6.0))


def test_pin_larger_than_thickness_allows():
    with pytest.raises(HingeError) as e:
        hinges.get_hinge_style("knuckle", pin_diameter_mm=3.0).design(ctx(t=3.0))
    msg = str(e.value)
    # barrel = pin + 2 wall = 3 + 2 * 0.75 = 4.5 mm > 3 mm; limit 3 - 1.5 = 1.5 mm
    assert "C006" in msg and "4.5 mm" in msg and "must be <= 1.5 mm" in msg


def test_auto_pin_is_largest_preferred_size_that_fits():
    # t = 3 mm: 2 mm pin + 2 x 0.5 mm wall = 3 mm fits; 2.5 + 2 x 0.625 = 3.75 does not
    d = hinges.get_hinge_style("knuckle").design(ctx(t=3.0))
    assert d.info["pin_diameter"] == 2.0
    assert d.extras[0].name == "PIN-C006"


def test_knuckles_longer_than_usable_length():
    # two 40 x 30 panels: crease 30 mm, usable 2.25..27.75 = 25.5 mm, less 0.2 mm at both ends
    with pytest.raises(HingeError) as e:
        hinges.get_hinge_style("knuckle", knuckles=3, knuckle_length_mm=9.0).design(ctx())
    msg = str(e.value)
    assert "C006" in msg and "27.4 mm" in msg and "25.1 mm" in msg
    # limit (25.1 - 2 * 0.2) / 3 = 8.2333 mm
    assert "<= 8.233 mm" in msg


def test_machined_knuckle_uses_iso_fit_mean_sizes():
    d = hinges.get_hinge_style("knuckle", fit="H7/g6").design(ctx())
    pin = d.extras[0].rods[0]
    # ISO 286-2 (REFERENCES 7): 2 mm H7 = 2.000..2.010, g6 = 1.992..1.998 -> means 2.005, 1.995
    assert 2 * d.sides[0].barrels[0].hole == pytest.approx(2.005, abs=1e-12)
    assert 2 * pin.radius == pytest.approx(1.995, abs=1e-12)


def test_print_clearance_below_printer_resolution():
    c = ctx(material="pla")
    with pytest.raises(HingeError, match="C006.*print clearance 0.05 mm is below the printer "
                                         "resolution 0.1 mm"):
        hinges.get_hinge_style("print-in-place", clearance_mm=0.05).design(c)
    with pytest.raises(HingeError, match="odd number"):
        hinges.get_hinge_style("print-in-place", knuckles=4).design(c)


def test_print_in_place_takes_clearance_from_the_material_table():
    # PLA printed clearance 0.3 mm (common practice, REFERENCES 7): hole = pin/2 + 0.3
    d = hinges.get_hinge_style("print-in-place").design(ctx(t=4.0, material="pla"))
    pin_r = d.sides[0].rods[0].radius
    assert d.sides[1].barrels[0].hole == pytest.approx(pin_r + 0.3)
    assert d.sides[0].barrels[0].hole == 0.0 and d.extras == ()


def test_every_material_names_its_source():
    for m in MATERIALS.values():
        assert m.sources and m.density > 0
        assert "memory" in m.sources or "practice" in m.sources or "Handbook" in m.sources
    with pytest.raises(HingeError, match="unknown material 'unobtainium'"):
        get_material("unobtainium")


def test_tape_and_none_styles():
    d = hinges.get_hinge_style("tape", overlap_mm=4.0, recess=True).design(ctx())
    assert d.extras[0].name == "TAPE-C006" and len(d.sides[0].recesses) == 1
    n = hinges.get_hinge_style("none", hole_diameter_mm=3.0).design(ctx())
    assert len(n.sides[0].holes) == 2 and n.extras == ()
    with pytest.raises(HingeError, match="hole_diameter_mm = -1"):
        hinges.get_hinge_style("none", hole_diameter_mm=-1).design(ctx())
