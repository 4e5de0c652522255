"""Study pictures: Pareto front (size ratio against mass, coloured by minimum clearance) and a
parallel-coordinates view of the axes, as PNG and in one HTML study report."""

from __future__ import annotations

import base64
import html
import io
from pathlib import Path
from typing import Any

import numpy as np

from .spec import Study

__all__ = ["pareto_front", "write_report", "RATIO_COLUMNS"]

RATIO_COLUMNS = ("metric.diameter_ratio", "metric.packing_ratio")  # first one present is used
MASS_COLUMNS = ("metric.total_mass_g", "metric.total_volume_mm3")


def _pick(rows: list[dict[str, Any]], cols: tuple[str, ...]) -> str | None:
    for c in cols:
        if any(isinstance(r.get(c), int | float) for r in rows):
            return c
    return None


def pareto_front(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Indices of points no other point beats (larger ``x`` and smaller ``y``), sorted by ``x``."""
    keep = []
    for i in range(len(x)):
        dom = (x >= x[i]) & (y <= y[i]) & ((x > x[i]) | (y < y[i]))
        if not dom.any():
            keep.append(i)
    return np.array(sorted(keep, key=lambda i: x[i]), dtype=int)


def _png(fig: Any) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=110, bbox_inches="tight")
    return buf.getvalue()


def write_report(study: Study, rows: list[dict[str, Any]], out: Path) -> list[Path]:
    """``pareto.png``, ``axes.png`` and ``study-report.html`` in ``out`` (each written atomically)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    ok = [r for r in rows if r.get("status") == "ok"]
    xc, yc = _pick(ok, RATIO_COLUMNS), _pick(ok, MASS_COLUMNS)
    pngs: dict[str, bytes] = {}
    if xc and yc:
        pts = [r for r in ok if isinstance(r.get(xc), int | float) and isinstance(r.get(yc), int | float)]
        x = np.array([r[xc] for r in pts], float)
        y = np.array([r[yc] for r in pts], float)
        c = np.array([r.get("metric.min_clearance_mm", np.nan) or np.nan for r in pts], float)
        fig, ax = plt.subplots(figsize=(6.4, 4.4))
        sc = ax.scatter(x, y, c=c, cmap="viridis", s=22)
        fig.colorbar(sc, ax=ax, label="minimum clearance over the fold (mm)")
        if len(x):
            f = pareto_front(x, y)
            ax.plot(x[f], y[f], "k--", lw=1, label="Pareto front")
            ax.legend()
        ax.set_xlabel(xc.removeprefix("metric.") + " (-)")
        ax.set_ylabel(yc.removeprefix("metric."))
        ax.set_title(f"{study.name}: {len(pts)} variants")
        pngs["pareto.png"] = _png(fig)
        plt.close(fig)
    axes = [f"axis.{a.key}" for a in study.axes]
    num = [a for a in axes if any(isinstance(r.get(a), int | float) and not isinstance(r.get(a), bool) for r in ok)]
    if num and ok:
        fig, ax = plt.subplots(figsize=(7.2, 4.0))
        data = np.array([[float(r.get(a, np.nan)) if isinstance(r.get(a), int | float) else np.nan for a in num]
                         for r in ok])
        lo, hi = np.nanmin(data, axis=0), np.nanmax(data, axis=0)
        z = (data - lo) / np.where(hi > lo, hi - lo, 1.0)
        col = np.array([r.get("metric.min_clearance_mm", np.nan) or np.nan for r in ok], float)
        finite = np.isfinite(col)
        cmap = plt.get_cmap("viridis")
        cn = (col - np.nanmin(col)) / max(np.nanmax(col) - np.nanmin(col), 1e-12) if finite.any() else col
        for k in range(len(ok)):
            ax.plot(range(len(num)), z[k], color=cmap(cn[k]) if finite[k] else "0.6", lw=0.8, alpha=0.7)
        ax.set_xticks(range(len(num)), [f"{a.removeprefix('axis.')}\n{lo[i]:g}..{hi[i]:g}" for i, a in enumerate(num)])
        ax.set_yticks([])
        ax.set_title("axes (each scaled to its range), coloured by minimum clearance")
        pngs["axes.png"] = _png(fig)
        plt.close(fig)
    paths = []
    for name, blob in pngs.items():
        p = out / name
        tmp = p.with_suffix(".png.tmp")
        tmp.write_bytes(blob)
        tmp.replace(p)
        paths.append(p)
    failed = [r for r in rows if r.get("status") != "ok"]
    imgs = "".join(f'<p><img alt="{n}" src="data:image/png;base64,{base64.b64encode(d).decode()}"></p>'
                   for n, d in pngs.items())
    fails = "".join(f"<tr><td>{html.escape(r['id'])}</td><td>{html.escape(str(r.get('error_class')))}</td>"
                    f"<td>{html.escape(str(r.get('error_message'))[:300])}</td></tr>" for r in failed[:200])
    doc = (f"<!doctype html><html><head><meta charset='utf-8'><title>{html.escape(study.name)} study</title></head>"
           f"<body><h1>Study {html.escape(study.name)}</h1><p>base design {html.escape(str(study.base))}; "
           f"{len(rows)} variants, {len(ok)} evaluated, {len(failed)} failed. Table: results.csv, results.parquet."
           "</p><p>Geometry only: a chosen variant still needs its full build, its report and licensed engineering "
           "review before hardware is made.</p>"
           f"{imgs}<h2>Failed variants</h2><table><tr><th>id</th><th>error</th><th>message</th></tr>{fails}</table>"
           "</body></html>")
    p = out / "study-report.html"
    tmp = p.with_suffix(".html.tmp")
    tmp.write_text(doc, encoding="utf-8")
    tmp.replace(p)
    return paths + [p]
