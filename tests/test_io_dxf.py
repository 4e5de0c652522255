"""DXF import by layer name, honouring $INSUNITS. Test drawings are made with ezdxf in tmp_path.

Sources: AutoCAD DXF Reference, HEADER section: $INSUNITS 1 = inches, 4 = millimetres;
1 in = 25.4 mm exactly (international yard and pound agreement, 1959).
"""

from __future__ import annotations

import ezdxf
import pytest

from thickpanel import PatternError
from thickpanel.io import DEFAULT_LAYERS, read_dxf, read_pattern


def _square_doc(units: int = 4, side: float = 10.0, fold_layer: str = "valley", border_layer: str = "border"):
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = units
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (side, 0), (side, side), (0, side)], close=True, dxfattribs={"layer": border_layer})
    msp.add_line((side / 2, 0), (side / 2, side), dxfattribs={"layer": fold_layer})
    msp.add_line((0, 0), (side, side), dxfattribs={"layer": "NOTES"})  # ignored layer
    return doc


def test_square_with_fold_mm(tmp_path):
    p = tmp_path / "sq.dxf"
    _square_doc().saveas(p)
    cp = read_pattern(p)
    assert cp.name == "sq"
    assert (cp.n_vertices, cp.n_creases, cp.n_panels) == (6, 7, 2)  # fold splits both borders
    assert sorted(p_.area for p_ in cp.panels) == pytest.approx([50.0, 50.0])
    assert cp.kinds.count("valley") == 1


def test_inches_are_converted(tmp_path):
    p = tmp_path / "inch.dxf"
    _square_doc(units=1, side=2.0).saveas(p)
    cp = read_dxf(p)
    # $INSUNITS = 1 (inches): 2 in = 50.8 mm (1 in = 25.4 mm)
    assert cp.vertices.max(axis=0) == pytest.approx([50.8, 50.8])
    assert sum(x.area for x in cp.panels) == pytest.approx(50.8**2)


def test_no_usable_layers(tmp_path):
    p = tmp_path / "none.dxf"
    _square_doc(fold_layer="FOLDS", border_layer="OUTLINE").saveas(p)
    msg = r"no LINE or LWPOLYLINE on a usable layer; layers with lines: FOLDS, NOTES, OUTLINE"
    with pytest.raises(PatternError, match=msg):
        read_dxf(p)


def test_layer_mapping_overrides_defaults(tmp_path):
    p = tmp_path / "map.dxf"
    _square_doc(fold_layer="FOLD-M", border_layer="OUTLINE").saveas(p)
    cp = read_dxf(p, layers={"FOLD-M": "mountain", "outline": "border"})  # case-insensitive names
    assert cp.kinds.count("mountain") == 1 and cp.n_panels == 2
    with pytest.raises(PatternError, match=r"layer mapping 'X' -> 'fold': unknown kind"):
        read_dxf(p, layers={"X": "fold"})
    assert DEFAULT_LAYERS["valley"] == "valley"


def test_upper_case_default_layers(tmp_path):
    p = tmp_path / "upper.dxf"
    _square_doc(fold_layer="MOUNTAIN", border_layer="Border").saveas(p)
    assert read_dxf(p).kinds.count("mountain") == 1


def test_arc_segment_on_fold_layer_refused(tmp_path):
    doc = ezdxf.new()
    pts = [(0, 0, 0.5), (10, 0, 0), (10, 10, 0)]
    doc.modelspace().add_lwpolyline(pts, format="xyb", dxfattribs={"layer": "valley"})
    p = tmp_path / "arc.dxf"
    doc.saveas(p)
    with pytest.raises(PatternError, match=r"1 LWPOLYLINE on layer 'valley'.*straight"):
        read_dxf(p)


def test_corrupt_and_unknown_units(tmp_path):
    p = tmp_path / "junk.dxf"
    p.write_text("this is not a drawing\n")
    with pytest.raises(PatternError, match="cannot read DXF file"):
        read_dxf(p)
    q = tmp_path / "odd.dxf"
    _square_doc(units=3).saveas(q)  # 3 = miles, not supported for sheets
    with pytest.raises(PatternError, match=r"\$INSUNITS = 3; supported codes"):
        read_dxf(q)


def test_invalid_drawing_names_file(tmp_path):
    doc = ezdxf.new()
    doc.modelspace().add_line((0, 0), (10, 0), dxfattribs={"layer": "valley"})
    p = tmp_path / "open.dxf"
    doc.saveas(p)
    with pytest.raises(PatternError, match=r"open.dxf.*dangling"):
        read_dxf(p)
