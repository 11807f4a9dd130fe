"""The first failing limit of every target at every sample of a night, for accounting.

Pure numpy over a :class:`~scheduler.model.problem.NightProblem`.  The verdict of each
(target, time) pair is the :class:`~scheduler.model.reasons.Limit` of the code that
:func:`scheduler.geometry.constraints.evaluate_grid` gives it (its detail, the station
of a horizon mask or the pair of delay lines, is dropped): OK where every limit holds,
else the first that fails in the same order (too faint, below, above the altitude
limit, a horizon mask, the Sun, the Moon while it is up, the wind, the delay range,
over-resolved, the time window).

It is faster because most pairs are settled by the first tests: the directions come
from the same matrix fast path (:func:`~scheduler.geometry.sky.grid_enu`, so the very
same numbers), a target too faint is settled per target, and a pair below the altitude
limit by a test on the "up" component ``s_U = sin(alt)`` with a guard band of
``GUARD`` (all pairs inside the band get the exact ``arcsin`` test).  Only the pairs
above the limit go on, gathered into flat arrays, and each later limit is computed
only where it can still decide: a horizon mask below its highest point, the Sun and
Moon separations where the cosine of the separation exceeds the limit's less ``GUARD``,
the delay span, the visibilities and the time window only where the pair is still
observable.  Each limit that is computed uses the reference's own arithmetic, element
by element, so the verdicts are identical (``tests/test_availability_fast.py``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.bodies import moon_enu, sun_enu
from scheduler.geometry.constraints import into_wind
from scheduler.geometry.delay import projected_baselines
from scheduler.geometry.horizon import mask_altitude
from scheduler.geometry.sky import grid_enu, separation
from scheduler.geometry.visibility import disk_visibility, first_null_x, usable
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import Limit, limit_of

#: Guard band on sines and cosines (dimensionless).  The prefilters compare sin(alt) and
#: cos(separation) with the limits' sine and cosine; their rounding (a few 1e-16) and
#: the fast path's departure from unit length (about 1e-12) are far inside it, so no
#: pair that the exact test could fail is left out.
GUARD = 1e-9


@dataclass(frozen=True, eq=False)
class GridLimits:
    """Verdicts on a targets x times grid: ``limit`` (N, T) holds the :class:`Limit`
    value (int8) of the first limit that fails, OK (0) where the pair is observable;
    ``up`` (N, T) is True where the target's unrefracted altitude is above 0 (its
    direction above the horizon plane)."""

    limit: np.ndarray
    up: np.ndarray

    @property
    def ok(self) -> np.ndarray:
        return self.limit == Limit.OK


@dataclass(eq=False)
class _Pairs:
    """The pairs still being judged, flattened: target ``row`` and sample ``col``,
    their ENU direction and altitude (rad), and the verdict so far (``code``, Limit
    values, 0 while every limit computed holds)."""

    row: np.ndarray
    col: np.ndarray
    e: np.ndarray
    n: np.ndarray
    u: np.ndarray
    alt_rad: np.ndarray
    code: np.ndarray

    def open(self) -> np.ndarray:
        """Indices of the pairs with no failed limit yet."""
        return np.flatnonzero(self.code == Limit.OK)

    def mark(self, where: np.ndarray, bad: np.ndarray, limit: Limit) -> None:
        """Give ``limit`` to the pairs ``where[bad]`` that have no failed limit yet."""
        hit = where[bad]
        hit = hit[self.code[hit] == Limit.OK]
        self.code[hit] = limit


def grid_limits(problem: NightProblem, t_s: np.ndarray) -> GridLimits:
    """The first failing :class:`Limit` of every target of ``problem`` at every time
    of ``t_s`` (POSIX UTC seconds): arrays of shape (N, T), equal to
    ``limit_of(evaluate_grid(problem, t_s).code)``."""
    t = np.asarray(t_s, float)
    e, n, u = grid_enu(problem.ri_rad, problem.di_rad, problem.night.frame, t)
    limit = np.full(u.shape, int(Limit.LOW), np.int8)
    faint = problem.faint != 0
    limit[faint] = limit_of(problem.faint[faint]).astype(np.int8)[:, None]
    low_rad = problem.limits.min_altitude_rad + problem.margins.altitude_rad
    above = u >= np.sin(np.clip(low_rad, -0.5 * np.pi, 0.5 * np.pi)) - GUARD
    above[faint] = False
    flat = np.flatnonzero(above)
    row, col = np.divmod(flat, u.shape[1])
    uk = u.ravel()[flat]
    pairs = _Pairs(row, col, e.ravel()[flat], n.ravel()[flat], uk,
                   np.arcsin(np.clip(uk, -1.0, 1.0)), np.zeros(len(flat), np.int8))
    _judge_pairs(problem, t, pairs)
    limit.ravel()[flat] = pairs.code
    return GridLimits(limit, u > 0.0)


def _judge_pairs(problem: NightProblem, t: np.ndarray, p: _Pairs) -> None:
    """Every limit after faintness, in the reference's order, on the gathered pairs."""
    lim, m = problem.limits, problem.margins
    everyone = np.arange(len(p.row))
    p.mark(everyone, p.alt_rad < lim.min_altitude_rad + m.altitude_rad, Limit.LOW)
    p.mark(everyone, p.alt_rad > lim.max_altitude_rad - m.altitude_rad, Limit.HIGH)
    _horizons(problem, p)
    # the Sun and Moon on (1, T) times, as the reference broadcasts them
    se, sn, su = (c[0] for c in sun_enu(problem.night, t[None, :]))
    _near_body(p, (se, sn, su), lim.sun_separation_min_rad, np.ones(len(t), bool), Limit.SUN)
    me, mn, mu = (c[0] for c in moon_enu(problem.night, t[None, :]))
    _near_body(p, (me, mn, mu), lim.moon_separation_min_rad, mu > 0.0, Limit.MOON)
    c = problem.conditions
    if c.wind_from_rad is not None and c.wind_speed_m_s > lim.wind_speed_max_m_s:
        k = p.open()
        p.mark(k, into_wind(problem, _azimuth(p, k)), Limit.WIND)
    _delay(problem, p)
    _resolved(problem, p)
    ws, we = problem.targets.window_start_s, problem.targets.window_end_s
    k = p.open()
    k = k[~np.isnan(ws[p.row[k]])]
    tk, r = t[p.col[k]], p.row[k]
    p.mark(k, (tk < ws[r]) | (tk > we[r]), Limit.TIME_WINDOW)


def _azimuth(p: _Pairs, k: np.ndarray) -> np.ndarray:
    """Azimuths (rad, north through east, in [0, 2 pi)) of pairs ``k``, as
    :func:`~scheduler.geometry.sky.altaz` gives them."""
    return np.mod(np.arctan2(p.e[k], p.n[k]), 2.0 * np.pi)


def _horizons(problem: NightProblem, p: _Pairs) -> None:
    """Each station's horizon mask, in the order of the lines; only pairs below the
    mask's highest point (plus margin and guard) can fail it."""
    m = problem.margins
    for mask in problem.beams.horizons:
        if not mask:
            continue
        k = p.open()
        top_rad = max(alt for _, alt in mask) + m.altitude_rad + GUARD
        k = k[p.alt_rad[k] < top_rad]
        limit_rad = mask_altitude(mask, _azimuth(p, k)) + m.altitude_rad
        p.mark(k, p.alt_rad[k] < limit_rad, Limit.HORIZON)


def _near_body(p: _Pairs, body: tuple[np.ndarray, np.ndarray, np.ndarray], limit_rad: float,
               when: np.ndarray, limit: Limit) -> None:  # fmt: skip
    """Pairs closer than ``limit_rad`` to a body of ENU direction ``body`` (each (T,))
    at the samples where ``when`` (T,); the exact separation only where the cosine of
    the separation exceeds the limit's cosine less the guard band."""
    be, bn, bu = body
    k = p.open()
    k = k[when[p.col[k]]]
    c = p.col[k]
    cos_sep = p.e[k] * be[c] + p.n[k] * bn[c] + p.u[k] * bu[c]
    k = k[cos_sep > np.cos(limit_rad) - GUARD]
    c = p.col[k]
    sep = separation(p.e[k], p.n[k], p.u[k], be[c], bn[c], bu[c])
    p.mark(k, sep < limit_rad, limit)


def _delay(problem: NightProblem, p: _Pairs) -> None:
    """The delay range: the span of the common constant K must hold twice the margin.
    Line by line, the same arithmetic as :func:`~scheduler.geometry.delay.projected_path`
    and :func:`~scheduler.geometry.delay.offset_span`."""
    beams = problem.beams
    if not len(beams):
        return
    k = p.open()
    e, n, u = p.e[k], p.n[k], p.u[k]
    low = high = np.empty(0)
    for i in range(len(beams)):
        px, py, pz = beams.position_enu_m[i]
        pd = px * e
        pd += py * n
        pd += pz * u
        base = np.subtract(beams.path_m[i], pd, out=pd)
        lo, hi = beams.opd_min_m[i] + base, np.add(beams.opd_max_m[i], base, out=base)
        low, high = (lo, hi) if i == 0 else (np.maximum(low, lo, out=low),
                                             np.minimum(high, hi, out=high))
    p.mark(k, ~(high - low >= 2.0 * problem.margins.delay_m), Limit.DELAY)


def _resolved(problem: NightProblem, p: _Pairs) -> None:
    """Over-resolved on every baseline, as
    :func:`~scheduler.geometry.constraints.over_resolved` decides it: only targets not
    usable at the full length of the shortest baseline are computed, with each target's
    first null found once."""
    t, beams = problem.targets, problem.beams
    if len(beams) < 2:
        return
    theta = np.nan_to_num(t.diameter_rad)
    lam, ld = problem.wavelength_m, t.limb_darkening
    floor = problem.limits.min_squared_visibility
    shortest = float(np.min(np.linalg.norm(beams.position_enu_m[:, None]
                                           - beams.position_enu_m[None], axis=-1)
                            + np.eye(len(beams)) * 1e12))  # fmt: skip
    risky = ~usable(np.pi * theta * shortest / lam, ld, floor)
    k = p.open()
    k = k[risky[p.row[k]]]
    if not len(k):
        return
    r = p.row[k]
    pds = np.stack([px * p.e[k] + py * p.n[k] + pz * p.u[k]
                    for px, py, pz in beams.position_enu_m])  # fmt: skip
    x = np.pi * theta[r] * projected_baselines(beams, pds) / lam[r]
    fine = (x < first_null_x(ld)[r]) & (disk_visibility(x, ld[r]) ** 2 >= floor)
    p.mark(k, ~fine.any(axis=0), Limit.RESOLVED)
