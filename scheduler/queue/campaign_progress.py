"""Where a campaign stands: per target and configuration, the visits wanted, done and
left, the nights and hour angles of the visits done, and the (u, v) coverage they give
together (tracks of every done visit on its own night, :mod:`scheduler.geometry.uv`)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

from scheduler.astro.night import find_night
from scheduler.astro.problem import night_problem
from scheduler.geometry.uv import Coverage, coverage
from scheduler.geometry.uv_night import FILL_FRACTION_OF_DISK, sample_spans, uvw_at
from scheduler.model.array import ArrayModel
from scheduler.model.campaign import CampaignState
from scheduler.model.targets import Targets

TRACK_STEP_S = 300.0


@dataclass(frozen=True)
class Progress:
    """One target in one configuration."""

    target: str
    configuration: str
    wanted: int
    done: int
    nights: tuple[dt.date, ...]
    hour_angles_rad: tuple[float, ...]
    coverage: Coverage

    @property
    def left(self) -> int:
        return max(0, self.wanted - self.done)


def progress(array: ArrayModel, targets: Targets, state: CampaignState) -> list[Progress]:
    """Every (target, configuration) of the campaign, with done visits in others too."""
    out = []
    for ct in state.campaign.targets:
        configs = list(dict(ct.visits)) + sorted(
            {d.configuration for d in state.done_of(ct.target)} - set(dict(ct.visits)))
        for cfg in configs:
            out.append(_one(array, targets, state, ct.target, cfg))
    return out


def _one(array: ArrayModel, targets: Targets, state: CampaignState, name: str,
         cfg: str) -> Progress:  # fmt: skip
    i = targets.index(name)
    one = targets.subset(np.array([i]))
    beams = array.beams(cfg)
    u, v, ha = [], [], []
    done = state.done_of(name, cfg)
    for night_date in sorted({d.night for d in done}):
        problem = night_problem(array, beams, one, find_night(array, night_date))
        spans = [(d.start_s, d.end_s) for d in done if d.night == night_date]
        uvw = uvw_at(problem, 0, sample_spans(spans, TRACK_STEP_S))
        u.append(uvw[..., 0].ravel())
        v.append(uvw[..., 1].ravel())
        ha += [float(problem.hour_angle_rad(0, 0.5 * (a + b))) for a, b in spans]
    disk = beams.longest_baseline_m()
    cov = coverage(np.concatenate(u) if u else np.zeros(0), np.concatenate(v) if v else
                   np.zeros(0), disk, FILL_FRACTION_OF_DISK * disk)  # fmt: skip
    wanted = next(t for t in state.campaign.targets if t.target == name).wanted(cfg)
    return Progress(name, cfg, wanted, len(done), tuple(sorted({d.night for d in done})),
                    tuple(ha), cov)  # fmt: skip
