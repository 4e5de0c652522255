"""Design studies: axes, stable ids, resumable table (after a real SIGINT and SIGKILL of the
command), same rows in-process and on a LocalCluster, metrics equal to ``thickpanel check --json``,
bad input. Expected metric values are this project's own run_check figures (no outside source
applies: the study only re-tabulates them); the check against them is ``thickpanel check --json``."""

from __future__ import annotations

import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest

from thickpanel.cli import main
from thickpanel.study import (
    TIMING_COLUMNS,
    StudyError,
    flatten_metrics,
    load_study,
    read_rows,
    run_study,
    study_from_dict,
    variants,
)

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "examples" / "studies"


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


def _strip(rows: list[dict]) -> list[dict]:
    return sorted(({k: v for k, v in r.items() if k not in TIMING_COLUMNS} for r in rows), key=lambda r: r["id"])


def _table_ids(out: Path) -> tuple[list[str], list[str], list[str]]:
    """Ids in results.jsonl, results.csv and results.parquet (each sorted)."""
    import csv

    import pyarrow.parquet as pq

    with open(out / "results.csv", encoding="utf-8", newline="") as fh:
        csv_ids = sorted(r["id"] for r in csv.DictReader(fh))
    pq_ids = sorted(pq.read_table(out / "results.parquet").column("id").to_pylist())
    return sorted(r["id"] for r in read_rows(out / "results.jsonl")), csv_ids, pq_ids


# ----------------------------------------------------------------------------------------- bad input
def test_bad_axes_name_the_key(tmp_path):
    with pytest.raises(StudyError, match=r"panels.thicknes.*did you mean 'panels.thickness'"):
        load_study(_study(tmp_path, [{"key": "panels.thicknes", "values": [1.0]}]))
    with pytest.raises(StudyError, match=r"unknown section 'panel'.*did you mean 'panels'"):
        load_study(_study(tmp_path, [{"key": "panel.thickness", "values": [1.0]}]))
    with pytest.raises(StudyError, match=r"layout.slits.*values is empty"):
        load_study(_study(tmp_path, [{"key": "layout.slits", "values": []}]))
    with pytest.raises(StudyError, match=r"panels.thickness.*step = 0"):
        load_study(_study(tmp_path, [{"key": "panels.thickness", "start": 1.0, "stop": 2.0, "step": 0.0}]))
    with pytest.raises(StudyError, match=r"wrong sign"):
        load_study(_study(tmp_path, [{"key": "panels.thickness", "start": 1.0, "stop": 2.0, "step": -0.5}]))
    with pytest.raises(StudyError, match=r"wrong sign.*use step < 0"):
        load_study(_study(tmp_path, [{"key": "panels.thickness", "start": 3.0, "stop": 2.0, "step": 0.5}]))
    with pytest.raises(StudyError, match=r"fold.target_deg.*low = 90.0, high = 60.0 must be numbers with low < high"):
        load_study(_study(tmp_path, [{"key": "fold.target_deg", "low": 90.0, "high": 60.0}], sample={"n": 2}))
    with pytest.raises(StudyError, match="no \\[\\[axis\\]\\]"):
        study_from_dict({"base": str(EX / "study-disc-base.toml")})
    with pytest.raises(StudyError, match="no \\[\\[axis\\]\\]"):
        study_from_dict({"base": str(EX / "study-disc-base.toml"), "axis": []})


def test_bad_axis_on_the_command_line_writes_nothing(tmp_path, capsys):
    p = _study(tmp_path, [{"key": "layout.slit", "values": [2, 4]}])
    assert main(["study", str(p)]) == 2
    err = capsys.readouterr().err
    assert "layout.slit" in err and "did you mean 'layout.slits'" in err
    assert not (tmp_path / "out").exists()
    ok = _study(tmp_path, [{"key": "layout.slits", "values": [2, 4]}])
    assert main(["study", str(ok), "--connect-timeout", "0", "--scheduler", "tcp://127.0.0.1:9"]) == 2
    assert "--connect-timeout 0 must be more than 0 s" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()


def test_unreachable_scheduler_is_a_clear_error_within_the_timeout(tmp_path):
    s = load_study(_study(tmp_path, [{"key": "panels.thickness", "values": [1.0]}]))
    # a port that accepts the connection and never answers: Dask's own handshake has no time limit
    silent = socket.socket()
    silent.bind(("127.0.0.1", 0))
    silent.listen(1)
    try:
        for addr in (f"tcp://127.0.0.1:{silent.getsockname()[1]}", "tcp://127.0.0.1:9"):
            t0 = time.monotonic()
            with pytest.raises(StudyError, match=f"{addr}: cannot reach the Dask scheduler within 1 s"):
                run_study(s, scheduler=addr, connect_timeout=1.0)
            assert time.monotonic() - t0 < 20.0  # bounded (1 s asked; generous for a loaded machine)
    finally:
        silent.close()
    with pytest.raises(StudyError, match="not a Dask scheduler address like tcp://HOST:PORT"):
        run_study(s, scheduler="no-port-here", connect_timeout=1.0)
    assert not (tmp_path / "out").exists()  # nothing written before the scheduler answered


# ------------------------------------------------------------------ one small study, run in-process
@pytest.fixture(scope="module")
def small(tmp_path_factory):
    """Thickness 1 and 2 mm x 8 and 3 arms; the 3-arm disc is not a valid design (4 slits, 3 arms)."""
    tmp = tmp_path_factory.mktemp("small")
    s = load_study(_study(tmp, [{"key": "panels.thickness", "values": [1.0, 2.0]},
                                {"key": "layout.arms", "values": [8, 3]}]))
    first = run_study(s, workers=1, limit=2)
    rest = run_study(s, workers=1)
    return s, first, rest


def test_rerun_computes_only_missing_and_bad_variants_are_rows(small):
    s, first, rest = small
    assert len(first.computed) == 2
    assert len(rest.computed) == 2 and set(rest.computed).isdisjoint(first.computed)
    assert rest.skipped == 2 and len(rest.rows) == 4
    bad = [r for r in rest.rows if r["axis.layout.arms"] == 3]
    assert len(bad) == 2 and all(r["status"] == "failed" and r["error_class"] == "DesignFileError"
                                 and "slits = 4 is out of range" in r["error_message"] for r in bad)
    assert all(r["cpu_seconds"] > 0 for r in rest.rows if r["status"] == "ok")
    jl, cs, pq = _table_ids(s.output)
    assert jl == cs == pq == sorted(v.id for v in variants(s))
    again = run_study(s, workers=1)
    assert again.computed == [] and again.skipped == 4


def test_two_worker_cluster_gives_the_same_rows(small, tmp_path):
    s, _, rest = small
    pool = run_study(s, workers=2, out=tmp_path / "pool")
    assert pool.timings["workers"] == 2
    assert _strip(pool.rows) == _strip(rest.rows)


def test_table_metrics_equal_check_json_for_every_metric(small, tmp_path, capsys):
    s, _, rest = small
    good = [r for r in rest.rows if r["status"] == "ok"]
    assert len(good) == 2
    by_id = {v.id: v for v in variants(s)}
    for row in good:
        f = tmp_path / f"{row['id']}.toml"
        f.write_text(by_id[row["id"]].toml)
        capsys.readouterr()
        main(["check", str(f), "--json"])
        summary = json.loads(capsys.readouterr().out)
        want = flatten_metrics(summary["metrics"])
        got = {k.removeprefix("metric."): v for k, v in row.items() if k.startswith("metric.")}
        assert got == want  # every metric, numbers and text, no more and no fewer
        assert row["ok"] == summary["ok"]
        # and every metric of the check has its column (None means "not measured")
        for k, v in summary["metrics"].items():
            assert v is None or any(g == k or g.startswith((f"{k}_", f"{k}.")) for g in got), k
        for k in ("min_clearance_mm", "packing_ratio", "total_mass_g", "rigid"):
            assert k in got


def test_a_cut_last_line_is_dropped_and_recomputed(small, tmp_path):
    s, _, rest = small
    out = tmp_path / "cut"
    out.mkdir()
    text = (s.output / "results.jsonl").read_text()
    lines = text.splitlines(keepends=True)
    (out / "results.jsonl").write_text("".join(lines[:-1]) + lines[-1][:25])  # as after a SIGKILL mid-write
    lost = json.loads(lines[-1])["id"]
    res = run_study(s, workers=1, out=out)
    assert res.computed == [lost]
    for line in (out / "results.jsonl").read_text().splitlines():
        json.loads(line)  # every line whole
    assert _strip(res.rows) == _strip(rest.rows)


# ----------------------------------------------------- a real SIGINT and SIGKILL of `thickpanel study`
def _start(cwd: Path, *args: str) -> subprocess.Popen:
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    return subprocess.Popen([sys.executable, "-m", "thickpanel.cli", "study", "study.toml", *args], cwd=cwd,
                            env=env, start_new_session=True, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True)


def _wait_rows(jsonl: Path, n: int, proc: subprocess.Popen, limit_s: float = 180.0) -> None:
    t0 = time.monotonic()
    while time.monotonic() - t0 < limit_s:
        if jsonl.exists() and jsonl.read_text().count("\n") >= n:
            return
        if proc.poll() is not None:
            pytest.fail(f"study ended before {n} rows: {proc.stderr.read() if proc.stderr else ''}")
        time.sleep(0.05)
    os.killpg(proc.pid, signal.SIGKILL)
    pytest.fail(f"no {n} rows in {limit_s} s")


def test_ctrl_c_and_kill_leave_a_table_that_resumes(tmp_path):
    p = _study(tmp_path, [{"key": "panels.thickness", "values": [1.0, 1.5, 2.0, 2.5]},
                          {"key": "layout.slits", "values": [2, 4]}])
    s = load_study(p)
    every = sorted(v.id for v in variants(s))
    jsonl = s.output / "results.jsonl"
    # Ctrl-C in a terminal: SIGINT to the whole process group, study process and cluster workers
    proc = _start(tmp_path, "--workers", "2")
    try:
        _wait_rows(jsonl, 1, proc)
        os.killpg(proc.pid, signal.SIGINT)
        _, err = proc.communicate(timeout=120)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
    assert proc.returncode == 3 and "study interrupted" in err
    jl, cs, pq = _table_ids(s.output)
    assert jl == cs == pq and 1 <= len(jl) < len(every)  # a consistent table, part done
    assert all(r["status"] == "ok" for r in read_rows(jsonl))  # an interrupted variant is not a failure
    # a real SIGKILL of an in-process run: no clean-up at all
    before = len(jl)
    proc = _start(tmp_path, "--workers", "1")
    try:
        _wait_rows(jsonl, before + 1, proc)
        proc.send_signal(signal.SIGKILL)
        proc.communicate(timeout=60)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
    assert proc.returncode == -signal.SIGKILL
    kept = [r["id"] for r in read_rows(jsonl)]
    assert before < len(kept) < len(every)
    res = run_study(s, workers=1)  # recomputes only the missing variants
    assert sorted(res.computed) == sorted(set(every) - set(kept))
    assert sorted(r["id"] for r in res.rows) == every
    jl, cs, pq = _table_ids(s.output)
    assert jl == cs == pq == every


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


def test_the_200_variant_example_is_a_spiral_study_of_200():
    s = load_study(EX / "study-disc-200.toml")
    assert s.base_raw["layout"]["family"] == "spiral-rings"
    assert len(variants(s)) == 200
