"""Every bundled example: one number per figure, and a clearance no larger than the built parts'.

One in-process build per example (module fixture) serves every test here.

Outside sources:
- distances between the built solids: OCP ``BRepExtrema_DistShapeShape`` (Open CASCADE
  Technology 7.7, BRepExtrema package), the exact B-rep distance of two shapes; bounding boxes by
  ``BRepBndLib::AddOptimal`` (same library);
- the report is read with Python's ``html.parser`` (WHATWG HTML tokenizer), ``metrics.json`` and
  the summary with ``json`` (RFC 8259, Bray 2017).
The 5 % agreement and the 1e-3 mm allowance are the acceptance limits of the project's issue 11
(no outside source); the sweep's disks are circumscribed 24-gons, 0.86 % larger in radius.
"""

from __future__ import annotations

import html
import json
import math
import re
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest

pytestmark = pytest.mark.cad

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "examples"
DESIGNS = sorted(p.stem for p in EX.glob("*.toml"))


@pytest.fixture(scope="module", params=DESIGNS)
def built(request, tmp_path_factory):
    from thickpanel.build import run_pipeline
    from thickpanel.design import load_design

    out = tmp_path_factory.mktemp(request.param)
    res = run_pipeline(load_design(EX / f"{request.param}.toml"), command="build", out_dir=out)
    summary = json.loads(json.dumps(res.summary(), allow_nan=False))  # what --json prints
    return request.param, res, summary


class _Tables(HTMLParser):
    """Rows of every table of the report (cell texts) and the verdict paragraph."""

    def __init__(self) -> None:
        super().__init__()
        self.tables: list[list[list[str]]] = []
        self.verdict = ""
        self._cell: list[str] | None = None
        self._in_verdict = False

    def handle_starttag(self, tag, attrs):
        if tag == "table":
            self.tables.append([])
        elif tag == "tr" and self.tables:
            self.tables[-1].append([])
        elif tag in ("td", "th"):
            self._cell = []
        elif tag == "p" and dict(attrs).get("class") == "verdict":
            self._in_verdict = True

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self.tables[-1][-1].append("".join(self._cell).strip())
            self._cell = None
        elif tag == "p":
            self._in_verdict = False

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)
        if self._in_verdict:
            self.verdict += data


def _report(res) -> _Tables:
    p = _Tables()
    p.feed(Path(res.report).read_text(encoding="utf-8"))
    return p


def _numbers(text: str) -> list[float]:
    return [float(x) for x in re.findall(r"-?\d+(?:\.\d+)?(?:e[-+]?\d+)?", text)]


def test_report_json_and_metrics_agree(built):
    name, res, s = built
    m = s["metrics"]
    files = {Path(p).parent.name: json.loads(Path(p).read_text()) for p in s["outputs"]
             if Path(p).name == "metrics.json"}
    assert files or "metrics" not in res.design.exports.formats
    for folder, met in files.items():
        # every figure the summary and the file share is the same value
        shared = set(m) & set(met)
        assert {"deployed_area_mm2", "min_clearance_mm", "min_clearance_text", "packing_ratio",
                "stowed_envelope_mm", "stowed_state_t"} <= shared, (folder, sorted(shared))
        for k in shared:
            assert met[k] == m[k], (folder, k)
        # the file's own state figures: its fraction, and the box of that state
        t = met["state_t"]
        assert folder in (f"t{t:.2f}", Path(s["out_dir"]).name)
        if t == m["stowed_state_t"]:
            assert met["box_mm"] == m["stowed_envelope_mm"]
        if t == 0.0:
            assert met["box_mm"] == m["deployed_envelope_mm"] and met["fold_deg"] == 0.0
    # the report prints the same figures (its key-figures table, 4 significant digits)
    rows = {r[0]: r[1] for r in _report(res).tables[0][1:]}
    assert rows["minimum clearance"] == m["min_clearance_text"]
    if m["min_clearance_lower_bound"]:
        assert rows["minimum clearance"].startswith("at least ")
    stowed = next(v for k, v in rows.items() if k.startswith("stowed envelope"))
    assert _numbers(stowed) == pytest.approx(m["stowed_envelope_mm"], rel=5e-4)
    assert _numbers(rows["deployed envelope (x, y, z box)"]) == pytest.approx(m["deployed_envelope_mm"], rel=5e-4)
    assert float(rows["packing ratio"]) == pytest.approx(m["packing_ratio"], rel=5e-3)
    if name == "reflector-backing":
        # the deployed sheet is a 240 mm square drawn along the axes (issue 11: it was 337 x 337)
        assert m["deployed_envelope_mm"][:2] == pytest.approx([240.0, 240.0], abs=1e-9)
    if name == "sun-shade-disc":
        # rim: regular octagon of circumradius 600 mm (CRC Standard Mathematical Tables), 2 mm panels
        flat = next(met for met in files.values() if met["state_t"] == 0.0)
        assert flat["cylinder_mm"] == pytest.approx([1200.0, 2.0], abs=1e-4)
        stowed_file = next(met for met in files.values() if met["state_t"] == m["stowed_state_t"])
        assert stowed_file["cylinder_mm"] == [m["stowed_diameter_mm"], m["stowed_height_mm"]]
        assert m["stowed_diameter_mm"] >= max(m["stowed_envelope_mm"][:2]) - 1e-6


def test_no_pass_beside_a_failing_row(built):
    _name, res, s = built
    rep = _report(res)
    verdict = rep.verdict.split(":", 1)[1].strip()
    assert verdict == s["verdict"]
    cells = [c.lower() for t in rep.tables for row in t[1:] for c in row]
    if verdict == "PASS":
        assert not {"fail", "not proven", "could not run"} & set(cells)
    assert all(c["verdict"] not in ("fail", "not proven", "could not run") for c in s["checks"]) == \
        (s["verdict"] == "PASS")


def _owners(part, plan) -> set[int]:
    """Panels a part belongs to: its panel; for hinge parts (``PIN-C004``) the hinge's two panels."""
    if part.kind == "panel":
        return {int(part.panel)}
    m = re.search(r"-C(\d+)$", part.name)
    if m:
        for h in plan.hinges:
            if h.crease == int(m.group(1)):
                return {int(h.panels[0]), int(h.panels[1])}
    return set(range(plan.pattern.n_panels))  # a sheet over every panel: adjacent to all


def _dist(a, b) -> float:
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape

    d = BRepExtrema_DistShapeShape(a, b)
    d.Perform()
    assert d.IsDone()
    return float(d.Value())


def _box_gap(a: np.ndarray, b: np.ndarray) -> float:
    gap = np.maximum(0.0, np.maximum(a[0] - b[1], b[0] - a[1]))
    return float(np.linalg.norm(gap))


def reported_text(m: dict) -> str:
    return m["min_clearance_text"]


def test_reported_clearance_is_not_above_the_built_parts(built):
    from thickpanel import occ

    name, res, s = built
    m, rep, plan, ps = s["metrics"], res.clearance, res.plan, res.parts
    parts = list(ps.parts)
    hinged = {frozenset(e) for e in plan.pattern.panel_graph.edges()}
    owners = [_owners(p, plan) for p in parts]
    shared_vertex = {}
    for p in plan.pattern.panels:
        shared_vertex[p.index] = {int(v) for v in p.loop}
    flat = ps.placed(None)

    def adjacent(i: int, j: int) -> bool:
        a, b = owners[i], owners[j]
        if a & b or any(frozenset((x, y)) in hinged for x in a for y in b):
            return True
        # parts of panels sharing a vertex that touch in the flat sheet meet there by construction
        if any(shared_vertex[x] & shared_vertex[y] for x in a for y in b):
            return _dist(flat[i], flat[j]) <= 1e-3
        return False

    t = m["min_clearance_where"]["t"] if not m["min_clearance_lower_bound"] else m["stowed_state_t"]
    placed = ps.placed(res.path.at(t))
    boxes = [occ.bbox(sh) for sh in placed]
    pairs = sorted((_box_gap(boxes[i], boxes[j]), i, j) for i in range(len(parts)) for j in range(i + 1, len(parts)))
    # exact minimum over the non-adjacent pairs: OCP distances in order of their box gap (a lower
    # bound of the distance) until the next box gap exceeds the best distance found
    best, calls, got = math.inf, 0, {}
    for gap, i, j in pairs:
        if gap > best or calls >= 80:
            break
        if adjacent(i, j):
            continue
        d = _dist(placed[i], placed[j])
        calls += 1
        got[(parts[i].name, parts[j].name)] = d
        best = min(best, d)
    assert got, f"{name}: no pair of non-adjacent parts measured"
    print(f"{name}: t = {t}, reported {reported_text(m)}, OCP minimum {best:.4f} mm over {calls} pairs")
    reported = float(rep.min_clearance)
    assert reported <= best + 1e-3, (name, reported, best, min(got, key=got.get))
    if not m["min_clearance_lower_bound"]:
        a, b = m["min_clearance_where"]["pair"]
        ia = [k for k, p in enumerate(parts) if a in {f"P{x:03d}" for x in owners[k]} and p.kind == "panel"]
        ib = [k for k, p in enumerate(parts) if b in {f"P{x:03d}" for x in owners[k]} and p.kind == "panel"]
        # the reported pair (with the hardware riding on those two panels) measured by OCP
        ride = [k for k, p in enumerate(parts) if p.kind != "panel" and int(p.panel) in
                {int(a[1:]), int(b[1:])} and len(owners[k]) == 2]
        group_a = [k for k in ia + ride if int(parts[k].panel) == int(a[1:])]
        group_b = [k for k in ib + ride if int(parts[k].panel) == int(b[1:])]
        d_pair = min(_dist(placed[i], placed[j]) for i in group_a for j in group_b if not adjacent(i, j))
        assert reported <= d_pair + 1e-3
        assert reported >= 0.95 * d_pair, (name, reported, d_pair)
        print(f"{name}: reported pair {a}-{b} measured {d_pair:.4f} mm by OCP")


def test_clearance_plot_or_bound_table(built):
    # a plot of bounds only would be a flat line at the search margin: the report gives a table
    _name, res, s = built
    page = html.unescape(Path(res.report).read_text(encoding="utf-8"))
    plotted = 'alt="clearance against fold fraction"' in page
    if s["metrics"]["min_clearance_lower_bound"] and not res.clearance.worst_pairs:
        assert not plotted and "every state's minimum is a bound" in page
    else:
        assert plotted


def test_hinge_rows_compare_each_crease_with_its_own_stowed_fold(built):
    name, res, s = built
    rows = res.hinge_rows
    if not rows:
        pytest.skip("no hinge lines")
    last = np.asarray(res.path.states[-1].angles)
    for r in rows:
        assert r["stowed_fold_deg"] == pytest.approx(math.degrees(last[int(r["crease"][1:])]), abs=1e-9)
        lo, hi = r["range_deg"]
        assert (r["verdict"] == "pass") == (lo - 1e-6 <= r["stowed_fold_deg"] <= hi + 1e-6)
    row = next(c for c in s["checks"] if c["check"] == "hinge lines reach their stowed fold")
    assert row["verdict"] == ("pass" if all(r["verdict"] == "pass" for r in rows) else "fail")
    if name == "sun-shade-disc":
        # most of the disc's creases fold less than the 100 deg of its largest one: compared with
        # their own stowed fold, every hinge line reaches it (issue 11: the table said 38 of 40 fail)
        target = res.design.fold.target_deg
        assert sum(abs(r["stowed_fold_deg"]) < target - 1.0 for r in rows) >= 30
        assert all(r["verdict"] == "pass" for r in rows)
