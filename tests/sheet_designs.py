"""The small Miura sheet that the report, viewer, glTF and browser tests build (invented demo data)."""

from __future__ import annotations


def miura_sheet_toml(name: str, *, states: int, target_deg: float = 100.0, description: str | None = None) -> str:
    """Design-file text of a 3 x 2 Miura sheet (25 mm sides, 65 deg, 1.5 mm panels)."""
    desc = f'description = "{description}"\n' if description else ""
    return f"""
name = "{name}"
{desc}[layout]
family = "miura"
a = 25.0
b = 25.0
gamma_deg = 65.0
nx = 3
ny = 2
[panels]
thickness = 1.5
[fold]
target_deg = {target_deg:.1f}
states = {states}
"""
