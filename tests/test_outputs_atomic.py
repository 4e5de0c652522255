"""A refused or failed build leaves nothing behind (thickpanel's own all-or-nothing rule; no
published source). Running as root, permissions cannot block writes, so a file standing where a
folder must be (or a folder where a file must be) makes the write fail."""

from __future__ import annotations

from pathlib import Path

import pytest

from thickpanel.build import run_build
from thickpanel.design import loads_design
from thickpanel.errors import ExportError
from thickpanel.outputs import prepare_out_dir, remove_outputs

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def _design():
    text = (EXAMPLES / "miura-reference.toml").read_text(encoding="utf-8")
    text = text.replace('formats = ["step", "stl", "bom"]', 'formats = ["stl", "bom"]')
    return loads_design(text, source=EXAMPLES / "miura-reference.toml")


def _files(root: Path) -> set[str]:
    return {str(p.relative_to(root)) for p in root.rglob("*")}


def test_second_state_folder_blocked_leaves_only_what_was_there(tmp_path: Path) -> None:
    out = tmp_path / "out"
    out.mkdir()
    (out / "t1.00").write_text("in the way\n")
    with pytest.raises(ExportError):
        run_build(_design(), out)
    assert _files(out) == {"t1.00"}


def test_report_path_blocked_removes_the_exports(tmp_path: Path) -> None:
    out = tmp_path / "fresh" / "out"
    out.mkdir(parents=True)
    (out / "miura-reference-report.html").mkdir()
    with pytest.raises(ExportError):
        run_build(_design(), out)
    assert _files(out) == {"miura-reference-report.html"}


def test_overlong_output_name_is_refused_before_any_work(tmp_path: Path) -> None:
    with pytest.raises(ExportError, match="300 bytes"):
        prepare_out_dir(tmp_path / ("x" * 300))
    assert _files(tmp_path) == set()


def test_output_under_a_file_is_refused(tmp_path: Path) -> None:
    (tmp_path / "f").write_text("")
    with pytest.raises(ExportError, match="is a file"):
        prepare_out_dir(tmp_path / "f" / "out")


def test_remove_outputs_takes_created_folders(tmp_path: Path) -> None:
    created = prepare_out_dir(tmp_path / "a" / "b")
    assert created == [tmp_path / "a", tmp_path / "a" / "b"]
    f = tmp_path / "a" / "b" / "t0.00" / "x.stl"
    f.parent.mkdir()
    f.write_text("solid")
    (f.parent / ".y.stl.abc.tmp").write_text("partial")
    remove_outputs([f], created)
    assert _files(tmp_path) == set()
