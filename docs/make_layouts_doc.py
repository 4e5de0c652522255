"""Write docs/layouts.md: which registered layouts fold rigidly, how far, into what shape.

Run from the project root: ``.venv/bin/python docs/make_layouts_doc.py``. Every layout in
:func:`thickpanel.layouts.available_layouts` is built with small parameters (a table below, or
the generator's defaults for layouts added later), judged by
:func:`thickpanel.kinematics.rigid_foldability`, folded with
:func:`thickpanel.kinematics.fold_path` when rigid or by :func:`thickpanel.kinematics.joint_slack`
when locked, and pictured at t = 0.25, 0.5, 0.75 and 1 (PNG files in ``docs/img/``). The
Markdown is generated; do not edit it by hand.
"""

from __future__ import annotations

import io
import os
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from mpl_toolkits.mplot3d.art3d import Poly3DCollection  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from thickpanel.crossings import crossing_pairs  # noqa: E402
from thickpanel.errors import ThickpanelError  # noqa: E402
from thickpanel.kinematics import DEFAULT_FULL_FOLD, fold_path, joint_slack, rigid_foldability  # noqa: E402
from thickpanel.layouts import available_layouts, make_layout  # noqa: E402
from thickpanel.poses import FoldState  # noqa: E402

# small parameter sets per layout; several variants where the assignment or grid matters
VARIANTS: dict[str, list[tuple[str, dict[str, Any]]]] = {
    "accordion": [("5 panels", dict(width=100.0, panel_width=20.0, n=5))],
    "miura": [("6 x 6, gamma 60 deg", dict(a=20.0, b=10.0, gamma_deg=60.0, nx=6, ny=6))],
    "square-twist": [
        ("standard assignment", dict(side=20.0, twist_deg=30.0, assignment="standard")),
        ("two-two assignment", dict(side=20.0, twist_deg=30.0, assignment="two-two")),
    ],
    "log-spiral": [
        ("6 arms, 2 rings, symmetric", dict(arms=6, rings=2, outer_diameter=300.0)),
        ("6 arms, 2 rings, chiral", dict(arms=6, rings=2, outer_diameter=300.0, symmetric=False, pitch_deg=50.0)),
        ("6 arms, 2 rings, 1 slit", dict(arms=6, rings=2, outer_diameter=300.0, slits=1)),
        ("8 arms, 3 rings, 4 slits", dict(arms=8, rings=3, outer_diameter=600.0, slits=4)),
        ("8 arms, 3 rings, 8 slits", dict(arms=8, rings=3, outer_diameter=600.0, slits=8)),
    ],
    "spiral-rings": [("6 arms, 2 rings", dict(arms=6, rings=2, outer_diameter=300.0))],
    "spiral-radial": [("6 arms, 2 rings", dict(arms=6, rings=2, outer_diameter=300.0))],
    "kresling": [("defaults", {})],
}
FRACTIONS = (0.25, 0.5, 0.75, 1.0)
SLACK_TARGET = float(np.deg2rad(120.0))  # rad: overall fold for the slack of locked patterns
N_STATES = 21
MAX_ASSIGNMENTS = 4  # ranked assignments listed (and judged) per generated grid


def _slug(name: str, label: str) -> str:
    keep = "".join(ch if ch.isalnum() else "-" for ch in f"{name}-{label}".lower())
    return "-".join(p for p in keep.split("-") if p)


def _panel_polys(pattern: Any, poses: np.ndarray) -> list[np.ndarray]:
    out = []
    for p in range(pattern.n_panels):
        poly = pattern.panel_polygon(p)
        h = np.column_stack([poly, np.zeros(len(poly)), np.ones(len(poly))])
        out.append((h @ poses[p].T)[:, :3])
    return out


def shape_of(pattern: Any, poses: np.ndarray) -> str:
    """Name of a folded shape: first a collision check (zero-thickness crossings of non-adjacent
    panels, thickpanel.crossings); only a state without crossings gets a shape word: stack, disc,
    dome, cone, folded strip or twisted strip.

    The word is a heuristic from the principal extents of the folded corners (thin: stack when the
    footprint shrank, else disc), the flat sheet's aspect (strips), and for curved sheets from which
    of height ~ r or height ~ r^2 fits the panel centres better (cone or dome).
    """
    hits = crossing_pairs(FoldState(pattern, np.zeros(pattern.n_creases), poses))
    if hits:
        return f"panels cross ({hits[0].label()} and {len(hits) - 1} more pairs): not a stowed shape"
    pts = np.concatenate(_panel_polys(pattern, poses))
    ext = np.sort(np.ptp((pts - pts.mean(0)) @ np.linalg.svd(pts - pts.mean(0), full_matrices=False)[2].T, axis=0))
    ext = ext[::-1]
    xy = np.ptp(pattern.vertices, axis=0)
    strip = max(xy) > 3 * min(xy)
    area = float(np.prod(np.ptp(pattern.vertices, axis=0)))
    foot = ext[0] * ext[1] / area
    if ext[2] < 0.15 * ext[0]:
        if foot < 0.8:
            return f"stack (footprint {100 * foot:.0f} % of the flat sheet)"
        return "disc (nearly flat)"
    if strip:
        normals = np.array([poses[p][:3, 2] for p in range(pattern.n_panels)])
        spread = np.linalg.norm(normals - normals.mean(0), axis=1).max()
        return "twisted strip" if spread > 0.5 else "folded strip"
    cents = np.array([np.mean(q, axis=0) for q in _panel_polys(pattern, poses)])
    c0 = cents.mean(0)
    _, _, vt = np.linalg.svd(cents - c0)
    z = (cents - c0) @ vt[2]
    r = np.linalg.norm((cents - c0) @ vt[:2].T, axis=1)
    lin = np.linalg.lstsq(np.c_[np.ones_like(r), r], z, rcond=None)[1]
    quad = np.linalg.lstsq(np.c_[np.ones_like(r), r**2], z, rcond=None)[1]
    lin_e = float(lin[0]) if len(lin) else 0.0
    quad_e = float(quad[0]) if len(quad) else 0.0
    return "cone" if lin_e < quad_e else "dome"


def picture(pattern: Any, states: list[tuple[float, np.ndarray]], title: str) -> bytes:
    """PNG of the fold states, two per row, each view 600 px wide (grey shading only; no
    mountain/valley colours), stored as a 64-colour palette PNG to keep the repository small."""
    cols = 2
    rows = (len(states) + cols - 1) // cols
    height = 4.6 * rows + 0.9
    fig = plt.figure(figsize=(6.0 * cols, height), dpi=100)
    fig.subplots_adjust(left=0.0, right=1.0, bottom=0.0, top=1 - 0.75 / height, wspace=0.0, hspace=0.1)
    for k, (t, poses) in enumerate(states):
        ax = fig.add_subplot(rows, cols, k + 1, projection="3d")
        polys = _panel_polys(pattern, poses)
        pts = np.concatenate(polys)
        shade = []
        for q in polys:
            n = np.cross(q[1] - q[0], q[2] - q[0])
            n = n / (np.linalg.norm(n) or 1.0)
            shade.append(0.35 + 0.5 * abs(n[2]))
        ax.add_collection3d(
            Poly3DCollection(polys, facecolors=[(g, g, g) for g in shade], edgecolors="k", linewidths=0.5)
        )
        lo, hi = pts.min(0), pts.max(0)
        span = np.maximum(hi - lo, 1e-3 * float((hi - lo).max()))
        ax.set_xlim(lo[0], lo[0] + span[0])
        ax.set_ylim(lo[1], lo[1] + span[1])
        ax.set_zlim(lo[2], lo[2] + span[2])
        ax.set_box_aspect(tuple(span / span.max()), zoom=1.15)  # true proportions, each state at its own scale
        ax.view_init(elev=28, azim=-60)
        ax.set_axis_off()
        ax.set_title(f"t = {t:g}  (longest extent {span.max():.0f} mm)", fontsize=12)
    fig.suptitle(title, fontsize=14, y=1 - 0.12 / height, va="top")
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100)
    plt.close(fig)
    from PIL import Image

    img = Image.open(io.BytesIO(buf.getvalue())).convert("RGB").quantize(colors=64)
    out = io.BytesIO()
    img.save(out, format="PNG", optimize=True)
    return out.getvalue()


def _write(path: Path, data: bytes) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=path.name, suffix=".tmp")
    with os.fdopen(fd, "wb") as fh:
        fh.write(data)
    os.replace(tmp, path)


def _assignment_lines(cp: Any) -> str:
    """Markdown list: the best ranked mountain/valley assignments of a generated grid and their verdicts."""
    try:
        from thickpanel.layouts.assignment import assignments, layout_info
    except ImportError:
        return ""
    if layout_info(cp) is None:
        return ""
    try:
        ranked = assignments(cp)[:MAX_ASSIGNMENTS]
    except ThickpanelError:
        return ""
    out = []
    for i, a in enumerate(ranked):
        local = "passes Maekawa and big-little-big" if a.ok else "fails local flat-folding checks"
        try:
            v = rigid_foldability(a.apply(cp))
            verdict = f"{v.kind} (dof {v.dof})"
        except ThickpanelError as exc:
            verdict = f"not judged: {exc}"[:120]
        out.append(f"- rank {i}: {a.description}; {local}; rigid folding: {verdict}")
    return "\n".join(out)


def study(name: str, label: str, params: dict[str, Any], img_dir: Path) -> dict[str, str]:
    """One table row: verdict, reach, folded shape, slack and picture for one layout variant."""
    row = {"layout": name, "variant": label, "params": ", ".join(f"{k}={v}" for k, v in params.items()) or "defaults"}
    try:
        cp = make_layout(name, **params)
    except (ThickpanelError, TypeError, ValueError) as exc:
        row.update(verdict="not built", reach="", shape="", slack="", picture="", note=str(exc)[:160])
        return row
    row["assignments"] = _assignment_lines(cp)
    if cp.seams:
        row["size"] = f"{cp.n_panels} panels, {int(cp.folding.sum())} folding creases, {len(cp.seams)} seams"
        v = rigid_foldability(cp)
        row.update(verdict=f"{v.kind} (dof {v.dof})", reach="not modelled (closed tube)", shape="tube", picture="")
        try:
            from thickpanel.tube_slack import tube_slack
            from thickpanel.tubes import deployed_tube

            st = deployed_tube(cp).state
            h0 = float(np.ptp(np.vstack([st.panel_vertices_3d(p) for p in range(cp.n_panels)])[:, 2]))
            ts = tube_slack(cp, height_mm=0.9 * h0, n_states=3, ends="rigid")
            slack = f"rigid end rings, shortened to 90 % height: largest hinge play {ts.slack.max_play_mm:.3g} mm"
        except (ThickpanelError, ImportError) as exc:
            slack = f"not judged: {exc}"[:120]
        row.update(slack=slack, note=v.reason)
        return row
    row["size"] = f"{cp.n_panels} panels, {int(cp.folding.sum())} folding creases"
    t0 = time.perf_counter()
    verdict = rigid_foldability(cp)
    row["verdict"] = f"{verdict.kind} (dof {verdict.dof})"
    row["note"] = verdict.reason
    states: list[tuple[float, np.ndarray]] = []
    if verdict.kind == "rigid":
        path = fold_path(cp, n_states=N_STATES)
        reach = float(path.meta["reachable"])
        row["reach"] = f"{np.rad2deg(reach):.1f} deg ({path.stop_reason})"
        states = [(t, path.at(t).poses) for t in FRACTIONS if t <= float(path.fractions[-1])]
        row["slack"] = "none needed"
    else:
        row["reach"] = "0 deg (flat only)"
        try:
            rep = joint_slack(cp, target=SLACK_TARGET, n_states=5)
        except ThickpanelError as exc:
            row["slack"] = f"not computed: {exc}"[:160]
        else:
            worst = rep.worst(1)
            at = {f"{t:g}": rep.play_mm[i].max() for i, t in enumerate(rep.fractions)}
            last = float(rep.fractions[-1])
            row["slack"] = (
                f"{rep.max_play_mm:.3g} mm by {rep.largest_fold_deg[-1]:.0f} deg largest fold (t=0.5: "
                f"{at.get('0.5', 0.0):.3g} mm; worst hinge {worst[0][0] if worst else '-'})"
            )
            states = [(float(t), rep.poses[i]) for i, t in enumerate(rep.fractions) if t > 0]
            if rep.stop_reason != "target":
                row["slack"] += f"; the least-squares fold stalls after t = {last:g} (a hinge reaches 180 deg)"
    row["shape"] = shape_of(cp, states[-1][1]) if states else ""
    if states:
        slug = _slug(name, label)
        _write(img_dir / f"{slug}.png", picture(cp, states, f"{name}: {label}"))
        row["picture"] = f"![{name} {label}](img/{slug}.png)"
    else:
        row["picture"] = ""
    row["seconds"] = f"{time.perf_counter() - t0:.2f}"
    return row


def main(out: Path = ROOT / "docs" / "layouts.md") -> None:
    img_dir = out.parent / "img"
    rows = []
    for name in available_layouts():
        for label, params in VARIANTS.get(name, [("defaults", {})]):
            rows.append(study(name, label, params, img_dir))
    lines = [
        "# Layouts: rigid folding, reach, folded shape and joint slack",
        "",
        "Generated by `docs/make_layouts_doc.py` (do not edit by hand). Every registered layout is built with",
        "small parameters and judged with ideal hinges and rigid panels: `rigid_foldability` (rigid / locked,",
        "degrees of freedom after the first step off flat), `fold_path` to the default target",
        f"({np.rad2deg(DEFAULT_FULL_FOLD):g} deg unless the layout gives target angles) for rigid ones, and",
        f"`joint_slack` to {np.rad2deg(SLACK_TARGET):.0f} deg for locked ones (largest hinge end-point mismatch of the",
        "least-squares fold with rigid panels). Pictures show t = 0.25, 0.5, 0.75, 1 of the fold (for locked",
        "layouts: of the least-squares fold). Folded shape: a zero-thickness collision check first (panels not",
        "joined by a hinge that pass through each other are named); only a state without crossings gets a",
        "shape word, a heuristic from the folded extents.",
        "",
        "Hinge play figures are geometric requirements of ideal rigid panels, not a hinge design; assess",
        "stored energy, fatigue, pinch points and flight or structural qualification against the applicable",
        "codes and standards with qualified engineering review.",
        "",
        "| layout | variant | size | verdict | reach | folded shape | slack a locked version needs |",
        "| --- | --- | --- | --- | --- | --- | --- |",
    ]
    for r in rows:
        lines.append(
            f"| {r['layout']} | {r['variant']} | {r.get('size', '')} | {r['verdict']} | {r.get('reach', '')} | "
            f"{r.get('shape', '')} | {r.get('slack', '')} |"
        )
    lines.append("")
    for r in rows:
        lines += [f"## {r['layout']}: {r['variant']}", "", f"Parameters: `{r['params']}`.", ""]
        lines += [f"Verdict: {r['verdict']}. {r.get('note', '')}", ""]
        if r.get("assignments"):
            lines += ["Ranked assignments of this grid (the layout's own choice is the one judged above):", ""]
            lines += [r["assignments"], ""]
        if r.get("picture"):
            lines += [r["picture"], ""]
    _write(out, ("\n".join(lines) + "\n").encode())
    sys.stdout.write(f"wrote {out} and {sum(1 for r in rows if r.get('picture'))} pictures in {img_dir}\n")


if __name__ == "__main__":
    main()
