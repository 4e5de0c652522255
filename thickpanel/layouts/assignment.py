"""Mountain/valley assignment of generated grids: local vertex checks, enumeration and ranking.

A generated grid records which *class* every crease belongs to (a spiral family, the hub edges,
the ring chords, the diagonals...) and the arm index of its first vertex. An assignment gives each
folding class one kind, or alternates the kind from arm to arm ("spirals of one family share a
kind, or alternate"). :func:`assignments` enumerates these and ranks them by the local necessary
conditions of flat folding at every checked vertex:

* Maekawa-Justin: #M - #V = +-2 at a flat-folded vertex (Maekawa; Justin).
* Big-little-big (Kawasaki; Justin; Demaine & O'Rourke 2007, *Geometric Folding Algorithms*): the
  two creases bounding a strict local-minimum sector have opposite kinds.

The checked vertices are the interior vertices whose Kawasaki residual is within ``tol.kawasaki``
(the conditions are theorems about flat-foldable vertices); the others are counted separately.
Pure numpy.
"""

from __future__ import annotations

import itertools
import math
import weakref
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import PatternError
from ..pattern import FOLDING_KINDS, CreasePattern, cid, vid
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray, IntArray

__all__ = [
    "LayoutInfo",
    "Assignment",
    "layout_info",
    "attach_info",
    "sector_table",
    "kawasaki_residuals",
    "local_violations",
    "assignments",
    "choose_assignment",
]

NON_FOLDING = ("border", "cut")


@dataclass(frozen=True)
class LayoutInfo:
    """What a generator knows about the pattern it built (kept beside the pattern, not in it).

    Attributes
    ----------
    labels : tuple of str, one per crease
        Crease class (``family1``, ``family2``, ``hub``, ``ring``, ``diagonal``, ``border``, ``cut``...).
    arm : (m,) int
        Arm index j of each crease's first vertex (parity drives "alternate" assignments).
    n_arms : int
        Arms N (alternation needs N even).
    params : dict
        Solved lattice parameters in user units (``ring_scale``, ``b``, ``pitch_deg``,
        ``hub_diameter``...), for reports.
    kawasaki_deviation : float, rad
        Largest Kawasaki residual over the lattice vertices (0 up to round-off when solved).
    exempt : tuple of int
        Interior vertices that cannot satisfy Kawasaki by construction (hub corners), excluded
        from the flat-foldability claims and listed in messages.
    """

    labels: tuple[str, ...]
    arm: IntArray
    n_arms: int
    params: dict[str, float] = field(default_factory=dict)
    kawasaki_deviation: float = 0.0
    exempt: tuple[int, ...] = ()


_INFO: weakref.WeakKeyDictionary[CreasePattern, LayoutInfo] = weakref.WeakKeyDictionary()


def attach_info(pattern: CreasePattern, info: LayoutInfo) -> CreasePattern:
    """Remember ``info`` for ``pattern`` (returned unchanged)."""
    if len(info.labels) != pattern.n_creases:
        raise PatternError(f"layout info has {len(info.labels)} labels for {pattern.n_creases} creases")
    _INFO[pattern] = info
    return pattern


def layout_info(pattern: CreasePattern) -> LayoutInfo | None:
    """The :class:`LayoutInfo` of a pattern built by a layout generator, or None."""
    return _INFO.get(pattern)


# ---------------------------------------------------------------------------- local geometry
def sector_table(pattern: CreasePattern) -> tuple[IntArray, IntArray, FloatArray, IntArray]:
    """Sector angles around every vertex, CSR layout over the non-flat creases.

    Returns
    -------
    offsets : (n + 1,) int
    creases : (e,) int, crease of each entry (ccw)
    sectors : (e,) float, rad, angle from this entry's crease to the next one ccw
    nxt : (e,) int, index of the next entry around the same vertex
    """
    off, cr, ang = pattern.star
    keep = np.array([pattern.kinds[c] != "flat" for c in cr.tolist()], dtype=bool) if len(cr) else np.zeros(0, bool)
    owner = np.repeat(np.arange(pattern.n_vertices), np.diff(off))
    owner, cr, ang = owner[keep], cr[keep], ang[keep]
    counts = np.bincount(owner, minlength=pattern.n_vertices)
    offsets = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
    idx = np.arange(len(cr))
    local = idx - offsets[owner]
    nxt = np.where(local + 1 < counts[owner], idx + 1, offsets[owner])
    sectors = np.mod(ang[nxt] - ang, 2.0 * math.pi)
    single = counts[owner] == 1
    sectors[single] = 2.0 * math.pi
    return offsets, cr.astype(np.int64), sectors, nxt.astype(np.int64)


def kawasaki_residuals(pattern: CreasePattern, vertices: Sequence[int] | IntArray | None = None) -> FloatArray:
    """Kawasaki alternating sector sum (rad) at vertices (default: all interior vertices).

    Odd-degree vertices get NaN. Kawasaki 1989: an even-degree vertex folds flat iff the
    alternating sum of its sector angles is zero (the form that also holds for conical vertices).
    """
    if vertices is None:
        vertices = pattern.interior_vertices
    verts = np.asarray(vertices, dtype=np.int64)
    offsets, _, sectors, _ = sector_table(pattern)
    owner = np.repeat(np.arange(pattern.n_vertices), np.diff(offsets))
    local = np.arange(len(sectors)) - offsets[owner]
    signed = np.where(local % 2 == 0, sectors, -sectors)
    total = np.bincount(owner, weights=signed, minlength=pattern.n_vertices)
    deg = np.diff(offsets)
    out = total[verts].astype(float)
    out[deg[verts] % 2 == 1] = np.nan
    return out


def local_violations(
    pattern: CreasePattern,
    kinds: Sequence[str] | IntArray,
    vertices: Sequence[int] | IntArray,
    *,
    tol: Tolerances = DEFAULT_TOL,
    _table: tuple[IntArray, IntArray, FloatArray, IntArray] | None = None,
) -> tuple[IntArray, IntArray]:
    """Vertices breaking Maekawa or big-little-big for the given crease kinds.

    Parameters
    ----------
    kinds : sequence of str per crease, or (m,) int signs (+1 mountain, -1 valley, 0 other)

    Returns
    -------
    maekawa : (k,) int, vertex indices with #M - #V not +-2
    blb : (l,) int, vertex indices where a strict local-minimum sector is bounded by equal kinds
    """
    offsets, cr, sectors, nxt = _table if _table is not None else sector_table(pattern)
    verts = np.asarray(vertices, dtype=np.int64)
    n = pattern.n_vertices
    owner = np.repeat(np.arange(n), np.diff(offsets))
    sign_c = kinds if isinstance(kinds, np.ndarray) else kind_signs(kinds)
    sign = np.asarray(sign_c, dtype=np.int64)[cr]
    diff = np.bincount(owner, weights=sign, minlength=n)
    mk = verts[np.abs(diff[verts]) != 2]
    prev = np.empty_like(nxt)
    prev[nxt] = np.arange(len(nxt))
    smin = (sectors < sectors[prev] - tol.angle) & (sectors < sectors[nxt] - tol.angle)
    bad = smin & (sign == sign[nxt]) & (sign != 0)
    sel = np.zeros(n, dtype=bool)
    sel[verts] = True
    blb = np.unique(owner[bad & sel[owner]])
    return mk, blb


def kind_signs(kinds: Sequence[str]) -> IntArray:
    """(m,) int: +1 mountain, -1 valley, 0 any other kind."""
    return np.array([1 if k == "mountain" else (-1 if k == "valley" else 0) for k in kinds], dtype=np.int64)


# ---------------------------------------------------------------------------- enumeration
@dataclass(frozen=True)
class Assignment:
    """One ranked mountain/valley assignment.

    Attributes
    ----------
    rule : tuple of (class, option) pairs; option ``mountain``, ``valley``, ``alternate-m``
        (mountain on even arms) or ``alternate-v``.
    kinds : tuple of str, one per crease
    maekawa_vertices, blb_vertices : tuple of int
        Vertices breaking each condition (empty for a passing assignment); ids via
        ``maekawa_failures`` / ``blb_failures``.
    unchecked_vertices : tuple of int
        Interior vertices not checked because they are not flat-foldable (Kawasaki residual);
        ids via ``unchecked``.
    """

    rule: tuple[tuple[str, str], ...]
    kinds: tuple[str, ...]
    maekawa_vertices: tuple[int, ...]
    blb_vertices: tuple[int, ...]
    unchecked_vertices: tuple[int, ...]

    @property
    def maekawa_failures(self) -> tuple[str, ...]:
        """Ids of vertices breaking Maekawa."""
        return tuple(vid(v) for v in self.maekawa_vertices)

    @property
    def blb_failures(self) -> tuple[str, ...]:
        """Ids of vertices breaking big-little-big."""
        return tuple(vid(v) for v in self.blb_vertices)

    @property
    def unchecked(self) -> tuple[str, ...]:
        """Ids of interior vertices not checked (not flat-foldable)."""
        return tuple(vid(v) for v in self.unchecked_vertices)

    @property
    def ok(self) -> bool:
        """True when Maekawa and big-little-big hold at every checked vertex."""
        return not self.maekawa_vertices and not self.blb_vertices

    @property
    def description(self) -> str:
        """E.g. ``family1=mountain, family2=valley, hub=valley``."""
        return ", ".join(f"{c}={o}" for c, o in self.rule)

    def apply(self, pattern: CreasePattern) -> CreasePattern:
        """A copy of ``pattern`` with these crease kinds (layout info carried over).

        Only mountain/valley kinds change, which cannot make a valid pattern invalid, so the copy
        is not validated again (validation dominates the cost of large grids).
        """
        if len(self.kinds) != pattern.n_creases:
            raise PatternError(f"assignment has {len(self.kinds)} kinds for {pattern.n_creases} creases")
        changed = [
            k for k, (a, b) in enumerate(zip(pattern.kinds, self.kinds, strict=True))
            if a != b and not (a in FOLDING_KINDS and b in FOLDING_KINDS)
        ]
        if changed:
            raise PatternError(f"assignment changes crease {cid(changed[0])} from {pattern.kinds[changed[0]]!r}")
        out = pattern.replace(kinds=self.kinds, validate=False)
        info = layout_info(pattern)
        if info is not None:
            attach_info(out, info)
        return out


MAX_CLASSES = 8  # 4^8 = 65,536 candidates at most


def _geometric_info(pattern: CreasePattern, tol: Tolerances) -> LayoutInfo:
    """Crease classes of a pattern without layout info.

    Two keyings are tried and the one giving fewer classes wins: translation (direction mod pi and
    length; strips and tilings) and similarity about the origin (angle between the crease and the
    radius to its first vertex, and length over that radius; spiral grids centred at the origin).
    """
    v = pattern.vertices
    c = pattern.creases
    d = pattern.crease_directions
    q_a = max(tol.angle * 1e3, 1e-9)
    q_l = max(tol.length * 1e3, 1e-9)
    ang = np.mod(np.arctan2(d[:, 1], d[:, 0]), math.pi)
    trans = np.stack([np.round(ang / q_a), np.round(pattern.crease_lengths / q_l)], 1).astype(np.int64)
    p0 = v[c[:, 0]]
    r0 = np.hypot(p0[:, 0], p0[:, 1])
    with np.errstate(invalid="ignore", divide="ignore"):
        rel = np.mod(np.arctan2(d[:, 1], d[:, 0]) - np.arctan2(p0[:, 1], p0[:, 0]), 2 * math.pi)
        ratio = np.where(r0 > tol.length, pattern.crease_lengths / np.where(r0 > 0, r0, 1.0), -1.0)
    simil = np.stack([np.round(rel / q_a), np.round(ratio / (q_l / max(float(r0.max()), 1.0)))], 1)
    simil = np.nan_to_num(simil, nan=-1).astype(np.int64)
    fold = np.array([k not in NON_FOLDING for k in pattern.kinds], dtype=bool)
    best: list[str] = []
    for keyset in (trans, simil):
        keys: dict[tuple[int, int], str] = {}
        labels = []
        for k in range(pattern.n_creases):
            if not fold[k]:
                labels.append(pattern.kinds[k])
                continue
            labels.append(keys.setdefault((int(keyset[k, 0]), int(keyset[k, 1])), f"class{len(keys) + 1}"))
        if not best or len(set(labels)) < len(set(best)):
            best = labels
    return LayoutInfo(tuple(best), np.zeros(pattern.n_creases, dtype=np.int64), 1)


def _options(label: str, alternate: bool) -> tuple[str, ...]:
    if alternate and label != "hub":
        return ("mountain", "valley", "alternate-m", "alternate-v")
    return ("mountain", "valley")


def _kinds_for(info: LayoutInfo, rule: Mapping[str, str], base: Sequence[str]) -> list[str]:
    kinds = list(base)
    par = np.asarray(info.arm) % 2
    for k, lab in enumerate(info.labels):
        opt = rule.get(lab)
        if opt is None:
            continue
        if opt in FOLDING_KINDS:
            kinds[k] = opt
        elif opt == "alternate-m":
            kinds[k] = "mountain" if par[k] == 0 else "valley"
        elif opt == "alternate-v":
            kinds[k] = "valley" if par[k] == 0 else "mountain"
        else:
            raise PatternError(
                f"assignment option {opt!r} for crease class {lab!r} is not valid; "
                "use mountain, valley, alternate-m or alternate-v"
            )
    return kinds


def folding_classes(info: LayoutInfo) -> list[str]:
    """Crease classes an assignment chooses kinds for, in first-seen order."""
    seen: list[str] = []
    for lab in info.labels:
        if lab not in NON_FOLDING and lab not in seen:
            seen.append(lab)
    return seen


def assignments(
    pattern: CreasePattern, *, alternate: bool | None = None, tol: Tolerances = DEFAULT_TOL
) -> list[Assignment]:
    """Enumerate class-wise mountain/valley assignments, best first.

    Parameters
    ----------
    pattern : a generated grid (its layout info gives the crease classes); other patterns are
        classed by crease length and direction.
    alternate : also try kinds alternating from arm to arm (default: when the arm count is even).
    tol : ``tol.kawasaki`` selects the checked vertices, ``tol.angle`` compares sectors.

    Returns
    -------
    list of Assignment
        Passing ones first; then by number of failing vertices; ties keep enumeration order
        (uniform classes before alternating ones, mountain before valley).
    """
    info = layout_info(pattern) or _geometric_info(pattern, tol)
    if alternate is None:
        alternate = info.n_arms % 2 == 0 and info.n_arms > 1
    classes = folding_classes(info)
    if not classes:
        raise PatternError(f"pattern {pattern.name!r} has no folding creases to assign")
    if len(classes) > MAX_CLASSES:
        raise PatternError(
            f"pattern {pattern.name!r} has {len(classes)} crease classes; at most {MAX_CLASSES} can be enumerated "
            "(build it with a layout generator, which records its crease families)"
        )
    interior = pattern.interior_vertices
    res = kawasaki_residuals(pattern, interior)
    flat_ok = np.abs(np.nan_to_num(res, nan=np.inf)) <= tol.kawasaki
    checked = interior[flat_ok]
    unchecked = tuple(interior[~flat_ok].tolist())
    table = sector_table(pattern)
    labels = np.asarray(info.labels, dtype=object)
    par = np.asarray(info.arm, dtype=np.int64) % 2
    base = kind_signs(pattern.kinds)
    members = {c: labels == c for c in classes}
    patterns = {
        "mountain": lambda msk: np.where(msk, 1, 0),
        "valley": lambda msk: np.where(msk, -1, 0),
        "alternate-m": lambda msk: np.where(msk, np.where(par == 0, 1, -1), 0),
        "alternate-v": lambda msk: np.where(msk, np.where(par == 0, -1, 1), 0),
    }
    cache = {(c, o): patterns[o](members[c]) for c in classes for o in _options(c, alternate)}
    cleared = np.where(np.any(np.stack([members[c] for c in classes]), axis=0), 0, base)
    out: list[tuple[int, int, Assignment]] = []
    combos = itertools.product(*(_options(c, alternate) for c in classes))
    names = np.array(["", "mountain", "valley"], dtype=object)
    for n, combo in enumerate(combos):
        sign = cleared.copy()
        for c, o in zip(classes, combo, strict=True):
            sign = sign + cache[(c, o)]
        mk, blb = local_violations(pattern, sign, checked, tol=tol, _table=table)
        kinds = np.where(sign == 0, np.asarray(pattern.kinds, dtype=object), names[np.where(sign > 0, 1, 2)])
        a = Assignment(
            rule=tuple(zip(classes, combo, strict=True)),
            kinds=tuple(kinds.tolist()),
            maekawa_vertices=tuple(mk.tolist()),
            blb_vertices=tuple(blb.tolist()),
            unchecked_vertices=unchecked,
        )
        out.append((len(set(mk.tolist()) | set(blb.tolist())), n, a))
    out.sort(key=lambda t: (t[0], t[1]))
    return [a for _, _, a in out]


def _rigid_verdict(pattern: CreasePattern) -> str | None:
    """'rigid'/'locked'/'unknown' from the kinematics module when it exists, else None."""
    try:
        from .. import kinematics  # noqa: PLC0415  (optional, imported lazily)
    except ImportError:
        return None
    fn = getattr(kinematics, "rigid_foldability", None)
    if fn is None:
        return None
    try:
        return str(fn(pattern).kind)
    except Exception:  # noqa: BLE001  a failing verdict must not break layout generation
        return "unknown"


def choose_assignment(
    pattern: CreasePattern,
    assign: Any,
    *,
    require_ok: bool = False,
    rigid_check: int = 3,
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Apply ``assign`` to a generated pattern.

    Parameters
    ----------
    assign : ``"auto"`` (first locally passing assignment that the kinematics module calls rigid,
        trying at most ``rigid_check`` candidates; without that module, the first passing one),
        ``"keep"`` (the generator's default kinds), an int (rank in :func:`assignments`), or a
        mapping from crease class to ``mountain``/``valley``/``alternate-m``/``alternate-v``.
    require_ok : with ``"auto"``, raise :class:`PatternError` when no enumerated assignment passes
        Maekawa and big-little-big (instead of returning the best failing one).
    rigid_check : how many passing candidates ``"auto"`` submits to the kinematics verdict.
    """
    info = layout_info(pattern)
    if isinstance(assign, str) and assign == "keep":
        return pattern
    if isinstance(assign, Mapping):
        if info is None:
            raise PatternError("an assignment by crease class needs a pattern built by a layout generator")
        classes = folding_classes(info)
        unknown = sorted(set(assign) - set(classes))
        if unknown:
            raise PatternError(f"assign names unknown crease classes {unknown}; this layout has {classes}")
        kinds = _kinds_for(info, {str(k): str(v) for k, v in assign.items()}, pattern.kinds)
        return attach_info(pattern.replace(kinds=kinds, validate=False), info)
    ranked = assignments(pattern, tol=tol)
    if isinstance(assign, bool) or not isinstance(assign, (int, str)):
        raise PatternError(f"assign = {assign!r}; use 'auto', 'keep', a rank 0..{len(ranked) - 1} or a class mapping")
    if isinstance(assign, int):
        if not 0 <= assign < len(ranked):
            raise PatternError(f"assign = {assign} is out of range; this layout has ranks 0..{len(ranked) - 1}")
        return ranked[assign].apply(pattern)
    if assign != "auto":
        raise PatternError(f"assign = {assign!r}; use 'auto', 'keep', a rank 0..{len(ranked) - 1} or a class mapping")
    passing = [a for a in ranked if a.ok]
    if not passing:
        best = ranked[0]
        bad = (best.maekawa_failures + best.blb_failures)[:6]
        n_arms = info.n_arms if info is not None else 0
        hint = f"; with {n_arms} arms no class-wise assignment exists, use an even number of arms" if n_arms % 2 else ""
        if require_ok:
            raise PatternError(
                f"no mountain/valley assignment of {pattern.name or 'the pattern'!r} passes Maekawa and "
                f"big-little-big; the best ({best.description}) fails at {', '.join(bad)}{hint}; "
                "pass assign='keep' or a rank"
            )
        passing = ranked[:1]
    for cand in passing[:rigid_check]:
        out = cand.apply(pattern)
        verdict = _rigid_verdict(out)
        if verdict is None or verdict == "rigid":
            return out
    return passing[0].apply(pattern)
