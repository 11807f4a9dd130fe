"""One target's (u, v, w) tracks over stretches of a night (its observable windows or its
planned visits), with their coverage figures (:mod:`scheduler.geometry.uv`)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.delay import baseline_names, baseline_pairs
from scheduler.geometry.sky import enu_from_cirs
from scheduler.geometry.uv import Coverage, coverage, uvw_tracks
from scheduler.model.problem import NightProblem

FILL_FRACTION_OF_DISK = 0.1  # default fill radius: this fraction of the longest baseline


@dataclass(frozen=True, eq=False)
class TargetTracks:
    """Tracks of target ``target`` (catalog index): sample times ``t_s`` (T,), the
    baselines' names and ground lengths (P,), ``uvw_m`` (P, T, 3) metres, the mode's
    wavelength, the stretches sampled and the coverage of all samples."""

    target: int
    t_s: np.ndarray
    baselines: tuple[str, ...]
    lengths_m: np.ndarray
    uvw_m: np.ndarray
    wavelength_m: float
    spans: tuple[tuple[float, float], ...]
    coverage: Coverage


def sample_spans(spans: list[tuple[float, float]] | tuple[tuple[float, float], ...],
                 step_s: float) -> np.ndarray:  # fmt: skip
    """Times every ``step_s`` across each span, both ends included."""
    parts = [np.linspace(a, b, max(2, int(np.ceil((b - a) / step_s)) + 1))
             for a, b in spans if b >= a]  # fmt: skip
    return np.concatenate(parts) if parts else np.zeros(0)


def uvw_at(problem: NightProblem, i: int, t_s: np.ndarray) -> np.ndarray:
    """(u, v, w) of every baseline (P, T, 3), metres, for target ``i`` at ``t_s``."""
    beams = problem.beams
    a, b = baseline_pairs(beams)
    base = beams.position_enu_m[b] - beams.position_enu_m[a]
    if not len(t_s):
        return np.zeros((len(base), 0, 3))
    e, n, u = enu_from_cirs(problem.ri_rad[i], problem.di_rad[i], problem.night.frame, t_s)
    return uvw_tracks(base, problem.night.frame.latitude_rad, e, n, u)


def target_tracks(problem: NightProblem, i: int, spans: list[tuple[float, float]],
                  step_s: float, fill_radius_m: float | None = None) -> TargetTracks:  # fmt: skip
    """The tracks of target ``i`` over ``spans`` (POSIX s), sampled every ``step_s``."""
    beams = problem.beams
    a, b = baseline_pairs(beams)
    base = beams.position_enu_m[b] - beams.position_enu_m[a]
    lengths = np.linalg.norm(base, axis=1)
    t = sample_spans(spans, step_s)
    uvw = uvw_at(problem, i, t)
    disk = float(lengths.max()) if len(lengths) else 0.0
    radius = fill_radius_m if fill_radius_m is not None else FILL_FRACTION_OF_DISK * disk
    cov = coverage(uvw[..., 0], uvw[..., 1], disk, radius)
    return TargetTracks(i, t, tuple(baseline_names(beams)), lengths, uvw,
                        float(problem.wavelength_m[i]), tuple(spans), cov)  # fmt: skip
