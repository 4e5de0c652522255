"""Design studies: axes, stable ids, resumable table, same rows in-process and on a LocalCluster,
metrics equal to ``thickpanel check --json``. Expected values are this project's own run_check
figures (no outside source applies: the study only re-tabulates them)."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from thickpanel.cli import main
from thickpanel.study import StudyError, load_study, run_study, study_from_dict, variants

EX = Path(__file__).resolve().parents[1] / "examples" / "studies"


def _study(tmp_path: Path, axes: list[dict], **extra) -> Path:
    shutil.copy(EX / "study-disc-base.toml", tmp_path / "base.toml")
    from thickpanel.study.spec import toml_value

    lines = ['base = "base.toml"', 'output = "out"']
    for a in axes:
        lines.append("[[axis]]")
        lines += [f"{k} = {toml_value(v)}" for k, v in a.items()]
    for sect, t in extra.items():
        lines.append(f"[{sect}]")
        lines += [f"{k} = {toml_value(v)}" for k, v in t.items()]
    p = tmp_path / "study.toml"
    p.write_text("\n".join(lines) + "\n")
    return p


def test_bad_axes_name_the_key(tmp_path):
    with pytest.raises(StudyError, match=r"panels.thicknes.*did you mean 'panels.thickness'"):
        load_study(_study(tmp_path, [{"key": "panels.thicknes", "values": [1.0]}]))
    with pytest.raises(StudyError, match=r"layout.slits.*values is empty"):
        load_study(_study(tmp_path, [{"key": "layout.slits", "values": []}]))
    with pytest.raises(StudyError, match=r"panels.thickness.*step = 0"):
        load_study(_study(tmp_path, [{"key": "panels.thickness", "start": 1.0, "stop": 2.0, "step": 0.0}]))
    with pytest.raises(StudyError, match=r"wrong sign"):
        load_study(_study(tmp_path, [{"key": "panels.thickness", "start": 1.0, "stop": 2.0, "step": -0.5}]))
    with pytest.raises(StudyError, match="no \\[\\[axis\\]\\]"):
        study_from_dict({"base": str(EX / "study-disc-base.toml")})


def test_axes_ranges_and_samples_are_deterministic(tmp_path):
    p = _study(tmp_path, [{"key": "panels.thickness", "start": 1.0, "stop": 2.0, "step": 0.5},
                          {"key": "fold.target_deg", "low": 60.0, "high": 90.0}],
               sample={"n": 3, "method": "lhs", "seed": 3})
    a, b = variants(load_study(p)), variants(load_study(p))
    assert len(a) == 9  # 3 thicknesses x 3 Latin-hypercube samples
    assert [v.id for v in a] == [v.id for v in b]
    assert sorted({v.values["panels.thickness"] for v in a}) == [1.0, 1.5, 2.0]
    # Latin hypercube (McKay, Beckman and Conover 1979): one sample in each third of [60, 90]
    strata = sorted(int((v.values["fold.target_deg"] - 60.0) // 10.0) for v in a[:3])
    assert strata == [0, 1, 2]


def test_unreachable_scheduler_is_a_clear_error(tmp_path):
    s = load_study(_study(tmp_path, [{"key": "panels.thickness", "values": [1.0]}]))
    with pytest.raises(StudyError, match="cannot reach the Dask scheduler within 2 s"):
        run_study(s, scheduler="tcp://127.0.0.1:9", connect_timeout=2.0)


def test_resume_pool_equality_and_check_json(tmp_path, capsys):
    p = _study(tmp_path, [{"key": "panels.thickness", "values": [1.0, 2.0]}, {"key": "layout.arms", "values": [8, 4]}])
    s = load_study(p)
    first = run_study(s, workers=1, limit=2)
    assert len(first.computed) == 2
    rest = run_study(s, workers=1)  # the rerun computes only the missing variants
    assert len(rest.computed) == 2 and set(rest.computed).isdisjoint(first.computed)
    assert rest.skipped == 2 and len(rest.rows) == 4
    bad = [r for r in rest.rows if r["axis.layout.arms"] == 4]
    assert len(bad) == 2 and all(r["status"] == "failed" and r["error_class"] == "DesignFileError" for r in bad)
    # the same study on a 2-worker LocalCluster gives the same rows apart from timings
    pool = run_study(s, workers=2, out=tmp_path / "pool")

    def strip(rows):
        return sorted(({k: v for k, v in r.items() if k != "seconds"} for r in rows), key=lambda r: r["id"])

    assert strip(pool.rows) == strip(rest.rows)
    import pyarrow.parquet as pq

    assert pq.read_table(tmp_path / "out" / "results.parquet").num_rows == 4
    # the table's metrics equal `thickpanel check --json` on the variant's design
    good = next(r for r in rest.rows if r["status"] == "ok")
    v = next(v for v in variants(s) if v.id == good["id"])
    f = tmp_path / "variant.toml"
    f.write_text(v.toml)
    capsys.readouterr()
    main(["check", str(f), "--json"])
    from thickpanel.study import flatten_metrics

    m = flatten_metrics(json.loads(capsys.readouterr().out)["metrics"])
    assert m and {k.removeprefix("metric."): x for k, x in good.items() if k.startswith("metric.")} == m
