"""Where an input came from: its resolved path and sha256, recorded in plan files so that
a replan can find the same array and catalog again and notice when they changed."""

from __future__ import annotations

import hashlib
from pathlib import Path
from typing import Any

from scheduler.model.errors import Gather


def file_sha256(path: str | Path) -> str | None:
    try:
        return hashlib.sha256(Path(path).read_bytes()).hexdigest()
    except OSError:
        return None


def input_ref(source: str) -> dict[str, Any]:
    """``{"path", "sha256"}`` of an input file (sha256 None when it is not a file)."""
    path = Path(source)
    if not path.is_file():
        return {"path": source, "sha256": None}
    return {"path": str(path.resolve()), "sha256": file_sha256(path)}


def plan_input(doc: dict[str, Any], plan_path: str, key: str, given: str | None,
               g: Gather) -> str | None:  # fmt: skip
    """The file to read for ``key`` (array or targets): the one given, else the plan's."""
    if given is not None:
        return given
    ref = doc.get("inputs", {}).get(key)
    if not ref or not Path(ref["path"]).exists():
        g.add(plan_path, f"inputs.{key}", f"the {key} file is not known or not found; "
              f"pass --{key}")  # fmt: skip
        return None
    if ref.get("sha256") and file_sha256(ref["path"]) != ref["sha256"]:
        g.add(plan_path, f"inputs.{key}", f"{ref['path']} changed since the plan was made; "
              f"pass --{key} to use it anyway")  # fmt: skip
        return None
    return str(ref["path"])
