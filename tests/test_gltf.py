"""glTF 2.0 binary export read back by an independent reader (pygltflib) and checked against the
STEP assembly of the same fold state read back with OCP's XCAF reader.

Outside sources: the glb layout, accessor bounds and the metre / +Y-up conventions are those of
the Khronos glTF 2.0 specification (Khronos Group 2021, sections 3.4, 3.6.2.5 and 4.4); the
quaternions are checked against scipy's ``Rotation`` (an independent implementation).
"""

from __future__ import annotations

import numpy as np
import pytest

from tests.sheet_designs import miura_sheet_toml
from tests.test_export import read_step
from thickpanel import occ
from thickpanel.build import run_pipeline
from thickpanel.design import loads_design
from thickpanel.errors import ExportError
from thickpanel.export import available_formats, export_parts
from thickpanel.export.gltf import AXES, SECONDS_PER_FOLD, glb_bytes

pygltflib = pytest.importorskip("pygltflib")

DESIGN = miura_sheet_toml("gltf-sheet", states=8)


@pytest.fixture(scope="module")
def built():
    pytest.importorskip("thickpanel.layouts.classic")
    res = run_pipeline(loads_design(DESIGN), command="build",
                       stages=("pattern", "foldability", "rigidity", "fold path", "method", "solids"))
    assert res.parts is not None and res.path is not None
    return res


@pytest.fixture(scope="module")
def files(built, tmp_path_factory):
    out = {}
    for t in (0.0, 1.0):
        d = tmp_path_factory.mktemp(f"g{t:g}")
        export_parts(built.parts, d, ["step", "gltf"], state=built.path.at(t), path=built.path, name="sheet")
        out[t] = d
    return out


def _vertices(g, mesh_index):
    """POSITION data of a mesh (float32 VEC3) decoded from the BIN chunk."""
    acc = g.accessors[g.meshes[mesh_index].primitives[0].attributes.POSITION]
    view = g.bufferViews[acc.bufferView]
    blob = g.binary_blob()
    raw = blob[view.byteOffset + (acc.byteOffset or 0): view.byteOffset + view.byteLength]
    return np.frombuffer(raw, dtype="<f4", count=3 * acc.count).reshape(-1, 3).astype(float), acc


def _trs(translation, quat):
    from scipy.spatial.transform import Rotation

    m = np.eye(4)
    m[:3, :3] = Rotation.from_quat(quat).as_matrix()
    m[:3, 3] = translation
    return m


def _step_box_m(shape):
    """STEP bounding box (mm, sheet frame) converted to the glTF frame in metres."""
    lo, hi = occ.bbox(shape)
    corners = np.array([[x, y, z] for x in (lo[0], hi[0]) for y in (lo[1], hi[1]) for z in (lo[2], hi[2])])
    c = corners @ AXES.T / 1000.0
    return c.min(axis=0), c.max(axis=0)


def test_registered():
    assert "gltf" in available_formats()


def test_nodes_named_by_part(built, files):
    g = pygltflib.GLTF2().load(str(files[1.0] / "assembly.glb"))
    names = [p.name for p in built.parts.parts]
    assert len(g.nodes) == len(built.parts.parts)
    assert [n.name for n in g.nodes] == names
    assert g.scenes[g.scene].nodes == list(range(len(names)))
    assert g.asset.version == "2.0" and "metres" in g.asset.extras["units"]


def test_accessor_bounds_match_flat_step(built, files):
    # flat state: every pose is the identity, so the accessor min/max are the part's box in the
    # assembly; each must equal the STEP component's box in metres (glTF 3.6.2.5: min/max exact)
    g = pygltflib.GLTF2().load(str(files[0.0] / "assembly.glb"))
    step = read_step(files[0.0] / "assembly.step")
    assert set(step) == {n.name for n in g.nodes}
    for node in g.nodes:
        v, acc = _vertices(g, node.mesh)
        assert np.allclose(acc.min, v.min(axis=0), atol=1e-9) and np.allclose(acc.max, v.max(axis=0), atol=1e-9)
        m = _trs(node.translation, node.rotation)
        assert np.allclose(m, np.eye(4), atol=1e-9)
        lo, hi = _step_box_m(step[node.name])
        assert np.allclose(acc.min, lo, atol=2e-6) and np.allclose(acc.max, hi, atol=2e-6), node.name


def test_folded_state_boxes_match_step(built, files):
    # folded state: node transforms placed on the mesh give the STEP component boxes of the same state
    g = pygltflib.GLTF2().load(str(files[1.0] / "assembly.glb"))
    step = read_step(files[1.0] / "assembly.step")
    moved = 0
    for node in g.nodes:
        v, _ = _vertices(g, node.mesh)
        m = _trs(node.translation, node.rotation)
        w = v @ m[:3, :3].T + m[:3, 3]
        lo, hi = _step_box_m(step[node.name])
        assert np.allclose(w.min(axis=0), lo, atol=5e-6) and np.allclose(w.max(axis=0), hi, atol=5e-6), node.name
        moved += not np.allclose(m, np.eye(4), atol=1e-6)
    assert moved >= len(g.nodes) - 1  # every panel but the fixed base panel moved


def test_animation_keys_are_the_path_states(built, files):
    g = pygltflib.GLTF2().load(str(files[1.0] / "assembly.glb"))
    (anim,) = g.animations
    assert anim.name == "fold" and len(anim.channels) == 2 * len(g.nodes)
    ts = [float(s.t) for s in built.path.states]
    inp = g.accessors[anim.samplers[0].input]
    assert inp.count == len(ts)
    assert inp.min[0] == pytest.approx(ts[0] * SECONDS_PER_FOLD, abs=1e-6)
    assert inp.max[0] == pytest.approx(ts[-1] * SECONDS_PER_FOLD, rel=1e-6)
    blob = g.binary_blob()
    # the last rotation key of every node equals the node's own (t = 1) rotation
    for ch in anim.channels:
        if ch.target.path != "rotation":
            continue
        acc = g.accessors[anim.samplers[ch.sampler].output]
        view = g.bufferViews[acc.bufferView]
        q = np.frombuffer(blob[view.byteOffset: view.byteOffset + view.byteLength], "<f4").reshape(-1, 4)
        assert np.allclose(np.linalg.norm(q, axis=1), 1.0, atol=1e-6)
        assert np.all(np.sum(q[1:] * q[:-1], axis=1) >= 0)  # consecutive keys on the short arc
        node_q = np.asarray(g.nodes[ch.target.node].rotation)
        assert abs(float(np.dot(q[-1], node_q))) == pytest.approx(1.0, abs=1e-6)


def test_bad_input_is_refused():
    v = np.zeros((3, 3))
    f = np.array([[0, 1, 2]])
    with pytest.raises(ExportError, match="names"):
        glb_bytes(["P000", "P001"], [(v, f)], [0], np.eye(4)[None])
    with pytest.raises(ExportError, match="increase"):
        glb_bytes(["P000"], [(v, f)], [0], np.eye(4)[None], fractions=[0.5, 0.5],
                  sampled=[np.eye(4)[None]] * 2)
    with pytest.raises(ExportError, match="empty mesh"):
        glb_bytes(["P000"], [(v, np.zeros((0, 3), int))], [0], np.eye(4)[None])
