"""Why a target is left out, in plain words with its numbers: too faint for its mode
(magnitude against tonight's limit), over-resolved (its best V^2 against the floor), or
the constraint that limits it most (:func:`scheduler.model.reasons.words`)."""

from __future__ import annotations

import numpy as np

from scheduler.geometry.delay import baseline_names, baseline_pairs
from scheduler.geometry.visibility import disk_visibility, first_null_x
from scheduler.model.brightness import GUIDING, band_magnitudes, limits_of
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import DETAIL, Limit, limit_of, words


def _faint(problem: NightProblem, i: int, code: int) -> tuple[str, str]:
    mode = problem.mode_of(i)
    track, guide = limits_of(problem.modes, problem.mode_index, problem.conditions)
    guiding = int(code) // DETAIL == GUIDING
    mag = band_magnitudes(problem.targets, problem.modes, problem.mode_index, not guiding)[i]
    band = mode.guiding_band if guiding else mode.tracking_band
    limit = guide[i] if guiding else track[i]
    what = "guiding" if guiding else "fringe tracking"
    return (f"too faint for {what} in mode {mode.name} (limit {band} {limit:.1f} tonight)",
            f"{band} {mag:.1f}")


def _resolved(problem: NightProblem, i: int) -> tuple[str, str]:
    """The best case: V^2 on the shortest baseline at its full length."""
    beams, t = problem.beams, problem.targets
    a, b = baseline_pairs(beams)
    lengths = np.linalg.norm(beams.position_enu_m[b] - beams.position_enu_m[a], axis=1)
    k = int(np.argmin(lengths))
    x = np.pi * float(t.diameter_rad[i]) * lengths[k] / float(problem.wavelength_m[i])
    u = float(t.limb_darkening[i])
    v2 = float(disk_visibility(x, u) ** 2)
    where = f"{baseline_names(beams)[k]} {lengths[k]:.0f} m"
    floor = problem.limits.min_squared_visibility
    reason = (f"over-resolved on every baseline in mode {problem.mode_of(i).name} "
              f"(V^2 floor {floor:g})")
    if x >= float(first_null_x(u)):
        return reason, f"past the first null even on {where}, V^2 {v2:.3g} in a side lobe"
    return reason, f"V^2 {v2:.3g} at best, on {where}"


def explain(problem: NightProblem, i: int, code: int) -> tuple[str, str]:
    """(reason, this target's figures) for what keeps target ``i`` out (``code`` a
    reason code of the FAINT or RESOLVED kind; others: their words, no figures)."""
    limit = int(limit_of(code))
    if limit == Limit.FAINT:
        return _faint(problem, i, code)
    if limit == Limit.RESOLVED:
        return _resolved(problem, i)
    return words(code, problem.beams, problem.limits), ""
