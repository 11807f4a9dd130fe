"""Reading a plan document for the verifier: the schema first, then typed entries.

:func:`read_document` validates the document against its published JSON Schema, rejects
non-finite numbers (JSON Schema takes NaN for a number) and UTC strings that are not
real instants, and only then turns the visits, done visits, closures and start state
into plain typed values.  Any problem here is a ``schema`` violation and ends the check.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from scheduler.inputs.plan_file import schema_problems
from scheduler.model.times import parse_utc
from scheduler.verify.report import Violation

SOURCE = "plan"


@dataclass(frozen=True)
class Entry:
    """One visit of the plan (planned or done), as written (``mode``, ``wavelength_um``
    and ``bandwidth_um`` None when not stated)."""

    id: str
    target: str
    kind: str
    number: int
    program: str
    priority: float
    ra_deg: float
    dec_deg: float
    start_s: float
    end_s: float
    start_utc_s: float
    end_utc_s: float
    opd_start_m: dict[str, float]
    opd_end_m: dict[str, float]
    mode: str | None = None
    wavelength_um: float | None = None
    bandwidth_um: float | None = None


@dataclass(frozen=True)
class StartState:
    """Where a replan starts: when, where the telescopes point, the carriage paths."""

    utc_s: float
    pointing: str | None
    opd_m: dict[str, float | None] | None


@dataclass(frozen=True)
class PlanDoc:
    """The typed content of a plan document that the rules read."""

    configuration: str
    night_start_s: float
    night_end_s: float
    visits: tuple[Entry, ...]
    done: tuple[Entry, ...]
    out: frozenset[str]
    closures: tuple[tuple[float, float], ...]
    start_state: StartState | None
    now_s: float | None
    raw: dict[str, Any]


def _non_finite(value: Any, where: str) -> list[Violation]:
    if isinstance(value, float) and not math.isfinite(value):
        return [Violation("schema", where or "(document)", f"{value!r} is not a finite number")]
    if isinstance(value, dict):
        return [p for k, v in value.items() for p in _non_finite(v, f"{where}.{k}".lstrip("."))]
    if isinstance(value, list):
        return [p for k, v in enumerate(value) for p in _non_finite(v, f"{where}[{k}]")]
    return []


def schema_violations(doc: Any) -> list[Violation]:
    """The JSON Schema's problems and every non-finite number, as ``schema`` violations."""
    found = [Violation("schema", p.where, p.message) for p in schema_problems(doc, SOURCE)]
    return found + _non_finite(doc, "")


class _Times:
    """Parses UTC strings, remembering the ones that are not instants."""

    def __init__(self) -> None:
        self.bad: list[Violation] = []

    def __call__(self, text: str, where: str) -> float:
        try:
            return parse_utc(text)
        except ValueError:
            self.bad.append(Violation("schema", where, f"{text!r} is not an ISO 8601 UTC time"))
            return math.nan


def _optional(value: Any) -> float | None:
    return None if value is None else float(value)


def _entry(v: dict[str, Any], where: str, utc: _Times) -> Entry:
    return Entry(
        id=v["id"], target=v["target"], kind=v["kind"], number=int(v["number"]),
        program=v["program"], priority=float(v["priority"]), ra_deg=float(v["ra_deg"]),
        dec_deg=float(v["dec_deg"]), start_s=float(v["start_s"]), end_s=float(v["end_s"]),
        start_utc_s=utc(v["start_utc"], f"{where}.start_utc"),
        end_utc_s=utc(v["end_utc"], f"{where}.end_utc"),
        opd_start_m={k: float(x) for k, x in v["opd_start_m"].items()},
        opd_end_m={k: float(x) for k, x in v["opd_end_m"].items()},
        mode=v.get("mode"), wavelength_um=_optional(v.get("wavelength_um")),
        bandwidth_um=_optional(v.get("bandwidth_um")),
    )  # fmt: skip


def _start_state(doc: dict[str, Any], utc: _Times) -> StartState | None:
    state = doc.get("start_state")
    if state is None:
        return None
    opd = state["opd_m"]
    paths = None if opd is None else {k: (None if x is None else float(x)) for k, x in opd.items()}
    return StartState(utc(state["utc"], "start_state.utc"), state["pointing"], paths)


def read_document(doc: dict[str, Any]) -> tuple[PlanDoc | None, list[Violation]]:
    """The typed plan, or None with the ``schema`` violations that stop the check."""
    found = schema_violations(doc)
    if found:
        return None, found
    utc = _Times()
    visits = tuple(_entry(v, f"visits[{k}]", utc) for k, v in enumerate(doc["visits"]))
    done = tuple(_entry(v, f"done[{k}]", utc) for k, v in enumerate(doc.get("done", [])))
    closures = tuple((utc(a, f"closures[{k}][0]"), utc(b, f"closures[{k}][1]"))
                     for k, (a, b) in enumerate(doc.get("closures", [])))  # fmt: skip
    replanned = doc.get("replanned_from")
    now = None if replanned is None else utc(replanned["now_utc"], "replanned_from.now_utc")
    plan = PlanDoc(
        configuration=doc["configuration"],
        night_start_s=utc(doc["night"]["start_utc"], "night.start_utc"),
        night_end_s=utc(doc["night"]["end_utc"], "night.end_utc"),
        visits=visits, done=done, out=frozenset(doc.get("out", [])), closures=closures,
        start_state=_start_state(doc, utc), now_s=now, raw=doc,
    )  # fmt: skip
    if utc.bad:
        return None, utc.bad
    return plan, []
