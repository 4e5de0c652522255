"""Mountain/valley assignment enumeration and ranking.

Conditions checked against: Maekawa-Justin theorem (#M - #V = +-2 at a flat-folded vertex) and the
big-little-big lemma (Kawasaki; Justin; Demaine & O'Rourke 2007, *Geometric Folding Algorithms*,
Cambridge UP): the creases bounding a strict local-minimum sector have opposite kinds.
"""

from __future__ import annotations

import numpy as np
import pytest

from thickpanel import CreasePattern, PatternError
from thickpanel.foldability import check_foldability
from thickpanel.layouts.assignment import (
    assignments,
    choose_assignment,
    kawasaki_residuals,
    layout_info,
    local_violations,
)
from thickpanel.layouts.spiral import log_spiral_grid


def _bird_foot():
    """One degree-4 vertex with sectors 60, 120, 120, 60 deg (Kawasaki: 60 + 120 = 180)."""
    ang = np.radians([0.0, 60.0, 180.0, 300.0])
    v = np.vstack([[0.0, 0.0], 10 * np.stack([np.cos(ang), np.sin(ang)], 1)])
    # close with a border polygon through the 4 outer points
    creases = [[0, 1], [0, 2], [0, 3], [0, 4], [1, 2], [2, 3], [3, 4], [4, 1]]
    return v, creases


def test_local_checks_on_a_hand_vertex():
    v, cr = _bird_foot()
    # sectors ccw from crease 0: 60, 120, 120, 60 -> Kawasaki 60 - 120 + 120 - 60 = 0 (Kawasaki 1989)
    good = CreasePattern(v, cr, ["mountain", "mountain", "mountain", "valley"] + ["border"] * 4)
    assert abs(kawasaki_residuals(good)[0]) < 1e-12
    # the two 60 deg sectors are adjacent (crease 0 between them), so neither is a strict local
    # minimum; Maekawa 3 - 1 = 2 holds
    mk, blb = local_violations(good, good.kinds, [0])
    assert len(mk) == 0 and len(blb) == 0
    bad = good.replace(kinds=["mountain", "valley", "mountain", "valley"] + ["border"] * 4)
    mk, _ = local_violations(bad, bad.kinds, [0])
    assert mk.tolist() == [0]  # Maekawa: 2 - 2 = 0


def test_blb_strict_minimum():
    # sectors 40, 140, 120, 60 deg: 40 is a strict local minimum between creases 0 and 1
    # (this vertex is not Kawasaki-flat; only the big-little-big rule is exercised)
    ang = np.radians([0.0, 40.0, 180.0, 300.0])
    v = np.vstack([[0.0, 0.0], 10 * np.stack([np.cos(ang), np.sin(ang)], 1)])
    cr = [[0, 1], [0, 2], [0, 3], [0, 4], [1, 2], [2, 3], [3, 4], [4, 1]]
    same = CreasePattern(v, cr, ["mountain", "mountain", "mountain", "valley"] + ["border"] * 4)
    _, blb = local_violations(same, same.kinds, [0])
    assert blb.tolist() == [0]  # creases bounding the 40 deg sector share a kind
    diff = same.replace(kinds=["valley", "mountain", "mountain", "mountain"] + ["border"] * 4)
    _, blb = local_violations(diff, diff.kinds, [0])
    assert blb.tolist() == []


def test_ranked_assignments_pass_first_and_agree_with_foldability_checker():
    cp = log_spiral_grid(12, 5, 1200.0, assign="keep")
    ranked = assignments(cp)
    assert ranked[0].ok and not ranked[-1].ok
    counts = [len(set(a.maekawa_failures) | set(a.blb_failures)) for a in ranked]
    assert counts == sorted(counts)
    exempt = set(layout_info(cp).exempt)
    for a in ranked[:6]:
        rep = check_foldability(a.apply(cp))
        keep = np.array([x not in exempt for x in rep.vertices.tolist()])
        lattice_ok = bool(np.all((np.abs(rep.maekawa[keep]) == 2) & (rep.blb_violations[keep] == 0)))
        assert lattice_ok == a.ok
    # hub corners are reported as not checked
    assert set(ranked[0].unchecked) == {f"V{x:03d}" for x in exempt}


def test_alternation_needs_even_arms():
    with pytest.raises(PatternError, match="use an even number of arms"):
        log_spiral_grid(9, 4, 900.0, symmetric=False, b=1.5)
    cp = log_spiral_grid(9, 4, 900.0, symmetric=False, b=1.5, assign="keep")
    assert not any(a.ok for a in assignments(cp))


def test_choose_by_rank_mapping_and_errors():
    cp = log_spiral_grid(8, 3, 400.0, assign="keep")
    r0 = choose_assignment(cp, 0)
    assert r0.kinds == assignments(cp)[0].kinds
    m = choose_assignment(cp, {"family1": "valley", "family2": "valley", "hub": "mountain"})
    lab = layout_info(m).labels
    assert all(k == "valley" for k, lb in zip(m.kinds, lab, strict=True) if lb.startswith("family"))
    with pytest.raises(PatternError, match=r"unknown crease classes \['spokes'\]"):
        choose_assignment(cp, {"spokes": "valley"})
    with pytest.raises(PatternError, match="out of range"):
        choose_assignment(cp, 10_000)
    with pytest.raises(PatternError, match="assign = 'best'"):
        choose_assignment(cp, "best")


def test_auto_returns_a_locally_passing_assignment():
    cp = log_spiral_grid(8, 3, 400.0, slits=1, assign="auto")
    exempt = set(layout_info(cp).exempt)
    rep = check_foldability(cp)
    keep = np.array([x not in exempt for x in rep.vertices.tolist()])
    assert np.all(rep.vertex_ok[keep])


def test_angle_tolerance_changes_blb():
    # with a huge angle tolerance no sector is a *strict* minimum, so BLB cannot fail
    from thickpanel import Tolerances

    ang = np.radians([0.0, 40.0, 180.0, 300.0])
    v = np.vstack([[0.0, 0.0], 10 * np.stack([np.cos(ang), np.sin(ang)], 1)])
    cr = [[0, 1], [0, 2], [0, 3], [0, 4], [1, 2], [2, 3], [3, 4], [4, 1]]
    same = CreasePattern(v, cr, ["mountain", "mountain", "mountain", "valley"] + ["border"] * 4)
    assert local_violations(same, same.kinds, [0])[1].tolist() == [0]
    assert local_violations(same, same.kinds, [0], tol=Tolerances(angle=0.5))[1].tolist() == []


def test_patterns_without_layout_info_are_classed_by_geometry():
    # a spiral grid rebuilt from its arrays: the similarity keying finds the two spiral families
    # and the hub edges (3 classes -> 2^3 uniform assignments; alternation needs the arm index)
    cp = log_spiral_grid(12, 4, 800.0, assign="keep")
    plain = CreasePattern(cp.vertices, cp.creases, cp.kinds)
    ranked = assignments(plain)
    assert len(ranked) == 8
    # Miura-ori (Schenk & Guest 2013 geometry): translation keying; a class-wise assignment passing
    # Maekawa and big-little-big exists (zigzag creases one kind per direction class)
    from thickpanel.layouts.classic import miura_ori

    m = miura_ori(20.0, 10.0, 60.0, 6, 4)
    best = assignments(m)[0]
    assert best.ok
    assert check_foldability(best.apply(m)).ok
