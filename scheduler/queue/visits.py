"""From an exactly timed sequence to visits with carriage paths.

K (the constant common to all lines) is chosen at each end of a transition from its
minimax shift, kept mid-way in the span that allows it, so every carriage stays as far
from its ends as the geometry allows.  Each visit's geometry is evaluated once, at nine
instants from its start to its end.
"""

from __future__ import annotations

import numpy as np

from scheduler.geometry.constraints import Evaluation, evaluate
from scheduler.geometry.delay import baseline_names, line_paths, projected_baselines
from scheduler.geometry.visibility import disk_visibility, usable
from scheduler.model.plan import Start, Visit
from scheduler.model.problem import NightProblem
from scheduler.queue.timing import Brackets, Timed

PROFILE_POINTS = 9  # samples of a visit for its altitude range and end geometry


def _span(problem: NightProblem, ev: Evaluation, k: int) -> tuple[float, float]:
    m = problem.margins.delay_m
    return float(ev.span.low_m[k]) + m, float(ev.span.high_m[k]) - m


def _k_values(problem: NightProblem, timed: Timed,
              profiles: list[Evaluation]) -> tuple[list[float], list[float]]:  # fmt: skip
    """K at the start and at the end of every visit (metres)."""
    n = len(timed)
    k_start, k_end = [0.0] * n, [0.0] * n
    for j, (_, _, tr) in enumerate(timed):
        lb, hb = _span(problem, profiles[j], 0)
        if j == 0 and tr is not None:  # a restart: K from the move off the logged paths
            k_start[j] = float(np.clip(float(tr.dk_m), lb, hb))
            continue
        if j == 0 or tr is None:
            k_start[j] = 0.5 * (lb + hb)
            continue
        la, ha = _span(problem, profiles[j - 1], -1)
        dk = float(tr.dk_m)
        lo, hi = max(la, lb - dk), min(ha, hb - dk)
        # mid-way where the shift allows; clipped, so rounding at an end of the span can
        # never put a carriage outside its range
        k_end[j - 1] = float(np.clip(0.5 * (lo + hi), la, ha))
        k_start[j] = float(np.clip(k_end[j - 1] + dk, lb, hb))
    if n:
        lo, hi = _span(problem, profiles[-1], -1)
        k_end[-1] = float(np.clip(k_start[-1], lo, hi))
    return k_start, k_end


def to_visits(problem: NightProblem, timed: Timed, br: Brackets,
              origin: Start | None = None) -> list[Visit]:  # fmt: skip
    """Visits with their transitions and carriage paths (see the module docstring)."""
    profiles = [evaluate(problem, np.full(PROFILE_POINTS, c.target),
                         np.linspace(st, st + c.duration_s, PROFILE_POINTS))
                for c, st, _ in timed]  # fmt: skip
    k_start, k_end = _k_values(problem, timed, profiles)
    served: dict[str, list[str]] = {}
    for sci, pair in br.items():
        for cid in pair or ():
            served.setdefault(cid, []).append(sci)
    acq_default = problem.overheads.acquisition_s
    visits = []
    for j, (cand, st, tr) in enumerate(timed):
        prof = profiles[j]
        x0 = line_paths(problem.beams, prof.pds_m[:, 0], k_start[j])
        x1 = line_paths(problem.beams, prof.pds_m[:, -1], k_end[j])
        if j:
            gap = st - (timed[j - 1][1] + timed[j - 1][0].duration_s)
        else:
            gap = st - origin.t_s if origin else acq_default
        visits.append(Visit(
            id=cand.id, target=cand.target, kind=cand.kind, number=cand.number, start_s=st,
            end_s=st + cand.duration_s, slew_s=float(tr.slew_s) if tr is not None else 0.0,
            carriage_s=float(tr.carriage_s) if tr is not None else 0.0,
            acquisition_s=float(tr.acquisition_s) if tr is not None else acq_default,
            transition_s=gap, opd_start_m=tuple(float(v) for v in x0),
            opd_end_m=tuple(float(v) for v in x1),
            alt_range_rad=(float(prof.alt_rad.min()), float(prof.alt_rad.max())),
            calibrates=tuple(served.get(cand.id, ())),
            setup_s=float(tr.setup_s) if tr is not None else 0.0,
            weak_baselines=weak_baselines(problem, cand.target, prof),
        ))  # fmt: skip
    return visits


def weak_baselines(problem: NightProblem, target: int,
                   prof: Evaluation) -> tuple[tuple[str, float], ...]:  # fmt: skip
    """Baselines that measure nothing at some instant of the visit (past the first null
    or V^2 below the floor), with the least V^2 there: a partly resolved target."""
    theta = float(np.nan_to_num(problem.targets.diameter_rad[target]))
    if theta <= 0.0 or len(problem.beams) < 2:
        return ()
    u = float(problem.targets.limb_darkening[target])
    x = np.pi * theta * projected_baselines(problem.beams, prof.pds_m) / problem.wavelength_m[
        target]  # fmt: skip
    bad = ~usable(x, np.full(x.shape, u), problem.limits.min_squared_visibility)
    v2 = disk_visibility(x, u) ** 2
    names = baseline_names(problem.beams)
    return tuple((names[k], round(float(v2[k].min()), 5)) for k in np.flatnonzero(bad.any(axis=1)))
