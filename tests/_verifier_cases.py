"""Shared helpers of the verifier's tests (``tests/test_verifier*.py``).

- building documents: ISO times written here, visit times and targets changed by hand, a
  replan-shaped document built from a plan, the :class:`Case` a mutation changes;
- the fixtures ``demo``, ``plan_case`` and ``replan_case`` (test modules import them
  explicitly by name; ``demo_greedy`` comes from ``conftest.py``);
- helpers for modes, limits, catalog columns and baselines.

Data are the fictional demo scenario or invented here.
"""

from __future__ import annotations

import copy
import dataclasses
import datetime as dt
import math
from typing import Any

import numpy as np
import pytest

from scheduler.model.array import ArrayModel, Mode
from scheduler.model.conditions import Conditions
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify import Violation, verify_plan

ARCSEC = math.radians(1.0 / 3600.0)
MAS = ARCSEC / 1000.0
Doc = dict[str, Any]


# ---------------------------------------------------------------- building documents


def utc(t_s: float) -> str:
    """ISO 8601 UTC with milliseconds, written here (not with opdplan's formatter)."""
    ms = round(t_s * 1000.0)
    stamp = dt.datetime.fromtimestamp(ms // 1000, tz=dt.UTC).strftime("%Y-%m-%dT%H:%M:%S")
    return f"{stamp}.{ms % 1000:03d}Z"


def set_times(v: Doc, start_s: float, end_s: float) -> None:
    v.update(start_s=round(start_s, 3), end_s=round(end_s, 3), start_utc=utc(start_s),
             end_utc=utc(end_s))  # fmt: skip


def shift(v: Doc, dt_s: float) -> None:
    set_times(v, v["start_s"] + dt_s, v["end_s"] + dt_s)


def retarget(c: Case, k: int, name: str) -> None:
    """Visit ``k`` observes catalog target ``name`` instead (catalog fields and length
    follow; times start where they did; paths and neighbours are left as they were)."""
    t, v = c.targets, c.doc["visits"][k]
    i = t.index(name)
    v.update(target=name, kind=str(t.kind(i)), program=t.program[i],
             priority=float(t.priority[i]), ra_deg=math.degrees(t.ra_rad[i]),
             dec_deg=math.degrees(t.dec_rad[i]))  # fmt: skip
    set_times(v, v["start_s"], v["start_s"] + float(t.duration_s[i]))


def drop_station(doc: Doc, station: str) -> None:
    """The document as a replan with ``station`` out writes it: its line is gone from
    the lines in use, the planned visits' paths and the start state."""
    gone = [d["name"] for d in doc["delay_lines"] if d["station"] == station]
    doc["stations"] = [s for s in doc["stations"] if s["name"] != station]
    doc["delay_lines"] = [d for d in doc["delay_lines"] if d["station"] != station]
    for v in doc["visits"]:
        for key in ("opd_start_m", "opd_end_m"):
            v[key] = {ln: x for ln, x in v[key].items() if ln not in gone}
    opd = doc["start_state"]["opd_m"]
    doc["start_state"]["opd_m"] = {ln: x for ln, x in opd.items() if ln not in gone}


def make_replan(plan: Doc, out: tuple[str, ...] = ()) -> Doc:
    """A replan-shaped document built by hand from a plan: its first three visits done
    at their planned times, now = the end of the third, the telescopes pointing at its
    target and the carriages where it left them, one closure in the past and one after
    the last visit, and ``out`` (stations) removed."""
    doc = copy.deepcopy(plan)
    done, planned = doc["visits"][:3], doc["visits"][3:]
    last = done[-1]
    doc.update(visits=planned, done=done, out=list(out), diff={},
               replanned_from={"plan": "/invented/tonight.json", "now_utc": utc(last["end_s"])},
               closures=[[utc(done[0]["end_s"] + 60.0), utc(done[0]["end_s"] + 120.0)],
                         [utc(planned[-1]["end_s"] + 120.0), utc(planned[-1]["end_s"] + 600.0)]],
               start_state={"utc": utc(last["end_s"]), "pointing": last["target"],
                            "opd_m": dict(last["opd_end_m"])})  # fmt: skip
    for station in out:
        drop_station(doc, station)
    return doc


@dataclasses.dataclass
class Case:
    """A plan document and the inputs it is checked against (each may be mutated)."""

    doc: Doc
    array: ArrayModel
    targets: Targets
    settings: PlanSettings
    conditions: Conditions | None = None  # as from the command line; None: the plan's

    def run(self) -> list[Violation]:
        return verify_plan(self.doc, self.array, self.targets, self.settings, self.conditions)

    def first_science(self) -> int:
        """Index of the first planned science visit that needs calibrators."""
        t = self.targets
        return next(k for k, v in enumerate(self.doc["visits"]) if v["kind"] == "science"
                    and t.needs_calibrator[t.index(v["target"])])  # fmt: skip


@pytest.fixture(scope="module")
def demo(demo_greedy: Any) -> tuple[Doc, ArrayModel, Targets]:
    inputs, _, _, doc = demo_greedy
    return copy.deepcopy(doc), inputs.array, inputs.targets


@pytest.fixture
def plan_case(demo: tuple[Doc, ArrayModel, Targets]) -> Case:
    doc, array, targets = demo
    return Case(copy.deepcopy(doc), array, targets, PlanSettings())


@pytest.fixture
def replan_case(demo: tuple[Doc, ArrayModel, Targets]) -> Case:
    doc, array, targets = demo
    return Case(make_replan(doc), array, targets, PlanSettings())


# ---------------------------------------------------------------- modes, conditions and measuring
# Helpers written here: a target's mode through the array file's own lookup, magnitudes
# by the catalog's columns, baselines from the plan's station list.


def mode_of(c: Case, i: int) -> Mode:
    """Catalog target ``i``'s mode (an empty name: the array's first)."""
    return c.array.mode(c.targets.mode[i])


def tracking_mag(c: Case, i: int) -> float:
    """``mag_<tracking band>``, else the plain ``mag`` (README.md, *Inputs*)."""
    value = float(c.targets.magnitude(mode_of(c, i).tracking_band)[i])
    return float(c.targets.mag[i]) if math.isnan(value) else value


def change_modes(c: Case, **changes: Any) -> None:
    """Every mode of the array with ``changes``."""
    c.array = dataclasses.replace(c.array, modes=tuple(dataclasses.replace(m, **changes)
                                                       for m in c.array.modes))  # fmt: skip


def change_mode(c: Case, name: str, **changes: Any) -> None:
    modes = tuple(dataclasses.replace(m, **changes) if m.name == name else m
                  for m in c.array.modes)  # fmt: skip
    c.array = dataclasses.replace(c.array, modes=modes)


def change_limits(c: Case, **changes: Any) -> None:
    c.array = dataclasses.replace(c.array, limits=dataclasses.replace(c.array.limits, **changes))


def change_column(c: Case, name: str, rows: np.ndarray, value: float) -> None:
    """Catalog column ``name`` (an array) set to ``value`` where ``rows``."""
    column = getattr(c.targets, name).astype(float).copy()
    column[rows] = value
    c.targets = dataclasses.replace(c.targets, **{name: column})


def set_band(c: Case, band: str, i: int, value: float) -> None:
    """Catalog target ``i``'s ``mag_<band>`` set to ``value`` (the column added if new)."""
    column = c.targets.magnitude(band).copy()
    column[i] = value
    bands = dict(c.targets.band_mags)
    bands[band] = column
    c.targets = dataclasses.replace(c.targets, band_mags=tuple(bands.items()))


def baselines_m(doc: Doc) -> np.ndarray:
    """Every baseline vector (P, 3) between the plan's stations."""
    p = np.array([[s["east_m"], s["north_m"], s["up_m"]] for s in doc["stations"]])
    return np.array([p[j] - p[i] for i in range(len(p)) for j in range(i + 1, len(p))])


def planned_science(c: Case) -> int:
    """Catalog index of the first planned science visit's target."""
    return c.targets.index(c.doc["visits"][c.first_science()]["target"])
