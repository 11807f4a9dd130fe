"""The verifier is independent of the planner: no module of ``scheduler/verify`` imports
the planner's geometry, queue, ephemeris, replan, semester, output, views or command
line, nor astropy except through ``scheduler.astro.reference`` (README.md, *The night
queue*, "Verifier": it "shares no geometry or transition code with the planner";
common practice, no source).  Of the model it takes the data, not the planner's
arithmetic on it: not the brightness verdicts (``scheduler.model.brightness``) nor the
limits' rule of ``scheduler.model.conditions`` (its ``Conditions`` dataclass only)."""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

import pytest

VERIFY = Path(__file__).resolve().parent.parent / "scheduler" / "verify"

ALLOWED_SCHEDULER = ("scheduler.model", "scheduler.inputs.plan_file", "scheduler.astro.reference",
                     "scheduler.verify")  # fmt: skip
ALLOWED_OTHERS = ("numpy", "scipy")
PLANNER_ARITHMETIC = ("scheduler.model.brightness", "scheduler.model.conditions.tracking_limit",
                      "scheduler.model.conditions.guiding_limit")  # fmt: skip
FORBIDDEN_LOADED = ("scheduler.model.brightness", "scheduler.geometry", "scheduler.queue",
                    "scheduler.astro.ephemeris", "scheduler.astro.night", "scheduler.astro.problem",
                    "scheduler.replan", "scheduler.semester", "scheduler.output", "scheduler.views",
                    "scheduler.cli")  # fmt: skip


def _within(name: str, roots: tuple[str, ...]) -> bool:
    return any(name == r or name.startswith(r + ".") for r in roots)


def _allowed(name: str) -> bool:
    top = name.split(".")[0]
    if _within(name, PLANNER_ARITHMETIC):
        return False
    if top == "scheduler":
        return _within(name, ALLOWED_SCHEDULER)
    if top == "astropy":
        return False  # astropy only through scheduler.astro.reference
    return top in ALLOWED_OTHERS or top in sys.stdlib_module_names


def _imported(node: ast.AST, package: str) -> list[str]:
    """Every module (or module attribute) an import statement names: ``import A`` names
    A, ``from A import b`` names A.b (b may be a submodule), relative imports resolved
    against ``package``."""
    if isinstance(node, ast.Import):
        return [a.name for a in node.names]
    if isinstance(node, ast.ImportFrom):
        base = node.module or ""
        if node.level:
            parts = package.split(".")
            parts = parts[: len(parts) - node.level + 1]
            base = ".".join(parts + ([base] if base else []))
        return [f"{base}.{a.name}" for a in node.names]
    return []


def forbidden_imports(source: str, package: str = "scheduler.verify") -> list[str]:
    """The imports of a module's source that the verifier may not use, and any dynamic
    import (``importlib.import_module``, ``__import__``)."""
    bad = []
    for node in ast.walk(ast.parse(source)):
        bad += [name for name in _imported(node, package) if not _allowed(name)]
        func = node.func if isinstance(node, ast.Call) else None
        name = getattr(func, "attr", getattr(func, "id", ""))
        if name in ("import_module", "__import__"):
            bad.append(ast.unparse(node))
    return bad


def _modules() -> list[Path]:
    return sorted(VERIFY.glob("*.py"))


def test_the_verify_package_has_modules() -> None:
    names = {p.stem for p in _modules()}
    assert {"__init__", "report", "check", "sky", "geometry", "document"} <= names


@pytest.mark.parametrize("path", _modules(), ids=lambda p: p.name)
def test_no_forbidden_import(path: Path) -> None:
    assert forbidden_imports(path.read_text(encoding="utf-8")) == []


@pytest.mark.parametrize("source", [
    "from scheduler.geometry.horizon import mask_altitude",
    "import scheduler.queue.timing",
    "from scheduler.astro import ephemeris",
    "from scheduler.astro.night import find_night",
    "from scheduler.output.plan_document import rules_of",
    "from astropy.coordinates import AltAz",
    "from scheduler import replan",
    "from scheduler.inputs import catalog",
    "import importlib\nimportlib.import_module('scheduler.geometry.delay')",
    "from ..geometry import delay",
    "from scheduler.model.brightness import faint_codes",
    "from scheduler.model import brightness",
    "from scheduler.model.conditions import tracking_limit",
    "from scheduler.model.conditions import Conditions, guiding_limit",
])  # fmt: skip
def test_the_import_check_catches_forbidden_imports(source: str) -> None:
    """The check itself must be able to fail."""
    assert forbidden_imports(source) != []


@pytest.mark.parametrize("source", [
    "from scheduler.astro.reference import star_altaz",
    "from scheduler.astro import reference",
    "from scheduler.model.array import ArrayModel",
    "from scheduler.model.conditions import Conditions",
    "from scheduler.inputs.plan_file import schema_problems",
    "from scheduler.verify.report import Violation",
    "from .report import Violation",
    "import numpy as np\nfrom scipy.special import j1\nimport math",
])  # fmt: skip
def test_the_import_check_lets_allowed_imports_pass(source: str) -> None:
    assert forbidden_imports(source) == []


def test_importing_the_verifier_loads_no_planner_module() -> None:
    """In a fresh interpreter, importing the verifier (and running nothing else) must
    not load any planner module, however indirectly."""
    code = ("import sys, scheduler.verify\n"
            "print('\\n'.join(m for m in sys.modules if m.startswith('scheduler')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.split()  # fmt: skip
    assert "scheduler.verify" in out and "scheduler.astro.reference" in out
    assert [m for m in out if _within(m, FORBIDDEN_LOADED)] == []
