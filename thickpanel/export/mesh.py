"""Triangle meshes of parts: binary STL (per part and whole assembly) and a 3MF build plate.

Meshes come from ``BRepMesh`` at a given linear/angular deflection (old triangulations cleared
first, so the tolerance really applies). The 3MF package (Open Packaging Conventions zip with
content types, relationships and the 3MF core model) is written here, not by cadquery: the
content-types part declares a default for both the ``rels`` and ``model`` extensions, which
lib3mf requires.
"""

from __future__ import annotations

import io
import zipfile
from collections.abc import Sequence
from typing import Any

import numpy as np
from OCP.BRepTools import BRepTools

from .. import occ
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray

__all__ = ["Mesh", "mesh_parts", "stl_bytes", "threemf_bytes", "transform"]

Mesh = tuple[FloatArray, np.ndarray]

_STL_DTYPE = np.dtype([("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("attr", "<u2")])


def mesh_parts(
    parts: Sequence[Any], *, linear: float, angular: float, tol: Tolerances = DEFAULT_TOL
) -> list[Mesh]:
    """Mesh every part in its flat sheet frame: list of ((n, 3) vertices mm, (m, 3) triangles).

    Each prototype solid (``Part.pieces``) is meshed once and placed by its matrix; the solids of
    a part are concatenated without merging vertices across solids, so a part made of touching
    closed solids gives a closed (watertight) mesh.

    Parameters
    ----------
    parts : sequence of Part
    linear : float, mm
        Chordal deflection.
    angular : float, rad
        Angular deflection.
    """
    protos: dict[Any, Mesh] = {}
    for part in parts:
        for key, proto, _ in part.pieces:
            if key not in protos:
                BRepTools.Clean_s(proto)
                protos[key] = occ.mesh_arrays(proto, linear=linear, angular=angular,
                                              merge=tol.merge, clean=False)
    out: list[Mesh] = []
    for part in parts:
        vs, fs, base = [], [], 0
        for key, _, m in part.pieces:
            v, f = transform(protos[key], m)
            vs.append(v)
            fs.append(f + base)
            base += len(v)
        out.append((np.vstack(vs), np.vstack(fs)))
    return out


def transform(mesh: Mesh, matrix: FloatArray) -> Mesh:
    """The mesh moved by a (4, 4) transform."""
    v, f = mesh
    m = np.asarray(matrix, dtype=float)
    return v @ m[:3, :3].T + m[:3, 3], f


def stl_bytes(meshes: Sequence[Mesh], *, name: str = "thickpanel") -> bytes:
    """Binary STL of one or more meshes (facet normals from the right-hand rule), mm."""
    tris = [v[f] for v, f in meshes if len(f)]
    t = np.concatenate(tris) if tris else np.zeros((0, 3, 3))
    n = np.cross(t[:, 1] - t[:, 0], t[:, 2] - t[:, 0])
    ln = np.linalg.norm(n, axis=1)
    n = np.divide(n, ln[:, None], out=np.zeros_like(n), where=ln[:, None] > 0)
    rec = np.zeros(len(t), dtype=_STL_DTYPE)
    rec["n"] = n
    rec["v"] = t
    head = f"binary STL, mm, {name}".encode("ascii", "replace")[:80].ljust(80, b" ")
    return head + np.uint32(len(t)).tobytes() + rec.tobytes()


_CT = (
    '<?xml version="1.0" encoding="UTF-8"?>\n'
    '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
    '<Default Extension="rels" '
    'ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
    '<Default Extension="model" '
    'ContentType="application/vnd.ms-package.3dmanufacturing-3dmodel+xml"/>'
    "</Types>"
)
_RELS = (
    '<?xml version="1.0" encoding="UTF-8"?>\n'
    '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
    '<Relationship Target="/3D/3dmodel.model" Id="rel0" '
    'Type="http://schemas.microsoft.com/3dmanufacturing/2013/01/3dmodel"/>'
    "</Relationships>"
)


def _esc(s: str) -> str:
    return s.replace("&", "&amp;").replace('"', "&quot;").replace("<", "&lt;").replace(">", "&gt;")


def threemf_bytes(objects: Sequence[tuple[str, Mesh]], *, title: str = "thickpanel") -> bytes:
    """A 3MF package with one object (and one build item) per named mesh, units mm.

    The zip entries carry a fixed date so equal input gives equal bytes.
    """
    out = [
        '<?xml version="1.0" encoding="UTF-8"?>\n<model unit="millimeter" xml:lang="en-US" '
        'xmlns="http://schemas.microsoft.com/3dmanufacturing/core/2015/02">',
        f'<metadata name="Title">{_esc(title)}</metadata><resources>',
    ]
    for k, (name, (v, f)) in enumerate(objects, start=1):
        out.append(f'<object id="{k}" type="model" name="{_esc(name)}"><mesh><vertices>')
        out.append("".join(f'<vertex x="{x:.6f}" y="{y:.6f}" z="{z:.6f}"/>' for x, y, z in v))
        out.append("</vertices><triangles>")
        out.append("".join(f'<triangle v1="{a}" v2="{b}" v3="{c}"/>' for a, b, c in f))
        out.append("</triangles></mesh></object>")
    out.append("</resources><build>")
    out.append("".join(f'<item objectid="{k}"/>' for k in range(1, len(objects) + 1)))
    out.append("</build></model>")
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        for name, text in (("[Content_Types].xml", _CT), ("_rels/.rels", _RELS),
                           ("3D/3dmodel.model", "".join(out))):
            info = zipfile.ZipInfo(name, date_time=(1980, 1, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(info, text.encode("utf-8"))
    return buf.getvalue()
