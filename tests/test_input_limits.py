"""Malformed and extreme inputs end in the project's own errors, naming what is wrong.

The limits are this program's (``thickpanel.limits``; no published source). Curve flattening is
checked against the circle's closed-form area (pi r^2, and the inscribed regular n-gon area
(n/2) r^2 sin(2 pi/n) as the lower bound for a chord-flattened circle; standard geometry).
"""

from __future__ import annotations

import json
import math

import ezdxf
import numpy as np
import pytest

from thickpanel import PatternError
from thickpanel.io import loads_pattern, read_dxf
from thickpanel.io.dxf_import import CHORD_MM
from thickpanel.limits import MAX_COORDINATE_MM, MAX_NESTING, name_problem, nesting_depth
from thickpanel.pattern import CreasePattern, Seam

_SQUARE = {
    "format": "thickpanel-pattern",
    "version": 1,
    "vertices": [[0, 0], [10, 0], [10, 10], [0, 10]],
    "creases": [[0, 1], [1, 2], [2, 3], [3, 0]],
    "kinds": ["border"] * 4,
}


def _json(**changes: object) -> str:
    d = dict(_SQUARE)
    d.update(changes)
    return json.dumps(d)


def test_square_reads() -> None:
    assert loads_pattern(_json()).n_panels == 1


@pytest.mark.parametrize(
    "changes, match",
    [
        ({"creases": [[0, 1], [1, 2], [2, 3], [3, 10**30]]}, r"creases\[3\].*vertex index"),
        ({"vertices": [[0, 0], [10, 0], [10, 10], [0, 10**400]]}, r"vertices\[3\].*coordinate limit"),
        ({"vertices": [[0, 0], [10, 0], [10, 10], [0, 1e300]]}, r"vertices\[3\].*coordinate limit"),
        ({"version": 1.0}, r"'version'.*1\.0"),
        ({"target_angles_deg": [None, None, None, 1e308]}, r"target_angles_deg\[3\].*-180\.\.180"),
        ({"kinds": ["border", "border", "border", 7]}, r"'kinds'"),
    ],
)
def test_json_refusals_name_the_key(changes: dict, match: str) -> None:
    with pytest.raises(PatternError, match=match):
        loads_pattern(_json(**changes))


def test_json_nested_deeply_is_refused() -> None:
    text = '{"format": "thickpanel-pattern", "version": 1, "name": ' + "[" * 100_000 + "]" * 100_000 + "}"
    with pytest.raises(PatternError, match="nest"):
        loads_pattern(text)
    shallow = '{"format": "thickpanel-pattern", "version": 1, "name": ' + "[" * 40 + "]" * 40 + "}"
    with pytest.raises(PatternError, match=f"more than {MAX_NESTING}"):
        loads_pattern(shallow)


def test_nesting_depth_counts_iteratively() -> None:
    deep: list = []
    cur = deep
    for _ in range(10_000):  # deeper than Python's recursion limit
        nxt: list = []
        cur.append(nxt)
        cur = nxt
    assert nesting_depth(deep, limit=MAX_NESTING) == MAX_NESTING + 1
    assert nesting_depth({"a": [[1.0, 2.0]]}) == 3
    assert nesting_depth(5) == 0


def test_api_refusals() -> None:
    with pytest.raises(PatternError, match="coordinate beyond the limit"):
        CreasePattern.from_segments([[[0, 0], [0, 1e300]]], ["mountain"])
    with pytest.raises(PatternError, match="target_angles must be numbers"):
        CreasePattern(_SQUARE["vertices"], _SQUARE["creases"], _SQUARE["kinds"], ["a", "b", "c", "d"])
    with pytest.raises(PatternError, match=r"V003 .*coordinate limit"):
        CreasePattern([[0, 0], [10, 0], [10, 10], [0, 2 * MAX_COORDINATE_MM]], _SQUARE["creases"], _SQUARE["kinds"])


def test_seam_target_angle_out_of_range_is_refused() -> None:
    # a 10 x 10 strip whose left and right borders are joined by a seam
    v = [[0, 0], [10, 0], [10, 10], [0, 10]]
    c = [[0, 1], [1, 2], [2, 3], [3, 0]]
    with pytest.raises(PatternError, match="seam .*target angle"):
        CreasePattern(v, c, ["border"] * 4, seams=[Seam(1, 3, "valley", 1e308)])


@pytest.mark.parametrize(
    "name, ok",
    [("reflector-backing", True), ("", False), ("..", False), (".hidden", False), ("a/b", False),
     ("a\x00b", False), ('q"uote', False), ("back\\slash", False), ("x" * 101, False), ("x" * 100, True),
     ("Sonnensegel 2 m", True)],
)
def test_design_name_rule(name: str, ok: bool) -> None:
    assert (name_problem(name) is None) is ok


def _doc_with_border() -> ezdxf.document.Drawing:
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4
    return doc


def test_dxf_truncated_file(tmp_path) -> None:
    p = tmp_path / "cut.dxf"
    p.write_text("0\nSECTION\n")
    with pytest.raises(PatternError, match="cannot read DXF file"):
        read_dxf(p)


def test_dxf_spline_on_fold_layer_refused_with_type_layer_count(tmp_path) -> None:
    doc = _doc_with_border()
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (10, 0), (10, 10), (0, 10)], close=True, dxfattribs={"layer": "border"})
    msp.add_spline([(5, 0), (5.5, 5), (5, 10)], dxfattribs={"layer": "valley"})
    msp.add_spline([(2, 0), (2.5, 5), (2, 10)], dxfattribs={"layer": "valley"})
    p = tmp_path / "spline.dxf"
    doc.saveas(p)
    with pytest.raises(PatternError, match=r"2 SPLINE on layer 'valley'"):
        read_dxf(p)


def test_dxf_circle_border_is_flattened_within_chord_tolerance(tmp_path) -> None:
    r = 50.0
    doc = _doc_with_border()
    msp = doc.modelspace()
    msp.add_circle((0, 0), r, dxfattribs={"layer": "border"})
    p = tmp_path / "disc.dxf"
    doc.saveas(p)
    cp = read_dxf(p)
    area = sum(q.area for q in cp.panels)
    # a chord-flattened circle lies inside the circle and within CHORD_MM of it
    assert area <= math.pi * r**2
    assert area >= math.pi * (r - CHORD_MM) ** 2
    assert cp.n_panels == 1
    radii = np.hypot(*cp.vertices.T)
    assert np.all(radii <= r + 1e-9)


def test_dxf_block_reference_is_expanded(tmp_path) -> None:
    doc = _doc_with_border()
    blk = doc.blocks.new("FOLD")
    blk.add_line((0, 0), (0, 10), dxfattribs={"layer": "valley"})
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (10, 0), (10, 10), (0, 10)], close=True, dxfattribs={"layer": "border"})
    msp.add_blockref("FOLD", (5, 0))
    p = tmp_path / "block.dxf"
    doc.saveas(p)
    cp = read_dxf(p)
    assert cp.n_panels == 2
    assert sorted(q.area for q in cp.panels) == pytest.approx([50.0, 50.0])


def test_dxf_old_style_polyline_is_read(tmp_path) -> None:
    doc = _doc_with_border()
    msp = doc.modelspace()
    msp.add_polyline2d([(0, 0), (10, 0), (10, 10), (0, 10)], close=True, dxfattribs={"layer": "border"})
    msp.add_line((5, 0), (5, 10), dxfattribs={"layer": "mountain"})
    p = tmp_path / "poly.dxf"
    doc.saveas(p)
    cp = read_dxf(p)
    assert cp.n_panels == 2
    assert cp.kinds.count("mountain") == 1
