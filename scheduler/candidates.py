"""Candidate visits and which calibrators suit which science targets.

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
from scipy.special import j1

from scheduler.catalog import Targets
from scheduler.plan_model import Candidate, PlanSettings
from scheduler.windows import TargetWindows


def uniform_disk_visibility(diameter_rad, baseline_m, wavelength_m) -> np.ndarray:
    """``V = 2 J1(x) / x``, ``x = pi theta B / lambda`` (1 at x = 0)."""
    x = np.pi * np.asarray(diameter_rad, float) * baseline_m / wavelength_m
    safe = np.where(x == 0.0, 1.0, x)
    return np.where(x == 0.0, 1.0, 2.0 * j1(safe) / safe)


def angular_distance(ra1, dec1, ra2, dec2) -> np.ndarray:
    """Great-circle distance (rad), Vincenty form (stable at all angles)."""
    dra = ra2 - ra1
    num = np.hypot(
        np.cos(dec2) * np.sin(dra),
        np.cos(dec1) * np.sin(dec2) - np.sin(dec1) * np.cos(dec2) * np.cos(dra),
    )
    den = np.sin(dec1) * np.sin(dec2) + np.cos(dec1) * np.cos(dec2) * np.cos(dra)
    return np.arctan2(num, den)


def suitable_calibrators(targets: Targets, longest_baseline_m: float, s: PlanSettings):
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


def build_candidates(
    targets: Targets, windows: list[TargetWindows], suits: np.ndarray, s: PlanSettings
) -> list[Candidate]:
    """Every science visit that could fit tonight, and copies of useful calibrators."""
    out: list[Candidate] = []
    needed = suits[targets.needs_calibrator].any(axis=0)
    for i, w in enumerate(windows):
        d = float(targets.duration_s[i])
        starts = w.start_windows(d)
        if not starts:
            continue
        if targets.is_science[i]:
            value = float(targets.priority[i]) * d / 3600.0
            for k in range(int(targets.visits[i])):
                out.append(Candidate(f"{targets.names[i]}#{k + 1}", i, k + 1, d, value, starts))
        elif needed[i]:
            for k in range(s.calibrator_copies):
                out.append(Candidate(f"{targets.names[i]}@{k + 1}", i, k + 1, d, 0.0, starts))
    return out
