"""Report section of a ``hub-wrap`` array: deployed and stowed side by side, the stowed-state figures
(:mod:`thickpanel.wrap.metrics`, read from the build's metrics: one source) and the compliance the
hinges must provide along the deployment (:mod:`thickpanel.wrap.deploy`)."""

from __future__ import annotations

import base64
import html
import math
from typing import Any

import numpy as np

__all__ = ["wrap_section", "side_by_side_png"]

_FIGURES = (
    ("deployed_diameter_mm", "deployed diameter (mm, about the hub centre)"),
    ("stowed_diameter_mm", "stowed diameter (mm, enclosing cylinder about the hub axis)"),
    ("stowed_height_mm", "stowed height (mm)"),
    ("diameter_ratio", "diameter ratio, deployed / stowed"),
    ("packaging_efficiency", "packaging efficiency (plate volume outside the hub / stowed annulus volume)"),
    ("stowed_radius_bound_mm", "volume-conservation bound on the stowed radius, sqrt(R_h^2 + A t / (pi H)) (mm)"),
)


def _e(x: Any) -> str:
    return html.escape(str(x))


def _outlines(res: Any, poses: np.ndarray) -> list[np.ndarray]:
    out = []
    for sl in res.plan.slabs:
        poly = sl.polygon_array()
        for z in (sl.z0, sl.z1):
            h = np.column_stack([poly, np.full(len(poly), z), np.ones(len(poly))])
            out.append((h @ poses[sl.panel].T)[:, :3])
    return out


def side_by_side_png(res: Any) -> bytes | None:
    """Top views of the deployed and the stowed state at one scale each, with the stowed enclosing
    circle about the hub axis; None without a plan or a path."""
    if res.plan is None or res.path is None:
        return None
    from matplotlib.figure import Figure

    from .report import figure_png

    m = res.metrics
    fig = Figure(figsize=(11, 5.2), dpi=90)
    for k, (t, title) in enumerate(((0.0, "deployed (t = 0), top view"), (1.0, "stowed (t = 1), top view"))):
        got = res.poses_at(t)
        if got is None:
            return None
        ax = fig.add_subplot(1, 2, k + 1)
        for f in _outlines(res, got[0]):
            ax.fill(f[:, 0], f[:, 1], facecolor=(0.85, 0.86, 0.9), edgecolor="black", linewidth=0.25)
        key = "deployed_diameter_mm" if t == 0.0 else "stowed_diameter_mm"
        r = float(m.get(key, 0.0)) / 2.0
        if r > 0:
            a = np.linspace(0.0, 2.0 * math.pi, 181)
            ax.plot(r * np.cos(a), r * np.sin(a), "k--", linewidth=1)
            ax.set_title(f"{title}\n{2 * r:.1f} mm across", fontsize=10)
        else:
            ax.set_title(title, fontsize=10)
        ax.set_aspect("equal", adjustable="datalim")
        ax.set_xlabel("x (mm)")
        ax.set_ylabel("y (mm)")
    fig.tight_layout()
    return figure_png(fig)


def _table(head: list[str], rows: list[list[Any]]) -> str:
    def cell(v: Any) -> str:
        if isinstance(v, float):
            return f'<td class="num">{v:.4g}</td>'
        return f"<td>{_e(v)}</td>"

    return ("<table><tr>" + "".join(f"<th>{_e(h)}</th>" for h in head) + "</tr>"
            + "".join("<tr>" + "".join(cell(v) for v in r) + "</tr>" for r in rows) + "</table>")


def wrap_section(res: Any) -> str:
    """HTML of the hub-wrap section (empty when the build has no hub-wrap figures)."""
    m = res.metrics
    if "stowed_diameter_mm" not in m:
        return ""
    from ..wrap.deploy import WRAP_CAUTION

    parts = ["<h2>Deployed and stowed (hub-wrap)</h2>"]
    png = side_by_side_png(res)
    if png:
        data = base64.b64encode(png).decode("ascii")
        parts.append(f'<img alt="deployed and stowed, top views" src="data:image/png;base64,{data}">')
    rows = [[label, float(m[k])] for k, label in _FIGURES if k in m]
    if "stowed_diameter_mm" in m:
        rows.append(["stowed radius (mm), to compare with the bound", float(m["stowed_diameter_mm"]) / 2.0])
    parts.append(_table(["figure", "value"], rows))
    parts.append('<p class="note">The stowed state comes from the construction (each plate\'s pose given '
                 "outright), not from the rigid-panel solver. The backing membrane (part BACKING) is flexible: it "
                 "is exported flat with its cut sheet and left out of the stowed assembly.</p>")
    comp = (getattr(res.path, "meta", None) or {}).get("compliance") if res.path is not None else None
    if comp is not None:
        parts.append("<h3>Compliance along the deployment</h3>")
        parts.append(f"<p>{_e(comp.summary())}.</p><p class=\"note\">Method: {_e(comp.method)}. Vertex misfit: "
                     "rotation angle of the loop product of the hinge rotations round each interior vertex; hinge "
                     "play: largest mismatch of a hinge's end points as carried by its two panels. The path is a "
                     "simple one (every fold at the same fraction of its stowed angle, then relaxed): its figures "
                     "are what this path needs, not the least any deployment could need; long wrapped arms make them "
                     "large.</p>")
        parts.append(_table(["t", "largest vertex misfit (deg)", "largest hinge play (mm)", "RMS hinge play (mm)"],
                            [[r["t"], r["max_misfit_deg"], r["max_play_mm"], r["rms_play_mm"]] for r in comp.rows()]))
    parts.append(f'<div class="caution"><b>Safety.</b> {_e(WRAP_CAUTION)}</div>')
    return "\n".join(parts)
