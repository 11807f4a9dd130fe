"""Where an input came from: its resolved path and sha256, recorded in plan files so that
a replan can find the same array and catalog again and notice when they changed."""

from __future__ import annotations

import hashlib
from pathlib import Path
from typing import Any


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
