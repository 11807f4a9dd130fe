"""Carriage repositioning between two pointings: the exact minimax move.

Going from the end of visit A to the start of visit B, line i moves
``d_i = g_i + dK`` (metres of optical path), where ``g_i`` is the change of
``p_i . s`` and ``dK`` the change of the common constant.  The move lasts
``max_i |d_i| / rate_i``; ``dK`` is free within a span that keeps K feasible at both
instants (DOMAIN.md section 3).  ``max_i |g_i + dK| / r_i`` is convex and piecewise
linear in ``dK``; its minimum on an interval lies at an end of the interval or where a
rising piece ``(g_i + dK)/r_i`` meets a falling piece ``-(g_j + dK)/r_j``, i.e. at
``dK = -(r_j g_i + r_i g_j) / (r_i + r_j)``.  Evaluating every such candidate is exact
and vectorises over many transitions at once.
"""

from __future__ import annotations

import numpy as np


def minimax_move(g_m, rate_m_s, dk_low_m, dk_high_m):
    """Best common shift and the move time it gives.

    Parameters
    ----------
    g_m : array (..., L)
        Change of ``p_i . s`` per line, metres of optical path.
    rate_m_s : array (L,)
        Optical-path rate of each line, m/s (positive).
    dk_low_m, dk_high_m : array (...)
        Allowed span of the common shift, metres (``low <= high``).

    Returns
    -------
    dk_m, move_s : arrays (...)
        The shift that minimises the longest move, and that move's duration in seconds
        (carriage travel only; settling is added by the caller).
    """
    g = np.asarray(g_m, float)
    r = np.asarray(rate_m_s, float)
    lo = np.asarray(dk_low_m, float)[..., None]
    hi = np.asarray(dk_high_m, float)[..., None]
    # crossings of rising line i with falling line j (i == j gives dK = -g_i)
    gi, gj = g[..., :, None], g[..., None, :]
    ri, rj = r[:, None], r[None, :]
    cross = -(rj * gi + ri * gj) / (ri + rj)
    cand = cross.reshape(g.shape[:-1] + (-1,))
    cand = np.concatenate([np.clip(cand, lo, hi), lo, hi], axis=-1)
    cost = np.max(np.abs(g[..., None, :] + cand[..., :, None]) / r, axis=-1)
    best = np.argmin(cost, axis=-1)[..., None]
    return (
        np.take_along_axis(cand, best, axis=-1)[..., 0],
        np.take_along_axis(cost, best, axis=-1)[..., 0],
    )


def move_time_s(d_m, rate_m_s) -> np.ndarray:
    """Time for every carriage to travel ``d_m`` (..., L) at its own rate."""
    return np.max(np.abs(np.asarray(d_m, float)) / np.asarray(rate_m_s, float), axis=-1)


def move_upper_bound(g_m, rate_m_s, dk_low_m, dk_high_m):
    """A cheap upper bound of :func:`minimax_move`: the shift that centres the moves,
    ``-(max g + min g) / 2`` (optimal when all rates are equal, DOMAIN.md section 3),
    clamped to the span.  Any allowed shift costs at least the minimum, so the result
    is never below the exact move time.  Returns ``(dk_m, move_s)``."""
    g = np.asarray(g_m, float)
    dk = np.clip(-0.5 * (g.max(axis=-1) + g.min(axis=-1)), dk_low_m, dk_high_m)
    return dk, np.max(np.abs(g + dk[..., None]) / np.asarray(rate_m_s, float), axis=-1)
