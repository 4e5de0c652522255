"""Small value types of a crease pattern: crease kinds, stable ids, seams, panels, findings.

They live apart from :mod:`thickpanel.pattern` so that the pattern class stays one concept;
:mod:`thickpanel.pattern` re-exports all of them.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import SupportsInt

__all__ = ["KINDS", "FOLDING_KINDS", "vid", "cid", "pid", "Seam", "Panel", "Finding"]

KINDS: tuple[str, ...] = ("mountain", "valley", "border", "cut", "flat")
FOLDING_KINDS: frozenset[str] = frozenset({"mountain", "valley"})


def vid(i: SupportsInt) -> str:
    """Stable id of vertex ``i``, e.g. ``V012``."""
    return f"V{int(i):03d}"


def cid(i: SupportsInt) -> str:
    """Stable id of crease ``i``, e.g. ``C042``."""
    return f"C{int(i):03d}"


def pid(i: SupportsInt) -> str:
    """Stable id of panel ``i``, e.g. ``P017``."""
    return f"P{int(i):03d}"


@dataclass(frozen=True)
class Seam:
    """Two border creases identified as one hinge line.

    Attributes
    ----------
    a, b : int
        Crease indices (both of kind ``border``); ``creases[a, k]`` meets ``creases[b, k]``.
    kind : str
        ``mountain`` or ``valley``: how the joined hinge folds.
    target_angle : float, rad
        Signed target fold angle, NaN when not given.
    """

    a: int
    b: int
    kind: str = "valley"
    target_angle: float = float("nan")

    def _key(self) -> tuple[int, int, str, float | None]:
        # NaN means "not given": two seams that both leave it unset are equal
        ta = None if self.target_angle != self.target_angle else float(self.target_angle)
        return (int(self.a), int(self.b), self.kind, ta)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Seam):
            return NotImplemented
        return self._key() == other._key()

    def __hash__(self) -> int:
        return hash(self._key())


@dataclass(frozen=True)
class Panel:
    """One panel: a bounded face of the crease graph.

    Attributes
    ----------
    index : int
    loop : tuple of int
        Vertex indices, counter-clockwise, starting at the smallest index.
    edges : tuple of int
        ``edges[k]`` is the crease from ``loop[k]`` to ``loop[k + 1]`` (cyclic).
    area : float, mm^2
    centroid : tuple of float, mm
    convex : bool
    """

    index: int
    loop: tuple[int, ...]
    edges: tuple[int, ...]
    area: float
    centroid: tuple[float, float]
    convex: bool

    @property
    def id(self) -> str:
        """Stable id, e.g. ``P017``."""
        return pid(self.index)


@dataclass(frozen=True)
class Finding:
    """One validation finding.

    Attributes
    ----------
    kind : str
        Short machine-readable category, e.g. ``crossing``, ``dangling``, ``open_border``.
    ids : tuple of str
        The vertices, creases or panels concerned (``V003``, ``C017``, ``P002``).
    where : tuple of float or None, mm
        A representative location.
    message : str
        Human-readable sentence naming ids and values.
    """

    kind: str
    ids: tuple[str, ...]
    where: tuple[float, float] | None
    message: str

    def __str__(self) -> str:
        return self.message
