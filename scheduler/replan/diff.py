"""What a replan changed: kept, moved, dropped and added visits."""

from __future__ import annotations

from typing import Any

KEPT_TOL_S = 60.0  # a visit that moved less than this is "kept"


def plan_diff(old: list[dict[str, Any]], new: list[dict[str, Any]],
              done: set[str]) -> dict[str, list[Any]]:  # fmt: skip
    """Kept (same visit within a minute), moved, dropped and added visits."""
    before = {v["id"]: v for v in old if v["id"] not in done}
    after = {v["id"]: v for v in new}
    kept = [i for i in after if i in before
            and abs(after[i]["start_s"] - before[i]["start_s"]) <= KEPT_TOL_S]  # fmt: skip
    moved = [{"id": i, "from_utc": before[i]["start_utc"], "to_utc": after[i]["start_utc"]}
             for i in after if i in before and i not in kept]  # fmt: skip
    dropped = [i for i in before if i not in after]
    added = [i for i in after if i not in before]
    return {"kept": kept, "moved": moved, "dropped": dropped, "added": added}
