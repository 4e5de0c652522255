"""Same input, same bytes: two builds of one design under different string-hash seeds, with
``SOURCE_DATE_EPOCH`` pinned (reproducible-builds.org, "SOURCE_DATE_EPOCH" specification, 2017),
give identical files; the STEP header time is the pinned one (ISO 10303-21 FILE_NAME time stamp)."""

from __future__ import annotations

import hashlib
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from thickpanel.errors import ExportError
from thickpanel.reproducible import iso_timestamp, pin_step_timestamp, source_date_epoch

ROOT = Path(__file__).resolve().parents[1]


def _digest(root: Path) -> dict[str, str]:
    return {str(p.relative_to(root)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(root.rglob("*")) if p.is_file()}


def _build(out: Path, seed: str) -> dict[str, str]:
    env = {k: v for k, v in os.environ.items() if k != "SOURCE_DATE_EPOCH"}
    env.update(PYTHONHASHSEED=seed, PYTHONPATH=str(ROOT))
    if out.exists():
        shutil.rmtree(out)
    cmd = [sys.executable, "-m", "thickpanel.cli", "build", str(ROOT / "examples" / "reflector-backing.toml"),
           "-o", str(out), "--quiet", "--reproducible"]
    done = subprocess.run(cmd, env=env, capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, done.stderr
    return _digest(out)


@pytest.mark.slow
def test_two_builds_under_two_hash_seeds_are_identical(tmp_path: Path) -> None:
    out = tmp_path / "out"
    first = _build(out, "1")
    step = next(out.rglob("*.step")).read_bytes()
    assert b"'1970-01-01T00:00:00'" in step
    second = _build(out, "4")
    assert len(first) > 20
    different = sorted(k for k in first if first[k] != second.get(k))
    assert different == [] and set(first) == set(second)


def test_step_time_stamp_pinned(monkeypatch: pytest.MonkeyPatch) -> None:
    head = b"FILE_NAME('Open CASCADE Shape Model','2026-12-02T20:05:56',('Author'),(\n"
    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)
    assert pin_step_timestamp(head) == head
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "86400")
    assert iso_timestamp(86400) == "1970-01-02T00:00:00"
    assert pin_step_timestamp(head) == head.replace(b"2026-12-02T20:05:56", b"1970-01-02T00:00:00")
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "yesterday")
    with pytest.raises(ExportError, match="SOURCE_DATE_EPOCH"):
        source_date_epoch()


@pytest.mark.slow
def test_killed_build_leaves_only_complete_files(tmp_path: Path) -> None:
    """SIGKILL at several moments of a build: every file left under its final name is byte-identical
    to the same file of a complete build, and the next build leaves no temporary file."""
    import signal
    import time

    ref = _build(tmp_path / "ref", "0")
    out = tmp_path / "out"
    env = {k: v for k, v in os.environ.items() if k != "SOURCE_DATE_EPOCH"}
    env.update(PYTHONHASHSEED="0", PYTHONPATH=str(ROOT))
    cmd = [sys.executable, "-m", "thickpanel.cli", "build", str(ROOT / "examples" / "reflector-backing.toml"),
           "-o", str(out), "--quiet", "--reproducible"]
    for delay in (2.0, 4.0, 6.0):
        proc = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(delay)
        proc.send_signal(signal.SIGKILL)
        proc.wait(timeout=60)
        if out.exists():
            left = {k: v for k, v in _digest(out).items()
                    if not k.rsplit("/", 1)[-1].startswith(".") and not k.endswith("-report.html")}
            assert {k for k in left if left[k] != ref.get(k)} == set()
    done = subprocess.run(cmd, env=env, capture_output=True, timeout=600)
    assert done.returncode == 0
    assert [p for p in out.rglob("*.tmp")] == []
    final = _digest(out)
    report = "reflector-backing-report.html"  # names its own output folder, which differs here
    assert {k: v for k, v in final.items() if k != report} == {k: v for k, v in ref.items() if k != report}
