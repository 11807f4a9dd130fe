"""Candidate visits, which calibrators suit which science targets, and the queue's
inputs for one night.

Each science target gives up to ``visits`` candidates; each calibrator that suits some
science target gives ``calibrator_copies`` candidates (one calibrator may be observed
several times a night).  A calibrator suits a science target when it is within the
angular distance limit, within the magnitude difference when both magnitudes are known,
and, when its diameter is known, its uniform-disk visibility ``V = 2 J1(x)/x`` with
``x = pi theta B / lambda`` stays at least ``calibrator_min_visibility`` on the longest
physical baseline (which bounds every projected baseline, so it holds all night).
"""

from __future__ import annotations

import numpy as np

from scheduler.geometry.visibility import angular_distance, uniform_disk_visibility
from scheduler.geometry.windows import TargetWindows
from scheduler.model.plan import Candidate, PlanSettings, visit_id
from scheduler.model.targets import Kind, Targets


def suitable_calibrators(targets: Targets, longest_baseline_m: float,
                         s: PlanSettings) -> np.ndarray:  # fmt: skip
    """Boolean matrix (N, N): ``[i, j]`` when calibrator j suits science target i."""
    ra, dec = targets.ra_rad, targets.dec_rad
    dist = angular_distance(ra[:, None], dec[:, None], ra[None, :], dec[None, :])
    ok = dist <= s.calibrator_max_sep_rad
    dmag = np.abs(targets.mag[:, None] - targets.mag[None, :])
    ok &= ~(dmag > s.calibrator_max_dmag)  # NaN (a magnitude unknown) passes
    vis = uniform_disk_visibility(np.nan_to_num(targets.diameter_rad), longest_baseline_m,
                                  s.wavelength_m)  # fmt: skip
    ok &= (vis >= s.calibrator_min_visibility)[None, :]
    ok &= targets.is_science[:, None] & ~targets.is_science[None, :]
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
