"""The report's 3D view and readable fold-sequence pictures.

:func:`view_section` gives the HTML of an interactive WebGL viewer of the fold: the part meshes
once (flat sheet frame, mm), the per-part 4 x 4 poses at every sampled fold state, and the
clearance of every state of the sweep, all embedded as JSON in the page. The viewer is built on
the three.js library (npm package ``three``, MIT licence), vendored in ``export/vendor`` and
embedded as ``data:`` URLs of an import map, so the page works offline and stays one file. In the
browser: orbit (left drag), zoom (wheel), pan (right drag); a fold-fraction slider and a play
button (poses interpolated between samples: slerp of rotations, linear translations); hover shows
a part's id, a click shows its id, area, thickness and hinge lines (drawn on the part); a clearance
plot marks the state shown, and the closest pair at that state is highlighted.

:func:`fold_sequence_section` gives one PNG per fold state from two viewpoints (oblique and
side), each view 640 px wide, every state at one common scale.

Meshes: the part set's solids triangulated by BRepMesh (:func:`thickpanel.export.gltf.part_meshes`);
without solids, the slabs as plain prisms (their cut planes ignored, said in the page).
"""

from __future__ import annotations

import base64
import html
import io
import json
import math
from importlib import resources
from typing import Any

import numpy as np

from ..typing import FloatArray

__all__ = ["THREE_VERSION", "view_data", "view_section", "fold_sequence_section", "fold_views_png", "slab_faces"]

THREE_VERSION = "0.170.0"  #: version of the vendored three.js files (see export/vendor/README.md)
MAX_STATES = 61  #: sampled fold states embedded in the viewer at most
SEQUENCE = (0.0, 0.25, 0.5, 0.75, 1.0)  #: fold fractions of the picture sequence
VIEW_PX = 640  #: width of one view of the fold sequence, px


def _vendor(name: str) -> bytes:
    return resources.files("thickpanel.export").joinpath("vendor", name).read_bytes()


def _b64(a: np.ndarray) -> str:
    return base64.b64encode(np.ascontiguousarray(a).tobytes()).decode("ascii")


def _ear_clip(poly: FloatArray) -> list[tuple[int, int, int]]:
    """Triangles of a simple counter-clockwise polygon (ear clipping), vertex indices."""
    idx = list(range(len(poly)))
    if _area(poly) < 0:
        idx.reverse()
    out: list[tuple[int, int, int]] = []
    guard = 0
    while len(idx) > 3 and guard < 10 * len(poly) ** 2:
        guard += 1
        n = len(idx)
        for k in range(n):
            a, b, c = idx[k - 1], idx[k], idx[(k + 1) % n]
            pa, pb, pc = poly[a], poly[b], poly[c]
            if _cross(pa, pb, pc) <= 0:
                continue
            if any(_inside(poly[j], pa, pb, pc) for j in idx if j not in (a, b, c)):
                continue
            out.append((a, b, c))
            del idx[k]
            break
        else:
            break
    if len(idx) >= 3:
        out += [(idx[0], idx[i], idx[i + 1]) for i in range(1, len(idx) - 1)]
    return out


def _area(p: FloatArray) -> float:
    x, y = p[:, 0], p[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def _cross(a: FloatArray, b: FloatArray, c: FloatArray) -> float:
    return float((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))


def _inside(p: FloatArray, a: FloatArray, b: FloatArray, c: FloatArray) -> bool:
    return _cross(a, b, p) >= 0 and _cross(b, c, p) >= 0 and _cross(c, a, p) >= 0


def _prism(poly: FloatArray, z0: float, z1: float) -> tuple[FloatArray, np.ndarray]:
    """Closed triangle mesh of a vertical prism over a simple polygon, mm."""
    n = len(poly)
    v = np.vstack([np.column_stack([poly, np.full(n, z0)]), np.column_stack([poly, np.full(n, z1)])])
    tri = _ear_clip(np.asarray(poly, dtype=float))
    ccw = _area(poly) > 0
    f = [(a, c, b) if ccw else (a, b, c) for a, b, c in tri]
    f += [(n + a, n + b, n + c) if ccw else (n + a, n + c, n + b) for a, b, c in tri]
    for i in range(n):
        j = (i + 1) % n
        f += [(i, j, n + j), (i, n + j, n + i)] if ccw else [(i, n + j, j), (i, n + i, n + j)]
    return v, np.asarray(f, dtype=np.int64)


def _parts(res: Any) -> tuple[list[dict[str, Any]], list[tuple[FloatArray, np.ndarray]], str]:
    """Per part: description and mesh (flat frame, mm); and a note on where the meshes come from."""
    from ..pattern import cid, pid

    plan = getattr(res, "plan", None)
    hinges: dict[int, list[dict[str, Any]]] = {}
    segs: dict[int, list[list[float]]] = {}
    cp = res.pattern
    if plan is not None:
        v, c = cp.vertices, cp.creases
        for h in plan.hinges:
            a, b = (int(x) for x in h.panels)
            z = float(h.point[2])
            seg = [float(v[c[h.crease, 0], 0]), float(v[c[h.crease, 0], 1]), z,
                   float(v[c[h.crease, 1], 0]), float(v[c[h.crease, 1], 1]), z]
            for me, other in ((a, b), (b, a)):
                if me < 0:
                    continue
                hinges.setdefault(me, []).append({"crease": cid(h.crease), "other": pid(other) if other >= 0 else "-",
                                                  "face": h.face, "gap": round(float(h.gap), 4),
                                                  "usable": round(float(h.usable_length), 3)})
                segs.setdefault(me, []).append(seg)
    parts = getattr(res, "parts", None)
    descs: list[dict[str, Any]] = []
    meshes: list[tuple[FloatArray, np.ndarray]] = []
    if parts is not None:
        from .gltf import part_meshes

        meshes = part_meshes(parts)
        for p in parts.parts:
            k = int(p.panel)
            descs.append({"id": p.name, "kind": p.kind, "pose": k, "area": round(float(p.area), 3),
                          "thickness": round(float(p.thickness), 4), "volume": round(float(p.volume), 3),
                          "hinges": hinges.get(k, []) if p.kind == "panel" else [],
                          "segs": segs.get(k, []) if p.kind == "panel" else []})
        return descs, meshes, "meshes of the built solids (BRepMesh, 0.1 mm chordal deflection)"
    if plan is not None:
        for s in plan.slabs:
            k = int(s.panel)
            meshes.append(_prism(s.polygon_array(), float(s.z0), float(s.z1)))
            descs.append({"id": pid(k), "kind": "slab", "pose": k, "area": round(float(cp.panels[k].area), 3),
                          "thickness": round(float(s.z1 - s.z0), 4), "volume": None,
                          "hinges": hinges.get(k, []), "segs": segs.get(k, [])})
        return descs, meshes, "slabs drawn as plain prisms (no solids were built; bevels and cut planes not shown)"
    for p in cp.panels:
        poly = cp.panel_polygon(p.index)
        meshes.append(_prism(poly, 0.0, 0.0))
        descs.append({"id": pid(p.index), "kind": "panel", "pose": p.index, "area": round(float(p.area), 3),
                      "thickness": 0.0, "volume": None, "hinges": [], "segs": []})
    return descs, meshes, "zero-thickness panels (no thickness plan)"


def _fractions(res: Any) -> list[float]:
    path = getattr(res, "path", None)
    if path is not None and path.states:
        ts = [float(s.t) for s in path.states]
    elif getattr(res, "slack", None) is not None and len(res.slack.fractions):
        ts = [float(t) for t in res.slack.fractions]
    else:
        return []
    ts = sorted({t for t in ts if math.isfinite(t)})
    if len(ts) > MAX_STATES:
        idx = np.unique(np.round(np.linspace(0, len(ts) - 1, MAX_STATES)).astype(int))
        ts = [ts[i] for i in idx]
    return ts


def view_data(res: Any) -> dict[str, Any] | None:
    """The viewer's JSON-ready data for a build result, or None without a pattern.

    Keys: ``parts`` (id, kind, pose index, area mm^2, thickness mm, hinge lines, mesh as base64
    float32 vertices mm / uint32 triangles), ``t`` (fold fractions of the samples), ``poses``
    (base64 float32, samples x poses x 16, row-major 4 x 4, mm), ``clearance`` (t, mm, pair per
    state of the sweep) and ``required`` (mm).
    """
    if getattr(res, "pattern", None) is None:
        return None
    descs, meshes, note = _parts(res)
    ts = _fractions(res)
    frames = [res.poses_at(t) for t in ts] if hasattr(res, "poses_at") else []
    frames = [f for f in frames if f is not None]
    n_pose = res.pattern.n_panels
    if len(frames) != len(ts) or not ts:
        ts, stack = [0.0], np.tile(np.eye(4), (1, n_pose, 1, 1))
    else:
        stack = np.stack([np.asarray(f[0], dtype=float) for f in frames])
    for d, (v, f) in zip(descs, meshes, strict=True):
        d["v"] = _b64(np.asarray(v, dtype="<f4"))
        d["f"] = _b64(np.asarray(f, dtype="<u4"))
    clr: dict[str, Any] = {"t": [], "c": [], "pair": []}
    rep = getattr(res, "clearance", None)
    for row in getattr(rep, "table", None) or []:
        c = float(row.min_clearance)
        clr["t"].append(round(float(row.t), 6))
        clr["c"].append(round(c, 5) if math.isfinite(c) else None)
        clr["pair"].append(list(row.pair) if row.pair else None)
    # the sweep measures pairs only out to its margin: a state whose nearest measured pair lies beyond
    # it has a clearance of at least the margin (not that pair's distance), and no closest pair is known
    margin = float(getattr(rep, "margin", math.inf) or math.inf) if rep is not None else math.inf
    flags = []
    for i, c in enumerate(clr["c"]):
        far = math.isfinite(margin) and (c is None or c > margin)
        flags.append(far)
        if far:
            clr["c"][i] = round(margin, 5)
            clr["pair"][i] = None
    clr["beyond"] = flags
    order = np.argsort(clr["t"], kind="stable")
    clr = {k: [v[i] for i in order] for k, v in clr.items()}
    design = getattr(res, "design", None)
    required = float(design.checks.min_clearance) if design is not None else 0.0
    return {"parts": descs, "t": ts, "poses": _b64(stack.astype("<f4")), "nposes": int(stack.shape[1]),
            "clearance": clr, "required": required,
            "margin": margin if math.isfinite(margin) else None, "mesh_note": note,
            "source": "fold path" if getattr(res, "path", None) is not None else "least-squares fold"}


_CSS = """
#tp-view{position:relative;border:1px solid #bbb;background:#fafafa}
#tp-canvas{display:block;width:100%;height:560px;cursor:grab}
#tp-tip{position:absolute;pointer-events:none;background:#fff;border:1px solid #333;padding:1px 5px;
font-size:13px;display:none}
#tp-bar{display:flex;gap:.8em;align-items:center;margin:.4em 0;flex-wrap:wrap}
#tp-t{flex:1;min-width:240px}#tp-info{font-size:.92em;min-height:3em}
#tp-clr{display:block;width:100%;height:170px;border:1px solid #ddd;background:#fff}
"""


def _js() -> str:
    return resources.files("thickpanel.export").joinpath("report_view.js").read_text(encoding="utf-8")


def view_section(res: Any) -> str:
    """HTML of the interactive 3D view (heading, viewer, slider, clearance plot, scripts)."""
    try:
        data = view_data(res)
    except Exception as exc:  # noqa: BLE001 - a viewer failure must not lose the whole report
        return f'<h2>3D view</h2><p class="note">3D view failed: {html.escape(str(exc))}</p>'
    if data is None:
        return '<h2>3D view</h2><p class="note">3D view: not available (no pattern).</p>'
    three = "data:text/javascript;base64," + base64.b64encode(_vendor("three.module.min.js")).decode("ascii")
    orbit = "data:text/javascript;base64," + base64.b64encode(_vendor("OrbitControls.js")).decode("ascii")
    imap = json.dumps({"imports": {"three": three, "three/addons/controls/OrbitControls.js": orbit}})
    payload = json.dumps(data, separators=(",", ":")).replace("</", "<\\/")
    lic = _vendor("LICENSE-three.txt").decode("utf-8").replace("--", "- -")
    return "\n".join([
        "<h2>3D view</h2>",
        f"<style>{_CSS}</style>",
        f'<p class="note">Drag to orbit, wheel to zoom, right-drag to pan; hover a part for its id, click it for '
        f"its area, thickness and hinge lines. Fold states from the {html.escape(data['source'])} "
        f"({len(data['t'])} samples, interpolated between them); {html.escape(data['mesh_note'])}. "
        "Lengths in mm.</p>",
        '<div id="tp-view"><canvas id="tp-canvas" aria-label="3D view of the fold"></canvas>'
        '<div id="tp-tip"></div></div>',
        '<div id="tp-bar"><button id="tp-play" type="button">play</button>'
        '<label for="tp-t">fold fraction t</label>'
        '<input id="tp-t" type="range" min="0" max="1000" step="1" value="0">'
        '<span id="tp-tval">t = 0.000</span></div>',
        '<p id="tp-closest" class="note"></p>',
        '<div id="tp-info" class="note">Click a part to see its id, area, thickness and hinge lines.</div>',
        '<canvas id="tp-clr" aria-label="clearance against fold fraction, state shown marked"></canvas>',
        f"<!-- three.js {THREE_VERSION} (npm package three), embedded unchanged:\n{lic}-->",
        f'<script type="importmap">{imap}</script>',
        f'<script type="application/json" id="tp-view-data">{payload}</script>',
        f'<script type="module">\n{_js()}\n</script>',
    ])


# ------------------------------------------------------------------------- pictures
def slab_faces(res: Any, poses: FloatArray) -> list[FloatArray]:
    """Polygons (k, 3) mm of every slab face (or bare panel) placed by ``poses`` (P, 4, 4)."""
    plan = getattr(res, "plan", None)
    faces: list[FloatArray] = []
    if plan is None:
        for p in res.pattern.panels:
            poly = res.pattern.panel_polygon(p.index)
            h = np.column_stack([poly, np.zeros(len(poly)), np.ones(len(poly))])
            faces.append((h @ poses[p.index].T)[:, :3])
        return faces
    for s in plan.slabs:
        poly = s.polygon_array()
        n = len(poly)
        bot = (np.column_stack([poly, np.full(n, s.z0), np.ones(n)]) @ poses[s.panel].T)[:, :3]
        top = (np.column_stack([poly, np.full(n, s.z1), np.ones(n)]) @ poses[s.panel].T)[:, :3]
        faces += [bot, top]
        faces += [np.array([bot[i], bot[(i + 1) % n], top[(i + 1) % n], top[i]]) for i in range(n)]
    return faces


def _png(fig: Any) -> bytes:
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(fig)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=fig.dpi, metadata={"Software": None})
    return buf.getvalue()


def fold_views_png(res: Any, t: float, lim: tuple[FloatArray, FloatArray] | None = None) -> bytes | None:
    """PNG of one fold state from two viewpoints (oblique, side), each :data:`VIEW_PX` px wide."""
    fr = res.poses_at(t) if hasattr(res, "poses_at") else None
    if fr is None:
        return None
    from matplotlib.figure import Figure
    from mpl_toolkits.mplot3d.art3d import Poly3DCollection

    faces = slab_faces(res, fr[0])
    pts = np.vstack(faces)
    lo, hi = lim if lim is not None else (pts.min(axis=0), pts.max(axis=0))
    c = (lo + hi) / 2
    r = float(max(hi - lo)) / 2 or 1.0
    dpi = 100
    fig = Figure(figsize=(2 * VIEW_PX / dpi, 4.8), dpi=dpi)
    ext = pts.max(axis=0) - pts.min(axis=0)
    for k, (elev, azim, name) in enumerate(((28, -60, "oblique view"), (2, -90, "side view (along +y)"))):
        ax = fig.add_subplot(1, 2, k + 1, projection="3d")
        shade = []
        for q in faces:
            n = np.cross(q[1] - q[0], q[2] - q[0])
            n = n / (np.linalg.norm(n) or 1.0)
            g = 0.45 + 0.45 * abs(float(n[2]))
            shade.append((g, g, min(1.0, g + 0.05)))
        ax.add_collection3d(Poly3DCollection(faces, facecolors=shade, edgecolor=(0.1, 0.1, 0.1), linewidth=0.35))
        span = np.maximum(hi - lo, 0.05 * (hi - lo).max())
        ax.set_xlim(c[0] - span[0] / 2, c[0] + span[0] / 2)
        ax.set_ylim(c[1] - span[1] / 2, c[1] + span[1] / 2)
        ax.set_zlim(c[2] - span[2] / 2, c[2] + span[2] / 2)
        ax.set_box_aspect(tuple(span / span.max()), zoom=1.2)  # true proportions, one scale for all states
        ax.view_init(elev=elev, azim=azim)
        ax.set_axis_off()
        ax.set_title(f"t = {t:.2f}, {name}", fontsize=12)
    fig.text(0.5, 0.02, f"extent of this state {ext[0]:.0f} x {ext[1]:.0f} x {ext[2]:.0f} mm (x, y, z); "
             f"all states drawn at one scale (box {2 * r:.0f} mm at its longest)", ha="center", fontsize=11)
    fig.subplots_adjust(left=0, right=1, bottom=0.06, top=0.93, wspace=0)
    return _png(fig)


def fold_sequence_section(res: Any, fractions: tuple[float, ...] = SEQUENCE) -> str:
    """HTML of the fold sequence: one two-view PNG per fold fraction, common scale."""
    frames = [res.poses_at(t) for t in fractions] if hasattr(res, "poses_at") else []
    if not frames or any(f is None for f in frames):
        return '<p class="note">fold-state renders: not available.</p>'
    pts = np.vstack([np.vstack(slab_faces(res, f[0])) for f in frames])
    lim = (pts.min(axis=0), pts.max(axis=0))
    # wider than the page's text column, centred on it, so each view shows at its own 640 px
    out = ['<div style="position:relative;left:50%;transform:translateX(-50%);width:min(1290px,98vw);'
           'overflow-x:auto">']
    for t in fractions:
        png = fold_views_png(res, t, lim)
        if png:
            data = base64.b64encode(png).decode("ascii")
            out.append(f'<img style="max-width:none;display:block;margin:.3em 0" '
                       f'alt="fold state t = {t:.2f}, two views" src="data:image/png;base64,{data}">')
    out.append("</div>")
    return "\n".join(out)


