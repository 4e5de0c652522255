"""glTF 2.0 binary (``.glb``) of an assembly: one node per part and the fold as an animation.

Written by a small writer of our own (Khronos glTF 2.0 specification, sections 4 and 5: a
12-byte header, a JSON chunk and a BIN chunk, each 4-byte aligned). Layout of the file:

- one mesh and one node per part, the node named by the part id (``P017``, ``PIN-C042``); the
  mesh holds the part in the flat sheet frame (BRepMesh triangulation of its solids, each shared
  prototype meshed once); the node's translation and rotation place it in the requested state;
- units are metres, as glTF requires (the model is built in mm and scaled by 0.001), and +Y is up
  (glTF's convention): a point (x, y, z) mm of the sheet frame is written as
  (x, z, -y) / 1000 m, so the flat sheet lies in the glTF x-z plane, its +z side facing +Y;
- when a fold path is given, one animation ``fold`` with a translation and a rotation channel per
  node, keyed at the path's sampled states; key time = fold fraction t x :data:`SECONDS_PER_FOLD`
  seconds (linear interpolation, which glTF defines as slerp for rotations);
- ``asset.extras`` states the units, the axis map and the fold fractions of the keys.

No normals are written: glTF readers compute flat normals then (specification 3.7.2.1), which is
what plane-faced panels want.
"""

from __future__ import annotations

import json
import math
import struct
from collections.abc import Sequence
from typing import Any

import numpy as np

from ..errors import ExportError
from ..typing import FloatArray

__all__ = ["SECONDS_PER_FOLD", "AXES", "glb_bytes", "part_meshes", "path_samples", "to_gltf_pose"]

SECONDS_PER_FOLD = 4.0  #: animation length of the whole fold (t = 0 to 1), seconds
MM_TO_M = 0.001
#: sheet frame (z up, mm) -> glTF frame (y up): x' = x, y' = z, z' = -y
AXES = np.array([[1.0, 0.0, 0.0], [0.0, 0.0, 1.0], [0.0, -1.0, 0.0]])
MESH_LINEAR_MM = 0.1  #: chordal deflection of the viewer meshes, mm (PERF-NOTES: 0.1 mm / 0.5 rad)
MESH_ANGULAR_RAD = 0.5  #: angular deflection of the viewer meshes, rad

_FLOAT, _UINT = 5126, 5125  # glTF componentType codes (specification 3.6.2.2)
_ARRAY_BUFFER, _ELEMENT_ARRAY_BUFFER = 34962, 34963


def part_meshes(partset: Any) -> list[tuple[FloatArray, np.ndarray]]:
    """Triangle meshes of every part in the flat sheet frame: ((n, 3) mm, (m, 3) int)."""
    from .mesh import mesh_parts

    return mesh_parts(partset.parts, linear=MESH_LINEAR_MM, angular=MESH_ANGULAR_RAD, tol=partset.tol)


def path_samples(partset: Any, path: Any, *, max_states: int = 61) -> tuple[list[float], list[FloatArray]]:
    """Fold fractions and (P, 4, 4) poses (mm) of a fold path's sampled states.

    At most ``max_states`` states are kept, evenly by index and always including the first and the
    last; a path of ``None`` or without states gives empty lists.
    """
    states = list(getattr(path, "states", None) or [])
    if not states:
        return [], []
    if len(states) > max_states:
        idx = np.unique(np.round(np.linspace(0, len(states) - 1, max_states)).astype(int))
        states = [states[i] for i in idx]
    return [float(s.t) for s in states], [np.asarray(partset.poses(s), dtype=float) for s in states]


def _quat(r: FloatArray) -> FloatArray:
    """Unit quaternion (x, y, z, w) of a rotation matrix (Shepperd's method)."""
    from scipy.spatial.transform import Rotation

    return np.asarray(Rotation.from_matrix(r).as_quat(), dtype=float)


def to_gltf_pose(pose: FloatArray) -> tuple[FloatArray, FloatArray]:
    """(translation m, rotation quaternion xyzw) in the glTF frame of a rigid (4, 4) pose in mm."""
    m = np.asarray(pose, dtype=float)
    r = AXES @ m[:3, :3] @ AXES.T
    return AXES @ m[:3, 3] * MM_TO_M, _quat(r)


class _Bin:
    """The BIN chunk under construction: buffer views and accessors."""

    def __init__(self) -> None:
        self.data = bytearray()
        self.views: list[dict[str, Any]] = []
        self.accessors: list[dict[str, Any]] = []

    def add(self, arr: np.ndarray, kind: str, target: int | None = None, bounds: bool = True) -> int:
        comp = _UINT if arr.dtype == np.uint32 else _FLOAT
        raw = np.ascontiguousarray(arr).tobytes()
        while len(self.data) % 4:
            self.data.append(0)
        view: dict[str, Any] = {"buffer": 0, "byteOffset": len(self.data), "byteLength": len(raw)}
        if target is not None:
            view["target"] = target
        self.data += raw
        self.views.append(view)
        n = arr.shape[0] if kind != "SCALAR" or arr.ndim == 1 else arr.size
        acc: dict[str, Any] = {"bufferView": len(self.views) - 1, "componentType": comp, "count": int(n),
                               "type": kind}
        if bounds:
            flat = arr.reshape(int(n), -1)
            lo, hi = flat.min(axis=0), flat.max(axis=0)
            cast = int if comp == _UINT else float
            acc["min"] = [cast(x) for x in lo]
            acc["max"] = [cast(x) for x in hi]
        self.accessors.append(acc)
        return len(self.accessors) - 1


def glb_bytes(
    names: Sequence[str],
    meshes: Sequence[tuple[FloatArray, np.ndarray]],
    pose_of: Sequence[int],
    poses: FloatArray,
    *,
    fractions: Sequence[float] = (),
    sampled: Sequence[FloatArray] = (),
    title: str = "array",
) -> bytes:
    """A glTF 2.0 binary file of named parts, optionally with the fold animation.

    Parameters
    ----------
    names : part ids, one node each.
    meshes : sequence of ((n, 3) float mm, (m, 3) int)
        Each part's mesh in the flat sheet frame.
    pose_of : sequence of int
        Index into the pose arrays (the panel) each part follows.
    poses : (P, 4, 4) float, mm
        Poses of the state the nodes are placed in.
    fractions : sequence of float
        Fold fractions of the animation keys (empty: no animation).
    sampled : sequence of (P, 4, 4) float, mm
        Poses at each of ``fractions``.
    title : str
        Scene name.

    Returns
    -------
    bytes
        The ``.glb`` file (metres, +Y up; see the module docstring).
    """
    if not (len(names) == len(meshes) == len(pose_of)):
        raise ExportError(f"glTF export: {len(names)} names, {len(meshes)} meshes and {len(pose_of)} poses differ")
    if len(fractions) != len(sampled):
        raise ExportError(f"glTF export: {len(fractions)} fold fractions but {len(sampled)} sampled states")
    if len(fractions) and np.any(np.diff(np.asarray(fractions, dtype=float)) <= 0):
        raise ExportError("glTF export: fold fractions of the animation must increase strictly")
    b = _Bin()
    gl_meshes, nodes = [], []
    for name, (v, f), k in zip(names, meshes, pose_of, strict=True):
        if not len(f):
            raise ExportError(f"glTF export: part {name} has an empty mesh")
        pos = (np.asarray(v, dtype=float) @ AXES.T * MM_TO_M).astype(np.float32)
        pa = b.add(pos, "VEC3", _ARRAY_BUFFER)
        ia = b.add(np.asarray(f, dtype=np.uint32).reshape(-1), "SCALAR", _ELEMENT_ARRAY_BUFFER, bounds=False)
        gl_meshes.append({"name": name, "primitives": [{"attributes": {"POSITION": pa}, "indices": ia,
                                                        "mode": 4}]})
        tr, q = to_gltf_pose(poses[k])
        nodes.append({"name": name, "mesh": len(gl_meshes) - 1,
                      "translation": [float(x) for x in tr], "rotation": [float(x) for x in q]})
    doc: dict[str, Any] = {
        "asset": {"version": "2.0", "generator": "thickpanel",
                  "extras": {"units": "metres (glTF 2.0); model built in mm, scaled by 0.001",
                             "axes": "glTF (x, y, z) = sheet (x, z, -y): +Y up is the sheet's +z",
                             "fold_fractions": [float(t) for t in fractions],
                             "seconds_per_fold": SECONDS_PER_FOLD}},
        "scene": 0,
        "scenes": [{"name": title, "nodes": list(range(len(nodes)))}],
        "nodes": nodes,
        "meshes": gl_meshes,
    }
    if len(fractions):
        times = (np.asarray(fractions, dtype=float) * SECONDS_PER_FOLD).astype(np.float32)
        ta = b.add(times, "SCALAR")
        samplers, channels = [], []
        for j, k in enumerate(pose_of):
            trs = np.empty((len(sampled), 3))
            qs = np.empty((len(sampled), 4))
            for i, s in enumerate(sampled):
                trs[i], qs[i] = to_gltf_pose(s[k])
                if i and float(np.dot(qs[i], qs[i - 1])) < 0:  # shortest arc between keys
                    qs[i] = -qs[i]
            for path, arr, kind in (("translation", trs, "VEC3"), ("rotation", qs, "VEC4")):
                samplers.append({"input": ta, "output": b.add(arr.astype(np.float32), kind, bounds=False),
                                 "interpolation": "LINEAR"})
                channels.append({"sampler": len(samplers) - 1, "target": {"node": j, "path": path}})
        doc["animations"] = [{"name": "fold", "samplers": samplers, "channels": channels}]
    doc["bufferViews"] = b.views
    doc["accessors"] = b.accessors
    while len(b.data) % 4:
        b.data.append(0)
    doc["buffers"] = [{"byteLength": len(b.data)}]
    js = json.dumps(doc, separators=(",", ":"), sort_keys=True).encode("utf-8")
    js += b" " * (-len(js) % 4)
    total = 12 + 8 + len(js) + 8 + len(b.data)
    return (struct.pack("<III", 0x46546C67, 2, total) + struct.pack("<II", len(js), 0x4E4F534A) + js
            + struct.pack("<II", len(b.data), 0x004E4942) + bytes(b.data))


def partset_glb(partset: Any, state: Any, path: Any, *, title: str = "array") -> bytes:
    """The ``.glb`` of a part set: nodes in ``state``, animation over ``path`` (when given)."""
    meshes = part_meshes(partset)
    fr, sampled = path_samples(partset, path)
    if not all(math.isfinite(t) for t in fr):
        raise ExportError("glTF export: the fold path has a state with a non-finite fold fraction")
    return glb_bytes([p.name for p in partset.parts], meshes, [p.panel for p in partset.parts],
                     partset.poses(state), fractions=fr, sampled=sampled, title=title)
