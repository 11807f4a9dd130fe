"""Tonight's share of an imaging campaign (README, *Campaigns*).

For each campaign target, tonight's configuration decides what is wanted: the visits
the campaign still needs with it (0: the target waits for another configuration), each
worth something on its own (``min_visits`` 1).  Visits done on earlier nights with this
configuration are kept as hour angles: no visit tonight may have its mid-visit hour
angle within the target's ``ha_spread`` of theirs (:func:`cut_for_spread`), and what a
visit of the target earns (and its rank in the greedy queue) is scaled by the coverage
the next visit can still add
(:func:`coverage_gain`): the gain in the filled fraction of the (u, v) disk from one
more visit at its best hour angle tonight, over the gain the same visit would bring
alone, between :data:`MIN_GAIN` and 1.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from scheduler.geometry.sky import altaz, enu_from_cirs
from scheduler.geometry.uv import fill_grid, near_samples
from scheduler.geometry.uv_night import (
    FILL_FRACTION_OF_DISK,
    sample_spans,
    uvw_at,
)
from scheduler.model.campaign import CampaignState
from scheduler.model.plan import Candidate
from scheduler.model.problem import NightProblem
from scheduler.model.targets import SIDEREAL_PER_SOLAR, spread_separation_s
from scheduler.queue.restart import allowed_starts

MIN_GAIN = 0.05
TRIAL_STEP_S = 1800.0  # trial mid-visit times for the coverage gain
TRACK_STEP_S = 300.0
OMEGA_HA_RAD_S = 2 * np.pi / 86400.0 * SIDEREAL_PER_SOLAR


def campaign_night(problem: NightProblem, state: CampaignState) -> NightProblem:
    """``problem`` with the campaign's targets set for tonight's configuration."""
    t, cfg = problem.targets, problem.beams.configuration
    visits, least = t.visits.copy(), t.min_visits.copy()
    spread, sep = t.ha_spread_rad.copy(), t.min_separation_s.copy()
    weight = t.value_weight.astype(float).copy()
    past = list(problem.past_hour_angles)
    for ct in state.campaign.targets:
        if ct.target not in t.names:
            continue
        i = t.index(ct.target)
        visits[i], least[i] = state.remaining(ct.target, cfg), 1
        if ct.ha_spread_rad is not None:
            spread[i] = ct.ha_spread_rad
        sep[i] = spread_separation_s(sep[i], spread[i], t.duration_s[i])
        past[i] = tuple(float(problem.hour_angle_rad(i, d.mid_s))
                        for d in state.done_of(ct.target, cfg))  # fmt: skip
    night = replace(problem, targets=replace(t, visits=visits, min_visits=least,
                                             ha_spread_rad=spread, min_separation_s=sep),
                    past_hour_angles=tuple(past))  # fmt: skip
    for ct in state.campaign.targets:
        if ct.target in t.names and night.past_hour_angles[t.index(ct.target)]:
            i = t.index(ct.target)
            weight[i] *= coverage_gain(night, i, state)
    return replace(night, targets=replace(night.targets, value_weight=weight))


def forbidden_starts(problem: NightProblem, i: int,
                     duration_s: float) -> tuple[tuple[float, float], ...]:  # fmt: skip
    """Start times (POSIX s) whose mid-visit hour angle falls within the target's spread
    of a past visit's (the hour angle grows at the sidereal rate through the night)."""
    s = float(problem.targets.ha_spread_rad[i])
    past = problem.past_hour_angles[i]
    if s <= 0 or not past:
        return ()
    night = problem.night
    ha0 = float(problem.hour_angle_rad(i, night.start_s))  # unwrapped from here on
    out = []
    for h in past:
        for k in (-1, 0, 1, 2):
            lo, hi = h + 2 * np.pi * k - s, h + 2 * np.pi * k + s
            a = night.start_s + (lo - ha0) / OMEGA_HA_RAD_S - duration_s / 2
            b = night.start_s + (hi - ha0) / OMEGA_HA_RAD_S - duration_s / 2
            if b > night.start_s - duration_s and a < night.end_s:
                out.append((a, b))
    return tuple(out)


def cut_for_spread(problem: NightProblem, cands: list[Candidate]) -> list[Candidate]:
    """Candidates with start windows cut clear of past visits' hour angles."""
    out = []
    for c in cands:
        bad = forbidden_starts(problem, c.target, c.duration_s) if c.is_science else ()
        if not bad:
            out.append(c)
            continue
        # a closure (a + d, b) forbids the starts in (a, b) for a visit of length d
        starts = allowed_starts(c.starts, -np.inf, tuple((a + c.duration_s, b) for a, b in bad),
                                c.duration_s)  # fmt: skip
        if starts:
            out.append(c.with_starts(starts))
    return out


def coverage_gain(problem: NightProblem, i: int, state: CampaignState) -> float:
    """What the next visit of target ``i`` adds to its coverage in tonight's
    configuration, relative to a first visit (see the module docstring)."""
    t, night = problem.targets, problem.night
    d = float(t.duration_s[i])
    done = [(v.start_s, v.end_s) for v in state.done_of(t.names[i], problem.beams.configuration)]
    past = uvw_at(problem, i, sample_spans(done, TRACK_STEP_S))
    disk = problem.beams.longest_baseline_m()
    radius = FILL_FRACTION_OF_DISK * disk
    mids = np.arange(night.start_s + d / 2, night.end_s - d / 2, TRIAL_STEP_S)
    e, n, u = enu_from_cirs(problem.ri_rad[i], problem.di_rad[i], night.frame, mids)
    up = altaz(e, n, u)[0] >= problem.limits.min_altitude_rad
    grid = fill_grid(disk)
    before = near_samples(grid, past[..., 0].ravel(), past[..., 1].ravel(), radius)
    best, alone = 0.0, 0.0
    for m in mids[up]:
        uvw = uvw_at(problem, i, sample_spans([(m - d / 2, m + d / 2)], TRACK_STEP_S))
        trial = near_samples(grid, uvw[..., 0].ravel(), uvw[..., 1].ravel(), radius)
        gain = float(np.mean(before | trial) - np.mean(before))
        if gain > best:
            best, alone = gain, float(np.mean(trial))
    if alone <= 0:
        return MIN_GAIN
    return float(np.clip(best / alone, MIN_GAIN, 1.0))
