"""Tests about the codebase itself: packaging lists every package, layers import one way only."""

import ast
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
LAYERS = {"robots": set(), "mapping": {"robots"}, "limits": {"robots", "mapping"}}


def test_every_package_folder_is_listed_in_pyproject():
    listed = set(tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]["packages"])
    found = set()
    for layer in LAYERS:
        for init in (ROOT / layer).rglob("__init__.py"):
            rel = init.parent.relative_to(ROOT).parts
            found.add(".".join(("legbridge",) + rel))
    assert found == listed


def test_layers_import_one_way_only():
    bad = []
    for layer, allowed in LAYERS.items():
        for py in (ROOT / layer).rglob("*.py"):
            tree = ast.parse(py.read_text())
            for node in ast.walk(tree):
                names = []
                if isinstance(node, ast.Import):
                    names = [a.name for a in node.names]
                elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
                    names = [node.module]
                for n in names:
                    parts = n.split(".")
                    if parts[0] == "legbridge" and len(parts) > 1 and parts[1] != layer and parts[1] not in allowed:
                        bad.append(f"{py.relative_to(ROOT)} imports {n}")
    assert not bad, bad
