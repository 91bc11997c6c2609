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


def _readme_commands():
    import re

    text = (ROOT / "README.md").read_text()
    return re.findall(r"```sh\n(.*?)\n```", text, flags=re.S)


def test_readme_opens_with_the_two_commands_and_ci_runs_the_test_one():
    blocks = _readme_commands()
    assert len(blocks) >= 2
    main_cmd, test_cmd = blocks[0], blocks[1]
    assert "legbridge review --demo" in main_cmd
    # CI creates its own venv, then runs the README's install + test command verbatim.
    install_and_test = test_cmd.split("&& ", 2)[-1]
    assert install_and_test in (ROOT / ".ci" / "run").read_text()


def test_readme_has_a_caution_section_and_never_calls_a_plan_safe():
    text = (ROOT / "README.md").read_text().lower()
    assert "## caution" in text
    assert "never calls a plan safe" in text


def test_every_public_function_and_class_has_a_docstring():
    missing = []
    for layer in LAYERS:
        for py in (ROOT / layer).rglob("*.py"):
            tree = ast.parse(py.read_text())
            if not ast.get_docstring(tree):
                missing.append(f"{py.relative_to(ROOT)}: module")
            for node in tree.body:
                if isinstance(node, (ast.FunctionDef, ast.ClassDef)) and not node.name.startswith("_"):
                    if not ast.get_docstring(node):
                        missing.append(f"{py.relative_to(ROOT)}:{node.lineno} {node.name}")
    assert not missing, missing


def test_house_rules_of_the_layout():
    # limits/ holds folders by question and only a handful of files at its top level; no source cites a
    # document that is not in the repository; every exception class lives in robots/errors.py
    top = [p.name for p in (ROOT / "limits").iterdir() if p.is_file() and p.suffix == ".py"]
    assert len(top) <= 6, top
    cited, elsewhere = [], []
    for layer in LAYERS:
        for py in (ROOT / layer).rglob("*.py"):
            text = py.read_text()
            if "DESIGN.md" in text:
                cited.append(str(py.relative_to(ROOT)))
            for node in ast.parse(text).body:
                if isinstance(node, ast.ClassDef) and (node.name.endswith("Error") or any(
                        getattr(b, "id", "") in ("Exception", "LegbridgeError") for b in node.bases)):
                    if py.relative_to(ROOT).as_posix() != "robots/errors.py":
                        elsewhere.append(f"{py.relative_to(ROOT)}: {node.name}")
    assert not cited, cited
    # a dataclass of apex errors is a result, not an exception
    assert [e for e in elsewhere if not e.endswith(": ApexError")] == [], elsewhere
