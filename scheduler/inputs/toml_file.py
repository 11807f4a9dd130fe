"""Reading a TOML file: a missing, unreadable or malformed file is one problem."""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Any

from scheduler.model.errors import InputError, Problem


def read_toml(path: str | Path) -> dict[str, Any]:
    """The parsed document; :class:`InputError` naming the file otherwise."""
    source = str(path)
    try:
        return tomllib.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(Problem(source, "", "file not found")) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(Problem(source, "", f"cannot read: {exc}")) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(Problem(source, "", f"not valid TOML: {exc}")) from None
