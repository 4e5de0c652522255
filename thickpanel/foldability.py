"""Local flat-foldability checks at every interior vertex of a crease pattern.

Per interior vertex, counting only the folding creases (mountain and valley; ``flat`` lines do not
fold and merge the sectors on either side):

* **degree**: number of folding creases;
* **angle defect** ``2 pi - sum(sectors)``: zero for a developable vertex. In a flat drawing it is
  zero up to round-off; it matters when sector angles come from elsewhere (:func:`check_sectors`);
* **Kawasaki residual**: the alternating sum ``s0 - s1 + s2 - ...`` of the sector angles
  (Kawasaki 1989; Justin). An even-degree vertex folds flat only when it is zero; the alternating
  form also holds at non-developable vertices. NaN for odd degree, which never folds flat;
* **Maekawa count** ``#M - #V``, which must be +-2 at a flat-folded vertex (Maekawa-Justin);
* **big-little-big**: every maximal run of k equal sectors that is a strict local minimum must have
  mountain and valley counts among its k + 1 creases equal or differing by one; for k = 1 the two
  creases bounding a strictly smallest sector have opposite kinds (Kawasaki; Justin; Demaine &
  O'Rourke 2007, *Geometric Folding Algorithms*, sec. 12.2).

These are necessary local conditions; whole-pattern flat-foldability is NP-hard (Bern & Hayes 1996).
Seams are not joined: vertices on a seam are border vertices of the flat sheet and are not checked.

The work is done over plain CSR arrays, grouped by vertex degree so that every group is a dense
``(N, d)`` numpy block (no per-vertex Python loop in the hot path).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import PatternError
from .pattern import FOLDING_KINDS, cid, vid
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import BoolArray, FloatArray, IntArray

if TYPE_CHECKING:
    from .pattern import CreasePattern

__all__ = ["FoldabilityReport", "check_foldability", "check_sectors", "vertex_checks"]

_TWO_PI = 2.0 * np.pi


def _ro(a: np.ndarray) -> np.ndarray:
    a = np.ascontiguousarray(a)
    a.setflags(write=False)
    return a


@dataclass(frozen=True)
class FoldabilityReport:
    """Per-vertex flat-foldability findings.

    All arrays have one row per checked vertex, in the order of :attr:`vertices`.

    Attributes
    ----------
    vertices : (k,) int
        Checked (interior) vertex indices.
    degree : (k,) int
        Folding creases at the vertex.
    angle_defect : (k,) float, rad
        ``2 pi - sum of sectors``.
    kawasaki : (k,) float, rad
        Alternating sector sum; NaN for odd degree.
    maekawa : (k,) int
        ``#mountain - #valley``.
    blb_violations : (k,) int
        Number of minimal sector runs breaking the big-little-big rule.
    blb_creases : dict
        Vertex index -> crease indices of its first violating run (only violating vertices).
    tol : Tolerances
    """

    vertices: IntArray
    degree: IntArray
    angle_defect: FloatArray
    kawasaki: FloatArray
    maekawa: IntArray
    blb_violations: IntArray
    blb_creases: dict[int, tuple[int, ...]] = field(default_factory=dict)
    tol: Tolerances = DEFAULT_TOL
    crease_ids: bool = True

    # -------------------------------------------------------------- per-vertex verdicts
    @property
    def developable(self) -> BoolArray:
        """(k,) bool: angle defect within ``tol.kawasaki``."""
        return np.abs(self.angle_defect) <= self.tol.kawasaki

    @property
    def kawasaki_ok(self) -> BoolArray:
        """(k,) bool: even degree and alternating sum within ``tol.kawasaki`` (degree 0 passes)."""
        with np.errstate(invalid="ignore"):
            ok = np.abs(self.kawasaki) <= self.tol.kawasaki
        return ok | (self.degree == 0)

    @property
    def maekawa_ok(self) -> BoolArray:
        """(k,) bool: ``|#M - #V| == 2`` (degree 0 passes)."""
        return (np.abs(self.maekawa) == 2) | (self.degree == 0)

    @property
    def blb_ok(self) -> BoolArray:
        """(k,) bool: no big-little-big violation."""
        return self.blb_violations == 0

    @property
    def vertex_ok(self) -> BoolArray:
        """(k,) bool: every local check passes."""
        return self.developable & self.kawasaki_ok & self.maekawa_ok & self.blb_ok

    @property
    def ok(self) -> bool:
        """True when every checked vertex passes every check."""
        return bool(np.all(self.vertex_ok))

    @property
    def failing_indices(self) -> IntArray:
        """Vertex indices failing any check, ascending."""
        return np.asarray(self.vertices[~self.vertex_ok], dtype=np.int64)

    @property
    def failing(self) -> tuple[str, ...]:
        """Ids (``V012``) of the failing vertices."""
        return tuple(vid(v) for v in self.failing_indices)

    def reasons(self, v: int) -> list[str]:
        """Human-readable reasons (degrees) why vertex ``v`` fails; empty when it passes."""
        hit = np.nonzero(self.vertices == v)[0]
        if not len(hit):
            raise PatternError(f"vertex {vid(v)} was not checked; checked vertices are the interior ones")
        k = int(hit[0])
        out: list[str] = []
        if not self.developable[k]:
            out.append(f"angle defect {np.degrees(self.angle_defect[k]):.6g} deg (not developable)")
        if not self.kawasaki_ok[k]:
            if self.degree[k] % 2:
                out.append(f"odd degree {int(self.degree[k])} (Kawasaki needs an even degree)")
            else:
                out.append(f"Kawasaki residual {np.degrees(self.kawasaki[k]):.6g} deg")
        if not self.maekawa_ok[k]:
            out.append(f"Maekawa #M - #V = {int(self.maekawa[k])} (must be +-2)")
        if not self.blb_ok[k]:
            run = self.blb_creases.get(int(v), ())
            name = ", ".join(cid(c) if self.crease_ids else str(c) for c in run)
            nrun = int(self.blb_violations[k])
            out.append(f"big-little-big broken by {nrun} minimal run(s), first at creases {name}")
        return out

    def summary(self, limit: int = 20) -> str:
        """Plain-text summary: counts, the worst residual, and up to ``limit`` failing vertices."""
        n = len(self.vertices)
        bad = self.failing_indices
        lines = [f"{n} interior vertices checked, {n - len(bad)} pass local flat-foldability, {len(bad)} fail"]
        if n:
            with np.errstate(invalid="ignore"):
                kw = np.where(np.isnan(self.kawasaki), 0.0, np.abs(self.kawasaki))
            lines.append(
                f"largest Kawasaki residual {np.degrees(kw.max()):.6g} deg, "
                f"largest angle defect {np.degrees(np.abs(self.angle_defect).max()):.6g} deg"
            )
        for v in bad[:limit]:
            lines.append(f"  {vid(v)}: " + "; ".join(self.reasons(int(v))))
        if len(bad) > limit:
            lines.append(f"  ... and {len(bad) - limit} more")
        return "\n".join(lines)


def vertex_checks(
    offsets: IntArray,
    sectors: FloatArray,
    signs: IntArray,
    *,
    tol: Tolerances = DEFAULT_TOL,
) -> tuple[FloatArray, FloatArray, IntArray, IntArray, dict[int, tuple[int, ...]]]:
    """Vectorised local checks over many vertices given in CSR layout.

    Parameters
    ----------
    offsets : (k + 1,) int
        Vertex ``q`` owns entries ``offsets[q]:offsets[q + 1]``.
    sectors : (e,) float, rad
        Entry ``i`` of a vertex is the sector from its crease ``i`` counter-clockwise to crease ``i + 1``.
    signs : (e,) int
        +1 valley, -1 mountain for crease ``i`` of each vertex.
    tol : Tolerances
        ``tol.angle`` decides equal sectors for big-little-big.

    Returns
    -------
    angle_defect : (k,) float, rad
    kawasaki : (k,) float, rad (NaN for odd degree)
    maekawa : (k,) int
    blb_violations : (k,) int
    blb_runs : dict
        Local vertex position -> entry positions (into ``sectors``) of the creases of its first
        violating run.
    """
    offsets = np.asarray(offsets, dtype=np.int64)
    sectors = np.asarray(sectors, dtype=np.float64)
    signs = np.asarray(signs, dtype=np.int64)
    k = len(offsets) - 1
    deg = np.diff(offsets)
    defect = np.full(k, 0.0)
    kaw = np.full(k, np.nan)
    maek = np.zeros(k, dtype=np.int64)
    blb = np.zeros(k, dtype=np.int64)
    runs: dict[int, tuple[int, ...]] = {}
    for d in np.unique(deg):
        d = int(d)
        if d == 0:
            kaw[deg == 0] = 0.0
            continue
        rows = np.nonzero(deg == d)[0]
        idx = offsets[rows][:, None] + np.arange(d)[None, :]
        s = sectors[idx]
        a = signs[idx]
        defect[rows] = _TWO_PI - s.sum(axis=1)
        if d % 2 == 0:
            kaw[rows] = s[:, 0::2].sum(axis=1) - s[:, 1::2].sum(axis=1)
        maek[rows] = -a.sum(axis=1)  # mountains are -1: #M - #V = -sum
        if d < 2:
            continue
        # equal[:, i]: sector i equals sector i + 1 (cyclic)
        equal = np.abs(np.roll(s, -1, axis=1) - s) <= tol.angle
        bigger_prev = (np.roll(s, 1, axis=1) - s) > tol.angle  # sector i-1 strictly bigger than i
        for i in range(d):
            # a maximal run starts at i when sector i-1 is strictly bigger than sector i
            chain = bigger_prev[:, i].copy()
            for length in range(1, d):
                last = (i + length - 1) % d
                nxt = (i + length) % d
                ends = chain & ((s[:, nxt] - s[:, last]) > tol.angle)
                if ends.any():
                    crease_pos = [(i + q) % d for q in range(length + 1)]
                    total = a[:, crease_pos].sum(axis=1)
                    bad = ends & (np.abs(total) > 1)
                    if bad.any():
                        hit = rows[bad]
                        blb[hit] += 1
                        for r, row in zip(hit.tolist(), idx[bad].tolist(), strict=True):
                            runs.setdefault(r, tuple(row[p] for p in crease_pos))
                chain = chain & equal[:, last]
                if not chain.any():
                    break
    return defect, kaw, maek, blb, runs


def check_foldability(pattern: CreasePattern, *, tol: Tolerances | None = None) -> FoldabilityReport:
    """Check every interior vertex of ``pattern`` for local flat-foldability.

    Parameters
    ----------
    pattern : CreasePattern
    tol : Tolerances, optional
        Defaults to the pattern's own tolerances. ``tol.kawasaki`` bounds the Kawasaki residual and
        the angle defect, ``tol.angle`` decides equal sectors.

    Returns
    -------
    FoldabilityReport

    Examples
    --------
    >>> from thickpanel.layouts.classic import miura_ori
    >>> check_foldability(miura_ori(20.0, 10.0, 60.0, 3, 3)).ok
    True
    """
    tol = pattern.tol if tol is None else tol
    offsets, creases, angles = pattern.star
    n = pattern.n_vertices
    interior = np.zeros(n, dtype=bool)
    interior[pattern.interior_vertices] = True
    owner = np.repeat(np.arange(n), np.diff(offsets))
    folding = pattern.folding
    keep = interior[owner] & folding[creases]
    own = owner[keep]
    cr = creases[keep]
    ang = angles[keep]
    verts = np.asarray(pattern.interior_vertices, dtype=np.int64)
    counts = np.bincount(own, minlength=n)[verts]
    loc_off = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
    # sector from each crease to the next ccw crease of the same vertex (wrapping to the first)
    nxt = np.arange(len(ang)) + 1
    last = loc_off[1:] - 1
    has = counts > 0
    nxt[last[has]] = loc_off[:-1][has]
    sectors = np.mod(ang[nxt] - ang, _TWO_PI) if len(ang) else ang
    # a degree-1 vertex: the single sector is the full turn
    one = np.nonzero(counts == 1)[0]
    sectors[loc_off[one]] = _TWO_PI
    kinds = pattern.kind_array[cr]
    signs = np.where(kinds == "valley", 1, -1).astype(np.int64)
    defect, kaw, maek, blb, runs = vertex_checks(loc_off, sectors, signs, tol=tol)
    blb_creases = {int(verts[q]): tuple(int(cr[e]) for e in ent) for q, ent in runs.items()}
    return FoldabilityReport(
        vertices=_ro(verts),
        degree=_ro(counts.astype(np.int64)),
        angle_defect=_ro(defect),
        kawasaki=_ro(kaw),
        maekawa=_ro(maek),
        blb_violations=_ro(blb),
        blb_creases=blb_creases,
        tol=tol,
    )


def check_sectors(
    sectors: Sequence[float] | FloatArray,
    assignment: Sequence[Any],
    *,
    degrees: bool = False,
    tol: Tolerances = DEFAULT_TOL,
) -> FoldabilityReport:
    """Check one vertex given directly by its sector angles and crease assignment.

    Parameters
    ----------
    sectors : (d,) float
        Sector ``i`` lies counter-clockwise from crease ``i`` to crease ``i + 1``; radians, or
        degrees with ``degrees=True``. They need not sum to 360 deg (conical vertex).
    assignment : sequence of length d
        Per crease ``"mountain"``/``"valley"`` (or ``"M"``/``"V"``, or -1/+1).
    degrees : bool
    tol : Tolerances

    Returns
    -------
    FoldabilityReport
        One row, vertex index 0; :attr:`FoldabilityReport.blb_creases` holds crease positions.
    """
    s = np.asarray(sectors, dtype=np.float64).reshape(-1)
    if degrees:
        s = np.radians(s)
    if len(assignment) != len(s):
        raise PatternError(f"assignment has {len(assignment)} entries for {len(s)} sectors")
    if not np.all(np.isfinite(s)) or np.any(s <= 0):
        raise PatternError(f"sector angles must be finite and > 0; got {np.round(np.degrees(s), 6).tolist()} deg")
    sign_of = {"mountain": -1, "m": -1, "valley": 1, "v": 1, -1: -1, 1: 1}
    signs = []
    for i, x in enumerate(assignment):
        key = x.lower() if isinstance(x, str) else x
        if key not in sign_of:
            raise PatternError(
                f"assignment[{i}] = {x!r} is not a fold kind; allowed: {', '.join(sorted(FOLDING_KINDS))}, M, V, -1, +1"
            )
        signs.append(sign_of[key])
    off = np.array([0, len(s)], dtype=np.int64)
    defect, kaw, maek, blb, runs = vertex_checks(off, s, np.array(signs, dtype=np.int64), tol=tol)
    return FoldabilityReport(
        vertices=_ro(np.array([0], dtype=np.int64)),
        degree=_ro(np.array([len(s)], dtype=np.int64)),
        angle_defect=_ro(defect),
        kawasaki=_ro(kaw),
        maekawa=_ro(maek),
        blb_violations=_ro(blb),
        blb_creases={int(q): tuple(int(e) for e in ent) for q, ent in runs.items()},
        tol=tol,
        crease_ids=False,
    )
