"""Pattern JSON schema: round trip, format version, corrupt and malformed files.

Sources: RFC 8259 (The JavaScript Object Notation Data Interchange Format): NaN and Infinity are
not JSON values, so not-given angles are written as null. Miura geometry from Schenk & Guest 2013,
PNAS 110(9):3276 (S = b sin gamma at theta = 0).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from thickpanel import CreasePattern, ExportError, PatternError, Seam
from thickpanel.io import (
    FORMAT_VERSION,
    dumps_pattern,
    loads_pattern,
    pattern_to_dict,
    read_pattern,
    write_pattern,
)
from thickpanel.layouts.classic import miura_ori, square_twist


def test_round_trip_miura(tmp_path):
    cp = miura_ori(20.0, 10.0, 60.0, 3, 2, name="roof cell")
    out = write_pattern(cp, tmp_path / "m.json")
    back = read_pattern(out)
    assert np.array_equal(back.vertices, cp.vertices)
    assert np.array_equal(back.creases, cp.creases)
    assert back.kinds == cp.kinds and back.name == "roof cell"
    # flat zigzag rise S = b sin(gamma) survives the trip (Schenk & Guest 2013)
    assert back.vertices[4, 1] == pytest.approx(10.0 * math.sin(math.radians(60.0)))
    assert [p.area for p in back.panels] == [p.area for p in cp.panels]
    assert not list(tmp_path.glob("*.tmp"))  # temp file renamed away


def test_file_is_plain_json_with_version(tmp_path):
    cp = square_twist(10.0, 30.0)
    ta = np.where(np.array(cp.kinds) == "valley", math.pi / 2, np.nan)
    ta = np.where(np.array(cp.kinds) == "mountain", -math.pi / 2, ta)
    cp = cp.replace(target_angles=ta)
    p = write_pattern(cp, tmp_path / "t.json")
    data = json.loads(p.read_text())  # RFC 8259 parser: no NaN in the file
    assert data["format"] == "thickpanel-pattern" and data["version"] == FORMAT_VERSION == 1
    assert data["units"] == "mm"
    assert data["target_angles_deg"][0] == 90.0 and data["target_angles_deg"][-1] is None
    back = read_pattern(p)
    assert np.allclose(back.target_angles, ta, equal_nan=True)


def test_seams_and_units_in_cm(tmp_path):
    # a strip whose left and right borders are joined into a tube
    v = [[0, 0], [10, 0], [10, 5], [0, 5]]
    c = [[0, 1], [1, 2], [2, 3], [0, 3]]
    cp = CreasePattern(v, c, ["border"] * 4, seams=[Seam(1, 3, "valley", math.radians(30))])
    d = pattern_to_dict(cp)
    assert d["seams"] == [{"a": 1, "b": 3, "kind": "valley", "target_angle_deg": pytest.approx(30.0)}]
    back = loads_pattern(json.dumps(d))
    assert back.seams[0].a == 1 and back.seams[0].target_angle == pytest.approx(math.radians(30))
    d["units"] = "cm"  # 1 cm = 10 mm (SI)
    assert loads_pattern(json.dumps(d)).vertices[1, 0] == 100.0


def test_corrupt_json_names_file_and_position(tmp_path):
    p = tmp_path / "bad.json"
    p.write_text('{"format": "thickpanel-pattern", "version": 1,\n "vertices": [[0, 0], [1, 0]')
    with pytest.raises(PatternError, match=r"bad.json.* is not valid JSON: .* line 2 column"):
        read_pattern(p)
    p.write_bytes(b"\xff\xfe\x00garbage")
    with pytest.raises(PatternError, match="bad.json"):
        read_pattern(p)


@pytest.mark.parametrize(
    "change, match",
    [
        ({"version": 99}, r"key 'version' .* is 99; supported versions: 1"),
        ({"format": "other"}, r"key 'format' .* is 'other'"),
        ({"colour": "red"}, r"unknown key 'colour'"),
        ({"units": "furlong"}, r"key 'units' .* is 'furlong'; allowed: mm, cm, m, in"),
        ({"vertices": [[0, 0], [1, "x"], [1, 1], [0, 1]]}, r"vertices\[1\] .* must hold numbers"),
        ({"creases": [[0, 1], [1, 2], [2, 3.5], [3, 0]]}, r"creases\[2\] .* vertex indices"),
        (
            {"creases": [[0, 1], [1, 2], [2, 3], [3, 7]]},
            r"C003 refers to vertex \(3, 7\); valid vertex indices are 0..3",
        ),
        ({"kinds": ["border", "border", "border", "fold"]}, r"C003 has unknown kind 'fold'"),
        ({"target_angles_deg": [None, None]}, r"'target_angles_deg' .* list of 4 numbers or null; got 2"),
        ({"seams": [{"a": 0}]}, r"seams\[0\] .* keys a, b"),
    ],
)
def test_malformed_keys(tmp_path, change, match):
    sq = CreasePattern([[0, 0], [1, 0], [1, 1], [0, 1]], [[0, 1], [1, 2], [2, 3], [3, 0]], ["border"] * 4)
    d = pattern_to_dict(sq)
    d.update(change)
    p = tmp_path / "p.json"
    p.write_text(json.dumps(d))
    with pytest.raises(PatternError, match=match):
        read_pattern(p)


def test_missing_key_and_non_object(tmp_path):
    with pytest.raises(PatternError, match="missing key 'kinds'"):
        loads_pattern(json.dumps({"format": "thickpanel-pattern", "version": 1, "vertices": [], "creases": []}))
    with pytest.raises(PatternError, match="must hold a JSON object; got list"):
        loads_pattern("[1, 2]")
    with pytest.raises(PatternError, match="contains NaN"):
        loads_pattern('{"format": "thickpanel-pattern", "version": 1, "vertices": [[NaN, 0]]}')


def test_suffixes_and_missing_file(tmp_path):
    cp = miura_ori(10.0, 10.0, 45.0, 1, 1)
    with pytest.raises(ExportError, match=r"unknown suffix '.svg'; writable: .json"):
        write_pattern(cp, tmp_path / "x.svg")
    with pytest.raises(PatternError, match=r"unknown suffix '.txt'; readable: .json, .dxf"):
        read_pattern(tmp_path / "x.txt")
    with pytest.raises(PatternError, match="does not exist"):
        read_pattern(tmp_path / "none.json")


def test_dumps_is_deterministic():
    cp = miura_ori(10.0, 7.0, 50.0, 2, 2)
    assert dumps_pattern(cp) == dumps_pattern(loads_pattern(dumps_pattern(cp)))
