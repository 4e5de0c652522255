"""Validation of a :class:`~thickpanel.pattern.CreasePattern`, returning reasons.

Each check returns :class:`~thickpanel.pattern.Finding` objects whose message names the ids and
values involved. Structural checks (shapes, finite coordinates, index range, kinds) run first;
when they fail, the topological checks are skipped because the half-edge structure cannot be built.
"""

from __future__ import annotations

import math
from collections import Counter
from typing import TYPE_CHECKING

import numpy as np
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
from scipy.spatial import cKDTree

from .geometry2d import segment_candidate_pairs, segment_pair_relations
from .limits import MAX_COORDINATE_MM
from .pattern import KINDS, Finding, cid, vid

if TYPE_CHECKING:
    from .pattern import CreasePattern

__all__ = ["find_problems", "structural_findings"]


def _pt(p: np.ndarray) -> tuple[float, float]:
    return (float(p[0]), float(p[1]))


def _fmt(p: np.ndarray) -> str:
    return f"({p[0]:.6g}, {p[1]:.6g}) mm"


def structural_findings(cp: CreasePattern) -> list[Finding]:
    """Findings that prevent building the half-edge structure."""
    out: list[Finding] = []
    v = cp.vertices
    c = cp.creases
    bad_v = np.nonzero(~np.all(np.isfinite(v), axis=1))[0]
    for i in bad_v[:20]:
        out.append(
            Finding(
                "nonfinite",
                (vid(i),),
                None,
                f"vertex {vid(i)} has a non-finite coordinate {tuple(float(x) for x in v[i])}",
            )
        )
    with np.errstate(invalid="ignore"):
        far_v = np.nonzero(np.any(np.abs(v) > MAX_COORDINATE_MM, axis=1) & np.all(np.isfinite(v), axis=1))[0]
    for i in far_v[:20]:
        out.append(
            Finding(
                "coordinate_range",
                (vid(i),),
                None,
                f"vertex {vid(i)} at {tuple(float(x) for x in v[i])} mm is beyond the coordinate limit of "
                f"+-{MAX_COORDINATE_MM:g} mm",
            )
        )
    n = len(v)
    bad_c = np.nonzero(np.any((c < 0) | (c >= n), axis=1))[0]
    for k in bad_c[:20]:
        out.append(
            Finding(
                "index_range",
                (cid(k),),
                None,
                f"crease {cid(k)} refers to vertex {tuple(int(x) for x in c[k])}; "
                f"valid vertex indices are 0..{n - 1}",
            )
        )
    for k, kind in enumerate(cp.kinds):
        if kind not in KINDS:
            out.append(
                Finding(
                    "unknown_kind",
                    (cid(k),),
                    None,
                    f"crease {cid(k)} has unknown kind {kind!r}; valid kinds: {', '.join(KINDS)}",
                )
            )
    ta = cp.target_angles
    for k in np.nonzero(np.isinf(ta))[0][:20]:
        out.append(
            Finding("target_angle", (cid(k),), None, f"crease {cid(k)} target angle {ta[k]} is not finite")
        )
    for s in cp.seams:
        for x in (s.a, s.b):
            if not (0 <= x < len(c)):
                out.append(
                    Finding(
                        "seam",
                        (cid(x),),
                        None,
                        f"seam refers to crease {cid(x)}; valid creases are 0..{len(c) - 1}",
                    )
                )
    return out


def _geometry_findings(cp: CreasePattern) -> list[Finding]:
    out: list[Finding] = []
    v = cp.vertices
    c = cp.creases
    tol = cp.tol
    # coincident vertices
    if len(v) > 1:
        pairs = cKDTree(v).query_pairs(r=tol.merge, output_type="ndarray")
        for i, j in pairs[:20]:
            out.append(
                Finding(
                    "coincident",
                    (vid(i), vid(j)),
                    _pt(v[i]),
                    f"vertices {vid(i)} and {vid(j)} coincide at {_fmt(v[i])} "
                    f"(closer than the merge tolerance {tol.merge} mm)",
                )
            )
    # zero-length and duplicate creases
    lengths = cp.crease_lengths
    for k in np.nonzero(lengths < tol.length)[0][:20]:
        out.append(
            Finding(
                "zero_length",
                (cid(k),),
                _pt(v[c[k, 0]]),
                f"crease {cid(k)} between {vid(c[k, 0])} and {vid(c[k, 1])} has length "
                f"{lengths[k]:.3g} mm (minimum {tol.length} mm)",
            )
        )
    key = np.sort(c, axis=1)
    _, first, counts = np.unique(key, axis=0, return_index=True, return_counts=True)
    for k in first[counts > 1][:20]:
        dups = np.nonzero(np.all(key == key[k], axis=1))[0]
        ids = tuple(cid(x) for x in dups)
        out.append(
            Finding("duplicate", ids, _pt(v[c[k, 0]]), f"creases {', '.join(ids)} join the same two vertices")
        )
    # crossings, T-junctions, overlaps
    ok = lengths >= tol.length
    idx = np.nonzero(ok)[0]
    a = v[c[idx, 0]]
    b = v[c[idx, 1]]
    pairs = segment_candidate_pairs(a, b, pad=tol.merge)
    if len(pairs):
        gi, gj = idx[pairs[:, 0]], idx[pairs[:, 1]]
        share = (
            (c[gi, 0] == c[gj, 0]) | (c[gi, 0] == c[gj, 1]) | (c[gi, 1] == c[gj, 0]) | (c[gi, 1] == c[gj, 1])
        )
        rel, si, _ = segment_pair_relations(a, b, pairs, tol=tol.merge)
        # two creases sharing a vertex can only overlap (collinear), not cross or tee
        rel = np.where(share & (rel != 3), 0, rel)
        names = {1: "crossing", 2: "t_junction", 3: "overlap"}
        words = {1: "cross", 2: "meet in a T-junction", 3: "overlap"}
        for q in np.nonzero(rel > 0)[0][:20]:
            i, j, r = int(gi[q]), int(gj[q]), int(rel[q])
            p = a[pairs[q, 0]] + si[q] * (b[pairs[q, 0]] - a[pairs[q, 0]])
            out.append(
                Finding(
                    names[r],
                    (cid(i), cid(j)),
                    _pt(p),
                    f"creases {cid(i)} and {cid(j)} {words[r]} at {_fmt(p)}; split them there "
                    "(CreasePattern.from_segments does) or remove one",
                )
            )
    return out


def _topology_findings(cp: CreasePattern) -> list[Finding]:
    out: list[Finding] = []
    v = cp.vertices
    c = cp.creases
    n = cp.n_vertices
    deg = np.bincount(c.reshape(-1), minlength=n)
    for i in np.nonzero(deg == 0)[0][:20]:
        out.append(
            Finding("isolated", (vid(i),), _pt(v[i]), f"vertex {vid(i)} at {_fmt(v[i])} has no crease")
        )
    for i in np.nonzero(deg == 1)[0][:20]:
        k = int(np.nonzero(np.any(c == i, axis=1))[0][0])
        out.append(
            Finding(
                "dangling",
                (cid(k), vid(i)),
                _pt(v[i]),
                f"crease {cid(k)} ends at {vid(i)} {_fmt(v[i])} without meeting another crease (dangling)",
            )
        )
    # connected pieces
    used = deg > 0
    if len(c):
        g = coo_matrix((np.ones(len(c)), (c[:, 0], c[:, 1])), shape=(n, n))
        ncomp, labels = connected_components(g, directed=False)
        ncomp = len(np.unique(labels[used]))
    else:
        ncomp, labels = 0, np.zeros(n, dtype=int)
    if ncomp > 1:
        sizes = Counter(labels[used].tolist())
        main = sizes.most_common(1)[0][0]
        stray = [int(i) for i in np.nonzero(used & (labels != main))[0][:5]]
        out.append(
            Finding(
                "disconnected",
                tuple(vid(i) for i in stray),
                _pt(v[stray[0]]),
                f"the pattern has {ncomp} disconnected pieces; e.g. {', '.join(vid(i) for i in stray)} "
                "are not connected to the main sheet",
            )
        )
    if not len(c):
        out.append(Finding("empty", (), None, "the pattern has no creases"))
        return out
    # faces, border and panels
    fd = cp._faces
    face_of = fd["face_of"]
    foff = fd["offsets"]
    he = cp._half_edges
    origin = he["origin"]
    kinds = cp.kinds
    kind_arr = cp.kind_array
    outer_face = fd["area"] <= 0
    on_outer_h = outer_face[face_of]
    fwd, bwd = on_outer_h[0::2], on_outer_h[1::2]
    edge_kind = np.isin(kind_arr, ("border", "cut"))
    open_b = (fwd ^ bwd) & ~edge_kind
    inner_b = (kind_arr == "border") & ~(fwd | bwd)
    for k in np.nonzero(open_b)[0][:20].tolist():
        out.append(
            Finding(
                "open_border",
                (cid(k),),
                _pt(v[c[k, 0]]),
                f"crease {cid(k)} ({kinds[k]}) lies on the outside of the sheet: the border is open there "
                "(an outside edge must be of kind 'border' or 'cut')",
            )
        )
    for k in np.nonzero(inner_b)[0][:20].tolist():
        out.append(
            Finding(
                "inner_border",
                (cid(k),),
                _pt(v[c[k, 0]]),
                f"crease {cid(k)} is of kind 'border' but has panels on both sides",
            )
        )
    # faces whose boundary passes a vertex twice: sort (face, vertex) entries and look for repeats
    cyc_face = np.repeat(np.arange(len(foff) - 1), np.diff(foff))
    cyc_vert = origin[fd["he"]]
    order = np.lexsort((cyc_vert, cyc_face))
    sf, sv = cyc_face[order], cyc_vert[order]
    rep = (sf[1:] == sf[:-1]) & (sv[1:] == sv[:-1])
    rep_face, rep_vert = sf[1:][rep], sv[1:][rep]
    if ncomp == 1:
        sel = outer_face[rep_face] & (deg[rep_vert] > 1)
        touch = list(dict.fromkeys(rep_vert[sel].tolist()))
        for x in touch[:5]:
            out.append(
                Finding(
                    "self_touching_border",
                    (vid(x),),
                    _pt(v[x]),
                    f"the border touches itself at {vid(x)} {_fmt(v[x])}",
                )
            )
    tol = cp.tol
    f2p = cp._face_to_panel
    areas = fd["area"]
    for fi in np.nonzero((f2p >= 0) & (np.abs(areas) < tol.area))[0][:20].tolist():
        p = cp.panels[int(f2p[fi])]
        out.append(Finding("zero_area", (p.id,), p.centroid, f"panel {p.id} has zero area ({p.area:.3g} mm^2)"))
    bad_faces = [int(f) for f in dict.fromkeys(rep_face[f2p[rep_face] >= 0].tolist())]
    for fi in bad_faces[:20]:
        p = cp.panels[int(f2p[fi])]
        reps = sorted(set(rep_vert[rep_face == fi].tolist()))
        out.append(
            Finding(
                "non_simple_panel",
                (p.id,) + tuple(vid(x) for x in reps),
                p.centroid,
                f"panel {p.id} is not simple: its boundary passes {', '.join(vid(x) for x in reps)} twice",
            )
        )
    faces_n = len(foff) - 1
    # Euler's formula for a planar graph with ncomp pieces: V - E + F = 1 + ncomp
    nv = int(used.sum())
    euler = nv - len(c) + faces_n
    if ncomp >= 1 and euler != 1 + ncomp:
        out.append(
            Finding(
                "euler",
                (),
                None,
                f"Euler's formula fails: V - E + F = {nv} - {len(c)} + {faces_n} = {euler}, "
                f"expected {1 + ncomp}; the drawing is not a plane graph (crossing creases?)",
            )
        )
    # seams
    cp_ = cp.crease_panels
    for s in cp.seams:
        for x in (s.a, s.b):
            if kinds[x] != "border":
                out.append(
                    Finding(
                        "seam",
                        (cid(x),),
                        None,
                        f"seam crease {cid(x)} must be of kind 'border', not {kinds[x]!r}",
                    )
                )
        la, lb = cp.crease_lengths[s.a], cp.crease_lengths[s.b]
        if abs(la - lb) > tol.merge * 10:
            out.append(
                Finding(
                    "seam",
                    (cid(s.a), cid(s.b)),
                    None,
                    f"seam creases {cid(s.a)} ({la:.6g} mm) and {cid(s.b)} ({lb:.6g} mm) differ in length",
                )
            )
        if s.kind not in ("mountain", "valley"):
            out.append(
                Finding(
                    "seam",
                    (cid(s.a),),
                    None,
                    f"seam at {cid(s.a)} has kind {s.kind!r}; use mountain or valley",
                )
            )
        sta = float(s.target_angle)
        if not math.isnan(sta) and not abs(sta) <= np.pi + tol.angle:
            out.append(
                Finding(
                    "seam",
                    (cid(s.a), cid(s.b)),
                    None,
                    f"seam {cid(s.a)}/{cid(s.b)} has target angle {sta!r} rad; seams take -pi..pi rad "
                    "(-180..180 deg) or NaN for none",
                )
            )
        if max(cp_[s.a]) < 0 or max(cp_[s.b]) < 0:
            out.append(
                Finding(
                    "seam", (cid(s.a), cid(s.b)), None, f"seam creases {cid(s.a)}/{cid(s.b)} bound no panel"
                )
            )
    # sign of target angles
    ta = cp.target_angles
    with np.errstate(invalid="ignore"):
        bad_t = np.isfinite(ta) & (
            (np.abs(ta) > np.pi + tol.angle)
            | ((kind_arr == "valley") & (ta < 0))
            | ((kind_arr == "mountain") & (ta > 0))
        )
    for k in np.nonzero(bad_t)[0][:20].tolist():
        kind = kinds[k]
        out.append(
            Finding(
                "target_angle",
                (cid(k),),
                None,
                f"crease {cid(k)} ({kind}) has target angle {np.degrees(ta[k]):.6g} deg; valleys take "
                "0..180 deg, mountains -180..0 deg",
            )
        )
    return out


def find_problems(cp: CreasePattern) -> list[Finding]:
    """All findings of a pattern: structural, geometric, then topological."""
    found = structural_findings(cp)
    if found:
        return found
    found = _geometry_findings(cp)
    # crossing creases make the faces meaningless; report them before face-based checks
    if any(
        f.kind in ("crossing", "t_junction", "overlap", "zero_length", "coincident", "duplicate")
        for f in found
    ):
        return found
    return found + _topology_findings(cp)
