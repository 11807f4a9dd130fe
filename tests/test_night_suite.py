"""The generated suite of invented nights (tests/benchmarks/night_suite.py) against facts.

References:
- the night, its dark interval and local sidereal time: ``scheduler.astro.night`` on
  astropy (checked against astropy's full transform elsewhere), not the generator's own
  approximations;
- which visits the night offers: the queue's windows (``prepare_queue``);
- a star culminates at altitude 90 - |dec - latitude| (standard spherical astronomy,
  common practice, no source);
- what the suite must span (latitudes, lines, pool sizes, fixed offsets, multi-visit and
  time-critical targets): the suite's brief, common practice, no source.
All data are invented.
"""

from __future__ import annotations

import re
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
import night_suite  # noqa: E402

from scheduler.model.array import ArrayModel  # noqa: E402
from scheduler.model.plan import PlanSettings  # noqa: E402
from scheduler.model.problem import NightProblem  # noqa: E402
from scheduler.model.times import parse_utc  # noqa: E402
from scheduler.queue.prepare import QueueInputs, prepare_queue  # noqa: E402

MIN_DARK_H = 5.0  # every suite night has at least this much dark time
TRANSIT_SLACK_H = 2.0  # science targets transit within the dark hours or this close to them
SIDEREAL_H_PER_RAD = 12.0 / np.pi / 1.0027379  # hours of time per radian of hour angle
SMALL_SEEDS = (0, 1, 2, 3, 4, 5)
NAME = re.compile(r"^(Cal-)?[A-Z][a-z]+-\d{2,3}[a-h]?$")


@dataclass(frozen=True)
class Built:
    night: night_suite.Night
    array: ArrayModel
    problem: NightProblem
    queue: QueueInputs


@pytest.fixture(scope="module")
def built() -> list[Built]:
    out = []
    for night in night_suite.suite():
        array, targets = night_suite.load(night)
        problem = night_suite.problem(night, (array, targets))
        out.append(Built(night, array, problem, prepare_queue(problem, PlanSettings())))
    return out


def test_at_least_twelve_invented_nights(built: list[Built]) -> None:
    assert len(built) >= 12
    assert len({b.night.name for b in built}) == len(built)
    for b in built:
        assert "(invented)" in b.array.site.name
        assert "invented" in b.night.description
        assert all(NAME.match(r["name"]) for r in b.night.rows), b.night.name


def test_every_night_has_dark_time_and_observable_science(built: list[Built]) -> None:
    for b in built:
        night = b.problem.night
        assert night.end_s - night.start_s >= MIN_DARK_H * 3600.0, b.night.name
        assert any(c.is_science for c in b.queue.candidates), b.night.name


def test_science_targets_are_up_during_the_night(built: list[Built]) -> None:
    """Every science target transits within the dark hours (give or take the slack) and
    culminates above the altitude limit."""
    for b in built:
        night, t = b.problem.night, b.problem.targets
        mid = 0.5 * (night.start_s + night.end_s)
        half_h = (night.end_s - night.start_s) / 7200.0
        ha = np.angle(np.exp(1j * (night.lst_rad(mid) - t.ra_rad))) * SIDEREAL_H_PER_RAD
        sci = t.is_science
        assert np.all(np.abs(ha[sci]) <= half_h + TRANSIT_SLACK_H), b.night.name
        culmination = np.pi / 2 - np.abs(t.dec_rad - b.array.site.latitude_rad)
        assert np.all(culmination[sci] > b.problem.limits.min_altitude_rad), b.night.name


def test_time_critical_windows_lie_inside_the_night(built: list[Built]) -> None:
    windows = 0
    for b in built:
        night = b.problem.night
        for r in b.night.rows:
            if r["window_start_utc"]:
                windows += 1
                start, end = parse_utc(r["window_start_utc"]), parse_utc(r["window_end_utc"])
                assert night.start_s <= start < end <= night.end_s, (b.night.name, r["name"])
                assert end - start >= float(r["duration_min"]) * 60.0
    assert windows >= 1


def test_the_suite_spans_what_it_promises(built: list[Built]) -> None:
    lats = [np.degrees(b.array.site.latitude_rad) for b in built]
    assert min(lats) <= -60.0 + 1e-9 and max(lats) >= 50.0 - 1e-9
    assert all(-60.0 - 1e-9 <= x <= 50.0 + 1e-9 for x in lats)
    beams = [b.problem.beams for b in built]
    lines = [len(bm.line_names) for bm in beams]
    assert min(lines) == 3 and max(lines) == 8
    baselines = [bm.longest_baseline_m() for bm in beams]
    assert min(baselines) <= 40.0 and max(baselines) >= 290.0
    assert any(np.any(bm.fixed_offset_m != 0.0) for bm in beams)
    assert any(any(bm.horizons) for bm in beams)
    assert all(np.ptp(bm.opd_max_m - bm.opd_min_m) > 0 and np.ptp(bm.rate_m_s) > 0
               for bm in beams)  # fmt: skip
    pools = [len(b.queue.candidates) for b in built]
    assert min(pools) <= 40 and max(pools) >= 250


def test_targets_span_visits_priorities_and_durations(built: list[Built]) -> None:
    t = [b.problem.targets for b in built]
    sci = [(x.is_science, x) for x in t]
    multi = [(x.visits[s] >= 2) for s, x in sci]
    assert any(np.any(m) for m in multi)
    for (s, x), m in zip(sci, multi, strict=True):
        assert np.all((x.visits[s] >= 1) & (x.visits[s] <= 4))
        sep_min = x.min_separation_s[s][m] / 60.0
        assert np.all((sep_min >= 45.0) & (sep_min <= 120.0))
        assert np.all((x.priority[s] >= 1) & (x.priority[s] <= 10))
        assert np.all((x.duration_s[s] >= 15 * 60.0) & (x.duration_s[s] <= 90 * 60.0))
    needs = np.concatenate([x.needs_calibrator[s] for s, x in sci])
    assert needs.any() and not needs.all()
    none_near = [~b.queue.suits.any(axis=1) & b.problem.targets.needs_calibrator for b in built]
    assert any(np.any(x) for x in none_near)  # few calibrators: some science has none
    suitable = [b.queue.suits.sum(axis=1)[b.problem.targets.needs_calibrator] for b in built]
    assert max(float(np.median(k)) for k in suitable) >= 3  # many: several for most


def test_generation_is_deterministic_for_a_seed() -> None:
    assert night_suite.suite(11) == night_suite.suite(11)
    assert night_suite.suite(11) != night_suite.suite(12)
    assert night_suite.small(3) == night_suite.small(3)


@pytest.mark.parametrize("seed", SMALL_SEEDS)
def test_small_nights_are_small(seed: int) -> None:
    night = night_suite.small(seed)
    array, targets = night_suite.load(night)
    assert 2 <= len(array.stations) <= 4
    q = prepare_queue(night_suite.problem(night, (array, targets)), PlanSettings())
    assert 5 <= len(q.candidates) <= 9
