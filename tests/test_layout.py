"""The package's layers, as DEVELOPERS.md states them, checked by walking the imports.

Layers, lowest first: model, inputs, geometry, astro, queue, replan, semester, advise,
verify, output, views, cli.  A module may import its own layer and lower ones only; astropy's
astronomy (coordinates, time, IERS) and erfa only inside ``astro``; the geometry is pure
numpy (and scipy); the verifier shares no code with the planner.  Sizes: no function
over about 60 lines, no module over about 400 (the project's style rule, STYLE.md;
common practice, no source).
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "scheduler"
LAYERS = ("model", "inputs", "geometry", "astro", "queue", "replan", "semester", "advise",
          "verify", "output", "views", "cli")  # fmt: skip
ASTRONOMY = ("astropy.coordinates", "astropy.time", "astropy.utils.iers", "erfa")
VERIFY_MAY_USE = ("scheduler.model", "scheduler.inputs.plan_file", "scheduler.astro.reference")
MAX_FUNCTION_LINES = 70  # "about 60"
MAX_MODULE_LINES = 450  # "about 400"


def _modules() -> list[Path]:
    return sorted(p for p in PACKAGE.rglob("*.py"))


def _layer(path: Path) -> str | None:
    parts = path.relative_to(PACKAGE).parts
    return parts[0] if len(parts) > 1 else None


def _imports(path: Path) -> list[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names: list[str] = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names += [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.append(node.module)
            names += [f"{node.module}.{a.name}" for a in node.names]
    return names


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_imports_run_one_way(path):
    layer = _layer(path)
    if layer is None:
        return
    rank = LAYERS.index(layer)
    for name in _imports(path):
        if name.startswith("scheduler."):
            other = name.split(".")[1]
            if other in LAYERS:
                assert LAYERS.index(other) <= rank, f"{layer} imports {name}"
        if layer != "astro":
            assert not name.startswith(ASTRONOMY), f"{layer} imports {name}"
        if layer == "geometry":
            assert not name.startswith(("astropy", "pandas", "rich", "ortools")), name


@pytest.mark.parametrize("path", sorted((PACKAGE / "verify").glob("*.py")),
                         ids=lambda p: p.name)  # fmt: skip
def test_verifier_shares_nothing_with_the_planner(path):
    for name in _imports(path):
        if name.startswith("scheduler.") and not name.startswith("scheduler.verify"):
            assert name.startswith(VERIFY_MAY_USE), f"{path.name} imports {name}"


def test_no_planner_module_uses_the_verifiers_reference():
    for path in _modules():
        if _layer(path) not in ("verify", None):
            assert "scheduler.astro.reference" not in _imports(path), path


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_small_functions_and_modules(path):
    text = path.read_text(encoding="utf-8")
    assert len(text.splitlines()) <= MAX_MODULE_LINES
    for node in ast.walk(ast.parse(text)):
        if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
            length = (node.end_lineno or node.lineno) - node.lineno + 1
            assert length <= MAX_FUNCTION_LINES, f"{node.name} has {length} lines"
