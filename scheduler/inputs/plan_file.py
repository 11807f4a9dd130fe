"""Plan files: read an ``opdplan-plan/1`` document and validate it against its published
JSON Schema (``opdplan-plan-1.schema.json``, shipped in this package) before anything
uses it.  A missing or wrong-typed field is a problem naming the field."""

from __future__ import annotations

import json
from functools import cache
from importlib import resources
from pathlib import Path
from typing import Any

from scheduler.model.errors import InputError, Problem

SCHEMA = "opdplan-plan/1"
SCHEMA_FILE = "opdplan-plan-1.schema.json"


@cache
def plan_schema() -> dict[str, Any]:
    """The JSON Schema of ``opdplan-plan/1`` (draft 2020-12)."""
    text = resources.files("scheduler.inputs").joinpath(SCHEMA_FILE).read_text(encoding="utf-8")
    schema: dict[str, Any] = json.loads(text)
    return schema


def _no_constant(name: str) -> float:
    raise ValueError(f"{name} is not a number JSON allows")


def schema_problems(doc: Any, source: str) -> list[Problem]:
    """Every place where ``doc`` breaks the schema, as problems naming the field."""
    import jsonschema

    validator = jsonschema.Draft202012Validator(plan_schema())
    out = []
    for err in sorted(validator.iter_errors(doc), key=lambda e: list(map(str, e.absolute_path))):
        where = "".join(f"[{p}]" if isinstance(p, int) else f".{p}" for p in err.absolute_path)
        out.append(Problem(source, where.lstrip(".") or "(document)", err.message))
    return out


def read_plan(path: str | Path) -> dict[str, Any]:
    """A plan document that satisfies the schema; InputError listing every problem."""
    src = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(Problem(src, "", "file not found")) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(Problem(src, "", f"cannot read: {exc}")) from None
    try:
        doc = json.loads(text, parse_constant=_no_constant)
    except (json.JSONDecodeError, ValueError) as exc:
        raise InputError(Problem(src, "", f"not valid JSON: {exc}")) from None
    if not isinstance(doc, dict) or doc.get("schema") != SCHEMA:
        got = doc.get("schema") if isinstance(doc, dict) else None
        raise InputError(Problem(src, "schema", f"expected {SCHEMA!r}, got {got!r}"))
    problems = schema_problems(doc, src)
    if problems:
        raise InputError(problems)
    return doc
