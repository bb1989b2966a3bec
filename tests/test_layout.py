"""The package's layout holds: stages import only along the pipeline, reuse machinery stays behind one
door, and no module or function grows past a readable size. (The project's own rule, DEVELOPERS.md.)"""
from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "registry"

RANK = {"core": 0, "physics": 0, "incremental": 0, "load": 1, "compute": 2, "check": 3, "output": 4, "site": 5}
"""Each package's place in the pipeline (load → compute → check → output/site); top-level modules
(cli, pipeline, evaluate, serve) put the stages together and may import any of them."""
ALLOWED = {"core": {"core"}, "physics": {"core", "physics"}, "incremental": {"core", "incremental"}}
"""The bottom floor imports nothing above itself: the model knows no stage, physics knows no model."""
MACHINERY = ("hashlib", "pickle", "multiprocessing", "concurrent.futures", "gc")
"""Imported only inside registry/incremental/."""
MAX_MODULE_LINES = 400
MAX_FUNCTION_LINES = 60


def imports(tree: ast.AST) -> list[str]:
    """Every module a parsed module imports (absolute names; `from registry import x` gives registry.x)."""
    names = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names += [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom) and node.module:
            names.append(node.module)
            if node.module == "registry":
                names += [f"registry.{alias.name}" for alias in node.names]
    return names


def violations(package: str | None, tree: ast.AST) -> list[str]:
    """What a module of `package` (None: a top-level module) imports against the layout's rules."""
    found = []
    for name in imports(tree):
        top = name.split(".")[0]
        if package != "incremental" and (name in MACHINERY or top in MACHINERY):
            found.append(f"imports {name}: reuse machinery belongs in registry/incremental/")
        parts = name.split(".")
        if top != "registry" or len(parts) < 2 or package is None:
            continue
        target = parts[1]
        if target == "incremental" and len(parts) > 2 and package != "incremental":
            found.append(f"imports {name}: use the door, `from registry.incremental import ...`")
        if target not in RANK:
            if target not in ("__version__",):
                found.append(f"imports {name}: a stage never imports the top-level modules")
            continue
        if package in ALLOWED and target not in ALLOWED[package]:
            found.append(f"imports {name}: {package} must not depend on {target}")
        elif RANK[target] > RANK[package]:
            found.append(f"imports {name}: {target} comes after {package} in the pipeline")
    return found


def modules() -> list[tuple[Path, str | None]]:
    out = []
    for path in sorted(PACKAGE.rglob("*.py")):
        relative = path.relative_to(PACKAGE).parts
        out.append((path, relative[0] if len(relative) > 1 else None))
    return out


@pytest.mark.parametrize("path,package", modules(), ids=lambda value: str(value))
def test_imports_follow_the_pipeline(path, package):
    assert violations(package, ast.parse(path.read_text(encoding="utf-8"))) == []


def test_the_rule_catches_what_the_flat_layout_did():
    """The imports the code had before the layout (render used hashlib and the disk store, compute
    imported load and the record, the pipeline used gc) are each caught."""
    cases = {
        ("site", "import hashlib"): "reuse machinery",
        ("site", "from registry.incremental.store import DiskCache"): "the door",
        ("compute", "from registry.load.fleet import SHIPPED_DIR"): None,
        ("compute", "from registry.output import record"): "comes after",
        ("site", "from registry import pipeline"): "top-level",
        ("core", "from registry.load import fleet"): "must not depend",
        ("physics", "from registry.core.model import Fleet"): None,
        ("physics", "from registry.compute import kinds"): "must not depend",
        (None, "import gc"): "reuse machinery",
    }
    for (package, line), expected in cases.items():
        found = violations(package, ast.parse(line))
        if expected is None:
            assert found == [], line
        else:
            assert len(found) == 1 and expected in found[0], (line, found)


@pytest.mark.parametrize("path", [path for path, _ in modules()], ids=str)
def test_modules_and_functions_stay_short(path):
    text = path.read_text(encoding="utf-8")
    assert len(text.splitlines()) <= MAX_MODULE_LINES, f"{path.name} has {len(text.splitlines())} lines"
    long = [f"{node.name} ({node.end_lineno - node.lineno + 1} lines)" for node in ast.walk(ast.parse(text))
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef))
            and node.end_lineno - node.lineno + 1 > MAX_FUNCTION_LINES]
    assert long == []
