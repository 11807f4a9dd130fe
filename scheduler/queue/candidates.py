"""Candidate visits, and which calibrators suit which science targets.

Each science target gives up to ``visits`` candidates; each calibrator that suits some
science target gives ``calibrator_copies`` candidates (one calibrator may be observed
several times a night).  A calibrator suits a science target when both use the same
observing mode, it is within the angular distance limit, within the magnitude
difference when both magnitudes are known (tracking band), and, when its diameter is
known, it stays nearly unresolved and well known on the longest baseline of the lines
in use (which bounds every projected baseline): its visibility at least
``calibrator_min_visibility`` and the error its diameter uncertainty brings to V^2,
sigma(V^2), at most the array's ``calibrator_error_max`` at every projected length up to
that baseline.  Among suitable calibrators the search prefers the smaller error, then
the nearer on the sky (which keeps their airmasses alike).
"""

from __future__ import annotations

import numpy as np

from scheduler.geometry.visibility import (
    angular_distance,
    disk_visibility,
    squared_visibility_error,
)
from scheduler.geometry.windows import TargetWindows
from scheduler.model.brightness import band_magnitudes
from scheduler.model.plan import Candidate, PlanSettings, visit_id
from scheduler.model.problem import NightProblem
from scheduler.model.targets import Kind, Targets

ERROR_SAMPLES = 48  # projected lengths from 0 to the longest baseline, for sigma(V^2)


def calibrator_errors(problem: NightProblem) -> np.ndarray:
    """Per target: the largest sigma(V^2) its diameter uncertainty brings at any
    projected length up to the longest baseline (0 where the diameter is unknown); the
    uncertainty is ``diameter_err_mas``, else the array's assumed fraction."""
    t = problem.targets
    out = np.zeros(len(t))
    lengths = np.linspace(0.0, problem.beams.longest_baseline_m(), ERROR_SAMPLES)
    for i in np.flatnonzero(~t.is_science & (np.nan_to_num(t.diameter_rad) > 0)):
        err = t.diameter_err_rad[i]
        if np.isnan(err):
            err = problem.limits.diameter_error_fraction * t.diameter_rad[i]
        out[i] = float(np.max(squared_visibility_error(
            float(t.diameter_rad[i]), float(err), lengths, float(problem.wavelength_m[i]),
            float(np.nan_to_num(t.limb_darkening[i])))))  # fmt: skip
    return out


def suitable_calibrators(problem: NightProblem, s: PlanSettings,
                         errors: np.ndarray) -> np.ndarray:  # fmt: skip
    """Boolean matrix (N, N): ``[i, j]`` when calibrator j suits science target i."""
    t = problem.targets
    ra, dec = t.ra_rad, t.dec_rad
    ok = angular_distance(ra[:, None], dec[:, None], ra[None, :], dec[None, :]) <= (
        s.calibrator_max_sep_rad)
    mag = band_magnitudes(t, problem.modes, problem.mode_index, True)
    ok &= ~(np.abs(mag[:, None] - mag[None, :]) > s.calibrator_max_dmag)  # unknown passes
    x = np.pi * np.nan_to_num(t.diameter_rad) * problem.beams.longest_baseline_m() / (
        problem.wavelength_m)
    vis = disk_visibility(x, t.limb_darkening)
    ok &= ((vis >= s.calibrator_min_visibility) & (errors <= problem.limits.calibrator_error_max)
           )[None, :]  # fmt: skip
    ok &= problem.mode_index[:, None] == problem.mode_index[None, :]
    ok &= t.is_science[:, None] & ~t.is_science[None, :]
    return ok


def build_candidates(targets: Targets, windows: list[TargetWindows], suits: np.ndarray,
                     s: PlanSettings, per_visit: np.ndarray) -> list[Candidate]:  # fmt: skip
    """Every science visit that could fit tonight (``per_visit[i]``: what one visit of
    target i earns), and copies of useful calibrators."""
    out: list[Candidate] = []
    needed = suits[targets.needs_calibrator].any(axis=0)
    for i, w in enumerate(windows):
        d = float(targets.duration_s[i])
        starts = w.start_windows(d)
        if not starts:
            continue
        name = targets.names[i]
        if targets.is_science[i]:
            value = float(per_visit[i])
            for k in range(1, int(targets.visits[i]) + 1):
                out.append(Candidate(visit_id(name, Kind.SCIENCE, k), i, Kind.SCIENCE, k, d,
                                     value, starts))  # fmt: skip
        elif needed[i]:
            for k in range(1, s.calibrator_copies + 1):
                out.append(Candidate(visit_id(name, Kind.CALIBRATOR, k), i, Kind.CALIBRATOR,
                                     k, d, 0.0, starts))  # fmt: skip
    return out
