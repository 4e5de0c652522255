"""The crease pattern: a planar graph of vertices and creases whose faces are the panels.

Conventions (see ``docs/architecture.md``)
------------------------------------------
* The pattern lies in the plane z = 0 seen from +z; coordinates are millimetres.
* Crease ``c`` runs from ``creases[c, 0]`` to ``creases[c, 1]``. Its half-edges are ``2c``
  (forward) and ``2c + 1`` (backward); the face to the *left* of a half-edge is the one it bounds.
* Panels are the bounded faces, each a counter-clockwise vertex loop. ``crease_panels[c]`` is
  ``(left, right)`` of the forward direction, ``-1`` for the outside.
* Around every vertex the incident creases are ordered counter-clockwise by direction angle.
* Crease kinds: ``mountain``, ``valley`` (folding), ``border`` (edge of the sheet), ``cut`` (a slit:
  both sides are free edges), ``flat`` (a drawn line that does not fold).
* Fold angles are signed radians: 0 flat, > 0 valley seen from +z, < 0 mountain, +-pi folded flat.
* A seam identifies two border creases as one hinge line (a strip closed into a tube): vertex
  ``creases[a, 0]`` meets ``creases[b, 0]`` and ``creases[a, 1]`` meets ``creases[b, 1]``.
* Ids ``V012``, ``C042``, ``P017`` (zero padded to three digits) name items in every message.

The object is immutable: arrays are read-only and derived data are cached.
"""

from __future__ import annotations

from functools import cached_property
from typing import TYPE_CHECKING, Any

import networkx as nx
import numpy as np

from .errors import PatternError
from .geometry2d import loop_measures
from .pattern_types import FOLDING_KINDS, KINDS, Finding, Panel, Seam, cid, pid, vid
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

if TYPE_CHECKING:
    from collections.abc import Sequence

__all__ = [
    "KINDS",
    "FOLDING_KINDS",
    "Seam",
    "Panel",
    "Finding",
    "CreasePattern",
    "vid",
    "cid",
    "pid",
]

def _readonly(a: np.ndarray) -> np.ndarray:
    a = np.array(a, copy=True)
    a.setflags(write=False)
    return a


class CreasePattern:
    """A crease pattern: vertices, creases with kinds, and the panels they enclose.

    Parameters
    ----------
    vertices : (n, 2) float, mm
    creases : (m, 2) int
        Vertex indices of each crease.
    kinds : sequence of str, length m
        One of :data:`KINDS` per crease.
    target_angles : (m,) float, rad, optional
        Signed target fold angle per crease (NaN = not given). Valley positive, mountain negative.
    seams : sequence of Seam, optional
        Border creases joined into hinge lines.
    name : str
        Free text used in reports and export names.
    tol : Tolerances
    validate : bool
        When True (default) the constructor raises :class:`PatternError` with the first finding
        of :meth:`problems`. With False an invalid pattern can be built and inspected.

    Examples
    --------
    >>> sq = CreasePattern([[0, 0], [10, 0], [10, 10], [0, 10]],
    ...                    [[0, 1], [1, 2], [2, 3], [3, 0]], ["border"] * 4)
    >>> sq.n_panels, sq.panels[0].area
    (1, 100.0)
    """

    def __init__(
        self,
        vertices: Any,
        creases: Any,
        kinds: Sequence[str],
        target_angles: Any = None,
        *,
        seams: Sequence[Seam] = (),
        name: str = "",
        tol: Tolerances = DEFAULT_TOL,
        validate: bool = True,
    ) -> None:
        try:
            v = np.asarray(vertices, dtype=np.float64)
        except (TypeError, ValueError) as exc:
            raise PatternError(f"vertices must be an (n, 2) array of numbers in mm: {exc}") from None
        try:
            c_raw = np.asarray(creases)
            if c_raw.size and np.issubdtype(c_raw.dtype, np.floating):
                flat_c = c_raw.reshape(-1)
                bad = ~np.isfinite(flat_c) | (np.abs(flat_c) > 2**62) | (flat_c != np.round(flat_c))
                if bad.any():
                    q = int(np.nonzero(bad)[0][0])
                    row = q // 2 if c_raw.ndim == 2 and c_raw.shape[1] == 2 else q
                    raise PatternError(
                        f"crease {cid(row)} has vertex index {float(flat_c[q])!r}; crease vertex indices must be "
                        f"whole numbers in 0..{len(v) - 1}"
                    )
            c = c_raw.astype(np.int64)
        except (TypeError, ValueError) as exc:
            if isinstance(exc, PatternError):
                raise
            raise PatternError(f"creases must be an (m, 2) array of vertex indices: {exc}") from None
        if v.ndim != 2 or v.shape[1] != 2:
            v = v.reshape(-1, 2) if v.size == 0 else v
            if v.ndim != 2 or v.shape[1] != 2:
                raise PatternError(f"vertices must have shape (n, 2); got {np.shape(vertices)}")
        if c.size == 0:
            c = c.reshape(0, 2)
        if c.ndim != 2 or c.shape[1] != 2:
            raise PatternError(f"creases must have shape (m, 2); got {np.shape(creases)}")
        if c_raw.size and np.issubdtype(c_raw.dtype, np.floating) and not np.all(c_raw == c):
            raise PatternError("crease vertex indices must be whole numbers")
        if isinstance(kinds, str):
            raise PatternError(f"kinds must be a sequence of kind names, one per crease, not the string {kinds!r}")
        try:
            kinds_t = tuple(str(k) for k in kinds)
        except TypeError:
            raise PatternError(f"kinds must be a sequence of kind names ({', '.join(KINDS)}); got {kinds!r}") from None
        if len(kinds_t) != len(c):
            raise PatternError(f"kinds has {len(kinds_t)} entries for {len(c)} creases")
        if target_angles is None:
            ta = np.full(len(c), np.nan)
        else:
            try:
                ta = np.asarray(target_angles, dtype=np.float64).reshape(-1)
            except (TypeError, ValueError) as exc:
                raise PatternError(
                    f"target_angles must be numbers in rad (NaN or None for no target), one per crease: {exc}"
                ) from None
            if len(ta) != len(c):
                raise PatternError(f"target_angles has {len(ta)} entries for {len(c)} creases")
        self._vertices: FloatArray = _readonly(v)
        self._creases: IntArray = _readonly(c)
        self._kinds = kinds_t
        self._target = _readonly(ta)
        self._seams = tuple(seams)
        self.name = str(name)
        self.tol = tol
        self._frozen = True
        if validate:
            self.assert_valid()

    def __setattr__(self, key: str, value: Any) -> None:
        # derived data are cached by functools.cached_property, which writes __dict__ directly
        if getattr(self, "_frozen", False):
            raise AttributeError(f"CreasePattern is immutable; use pattern.replace({key}=...) for a changed copy")
        object.__setattr__(self, key, value)

    # ------------------------------------------------------------------ basic data
    @property
    def vertices(self) -> FloatArray:
        """(n, 2) float, mm, read-only."""
        return self._vertices

    @property
    def creases(self) -> IntArray:
        """(m, 2) int, read-only."""
        return self._creases

    @property
    def kinds(self) -> tuple[str, ...]:
        """Crease kind per crease."""
        return self._kinds

    @property
    def target_angles(self) -> FloatArray:
        """(m,) float, rad, signed target fold angles, NaN where not given."""
        return self._target

    @property
    def seams(self) -> tuple[Seam, ...]:
        """Seams joining border creases."""
        return self._seams

    @property
    def n_vertices(self) -> int:
        return int(len(self._vertices))

    @property
    def n_creases(self) -> int:
        return int(len(self._creases))

    @property
    def n_panels(self) -> int:
        return len(self.panels)

    def __repr__(self) -> str:
        label = f" {self.name!r}" if self.name else ""
        return (
            f"<CreasePattern{label}: {self.n_vertices} vertices, {self.n_creases} creases, "
            f"{self.n_panels if self._structure_ok else '?'} panels>"
        )

    def replace(self, **changes: Any) -> CreasePattern:
        """A new pattern with some constructor arguments changed (copy on transform)."""
        args: dict[str, Any] = dict(
            vertices=self._vertices,
            creases=self._creases,
            kinds=self._kinds,
            target_angles=self._target,
            seams=self._seams,
            name=self.name,
            tol=self.tol,
        )
        args.update(changes)
        return CreasePattern(**args)

    @cached_property
    def kind_array(self) -> np.ndarray:
        """(m,) array of kind strings (read-only)."""
        return _readonly(np.array(self._kinds, dtype=object))

    @cached_property
    def folding(self) -> np.ndarray:
        """(m,) bool: crease is mountain or valley."""
        return _readonly(np.isin(self.kind_array, tuple(FOLDING_KINDS)))

    @cached_property
    def crease_lengths(self) -> FloatArray:
        """(m,) float, mm."""
        d = self._vertices[self._creases[:, 1]] - self._vertices[self._creases[:, 0]]
        return _readonly(np.linalg.norm(d, axis=1))

    @cached_property
    def crease_directions(self) -> FloatArray:
        """(m, 2) float, unit vectors from the first to the second vertex of each crease."""
        d = self._vertices[self._creases[:, 1]] - self._vertices[self._creases[:, 0]]
        n = np.linalg.norm(d, axis=1)
        return _readonly(d / np.where(n > 0, n, 1.0)[:, None])

    # ------------------------------------------------------------------ half-edge structure
    @cached_property
    def _structure_ok(self) -> bool:
        from .pattern_checks import structural_findings

        return not structural_findings(self)

    def _require_structure(self) -> None:
        if not self._structure_ok:
            from .pattern_checks import structural_findings

            raise PatternError(structural_findings(self)[0].message)

    @cached_property
    def _half_edges(self) -> dict[str, np.ndarray]:
        """Rotation system: half-edges sorted counter-clockwise around each vertex."""
        self._require_structure()
        c = self._creases
        n = self.n_vertices
        origin = c.reshape(-1)  # half-edge 2k: c[k,0] -> c[k,1]; 2k+1: c[k,1] -> c[k,0]
        dest = c[:, ::-1].reshape(-1)
        d = self._vertices[dest] - self._vertices[origin]
        ang = np.arctan2(d[:, 1], d[:, 0])
        order = np.lexsort((ang, origin))
        counts = np.bincount(origin, minlength=n)
        offsets = np.concatenate([[0], np.cumsum(counts)])
        pos = np.empty(len(origin), dtype=np.int64)
        pos[order] = np.arange(len(origin))
        # previous half-edge in ccw order around the same origin (cyclic within the group)
        start = offsets[origin[order]]
        size = counts[origin[order]]
        local = np.arange(len(origin)) - start
        prev_sorted = order[start + (local - 1) % np.maximum(size, 1)]
        prev_ccw = np.empty(len(origin), dtype=np.int64)
        prev_ccw[order] = prev_sorted
        twin = np.arange(len(origin)) ^ 1
        nxt = prev_ccw[twin]  # next half-edge of the face on the left
        return {
            "origin": origin,
            "dest": dest,
            "angle": ang,
            "order": order,
            "offsets": offsets,
            "next": nxt,
            "pos": pos,
        }

    @cached_property
    def star(self) -> tuple[IntArray, IntArray, FloatArray]:
        """Creases around every vertex in counter-clockwise order (CSR layout).

        Returns
        -------
        offsets : (n + 1,) int
            Vertex ``v``'s entries are ``offsets[v]:offsets[v + 1]``.
        creases : (2m,) int
            Crease index of each entry.
        angles : (2m,) float, rad
            Direction angle in (-pi, pi] of each crease leaving the vertex, increasing.
        """
        he = self._half_edges
        order = he["order"]
        return (
            _readonly(he["offsets"]),
            _readonly(order // 2),
            _readonly(he["angle"][order]),
        )

    def vertex_creases(self, v: int) -> tuple[int, ...]:
        """Creases at vertex ``v`` in counter-clockwise order."""
        if not 0 <= int(v) < self.n_vertices:
            raise PatternError(f"vertex {vid(v)} does not exist; valid vertices are V000..{vid(self.n_vertices - 1)}")
        offsets, creases, _ = self.star
        return tuple(int(x) for x in creases[offsets[v] : offsets[v + 1]])

    @cached_property
    def _faces(self) -> dict[str, Any]:
        """Faces as half-edge cycles in CSR layout, with their measures.

        Keys: ``offsets`` (F + 1,), ``he`` (2m,) half-edges of face ``f`` in cycle order at
        ``offsets[f]:offsets[f + 1]``, ``face_of`` (2m,), ``area`` (F,) mm^2, ``centroid`` (F, 2),
        ``convex`` (F,) bool. Faces are numbered by their smallest half-edge.
        """
        he = self._half_edges
        nxt_l = he["next"].tolist()
        n_he = len(nxt_l)
        seen = [False] * n_he
        order: list[int] = []
        starts: list[int] = []
        for h0 in range(n_he):
            if seen[h0]:
                continue
            starts.append(len(order))
            h = h0
            while not seen[h]:  # a permutation: every cycle returns to h0
                seen[h] = True
                order.append(h)
                h = nxt_l[h]
        offsets = np.array([*starts, n_he], dtype=np.int64)
        cyc = np.array(order, dtype=np.int64)
        counts = np.diff(offsets)
        face_of = np.empty(n_he, dtype=np.int64)
        face_of[cyc] = np.repeat(np.arange(len(starts)), counts)
        area, cen, convex = loop_measures(self._vertices, offsets, he["origin"][cyc], angle_tol=self.tol.angle)
        return {"offsets": offsets, "he": cyc, "face_of": face_of, "area": area, "centroid": cen, "convex": convex}

    @cached_property
    def _face_areas(self) -> FloatArray:
        return np.asarray(self._faces["area"])

    @cached_property
    def outer_faces(self) -> tuple[int, ...]:
        """Raw face indices with non-positive area: the outside of each connected piece."""
        areas = self._face_areas
        return tuple(int(i) for i in np.nonzero(areas <= 0)[0])

    def face_loop(self, f: int) -> IntArray:
        """Vertex loop of raw face ``f`` (half-edge cycle order, not rotated)."""
        fd = self._faces
        hs = fd["he"][fd["offsets"][f] : fd["offsets"][f + 1]]
        return np.asarray(self._half_edges["origin"][hs])

    @cached_property
    def _face_to_panel(self) -> IntArray:
        inner = self._face_areas > 0
        f2p = np.full(len(inner), -1, dtype=np.int64)
        f2p[inner] = np.arange(int(inner.sum()))
        return f2p

    @cached_property
    def panels(self) -> tuple[Panel, ...]:
        """The bounded faces, in a deterministic order (first half-edge met)."""
        fd = self._faces
        origin = self._half_edges["origin"]
        offsets = fd["offsets"]
        loops_all = origin[fd["he"]].tolist()
        edges_all = (fd["he"] // 2).tolist()
        starts = offsets.tolist()
        area = fd["area"].tolist()
        cen = fd["centroid"].tolist()
        convex = fd["convex"].tolist()
        result: list[Panel] = []
        for fi in np.nonzero(self._face_to_panel >= 0)[0].tolist():
            a, b = starts[fi], starts[fi + 1]
            loop = loops_all[a:b]
            edges = edges_all[a:b]
            k = loop.index(min(loop))
            if k:
                loop = loop[k:] + loop[:k]
                edges = edges[k:] + edges[:k]
            result.append(
                Panel(
                    index=len(result),
                    loop=tuple(loop),
                    edges=tuple(edges),
                    area=area[fi],
                    centroid=(cen[fi][0], cen[fi][1]),
                    convex=bool(convex[fi]),
                )
            )
        return tuple(result)

    def panel_polygon(self, p: int) -> FloatArray:
        """(k, 2) float, mm: the counter-clockwise polygon of panel ``p``."""
        if not 0 <= int(p) < self.n_panels:
            raise PatternError(f"panel {pid(p)} does not exist; valid panels are P000..{pid(self.n_panels - 1)}")
        return self._vertices[list(self.panels[p].loop)]

    @cached_property
    def crease_panels(self) -> IntArray:
        """(m, 2) int: (left, right) panel of each crease's forward direction, -1 outside."""
        face_of = self._faces["face_of"]
        f2p = self._face_to_panel
        left = f2p[face_of[0::2]]
        right = f2p[face_of[1::2]]
        return _readonly(np.stack([left, right], axis=1))

    @cached_property
    def border_vertices(self) -> IntArray:
        """Vertices on the outside of the sheet or on a cut (sorted)."""
        on = np.zeros(self.n_vertices, dtype=bool)
        outer = self._face_areas[self._faces["face_of"]] <= 0
        on[self._half_edges["origin"][outer]] = True
        cut = np.array([k == "cut" for k in self._kinds], dtype=bool)
        on[self._creases[cut].reshape(-1)] = True
        return _readonly(np.nonzero(on)[0])

    @cached_property
    def interior_vertices(self) -> IntArray:
        """Vertices inside the sheet, not on the border or a cut (sorted)."""
        deg = np.bincount(self._creases.reshape(-1), minlength=self.n_vertices)
        mask = deg > 0
        mask[self.border_vertices] = False
        return _readonly(np.nonzero(mask)[0])

    @cached_property
    def panel_graph(self) -> nx.Graph:
        """Panel adjacency graph (frozen networkx graph).

        Nodes are panel indices with attribute ``id``. An edge joins the two panels on either side
        of every mountain, valley or flat crease (attributes ``crease``, ``kind``) and of every
        seam (``crease`` = seam's ``a``, ``seam`` = ``b``, ``kind`` = the seam's kind).
        """
        g = nx.Graph()
        g.add_nodes_from((i, {"id": pid(i)}) for i in range(self.n_panels))
        cp = self.crease_panels
        joins = np.isin(self.kind_array, ("mountain", "valley", "flat"))
        joins &= (cp[:, 0] >= 0) & (cp[:, 1] >= 0) & (cp[:, 0] != cp[:, 1])
        sel = np.nonzero(joins)[0]
        kinds = self._kinds
        g.add_edges_from(
            (a, b, {"crease": c, "kind": kinds[c]})
            for a, b, c in zip(cp[sel, 0].tolist(), cp[sel, 1].tolist(), sel.tolist(), strict=True)
        )
        for s in self._seams:
            pa = int(max(cp[s.a]))
            pb = int(max(cp[s.b]))
            if pa >= 0 and pb >= 0:
                g.add_edge(pa, pb, crease=s.a, seam=s.b, kind=s.kind)
        return nx.freeze(g)

    # ------------------------------------------------------------------ validation
    @cached_property
    def _problems(self) -> tuple[Finding, ...]:
        from .pattern_checks import find_problems

        return tuple(find_problems(self))

    def problems(self) -> list[Finding]:
        """Every validation finding, structural ones first (empty for a valid pattern).

        Computed once per pattern (the object is immutable); each call returns a new list.
        """
        return list(self._problems)

    def is_valid(self) -> bool:
        """True when :meth:`problems` is empty."""
        return not self.problems()

    def assert_valid(self) -> None:
        """Raise :class:`PatternError` with the first finding, if any."""
        found = self.problems()
        if found:
            more = f" (and {len(found) - 1} more findings)" if len(found) > 1 else ""
            raise PatternError(found[0].message + more)

    # ------------------------------------------------------------------ construction helpers
    @classmethod
    def from_segments(
        cls,
        segments: Any,
        kinds: Sequence[str],
        target_angles: Any = None,
        *,
        split: bool = True,
        name: str = "",
        tol: Tolerances = DEFAULT_TOL,
    ) -> CreasePattern:
        """Build a pattern from a line soup as a CAD drawing gives it.

        Coincident end points (within ``tol.merge``) are merged; with ``split=True`` creases are
        split at crossings and T-junctions. See :func:`thickpanel.segments.pattern_from_segments`.

        Parameters
        ----------
        segments : (k, 2, 2) float, mm
        kinds : sequence of str, length k
        target_angles : (k,) float, rad, optional
        """
        from .segments import pattern_from_segments

        return pattern_from_segments(
            segments, kinds, target_angles, split=split, name=name, tol=tol
        )
