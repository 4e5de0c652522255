"""3MF build plates: the parts laid flat in their shop poses and packed onto plates of a given size.

Packing is a deterministic shelf packing of footprint boxes (tallest first, ties by part id):
parts go left to right along +x in rows; a row that is full starts a new row above, a plate that
is full starts a new plate. A part whose footprint does not fit the plate in either orientation
raises :class:`ExportError` naming the part and both sizes. Parts joined by living-hinge webs
(hinge style ``flexure``) are one print body: the band goes onto the plate as one object.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from ..errors import ExportError
from .mesh import Mesh, threemf_bytes, transform
from .shop import shop_location

__all__ = ["GAP_MM", "pack", "plate_files"]

#: Space between parts and from the plate edge, mm (common practice for FDM plates, no source).
GAP_MM = 5.0


def pack(sizes: Sequence[tuple[str, float, float]], plate: tuple[float, float], *,
         gap: float = GAP_MM) -> list[tuple[int, float, float, bool]]:
    """Shelf packing of footprint boxes onto plates.

    Parameters
    ----------
    sizes : sequence of (name, width, depth), mm
    plate : (width, depth), mm
    gap : float, mm
        Space between boxes and to the plate edge.

    Returns
    -------
    list of (plate index, x, y, turned)
        Per box (input order): plate number from 0, lower-left corner on the plate (mm) and
        whether the box is turned by 90 degrees.
    """
    pw, pd = float(plate[0]), float(plate[1])
    if not (pw > 0 and pd > 0):
        raise ExportError(f"build plate {pw:g} x {pd:g} mm: both sizes must be > 0 mm")
    room_w, room_d = pw - 2 * gap, pd - 2 * gap
    dims = []
    for name, w, d in sizes:
        turned = False
        if w > room_w or d > room_d:
            if d <= room_w and w <= room_d:
                w, d, turned = d, w, True
            else:
                raise ExportError(
                    f"part {name} ({w:.1f} x {d:.1f} mm) does not fit the build plate "
                    f"{pw:g} x {pd:g} mm (with {gap:g} mm margins); set [exports] plate_mm larger "
                    "or split the part")
        dims.append((w, d, turned))
    order = sorted(range(len(sizes)), key=lambda i: (-dims[i][1], sizes[i][0]))
    out: list[tuple[int, float, float, bool]] = [(0, 0.0, 0.0, False)] * len(sizes)
    plate_no, x, y, row_d = 0, gap, gap, 0.0
    for i in order:
        w, d, turned = dims[i]
        if x + w > pw - gap + 1e-9:  # next row
            x, y, row_d = gap, y + row_d + gap, 0.0
        if y + d > pd - gap + 1e-9:  # next plate
            plate_no, x, y, row_d = plate_no + 1, gap, gap, 0.0
        out[i] = (plate_no, x, y, turned)
        x += w + gap
        row_d = max(row_d, d)
    return out


def _bodies(ps: Any, meshes: Sequence[Mesh]) -> list[tuple[str, Mesh]]:
    """(name, mesh in its shop pose with its box corner at the origin) per print body."""
    parts = list(ps.parts)
    bodies: list[tuple[str, Mesh]] = []
    band = [k for k, p in enumerate(parts) if p.kind in ("panel", "flexure")] \
        if any(p.kind == "flexure" for p in parts) else []
    if band:  # one band: panels and their webs in the flat sheet frame, one object
        vs, fs, base = [], [], 0
        for k in band:
            v, f = meshes[k]
            vs.append(v)
            fs.append(f + base)
            base += len(v)
        v = np.vstack(vs)
        bodies.append(("BAND", (v - v.min(axis=0), np.vstack(fs))))
    for k, p in enumerate(parts):
        if k in band or p.attrs.get("cut_sheet"):  # a film cut to a DXF sheet is not printed
            continue
        v, f = transform(meshes[k], shop_location(p))
        bodies.append((p.name, (v - v.min(axis=0), f)))
    return bodies


def plate_files(ps: Any, meshes: Sequence[Mesh], plate: tuple[float, float], *, title: str,
                name: Callable[[int, int], str]) -> dict[str, bytes]:
    """3MF files, one per build plate: ``{name(k, n): bytes}`` for plate ``k`` of ``n`` (from 1).

    Parameters
    ----------
    ps : PartSet
    meshes : sequence of Mesh
        One per part, flat sheet frame (:func:`thickpanel.export.mesh.mesh_parts`).
    plate : (width, depth), mm
    """
    bodies = _bodies(ps, meshes)
    sizes = [(nm, float(v[:, 0].max()), float(v[:, 1].max())) for nm, (v, _) in bodies]
    spots = pack(sizes, plate)
    n = 1 + max((s[0] for s in spots), default=0)
    per: list[list[tuple[str, Mesh]]] = [[] for _ in range(n)]
    turn = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    for (nm, (v, f)), (k, x, y, turned) in zip(bodies, spots, strict=True):
        if turned:
            v = v @ turn.T
            v = v - v.min(axis=0)
        per[k].append((nm, (v + [x, y, 0.0], f)))
    return {name(k + 1, n): threemf_bytes(objs, title=f"{title} plate {k + 1} of {n}")
            for k, objs in enumerate(per)}
