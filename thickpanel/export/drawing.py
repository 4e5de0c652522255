"""Crease-pattern drawings: SVG in millimetre user units and a PNG preview (matplotlib).

Line styles follow the traditional paper-folding conventions, all in black so that a drawing
prints and photocopies without losing information:

========  =========================================
kind      line
========  =========================================
valley    dashed
mountain  dash-dot-dot
border    solid
cut       heavy solid
flat      thin dotted
========  =========================================

Seam creases (border edges joined into one hinge line when a strip closes) are drawn as
borders with a small ``seam`` tag. No cadquery import: this module needs numpy and, for the PNG,
matplotlib only.
"""

from __future__ import annotations

import io
import math
import os
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape

import numpy as np

from ..errors import ExportError
from ..pattern import CreasePattern, cid, pid
from .writer import write_atomic

__all__ = ["LineStyle", "LINE_STYLES", "pattern_svg", "pattern_png", "write_drawings", "nice_length"]


@dataclass(frozen=True)
class LineStyle:
    """Stroke of one crease kind, in multiples of the base line width.

    width : stroke width factor; dashes : dash/gap lengths (empty = solid).
    """

    width: float
    dashes: tuple[float, ...]


LINE_STYLES: dict[str, LineStyle] = {
    "valley": LineStyle(1.0, (6.0, 3.0)),
    "mountain": LineStyle(1.0, (8.0, 2.0, 1.2, 2.0, 1.2, 2.0)),
    "border": LineStyle(1.3, ()),
    "cut": LineStyle(3.0, ()),
    "flat": LineStyle(0.6, (0.6, 2.4)),
}
_DRAW_ORDER = ("flat", "valley", "mountain", "border", "cut")
_LEGEND_TEXT = {
    "valley": "valley fold",
    "mountain": "mountain fold",
    "border": "border",
    "cut": "cut",
    "flat": "flat line",
}


ID_PANEL_PT = 9.0  #: panel-id font size of the PNG drawing, points
ID_CREASE_PT = 7.5  #: crease-id font size of the PNG drawing, points
ID_FONT_DIV = (57.0, 68.0)  #: SVG panel / crease id font size = pattern extent / these


def nice_length(target: float) -> float:
    """The largest 1, 2 or 5 x 10^k not above ``target`` (mm); used for scale bars."""
    if not (target > 0 and math.isfinite(target)):
        raise ExportError(f"scale bar length must be a positive finite number of mm; got {target!r}")
    e = math.floor(math.log10(target))
    for f in (5.0, 2.0, 1.0):
        if f * 10**e <= target * (1 + 1e-12):
            return f * 10**e
    return 10.0 ** (e - 1) * 5.0


def _fmt(x: float) -> str:
    s = f"{x:.3f}".rstrip("0").rstrip(".")
    return "0" if s in ("-0", "") else s


@dataclass(frozen=True)
class _Frame:
    """Drawing layout in mm: pattern bounding box, margins and derived sizes."""

    x0: float
    y0: float
    x1: float
    y1: float
    margin: float
    footer: float
    lw: float

    @property
    def width(self) -> float:
        return (self.x1 - self.x0) + 2 * self.margin

    @property
    def height(self) -> float:
        return (self.y1 - self.y0) + 2 * self.margin + self.footer


def _frame(pattern: CreasePattern, line_width: float | None) -> _Frame:
    v = pattern.vertices
    if len(v) == 0:
        raise ExportError("cannot draw an empty pattern (no vertices)")
    x0, y0 = v.min(axis=0)
    x1, y1 = v.max(axis=0)
    ext = max(x1 - x0, y1 - y0)
    if not ext > 0:
        raise ExportError(f"pattern {pattern.name!r} has zero extent; nothing to draw")
    lw = float(line_width) if line_width is not None else ext / 450.0
    if not (lw > 0 and math.isfinite(lw)):
        raise ExportError(f"line_width = {line_width!r} mm; allowed: a positive finite width in mm")
    margin = 0.06 * ext
    footer = 0.10 * ext
    return _Frame(float(x0), float(y0), float(x1), float(y1), margin, footer, lw)


def _segments(pattern: CreasePattern) -> dict[str, np.ndarray]:
    v = pattern.vertices
    c = pattern.creases
    kinds = np.array(pattern.kinds, dtype=object)
    return {k: np.stack([v[c[kinds == k, 0]], v[c[kinds == k, 1]]], axis=1) for k in _DRAW_ORDER if np.any(kinds == k)}


def _legend_layout(pattern: CreasePattern, fr: _Frame, font_mm: float) -> list[tuple[str, float, float]]:
    """(kind, x of the line sample, sample length) for a right-aligned one-row legend, mm."""
    kinds = list(_segments(pattern))
    sample = 34.0 * fr.lw  # two dash-dot-dot periods
    widths = [sample + 1.5 * fr.lw + 0.62 * font_mm * len(_LEGEND_TEXT[k]) + 5.0 * fr.lw for k in kinds]
    x = fr.x1 - sum(widths)
    out = []
    for k, w in zip(kinds, widths, strict=True):
        out.append((k, x, sample))
        x += w
    return out


# ---------------------------------------------------------------------------- SVG
def pattern_svg(
    pattern: CreasePattern,
    *,
    labels: bool = False,
    scale_bar: bool = True,
    legend: bool = True,
    title: bool = True,
    line_width: float | None = None,
) -> str:
    """SVG drawing of a crease pattern at 1:1 scale (user unit = 1 mm).

    Parameters
    ----------
    pattern : CreasePattern
    labels : draw panel ids (``P017``) at panel centroids and crease ids at crease midpoints.
    scale_bar : draw a scale bar (1, 2 or 5 x 10^k mm, about a fifth of the width).
    legend : draw a legend of the line styles used.
    title : write the pattern name above the drawing.
    line_width : float, mm, base stroke width (default: extent / 450).

    Returns
    -------
    str
        A standalone SVG document; ``width``/``height`` in mm, +y of the pattern drawn upwards.
    """
    fr = _frame(pattern, line_width)
    lw = fr.lw
    vx = fr.x0 - fr.margin
    vy = -(fr.y1 + fr.margin)  # svg y = -pattern y
    out: list[str] = [
        '<?xml version="1.0" encoding="UTF-8"?>',
        '<svg xmlns="http://www.w3.org/2000/svg" '
        'xmlns:inkscape="http://www.inkscape.org/namespaces/inkscape" '
        f'version="1.1" width="{_fmt(fr.width)}mm" '
        f'height="{_fmt(fr.height)}mm" viewBox="{_fmt(vx)} {_fmt(vy)} {_fmt(fr.width)} {_fmt(fr.height)}">',
        f"<title>{escape(pattern.name or 'crease pattern')}</title>",
        f'<rect x="{_fmt(vx)}" y="{_fmt(vy)}" width="{_fmt(fr.width)}" height="{_fmt(fr.height)}" fill="white"/>',
    ]
    for kind, seg in _segments(pattern).items():
        st = LINE_STYLES[kind]
        dash = ""
        if st.dashes:
            dash = f' stroke-dasharray="{" ".join(_fmt(d * lw) for d in st.dashes)}"'
        cap = "round" if kind == "flat" else "butt"
        out.append(
            f'<g id="{kind}" fill="none" stroke="black" stroke-width="{_fmt(st.width * lw)}" '
            f'stroke-linecap="{cap}"{dash}>'
        )
        for (ax, ay), (bx, by) in seg.tolist():
            out.append(f'<line x1="{_fmt(ax)}" y1="{_fmt(-ay)}" x2="{_fmt(bx)}" y2="{_fmt(-by)}"/>')
        out.append("</g>")
    fs = 4.0 * lw
    if pattern.seams:
        out.append(f'<g id="seams" font-family="sans-serif" font-size="{_fmt(fs)}" text-anchor="middle">')
        v, c = pattern.vertices, pattern.creases
        for s in pattern.seams:
            for e in (s.a, s.b):
                mx, my = (v[c[e, 0]] + v[c[e, 1]]) / 2
                out.append(f'<text x="{_fmt(mx)}" y="{_fmt(-my)}" dy="{_fmt(-1.5 * lw)}">seam {cid(s.a)}</text>')
        out.append("</g>")
    if labels:
        # the ids are one layer (a group an SVG editor can hide), sized like the PNG's: panel ids
        # about 1/57 and crease ids about 1/68 of the pattern's extent
        ext = max(fr.x1 - fr.x0, fr.y1 - fr.y0)
        pfs, cfs = ext / ID_FONT_DIV[0], ext / ID_FONT_DIV[1]
        out.append(f'<g id="labels" inkscape:groupmode="layer" inkscape:label="ids" font-family="sans-serif" '
                   f'text-anchor="middle" font-size="{_fmt(pfs)}">')
        for p in pattern.panels:
            cx, cy = p.centroid
            out.append(f'<text x="{_fmt(cx)}" y="{_fmt(-cy)}" dy="{_fmt(pfs / 3)}" font-weight="bold">'
                       f"{pid(p.index)}</text>")
        v, c = pattern.vertices, pattern.creases
        mids = (v[c[:, 0]] + v[c[:, 1]]) / 2
        out.append(f'<g font-size="{_fmt(cfs)}" fill="#333" stroke="white" stroke-width="{_fmt(cfs / 5)}" '
                   'paint-order="stroke">')
        for k, (mx, my) in enumerate(mids.tolist()):
            out.append(f'<text x="{_fmt(mx)}" y="{_fmt(-my)}" dy="{_fmt(cfs / 3)}">{cid(k)}</text>')
        out.append("</g></g>")
    ybase = -(fr.y0 - fr.margin * 0.5) + fr.footer * 0.45  # footer row, svg coordinates
    if title and pattern.name:
        out.append(
            f'<text x="{_fmt(fr.x0)}" y="{_fmt(vy + fr.margin * 0.6)}" font-family="sans-serif" '
            f'font-size="{_fmt(1.6 * fs)}">{escape(pattern.name)}</text>'
        )
    if scale_bar:
        length = nice_length(0.2 * (fr.x1 - fr.x0 or fr.y1 - fr.y0))
        x = fr.x0
        t = 1.2 * lw
        out.append(f'<g id="scale-bar" stroke="black" stroke-width="{_fmt(t)}" fill="none">')
        out.append(f'<line x1="{_fmt(x)}" y1="{_fmt(ybase)}" x2="{_fmt(x + length)}" y2="{_fmt(ybase)}"/>')
        for k in range(3):
            xx = x + k * length / 2
            tick = 2.5 * lw if k != 1 else 1.5 * lw
            out.append(f'<line x1="{_fmt(xx)}" y1="{_fmt(ybase - tick)}" x2="{_fmt(xx)}" y2="{_fmt(ybase + tick)}"/>')
        out.append("</g>")
        out.append(
            f'<text x="{_fmt(x + length / 2)}" y="{_fmt(ybase + 7 * lw)}" font-family="sans-serif" '
            f'font-size="{_fmt(1.2 * fs)}" text-anchor="middle">{_fmt(length)} mm</text>'
        )
    if legend:
        for kind, xx, sample in _legend_layout(pattern, fr, 1.2 * fs):
            st = LINE_STYLES[kind]
            dash = f' stroke-dasharray="{" ".join(_fmt(d * lw) for d in st.dashes)}"' if st.dashes else ""
            out.append(
                f'<line x1="{_fmt(xx)}" y1="{_fmt(ybase)}" x2="{_fmt(xx + sample)}" y2="{_fmt(ybase)}" '
                f'stroke="black" stroke-width="{_fmt(st.width * lw)}"{dash}/>'
            )
            out.append(
                f'<text x="{_fmt(xx + sample + 1.5 * lw)}" y="{_fmt(ybase + fs / 3)}" font-family="sans-serif" '
                f'font-size="{_fmt(1.2 * fs)}">{_LEGEND_TEXT[kind]}</text>'
            )
    out.append("</svg>")
    return "\n".join(out) + "\n"


# ---------------------------------------------------------------------------- PNG
def pattern_png(
    pattern: CreasePattern,
    *,
    labels: bool = False,
    dpi: int = 150,
    size_in: float = 8.0,
    scale_bar: bool = True,
    legend: bool = True,
) -> bytes:
    """PNG preview of a crease pattern (matplotlib, Agg backend), black lines on white.

    Parameters
    ----------
    labels : panel and crease ids as in :func:`pattern_svg`.
    dpi : int, 30..1200
    size_in : float, inches, the longer side of the image.

    Returns
    -------
    bytes, a PNG file.
    """
    if isinstance(dpi, bool) or not isinstance(dpi, int) or not 30 <= dpi <= 1200:
        raise ExportError(f"dpi = {dpi!r}; allowed: a whole number 30..1200")
    if not (isinstance(size_in, (int, float)) and 1.0 <= size_in <= 60.0):
        raise ExportError(f"size_in = {size_in!r} in; allowed: 1..60 in")
    import matplotlib  # noqa: PLC0415  (heavy, only for PNG)

    matplotlib.use("Agg", force=False)
    from matplotlib.collections import LineCollection  # noqa: PLC0415
    from matplotlib.figure import Figure  # noqa: PLC0415

    fr = _frame(pattern, None)
    w, h = fr.width, fr.height
    scale = size_in / max(w, h)  # inches per mm
    fig = Figure(figsize=(w * scale, h * scale), dpi=dpi, facecolor="white")
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_xlim(fr.x0 - fr.margin, fr.x1 + fr.margin)
    ax.set_ylim(fr.y0 - fr.margin - fr.footer, fr.y1 + fr.margin)
    ax.set_aspect("equal")
    ax.axis("off")
    pt_per_mm = 72.0 * scale
    base_pt = max(fr.lw * pt_per_mm, 0.6)
    # dash patterns are in multiples of the line width in matplotlib; keep them readable at preview size
    for kind, seg in _segments(pattern).items():
        st = LINE_STYLES[kind]
        lwp = st.width * base_pt
        style: object = "solid" if not st.dashes else (0.0, tuple(d * base_pt / lwp for d in st.dashes))
        cap = "round" if kind == "flat" else "butt"
        ax.add_collection(LineCollection(list(seg), colors="black", linewidths=lwp, linestyles=[style], capstyle=cap))
    fs = max(4.0 * fr.lw * pt_per_mm, 5.0)
    if labels:
        # ids legible at 100 % zoom: panel ids ID_PANEL_PT, crease ids ID_CREASE_PT points at the image's
        # own size (at 150 dpi about 19 and 16 px), crease ids centred on their crease over a white pad
        grow = max(1.0, size_in / 8.0)
        for p in pattern.panels:
            ax.text(*p.centroid, pid(p.index), ha="center", va="center", fontsize=ID_PANEL_PT * grow,
                    fontweight="bold")
        v, c = pattern.vertices, pattern.creases
        for k, (mx, my) in enumerate(((v[c[:, 0]] + v[c[:, 1]]) / 2).tolist()):
            ax.text(mx, my, cid(k), fontsize=ID_CREASE_PT * grow, color="#333", ha="center", va="center",
                    bbox={"boxstyle": "square,pad=0.05", "facecolor": "white", "edgecolor": "none", "alpha": 0.8})
    for s in pattern.seams:
        v, c = pattern.vertices, pattern.creases
        for e in (s.a, s.b):
            mx, my = (v[c[e, 0]] + v[c[e, 1]]) / 2
            ax.text(mx, my, f"seam {cid(s.a)}", ha="center", va="bottom", fontsize=fs)
    ybase = fr.y0 - fr.margin * 0.5 - fr.footer * 0.45
    if pattern.name:
        ax.text(fr.x0, fr.y1 + fr.margin * 0.4, pattern.name, fontsize=1.6 * fs, va="bottom")
    if scale_bar:
        length = nice_length(0.2 * (fr.x1 - fr.x0 or fr.y1 - fr.y0))
        ax.plot([fr.x0, fr.x0 + length], [ybase, ybase], color="black", lw=1.2 * base_pt, solid_capstyle="butt")
        for k in range(3):
            t = (2.5 if k != 1 else 1.5) * fr.lw
            xx = fr.x0 + k * length / 2
            ax.plot([xx, xx], [ybase - t, ybase + t], color="black", lw=1.2 * base_pt)
        ax.text(fr.x0 + length / 2, ybase - 4 * fr.lw, f"{_fmt(length)} mm", ha="center", va="top", fontsize=1.2 * fs)
    if legend:
        for kind, xx, sample in _legend_layout(pattern, fr, 1.2 * fs / pt_per_mm):
            st = LINE_STYLES[kind]
            lwp = st.width * base_pt
            style = "solid" if not st.dashes else (0.0, tuple(d * base_pt / lwp for d in st.dashes))
            ax.add_collection(LineCollection([[(xx, ybase), (xx + sample, ybase)]], colors="black",
                                             linewidths=lwp, linestyles=[style]))
            ax.text(xx + sample + 1.5 * fr.lw, ybase, _LEGEND_TEXT[kind], va="center", fontsize=1.2 * fs)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, facecolor="white", metadata={"Software": None})
    return buf.getvalue()


def write_drawings(
    pattern: CreasePattern, out_dir: str | os.PathLike[str], stem: str, *, labels: bool = True, dpi: int = 150
) -> list[Path]:
    """Write ``<stem>.svg`` and ``<stem>.png`` into ``out_dir`` (created if missing).

    ``labels`` (default True) adds the id layer: panel ids at centroids, crease ids at midpoints,
    as every exported file is named by these ids; pass False for a drawing without ids.

    Both are rendered before anything is written; each file goes through a temp file and a rename.

    Returns
    -------
    list of Path, [svg, png].
    """
    if not stem or any(ch in stem for ch in "/\\") or stem in (".", ".."):
        raise ExportError(f"drawing stem {stem!r} must be a plain file name without folders")
    svg = pattern_svg(pattern, labels=labels).encode("utf-8")
    png = pattern_png(pattern, labels=labels, dpi=dpi)
    d = Path(out_dir)
    try:
        d.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ExportError(f"cannot create drawing folder {str(d)!r}: {exc}") from None
    return [write_atomic(d / f"{stem}.svg", svg), write_atomic(d / f"{stem}.png", png)]
