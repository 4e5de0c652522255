"""Design files with bad values are refused at load (exit 2), naming the key (thickpanel's own rules;
no published source: these are input-validation checks)."""

from __future__ import annotations

from pathlib import Path

import pytest

from thickpanel.design import loads_design
from thickpanel.errors import DesignFileError

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def _miura(**edits: str) -> str:
    text = (EXAMPLES / "miura-reference.toml").read_text(encoding="utf-8")
    for old, new in edits.items():
        assert old in text
        text = text.replace(old, new)
    return text


@pytest.mark.parametrize(
    "edits, match",
    [
        ({'style = "none"': 'style = "knuckle"\nfit = 5'}, r"\[hinge\] fit = 5 must be text"),
        ({'style = "none"': 'style = "knuckle"\nfit = 1979-05-27'}, r"\[hinge\] fit = .* must be text"),
        ({'style = "none"': 'style = "knuckle"\npin_diameter_mm = true'},
         r"\[hinge\] pin_diameter_mm = True must be a number"),
        ({'name = "tapered"': 'name = "tapered"\noptions = { reference = "sideways" }'},
         r"\[method\] options.reference = 'sideways' is not allowed; one of 'mid', 'bottom', 'top'"),
        ({'name = "tapered"': 'name = "offset-panel"\noptions = { vertex_clearance = "seven" }'},
         r"\[method\] options.vertex_clearance = 'seven' must be true or false"),
        ({"b = 30.0": "b = 1e308"}, r"\[layout\] b = 1e\+308 must be a finite number"),
        ({'name = "miura-reference"': 'name = "a\\u0000b"'}, r"name = .* control characters"),
        ({'name = "miura-reference"': 'name = ".."'}, r"name = '\.\.' cannot name"),
        ({'name = "miura-reference"': 'name = "' + "x" * 300 + '"'}, r"300 characters"),
        ({'family = "miura"': 'ptatern = "miura"'}, r"unknown key \[layout\] ptatern; did you mean 'pattern'"),
        ({'family = "miura"': 'family_ = "miura"'}, r"unknown key \[layout\] family_; did you mean 'family'"),
    ],
)
def test_bad_values_refused_at_load(edits: dict[str, str], match: str) -> None:
    with pytest.raises(DesignFileError, match=match):
        loads_design(_miura(**edits), source=EXAMPLES / "miura-reference.toml")


@pytest.mark.parametrize("depth", [40, 5000])
def test_deep_nesting_refused(depth: int) -> None:
    text = _miura().replace(
        "[layout]", "deep = " + "[" * depth + "]" * depth + "\n\n[layout]", 1)
    with pytest.raises(DesignFileError, match="nest"):
        loads_design(text)


@pytest.mark.parametrize(
    "layout, count",
    [
        ('family = "accordion"\nwidth = 100.0\npanel_width = 10.0\nn = 100000', "100,000"),
        ('family = "kresling"\nsides = 720\nstories = 10000', "14,400,000"),
        ('family = "spiral-rings"\narms = 720\nrings = 500', "720,001"),
    ],
)
def test_sizes_beyond_the_panel_limit_refused_at_once(layout: str, count: str) -> None:
    text = _miura()
    start = text.index("[layout]")
    end = text.index("[panels]")
    text = text[:start] + "[layout]\n" + layout + "\n\n" + text[end:]
    with pytest.raises(DesignFileError, match=f"about {count} panels; the limit is 50,000"):
        loads_design(text)
