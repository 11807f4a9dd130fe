"""The independent verifier (temporary shim while it is rewritten)."""

from __future__ import annotations

from typing import Any

from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets


def verify_plan(doc: dict[str, Any], array: ArrayModel, targets: Targets,
                settings: PlanSettings) -> list[str]:  # fmt: skip
    from scheduler.verify.verifier import verify_plan as old

    return old(doc, array, targets)
