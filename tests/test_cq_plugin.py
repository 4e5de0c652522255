"""cadquery entry points (thickpanel.cq_plugin).

Outside sources: a rigid motion preserves volume (Euclidean isometries have determinant +-1;
any linear-algebra text, e.g. Strang, *Introduction to Linear Algebra*, 5th ed. 2016, ch. 5), so
every part has the same volume deployed and stowed; volumes and bounding boxes are measured by
OpenCascade (``BRepGProp``/``Bnd_Box`` through cadquery), an independent reference; the flat
Miura-ori sheet spans nx a + V by ny S with V = b cos(gamma), S = b sin(gamma) (Schenk & Guest
2013, PNAS 110(9):3276, theta = 0).
"""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import pytest

cq = pytest.importorskip("cadquery")
pytestmark = pytest.mark.cad

ROOT = Path(__file__).resolve().parents[1]
# the Miura reference example with the offset-panel method (plain prisms, no bevel cuts)
DESIGN = (ROOT / "examples" / "miura-reference.toml").read_text().replace('name = "tapered"', 'name = "offset-panel"')


@pytest.fixture(scope="module")
def arr():
    from thickpanel import ThickpanelError, cq_plugin
    from thickpanel.design import loads_design

    try:
        return cq_plugin.model(loads_design(DESIGN))
    except ThickpanelError as exc:
        if "not available" in str(exc):  # a stage of another module not installed
            pytest.skip(str(exc))
        raise


def test_register_is_not_done_at_import():
    code = ("import cadquery as cq, thickpanel.cq_plugin as p; a = hasattr(cq.Workplane, 'thickpanel_array'); "
            "p.register(); b = hasattr(cq.Workplane, 'thickpanel_array'); p.unregister(); "
            "print(a, b, hasattr(cq.Workplane, 'thickpanel_array'))")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300)
    assert r.stdout.split() == ["False", "True", "False"], r.stderr


def test_assembly_children_and_volumes(arr):
    flat = arr.assembly(0.0)
    stowed = arr.assembly(1.0)
    names = arr.part_names
    assert [c.name for c in flat.children] == names
    assert len(stowed.children) == len(names) == 12  # 4 x 3 panels, no hinge parts (style "none")
    for a, b in zip(flat.children, stowed.children, strict=True):
        assert a.obj.isValid() and b.obj.isValid()
        assert a.obj.Volume() == pytest.approx(b.obj.Volume(), rel=1e-9)  # rigid motion keeps volume
        assert a.obj.Volume() > 0


def test_deployed_extent_is_the_flat_sheet(arr):
    bb = arr.compound(0.0).BoundingBox()
    fx = 4 * 30 + 30 * math.cos(math.radians(70))
    fy = 3 * 30 * math.sin(math.radians(70))
    # slabs never reach outside the sheet and are inset by at most their thickness per side
    assert fx - 4.0 <= bb.xlen <= fx + 1e-3
    assert fy - 4.0 <= bb.ylen <= fy + 1e-3
    assert bb.zlen >= 2.0 - 1e-6  # 2 mm panels


def test_workplane_method_places_on_stack_points(arr):
    from thickpanel import cq_plugin

    cq_plugin.register()
    try:
        wp = cq.Workplane("XY").pushPoints([(0, 0), (500, 0)]).thickpanel_array(arr, 0.5)
        objs = wp.vals()
        assert len(objs) == 2
        b0, b1 = objs[0].BoundingBox(), objs[1].BoundingBox()
        assert b1.xmin - b0.xmin == pytest.approx(500.0, abs=1e-6)
        assert b1.zlen == pytest.approx(b0.zlen, abs=1e-6)
    finally:
        cq_plugin.unregister()
    assert not hasattr(cq.Workplane, "thickpanel_array")


def test_bad_fold_fraction(arr):
    from thickpanel import FoldError

    with pytest.raises(FoldError, match=r"t = 1.5 is outside 0 \(deployed\) .. 1 \(stowed\)"):
        arr.shapes(1.5)


def test_register_refuses_foreign_attribute(monkeypatch):
    from thickpanel import ThickpanelError, cq_plugin

    monkeypatch.setattr(cq.Workplane, "thickpanel_array", lambda self: self, raising=False)
    with pytest.raises(ThickpanelError, match="did not add"):
        cq_plugin.register()
