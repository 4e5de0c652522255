"""CreasePattern.from_segments: merging, splitting at crossings/T-junctions/overlaps, dedupe.

Sources: Euler's formula V - E + F = 2 for a connected plane graph (Diestel, *Graph Theory*,
Thm 4.2.9); a line arrangement of h full-width horizontal and w full-height vertical lines in a
rectangle cuts it into (h + 1)(w + 1) rectangles (elementary combinatorics; common practice).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from thickpanel import CreasePattern, PatternError, Tolerances
from thickpanel.segments import merge_points, pattern_from_segments

BORDER = [
    [[0, 0], [10, 0]],
    [[10, 0], [10, 10]],
    [[10, 10], [0, 10]],
    [[0, 10], [0, 0]],
]


def _euler(cp):
    return cp.n_vertices - cp.n_creases + cp.n_panels + 1


def test_crossing_diagonals_split_at_centre():
    segs = BORDER + [[[0, 0], [10, 10]], [[10, 0], [0, 10]]]
    cp = CreasePattern.from_segments(segs, ["border"] * 4 + ["valley", "mountain"])
    assert (cp.n_vertices, cp.n_creases, cp.n_panels) == (5, 8, 4)
    assert _euler(cp) == 2
    centre = np.nonzero(np.all(np.isclose(cp.vertices, [5.0, 5.0]), axis=1))[0]
    assert len(centre) == 1 and len(cp.vertex_creases(int(centre[0]))) == 4
    # each triangle is a quarter of the 100 mm^2 square
    assert all(p.area == pytest.approx(25.0) for p in cp.panels)
    assert sorted(cp.kinds).count("valley") == 2 and sorted(cp.kinds).count("mountain") == 2


def test_t_junctions_split_border():
    segs = BORDER + [[[5, 0], [5, 10]]]
    cp = CreasePattern.from_segments(segs, ["border"] * 4 + ["valley"])
    assert (cp.n_vertices, cp.n_creases, cp.n_panels) == (6, 7, 2)
    assert all(p.area == pytest.approx(50.0) for p in cp.panels)


def test_many_lines_through_one_point():
    segs = BORDER + [
        [[0, 0], [10, 10]],
        [[10, 0], [0, 10]],
        [[5, 0], [5, 10]],
        [[0, 5], [10, 5]],
    ]
    cp = CreasePattern.from_segments(segs, ["border"] * 4 + ["valley", "mountain", "valley", "mountain"])
    centre = int(np.nonzero(np.all(np.isclose(cp.vertices, [5.0, 5.0]), axis=1))[0][0])
    assert len(cp.vertex_creases(centre)) == 8
    assert cp.n_panels == 8 and _euler(cp) == 2
    assert all(p.area == pytest.approx(12.5) for p in cp.panels)


def test_endpoint_merge_tolerance():
    jitter = [[[0, 0], [10, 0]], [[10, 1e-8], [10, 10]], [[10, 10], [0, 10]], [[0, 10 + 1e-8], [0, 0]]]
    cp = CreasePattern.from_segments(jitter, ["border"] * 4)
    assert cp.n_vertices == 4 and cp.n_panels == 1
    # first point met represents its cluster: coordinates are input coordinates
    assert [10.0, 0.0] in cp.vertices.tolist()
    gap = [[[0, 0], [10, 0]], [[10, 1e-3], [10, 10]], [[10, 10], [0, 10]], [[0, 10], [0, 0]]]
    with pytest.raises(PatternError, match="dangling"):
        CreasePattern.from_segments(gap, ["border"] * 4)
    # a looser merge tolerance closes the 1e-3 mm gap (tolerance argument is honoured)
    cp = CreasePattern.from_segments(gap, ["border"] * 4, tol=Tolerances(merge=1e-2))
    assert cp.n_panels == 1


def test_collinear_overlap_and_duplicates():
    segs = [
        [[0, 0], [6, 0]],
        [[4, 0], [10, 0]],  # overlaps the first between x = 4 and 6
        [[10, 0], [10, 10]],
        [[10, 10], [0, 10]],
        [[0, 10], [0, 0]],
        [[0, 10], [0, 0]],  # exact duplicate
        [[3, 0], [3, 10]],
        [[3, 10], [3, 0]],  # reversed duplicate
    ]
    cp = CreasePattern.from_segments(segs, ["border"] * 6 + ["valley", "valley"])
    xs_bottom = sorted(x for x, y in cp.vertices.tolist() if y == 0)
    assert xs_bottom == [0.0, 3.0, 4.0, 6.0, 10.0]
    assert cp.n_panels == 2 and _euler(cp) == 2
    assert cp.kinds.count("valley") == 1


def test_duplicate_kinds_priority_and_conflict():
    # a line drawn as 'flat' and as 'valley': the folding kind wins (documented priority)
    segs = BORDER + [[[5, 0], [5, 10]], [[5, 0], [5, 10]]]
    cp = CreasePattern.from_segments(segs, ["border"] * 4 + ["flat", "valley"])
    assert cp.kinds.count("valley") == 1 and "flat" not in cp.kinds
    with pytest.raises(PatternError, match="segments 4, 5 draw the same line as both mountain and valley"):
        CreasePattern.from_segments(segs, ["border"] * 4 + ["mountain", "valley"])


def test_no_split_reports_crossing():
    segs = BORDER + [[[0, 0], [10, 10]], [[10, 0], [0, 10]]]
    with pytest.raises(PatternError, match="cross"):
        CreasePattern.from_segments(segs, ["border"] * 4 + ["valley", "mountain"], split=False)


def test_zero_length_segments_dropped_and_targets_inherited():
    segs = BORDER + [[[5, 0], [5, 10]], [[2, 2], [2, 2]]]
    ta = [np.nan] * 4 + [1.0, np.nan]
    cp = CreasePattern.from_segments(segs, ["border"] * 4 + ["valley", "flat"], ta)
    assert cp.n_creases == 7
    v = cp.target_angles[np.array(cp.kinds) == "valley"]
    assert v.tolist() == [1.0]


@pytest.mark.parametrize(
    "segs, kinds, match",
    [
        ([[0, 0, 1]], ["border"], r"shape \(k, 2, 2\)"),
        ([[[0, 0], [np.nan, 1]]], ["border"], r"segment 0 has a non-finite coordinate"),
        (BORDER, ["border"] * 3, "kinds has 3 entries for 4 segments"),
        (BORDER, ["border", "valey", "border", "border"], r"segment 1 has unknown kind 'valey'"),
        ([["a", "b"]], ["border"], "numbers in mm"),
        (BORDER, "bbbb", "not the string 'bbbb'"),
    ],
)
def test_bad_input(segs, kinds, match):
    with pytest.raises(PatternError, match=match):
        pattern_from_segments(segs, kinds)


def test_merge_points_transitive():
    pts = np.array([[0.0, 0.0], [5e-7, 0.0], [1e-6 * 0.9 + 5e-7, 0.0], [3.0, 0.0]])
    uniq, lab = merge_points(pts)
    assert lab.tolist() == [0, 0, 0, 1] and uniq.tolist() == [[0.0, 0.0], [3.0, 0.0]]


@settings(max_examples=25, deadline=None)
@given(
    xs=st.lists(st.integers(1, 99), min_size=0, max_size=6, unique=True),
    ys=st.lists(st.integers(1, 49), min_size=0, max_size=6, unique=True),
)
def test_line_arrangement_grid(xs, ys):
    w, h = 100.0, 50.0
    segs = [[[0, 0], [w, 0]], [[w, 0], [w, h]], [[w, h], [0, h]], [[0, h], [0, 0]]]
    segs += [[[float(x), 0.0], [float(x), h]] for x in xs]
    segs += [[[0.0, float(y)], [w, float(y)]] for y in ys]
    kinds = ["border"] * 4 + ["valley"] * len(xs) + ["mountain"] * len(ys)
    cp = CreasePattern.from_segments(segs, kinds)
    # (h + 1)(w + 1) rectangles (line arrangement count) and Euler's formula
    assert cp.n_panels == (len(xs) + 1) * (len(ys) + 1)
    assert _euler(cp) == 2
    assert sum(p.area for p in cp.panels) == pytest.approx(w * h)


def _point_on_border(u: float, w: float) -> list[float]:
    """Point at perimeter fraction u of the w x w square, counter-clockwise from (0, 0)."""
    s = (u % 1.0) * 4.0 * w
    if s < w:
        return [s, 0.0]
    if s < 2 * w:
        return [w, s - w]
    if s < 3 * w:
        return [3 * w - s, w]
    return [0.0, 4 * w - s]


def _proper_cross(p1, p2, q1, q2) -> bool:
    def orient(a, b, c):
        return (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])

    return orient(p1, p2, q1) * orient(p1, p2, q2) < 0 and orient(q1, q2, p1) * orient(q1, q2, p2) < 0


@settings(max_examples=30, deadline=None)
@given(st.lists(st.tuples(st.floats(0.01, 0.24), st.floats(0.26, 0.99)), min_size=1, max_size=7))
def test_random_chords_region_count(chords):
    # k chords of a convex sheet with I crossing points in general position cut it into 1 + k + I
    # regions (each chord adds one region plus one per chord it crosses; follows from Euler's formula).
    w = 100.0
    ends = [(_point_on_border(u, w), _point_on_border(v, w)) for u, v in chords]
    pts = [p for e in ends for p in e]
    # general position: distinct end points, crossings not too close to each other or to ends
    assume(min(np.linalg.norm(np.subtract(a, b)) for i, a in enumerate(pts) for b in pts[i + 1 :]) > 1.0)
    crossings = []
    for i in range(len(ends)):
        for j in range(i + 1, len(ends)):
            (p1, p2), (q1, q2) = ends[i], ends[j]
            if _proper_cross(p1, p2, q1, q2):
                r = np.subtract(p2, p1)
                s = np.subtract(q2, q1)
                qp = np.subtract(q1, p1)
                t = (qp[0] * s[1] - qp[1] * s[0]) / (r[0] * s[1] - r[1] * s[0])
                crossings.append(np.add(p1, t * r))
    cands = crossings + [np.asarray(p) for p in pts]
    assume(all(np.linalg.norm(a - b) > 0.5 for i, a in enumerate(cands) for b in cands[i + 1 :]))
    # border split by the chord ends: draw it as 4 full sides; the importer splits at T-junctions
    segs = [[[0, 0], [w, 0]], [[w, 0], [w, w]], [[w, w], [0, w]], [[0, w], [0, 0]]]
    segs += [[list(a), list(b)] for a, b in ends]
    kinds = ["border"] * 4 + ["valley"] * len(ends)
    cp = CreasePattern.from_segments(segs, kinds)
    assert cp.n_panels == 1 + len(ends) + len(crossings)
    assert _euler(cp) == 2
    assert sum(p.area for p in cp.panels) == pytest.approx(w * w)
