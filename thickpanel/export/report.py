"""The visual report: one self-contained HTML page per build, every image embedded as base64 PNG.

Sections: verdict and checks, crease drawing, strip of fold-state renders (matplotlib 3D), clearance
against fold fraction, stowed envelope with its dimensions, bill of materials, thickness-method and
hinge checks, stages, safety cautions. Only matplotlib's object API is used (no pyplot, no global
backend switch). Output is deterministic: no timestamps.
"""

from __future__ import annotations

import base64
import html
import io
import math
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from ..reproducible import source_date_epoch
from .report_view import fold_sequence_section, slab_faces, view_section

__all__ = ["write_report", "render_report", "fold_strip_png", "envelope_png", "crease_png", "SAFETY"]

SAFETY = (
    "Deployable arrays store energy (springs, tapes, stowed strain) and close like scissors: panels "
    "and hinges pinch fingers and can release suddenly. Fold and unfold prototypes slowly, keep hands "
    "clear of hinge lines and restrain stowed arrays before releasing them.",
    "This report shows geometry: fold kinematics, a clearance sweep and hinge sizing. It is not a "
    "structural, fatigue, thermal, wind- or snow-load, or deployment-dynamics analysis.",
    "Flight hardware, shelters and products used by the public need review by a qualified engineer "
    "under the codes and standards that apply (launch provider and agency mechanism standards, building "
    "codes, product-safety rules) before anything is built, flown or sold.",
    "Machining, cutting and printing carry their own hazards: follow the machine maker's and your "
    "workplace's safety rules, and check every exported file before cutting material.",
)

STYLE = """
body{font-family:system-ui,sans-serif;margin:2em auto;max-width:1100px;color:#222;line-height:1.4}
h1{margin-bottom:0}h2{border-bottom:1px solid #ccc;padding-bottom:.2em;margin-top:1.6em}
table{border-collapse:collapse;margin:.5em 0;font-size:.92em}td,th{border:1px solid #ccc;padding:.25em .6em;
text-align:left;vertical-align:top}th{background:#f2f2f2}td.num{text-align:right;font-variant-numeric:tabular-nums}
.pass{font-weight:bold}.fail{font-weight:bold;text-decoration:underline}.verdict{font-size:1.4em;padding:.4em .8em;
border:3px solid #222;display:inline-block}.note{color:#555;font-size:.9em}img{max-width:100%;border:1px solid #ddd}
.caution{border-left:6px solid #222;padding:.3em 1em;background:#f7f7f7}
"""


def figure_png(fig: Any) -> bytes:
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(fig)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=fig.dpi, metadata={"Software": None})
    return buf.getvalue()


def _img(png: bytes | None, alt: str) -> str:
    if not png:
        return f'<p class="note">{html.escape(alt)}: not available.</p>'
    data = base64.b64encode(png).decode("ascii")
    return f'<img alt="{html.escape(alt)}" src="data:image/png;base64,{data}">'


def _e(x: Any) -> str:
    return html.escape(str(x))


def _table(head: Sequence[str], rows: Sequence[Sequence[Any]], num: Sequence[int] = ()) -> str:
    out = ["<table><tr>" + "".join(f"<th>{_e(h)}</th>" for h in head) + "</tr>"]
    for r in rows:
        cells = []
        for i, c in enumerate(r):
            cls = ' class="num"' if i in num else ""
            if isinstance(c, float):
                c = "-" if not math.isfinite(c) else f"{c:.6g}"
            cells.append(f"<td{cls}>{_e(c)}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    return "\n".join(out) + "</table>"


# --------------------------------------------------------------------------- images
def crease_png(pattern: Any) -> bytes:
    """Crease drawing: the drawing module's PNG, else a plain matplotlib drawing.

    Line styles follow the paper-folding convention: valley dashed, mountain dash-dot-dot, border
    solid, cut heavy solid, flat thin dotted. No colour carries meaning.
    """
    try:
        from .drawing import pattern_png

        return bytes(pattern_png(pattern, labels=pattern.n_panels <= 60))
    except ImportError:
        pass
    from matplotlib.figure import Figure

    fig = Figure(figsize=(6, 6), dpi=100)
    ax = fig.add_subplot(1, 1, 1)
    styles = {"valley": ((0, (6, 3)), 1.0), "mountain": ((0, (8, 2, 1, 2, 1, 2)), 1.0),
              "border": ("-", 1.4), "cut": ("-", 2.6), "flat": ((0, (1, 2)), 0.6)}
    v = pattern.vertices
    for (a, b), k in zip(pattern.creases, pattern.kinds, strict=True):
        ls, lw = styles.get(k, ("-", 1.0))
        ax.plot([v[a, 0], v[b, 0]], [v[a, 1], v[b, 1]], linestyle=ls, linewidth=lw, color="black")
    ax.set_aspect("equal")
    ax.set_xlabel("x (mm)")
    ax.set_ylabel("y (mm)")
    ax.set_title("crease pattern (valley dashed, mountain dash-dot-dot)")
    return figure_png(fig)


def _draw_state(ax: Any, faces: list[np.ndarray], lim: tuple[np.ndarray, np.ndarray]) -> None:
    from mpl_toolkits.mplot3d.art3d import Poly3DCollection

    coll = Poly3DCollection(faces, facecolor=(0.82, 0.84, 0.88), edgecolor=(0.1, 0.1, 0.1), linewidth=0.3)
    ax.add_collection3d(coll)
    lo, hi = lim
    c = (lo + hi) / 2
    r = float(max(hi - lo)) / 2 or 1.0
    ax.set_xlim(c[0] - r, c[0] + r)
    ax.set_ylim(c[1] - r, c[1] + r)
    ax.set_zlim(c[2] - r, c[2] + r)
    ax.set_box_aspect((1, 1, 1))
    ax.view_init(elev=28, azim=-60)
    ax.set_axis_off()


def fold_strip_png(res: Any, fractions: Sequence[float] = (0.0, 0.25, 0.5, 0.75, 1.0)) -> bytes | None:
    """A row of 3D renders at the given fold fractions (fold path, or a locked pattern's
    least-squares fold); None without either."""
    frames = [res.poses_at(t) for t in fractions] if hasattr(res, "poses_at") else []
    if not frames or any(f is None for f in frames):
        return None
    from matplotlib.figure import Figure

    fig = Figure(figsize=(3.0 * len(fractions), 3.2), dpi=90)
    for k, (t, fr) in enumerate(zip(fractions, frames, strict=True)):
        faces = slab_faces(res, fr[0])
        pts = np.vstack(faces)
        ax = fig.add_subplot(1, len(fractions), k + 1, projection="3d")
        _draw_state(ax, faces, (pts.min(axis=0), pts.max(axis=0)))
        ax.set_title(f"t = {t:.2f}", fontsize=10)
    fig.subplots_adjust(left=0, right=1, bottom=0, top=0.9, wspace=0)
    return figure_png(fig)


def envelope_png(res: Any) -> bytes | None:
    """Stowed state seen along x, y and z with the stowed box (the build's figure, design frame) and
    its dimensions in mm."""
    ts = res.stowed_t() if hasattr(res, "stowed_t") else None
    fr = res.poses_at(ts) if ts is not None else None
    fig_s = res.state_figures(ts) if fr is not None else None
    if fr is None or fig_s is None:
        return None
    from matplotlib.figure import Figure

    faces = slab_faces(res, fr[0])
    lo, hi = (np.asarray(c, dtype=float) for c in fig_s["box_corners_mm"])
    size = np.asarray(fig_s["box_mm"], dtype=float)
    names = "xyz"
    fig = Figure(figsize=(10, 4.2), dpi=90)
    for k, (i, j) in enumerate(((0, 1), (0, 2), (1, 2))):
        ax = fig.add_subplot(1, 3, k + 1)
        for f in faces:
            ax.fill(f[:, i], f[:, j], facecolor=(0.85, 0.86, 0.9), edgecolor="black", linewidth=0.3)
        ax.plot([lo[i], hi[i], hi[i], lo[i], lo[i]], [lo[j], lo[j], hi[j], hi[j], lo[j]], "k--", linewidth=1)
        ax.annotate(f"{size[i]:.1f} mm", ((lo[i] + hi[i]) / 2, hi[j]), xytext=(0, 3),
                    textcoords="offset points", ha="center", va="bottom", fontsize=9)
        ax.annotate(f"{size[j]:.1f} mm", (hi[i], (lo[j] + hi[j]) / 2), xytext=(-3, 0),
                    textcoords="offset points", ha="right", va="center", rotation=90, fontsize=9)
        ax.set_aspect("equal", adjustable="datalim")
        ax.set_title(f"view along {names[3 - i - j]}", fontsize=10)
        ax.set_xlabel(f"{names[i]} (mm)")
        ax.set_ylabel(f"{names[j]} (mm)")
    fig.tight_layout()
    return figure_png(fig)


def _bound_table(rep: Any) -> str:
    """Per-state table when no pair came within the search margin (a plot would be a flat line)."""
    rows = rep.table
    step = max(1, len(rows) // 10)
    shown = [r for r in rows[::step]] + ([rows[-1]] if (len(rows) - 1) % step else [])
    return (f'<p class="note">No two parts came within the {rep.margin:g} mm search margin in any state, so '
            "every state's minimum is a bound, not a measured distance.</p>"
            + _table(["fold fraction t", "minimum clearance", "piece pairs measured"],
                     [[float(r.t), f"at least {rep.margin:g} mm", r.candidates] for r in shown], num=(0, 2)))


def _clearance_png(rep: Any) -> bytes | None:
    if rep is None:
        return None
    fn = getattr(rep, "png_bytes", None)
    return bytes(fn()) if fn else None


# --------------------------------------------------------------------------- page
def _verdict_cell(v: str) -> str:
    cls = "pass" if v == "pass" else ("fail" if v in ("fail", "not proven") else "")
    return f'<td class="{cls}">{_e(v.upper())}</td>'


def _checks_table(checks: Sequence[dict[str, Any]]) -> str:
    rows = ["<table><tr><th>check</th><th>verdict</th><th>detail</th></tr>"]
    for c in checks:
        rows.append(f"<tr><td>{_e(c['check'])}</td>{_verdict_cell(c['verdict'])}<td>{_e(c['detail'])}</td></tr>")
    return "\n".join(rows) + "</table>"


def _mass(part: Any) -> float:
    from ..errors import ThickpanelError

    try:
        return float(getattr(part, "mass", float("nan")))
    except (ThickpanelError, TypeError, ValueError):
        return float("nan")


def _bom_section(res: Any) -> str:
    parts = getattr(res, "parts", None)
    if parts is None:
        return '<p class="note">Bill of materials: not available (no solids were built).</p>'
    rows = []
    for p in parts.parts:
        rows.append([p.name, getattr(p, "kind", ""), getattr(p, "material", "") or "-",
                     float(getattr(p, "thickness", float("nan")) or float("nan")),
                     float(getattr(p, "volume", float("nan")) or float("nan")),
                     _mass(p)])
    return _table(["part", "kind", "material", "thickness (mm)", "volume (mm³)", "mass (g)"], rows, num=(3, 4, 5))


def _method_section(res: Any) -> str:
    out = []
    if res.advice:
        rows = []
        for a in res.advice:
            reach = getattr(a, "reachable", None)
            reach_s = f"{math.degrees(reach):.1f}" if isinstance(reach, int | float) and math.isfinite(reach) else "-"
            rows.append([a.method, "applies" if a.applies else "does not apply", reach_s, a.reason or ""])
        out.append(_table(["method", "verdict", "reachable fold (deg)", "reason"], rows, num=(2,)))
    else:
        out.append('<p class="note">Thickness-method advice: not available.</p>')
    plan = getattr(res, "plan", None)
    if plan is not None:
        out.append(f"<p>Chosen method: <b>{_e(plan.method)}</b>, target fold "
                   f"{math.degrees(plan.target_fold):.1f} deg.</p>")
        if plan.notes:
            out.append("<ul>" + "".join(f"<li>{_e(n)}</li>" for n in plan.notes) + "</ul>")
    return "\n".join(out)


def _hinge_section(res: Any) -> str:
    d = res.design
    opts = ", ".join(f"{k} = {v}" for k, v in d.hinge.options.items()) or "defaults"
    out = [f"<p>Hinge style <b>{_e(d.hinge.style)}</b> ({_e(opts)}).</p>"]
    rows_in = list(getattr(res, "hinge_rows", []) or [])
    if not rows_in:
        out.append('<p class="note">Hinge-line checks: not available (no thickness plan).</p>')
        return "\n".join(out)
    # the rows of the build's "hinge lines reach their stowed fold" check: each hinge line's fold
    # range against its own crease's fold in the stowed state
    rows = [[r["crease"], r["face"], r["gap_mm"], r["usable_mm"], r["range_deg"][0], r["range_deg"][1],
             r["stowed_fold_deg"], r["verdict"]] for r in rows_in]
    bad = [r for r in rows if r[-1] == "fail"]
    rows.sort(key=lambda r: (r[-1] != "fail", r[3]))
    out.append(f"<p>{len(rows)} hinge lines; {len(bad)} cannot reach their crease's fold in the stowed state "
               "without their slabs meeting.</p>")
    shown = rows[:40]
    out.append(_table(["crease", "face", "gap (mm)", "usable length (mm)", "fold range from (deg)",
                       "to (deg)", "stowed fold (deg)", "reaches it"], shown, num=(2, 3, 4, 5, 6)))
    if len(rows) > len(shown):
        out.append(f'<p class="note">{len(rows) - len(shown)} more hinge lines not listed '
                   "(failing and shortest first).</p>")
    return "\n".join(out)


def _materials_text(res: Any) -> str:
    parts = getattr(res, "parts", None)
    if parts is not None:
        mats = sorted({str(p.material) for p in parts.parts if getattr(p, "material", "")})
        if mats:
            return ", ".join(mats) + ("" if res.design.panels.material else " (default of the solids)")
    return res.design.panels.material or "unspecified"


def _key_figures(res: Any, m: dict[str, Any]) -> str:
    d = res.design

    def fmt(key: str, unit: str = "", digits: int = 4) -> str:
        v = m.get(key)
        if v is None:
            return "-"
        if isinstance(v, list):
            return " x ".join(f"{x:.{digits}g}" for x in v) + (f" {unit}" if unit else "")
        if isinstance(v, float):
            return f"{v:.{digits}g}" + (f" {unit}" if unit else "")
        return str(v) + (f" {unit}" if unit else "")

    rows = [
        ["panels / creases", f"{m.get('panels', '-')} / {m.get('creases', '-')}"],
        ["panel thickness", f"{d.panels.thickness:g} mm" + (" (with overrides)" if d.panels.overrides else "")],
        ["material", _materials_text(res)],
        ["thickness method", fmt("method")],
        ["hinge style", d.hinge.style],
        ["rigid folding", fmt("rigid")],
        ["fold reached", fmt("reached_fold_deg", "deg") + f" of {d.fold.target_deg:g} deg"],
        ["minimum clearance", m.get("min_clearance_text") or "-"],
        ["deployed envelope (x, y, z box)", fmt("deployed_envelope_mm", "mm")],
        [f"stowed envelope (x, y, z box) at t = {fmt('stowed_state_t')}", fmt("stowed_envelope_mm", "mm")],
        *([["stowed cylinder about the hub axis (diameter, height)",
            f"{fmt('stowed_diameter_mm')} x {fmt('stowed_height_mm', 'mm')}"]]
          if m.get("stowed_diameter_mm") is not None else []),
        ["packing ratio", fmt("packing_ratio", "", 3)],
        ["parts", fmt("parts")],
        ["total mass", fmt("total_mass_g", "g")],
    ]
    return _table(["quantity", "value"], rows)


def render_report(res: Any) -> str:
    """The HTML text of the report for a :class:`~thickpanel.build.BuildResult`."""
    d = res.design
    s = res.summary() if hasattr(res, "summary") else dict(res)
    m = s["metrics"]
    verdict = s.get("verdict") or ("PASS" if s["ok"] else "FAIL")
    pinned = source_date_epoch() is not None  # reproducible: no run times in the file
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f"<title>thickpanel report: {_e(d.name)}</title><style>{STYLE}</style></head><body>",
        f"<h1>{_e(d.name)}</h1>",
        f"<p>{_e(d.description)}</p>" if d.description else "",
        f'<p class="note">Design file: {_e(d.source.name if d.source else "(in memory)")}; layout '
        f"{_e(d.layout.family or (d.layout.pattern.name if d.layout.pattern else ''))}; panels "
        f"{d.panels.thickness:g} mm{' ' + _e(d.panels.material) if d.panels.material else ''}; target fold "
        f"{d.fold.target_deg:g} deg. All lengths in mm, angles in degrees.</p>",
        f'<p class="verdict">Verdict: {verdict}</p>',
        '<div class="caution"><b>Safety.</b> ' + _e(SAFETY[0]) + " " + _e(SAFETY[2]) + "</div>",
        "<h2>Key figures</h2>",
        _key_figures(res, m),
        "<h2>Checks</h2>",
        _checks_table(s["checks"]),
        "<h2>Crease pattern</h2>",
    ]
    try:
        parts.append(_img(crease_png(res.pattern), "crease drawing") if res.pattern is not None
                     else '<p class="note">Crease drawing: not available.</p>')
    except Exception as exc:  # noqa: BLE001 - a drawing failure must not lose the whole report
        parts.append(f'<p class="note">Crease drawing failed: {_e(exc)}</p>')
    from .report_wrap import wrap_section

    parts.append(wrap_section(res))  # hub-wrap arrays: deployed and stowed side by side, stowed figures
    parts += ["<h2>Fold sequence</h2>",
              f'<p class="note">Renders at fold fractions t = 0 (deployed) to 1 (stowed), from the '
              f'{_e(m.get("envelope_from", "fold path"))}.</p>',
              fold_sequence_section(res),
              view_section(res),
              "<h2>Clearance over the fold</h2>"]
    rep = getattr(res, "clearance", None)
    if rep is not None:
        parts.append(f"<p>Minimum clearance {_e(m.get('min_clearance_text') or '-')}; the design requires at "
                     f"least {d.checks.min_clearance:g} mm. Parts of panels joined by a hinge line, or touching "
                     "at a shared vertex in the flat sheet, are not compared (only their penetration counts); "
                     "knuckle barrels, pins and other hinge hardware are measured against every other panel.</p>")
        if getattr(rep, "worst_pairs", None):
            parts.append(_table(["pair", "clearance (mm)", "at t"],
                                [[f"{a}-{b}", float(c), float(t)] for (a, b), c, t in rep.worst_pairs],
                                num=(1, 2)))
            parts.append(_img(_clearance_png(rep), "clearance against fold fraction"))
        else:
            parts.append(_bound_table(rep))
    else:
        parts.append('<p class="note">Clearance over the fold: not available (the sweep did not run).</p>')
    slack = getattr(res, "slack", None)
    if slack is not None:
        parts.append("<h2>Joint slack (locked pattern)</h2>")
        parts.append(f"<p>With ideal hinges this pattern does not fold. The least-squares fold with rigid panels "
                     f"needs up to {slack.max_play_mm:.3g} mm of play at a hinge to reach "
                     f"{math.degrees(slack.target):.0f} deg; worst hinges: "
                     + _e(", ".join(f"{h} ({mm:.3g} mm)" for h, mm in slack.worst(5))) + ".</p>")
        parts.append(_table(["t", "total (mm)", "worst hinge along (mm)", "across (mm)", "off-axis (deg)"],
                            [[r["t"], r["total_mm"], r["worst_along_mm"], r["worst_across_mm"],
                              r["worst_off_axis_deg"]] for r in slack.rows()], num=(0, 1, 2, 3, 4)))
    parts.append("<h2>Stowed envelope</h2>")
    env_rows = []
    for key, label in (("deployed_envelope_mm", "deployed (t = 0)"),
                       ("stowed_envelope_mm", f"stowed (t = {m.get('stowed_state_t', 1.0)})")):
        if m.get(key):
            x, y, z = m[key]
            env_rows.append([label, x, y, z])
    if env_rows:
        parts.append(f'<p class="note">{_e(m.get("envelope", "box"))}: every slab and piece of hinge hardware, '
                     "the fold's fixed panel where the design draws it.</p>")
        parts.append(_table(["state", "x (mm)", "y (mm)", "z (mm)"], env_rows, num=(1, 2, 3)))
        dep = res.state_figures(0.0) if hasattr(res, "state_figures") else None  # the build's t = 0 figures
        cyl = ([["deployed (t = 0)", *dep["cylinder_mm"]]] if dep and "cylinder_mm" in dep else []) + \
            ([[f"stowed (t = {m.get('stowed_state_t')})", m["stowed_diameter_mm"], m["stowed_height_mm"]]]
             if m.get("stowed_diameter_mm") is not None else [])
        if cyl:
            parts.append(f'<p class="note">{_e(m.get("cylinder", ""))}.</p>')
            parts.append(_table(["state", "diameter (mm)", "height (mm)"], cyl, num=(1, 2)))
        if m.get("packing_ratio"):
            parts.append(f"<p>Packing ratio (deployed panel area / stowed footprint, the two largest sides of "
                         f"the stowed box): {m['packing_ratio']:.3g}.</p>")
    parts.append(_img(envelope_png(res), "stowed envelope"))
    parts += ["<h2>Bill of materials</h2>", _bom_section(res),
              "<h2>Thickness method</h2>", _method_section(res),
              "<h2>Hinges</h2>", _hinge_section(res),
              "<h2>Stages</h2>",
              _table(["stage", "status", "seconds", "note"],
                     [[st["stage"], st["status"], "" if pinned else float(st.get("seconds", 0.0)), st["note"]]
                      for st in s["stages"]],
                     num=(2,)),
              "<h2>Safety cautions</h2>",
              '<div class="caution">' + "".join(f"<p>{_e(x)}</p>" for x in SAFETY) + "</div>",
              "</body></html>"]
    return "\n".join(p for p in parts if p)


def write_report(res: Any, path: str | os.PathLike[str]) -> Path:
    """Write the report of a build result to ``path`` (temporary file, then rename); return the path."""
    from .writer import write_atomic

    out = Path(path)
    text = render_report(res).encode("utf-8")
    return write_atomic(out, text)  # temp file removed on any failure (full disk included)
