"""The semester's pool: the requested science targets and the calibrators that may serve
them, with the requests pointing into it (:class:`Scenario`).

A requested target takes the highest priority among its requests (the queue favours
higher-ranked requests, as a committee's ranking does); calibrators keep priority 0.  A
calibrator is in the pool when it lies within the queue's calibrator distance of some
requested target that needs one; whether it suits that target on a given night is
decided night by night by the queue (:mod:`scheduler.queue.candidates`).
"""

from __future__ import annotations

import uuid
from dataclasses import dataclass, field, replace

import numpy as np

from scheduler.geometry.visibility import angular_distance
from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.model.semester import Request, Semester
from scheduler.model.targets import Targets


@dataclass(frozen=True, eq=False)
class Scenario:
    """Everything the semester's nights and realisations need (sent to workers once).
    ``requests[j].target`` indexes ``targets`` (the pool), ``catalog_index`` maps the
    pool back to the catalog."""

    array: ArrayModel
    targets: Targets
    semester: Semester
    requests: tuple[Request, ...]
    catalog_index: np.ndarray
    settings: PlanSettings = PlanSettings()
    #: names this scenario across processes (prepared nights are kept per token)
    token: str = field(default_factory=lambda: uuid.uuid4().hex)

    def need_visits(self) -> np.ndarray:
        """Visits each request needs: ``ceil(hours / visit length)``."""
        t = self.targets
        return np.array([int(np.ceil(r.hours * 3600.0 / t.duration_s[r.target] - 1e-9))
                         for r in self.requests], int)  # fmt: skip


def build_scenario(array: ArrayModel, catalog: Targets, semester: Semester,
                   requests: list[Request],
                   settings: PlanSettings | None = None) -> Scenario:  # fmt: skip
    """The pool of ``requests`` (whose ``target`` index ``catalog``)."""
    s = settings or PlanSettings()
    science = sorted({r.target for r in requests})
    needing = [i for i in science if catalog.needs_calibrator[i]]
    cals = np.flatnonzero(~catalog.is_science)
    if needing and len(cals):
        d = angular_distance(catalog.ra_rad[needing][:, None], catalog.dec_rad[needing][:, None],
                             catalog.ra_rad[cals][None, :], catalog.dec_rad[cals][None, :])
        cals = cals[(d <= s.calibrator_max_sep_rad).any(axis=0)]
    else:
        cals = cals[:0]
    index = np.array(science + [int(c) for c in cals], int)
    pool = catalog.subset(index)
    where = {int(c): k for k, c in enumerate(index)}
    priority = np.zeros(len(index))
    for r in requests:
        k = where[r.target]
        priority[k] = max(priority[k], r.priority)
    pool = replace(pool, priority=priority, min_visits=np.ones(len(index), int))
    moved = tuple(replace(r, target=where[r.target]) for r in requests)
    return Scenario(array, pool, semester, moved, index, s)
