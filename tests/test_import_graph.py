"""Architecture: the project's modules take no private names from each other (issue 12). Walks every
module's ``import`` statements with ``ast`` (module-level and inside functions alike: a late import is
still a dependency). Import cycles among the fold-solver modules remain (issue 12 is open); the graph
built here is the one a cycle test will walk."""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGES = ("thickpanel", "hinges")


def _modules() -> dict[str, Path]:
    out = {}
    for pkg in PACKAGES:
        for f in sorted((ROOT / pkg).rglob("*.py")):
            rel = f.relative_to(ROOT).with_suffix("")
            parts = list(rel.parts)
            if parts[-1] == "__init__":
                parts = parts[:-1]
            out[".".join(parts)] = f
    return out


def _resolve(mod: str, is_pkg: bool, node: ast.ImportFrom) -> str:
    if node.level == 0:
        return node.module or ""
    base = mod.split(".") if is_pkg else mod.split(".")[:-1]
    base = base[: len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def _edges():
    mods = _modules()
    edges, private = [], []
    for mod, path in mods.items():
        is_pkg = path.name == "__init__.py"
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.Import):
                for a in node.names:
                    if a.name.split(".")[0] in PACKAGES:
                        edges.append((mod, a.name, node.lineno))
            elif isinstance(node, ast.ImportFrom):
                target = _resolve(mod, is_pkg, node)
                if target.split(".")[0] not in PACKAGES:
                    continue
                for a in node.names:
                    sub = f"{target}.{a.name}"
                    if sub in mods:
                        edges.append((mod, sub, node.lineno))
                    else:
                        edges.append((mod, target, node.lineno))
                        if a.name.startswith("_") and not a.name.startswith("__") and target != mod:
                            private.append(f"{mod}:{node.lineno} imports {a.name} from {target}")
    return mods, edges, private


def test_no_private_name_crosses_a_module() -> None:
    _, _, private = _edges()
    assert not private, "private names imported across modules:\n" + "\n".join(private)
