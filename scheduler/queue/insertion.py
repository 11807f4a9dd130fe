"""Insertion moves: put a science visit (with the calibrators it needs) into a route.

For every science target that may still get a visit and every place in the route, the
cheapest way to bracket it is worked out from the calibrators already there: alone when
calibrators before and after are within the gap, else with a new calibrator before,
after, or both.  Each move's extra time is guessed from the oracle's time-independent
estimates (the slack of the visits after it included), all places and targets at once
with numpy; the most valuable per second of extra time are then timed properly
(:func:`~scheduler.queue.route.time_route`) and the first that fits, brackets included,
is taken.  This is the insertion step of the iterated local search for orienteering
problems with time windows (Vansteenwegen et al. 2009, Computers & Operations Research
36, 3281; from memory), with blocks of visits instead of single visits.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from scheduler.queue.route import Night, Route, bracket_faults, time_route

TRY_BEST = 24  # moves timed properly per insertion at most, best guesses first
PER_TARGET = 3  # places offered per target (the best guesses), so that one target
#                 whose guesses all fail cannot hide the others
PARTIAL_CREDIT = 0.5  # guide value of a visit that does not yet complete its target
SLACK_TOLERANCE_S = 600.0  # estimates are rough: moves a little beyond the slack are tried
NEAR = 4  # calibrator visits looked at on each side of a place (the gap is short)
CAL_OPTIONS = 3  # calibrator targets considered per science target, nearest first
NO = np.inf


@dataclass(frozen=True)
class Move:
    position: int
    block: tuple[int, ...]
    ratio: float


def marginal_value(night: Night, counts: Counter[int], target: int) -> float:
    """What one more visit of ``target`` adds (partial credit towards the minimum)."""
    rule = night.q.rule
    have = counts.get(target, 0) + night.done.get(target, 0)
    w, need = float(rule.per_visit[target]), int(rule.min_visits[target])
    if target in night.keep and counts.get(target, 0) < night.previous[target]:
        w += 1.0 + float(np.sum(rule.per_visit))  # a time-critical visit planned before
    if have + 1 > need:
        return w
    return w * need if have + 1 == need else w * PARTIAL_CREDIT


def _slack(night: Night, route: Route, ends: list[float]) -> np.ndarray:
    """How much the visit at each place could start later without pushing any later
    visit out of its window (estimated, transitions taken as fixed); inf at the end."""
    n = len(route.targets)
    slack = np.full(n + 1, np.inf)
    for k in range(n - 1, -1, -1):
        i, s = route.targets[k], route.starts[k]
        own = night.window_end(i, s) - s
        if k + 1 < n:
            wait = route.starts[k + 1] - (ends[k] + night.oracle.estimate[i, route.targets[k + 1]])
            own = min(own, max(0.0, wait) + slack[k + 1])
        slack[k] = own
    return slack


@dataclass(frozen=True, eq=False)
class _Places:
    """The route's places as arrays (P = n + 1): previous/next target (-1: none), the
    time the previous visit ends, the next visit's start and slack."""

    prev: np.ndarray
    nxt: np.ndarray
    free_from: np.ndarray
    next_start: np.ndarray
    slack: np.ndarray


def _places(night: Night, route: Route) -> _Places:
    ends = route.ends(night)
    n = len(route.targets)
    t = np.array(route.targets, int)
    prev = np.concatenate([[-1], t]) if n else np.array([-1])
    nxt = np.concatenate([t, [-1]]) if n else np.array([-1])
    free = np.array([night.t0_s] + ends, float)
    nstart = np.array(route.starts + [night.end_s], float)
    return _Places(prev, nxt, free, nstart, _slack(night, route, ends))


def _trans(est: np.ndarray, a: np.ndarray, b: np.ndarray, acq: float) -> np.ndarray:
    """Estimated transitions a -> b (broadcast); from 'no visit' (-1) only acquisition,
    to 'no visit' nothing."""
    out = est[np.maximum(a, 0), np.maximum(b, 0)]
    out = np.where(a < 0, acq, out)
    return np.where(b < 0, 0.0, out)


def _cal_state(night: Night, route: Route) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Calibrator visits in the route and done ones: target, start, end, place index."""
    rows = [(i, s, s + night.duration_s[i], k) for k, (i, s) in
            enumerate(zip(route.targets, route.starts, strict=True)) if not night.science[i]]
    rows += [(i, s, e, -1) for i, s, e in night.fixed_cals]
    arr = np.array(rows, float).reshape(-1, 4)
    return arr[:, 0].astype(int), arr[:, 1], arr[:, 2], arr[:, 3].astype(int)


def candidate_moves(night: Night, route: Route, counts: Counter[int],
                    weight: Callable[[np.ndarray, np.ndarray], np.ndarray] | None = None
                    ) -> list[Move]:  # fmt: skip
    """Plausible insertions, best first: by value per second of extra time, or by
    ``weight(gain, extra)`` (arrays of the same shape) when given."""
    sci = np.array([i for i in night.starts if night.science[i]
                    and counts.get(i, 0) < night.allowed[i]], int)  # fmt: skip
    if not len(sci):
        return []
    pl = _places(night, route)
    est, acq = night.oracle.estimate, night.q.problem.overheads.acquisition_s
    dur = np.array([night.duration_s[i] for i in sci])
    first = np.array([night.starts[i][0][0] for i in sci])
    last = np.array([night.starts[i][-1][1] for i in sci])
    arrive = np.maximum(first[None, :], pl.free_from[:, None]
                        + _trans(est, pl.prev[:, None], sci[None, :], acq))  # (P, m)
    ok = arrive <= last[None, :]
    extra, block_b, block_a = _brackets(night, route, pl, sci, arrive, dur, counts)
    ok &= np.isfinite(extra) & (extra <= pl.slack[:, None] + SLACK_TOLERANCE_S)
    gain = np.array([marginal_value(night, counts, int(i)) for i in sci])
    extra = np.maximum(extra, 1.0)
    key = weight(gain[None, :], extra) if weight else gain[None, :] / extra
    ratio = np.where(ok, key, -np.inf)
    best_places = np.argsort(-ratio, axis=0)[:PER_TARGET]  # (PER_TARGET, m)
    moves = []
    for u in range(len(sci)):
        for p in best_places[:, u]:
            if np.isfinite(ratio[p, u]):
                block = tuple(int(x) for x in (block_b[p, u], sci[u], block_a[p, u]) if x >= 0)
                moves.append(Move(int(p), block, float(ratio[p, u])))
    moves.sort(key=lambda m: -m.ratio)
    return moves


def _near(route: Route, night: Night, P: int) -> tuple[np.ndarray, np.ndarray]:
    """For every place, the calibrator visits just before it and just after it, as
    indices into :func:`_cal_state`'s arrays (-1: none); done calibrators count as
    before every place."""
    cal_pos = [k for k, i in enumerate(route.targets) if not night.science[i]]
    fixed = list(range(len(cal_pos), len(cal_pos) + len(night.fixed_cals)))
    before = np.full((P, NEAR + len(fixed)), -1)
    after = np.full((P, NEAR), -1)
    for p in range(P):
        prior = [j for j, k in enumerate(cal_pos) if k < p][-NEAR:] + fixed
        later = [j for j, k in enumerate(cal_pos) if k >= p][:NEAR]
        before[p, :len(prior)] = prior
        after[p, :len(later)] = later
    return before, after


def _options(night: Night, sci: np.ndarray, counts: Counter[int]) -> np.ndarray:
    """(m, CAL_OPTIONS) calibrator targets with copies left that suit each science
    target, nearest on the sky first (-1: none)."""
    rank = night.cal_rank[sci]  # (m, R)
    left = np.zeros(night.cal_rank.shape[0] + 1, bool)  # index -1 (padding) stays False
    for j, allowed in night.allowed.items():
        if not night.science[j] and counts.get(j, 0) < allowed:
            left[j] = True
    ok = left[rank]
    order = np.argsort(~ok, axis=1, kind="stable")[:, :CAL_OPTIONS]
    picked = np.take_along_axis(rank, order, 1)
    return np.where(np.take_along_axis(ok, order, 1), picked, -1)


def _covered(suits: np.ndarray, near: np.ndarray, ct: np.ndarray,
             ok_time: np.ndarray) -> np.ndarray:  # fmt: skip
    """(P, m): some calibrator of ``near`` (P, K) suits the target and ``ok_time``
    (P, m, K) holds."""
    valid = near >= 0
    targets = ct[np.maximum(near, 0)]  # (P, K)
    fit = suits[:, targets].transpose(1, 0, 2)  # (P, m, K)
    return (fit & valid[:, None, :] & ok_time).any(axis=2)


def _brackets(night: Night, route: Route, pl: _Places, sci: np.ndarray, arrive: np.ndarray,
              dur: np.ndarray, counts: Counter[int]
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:  # fmt: skip
    """Extra seconds of the cheapest bracketed block at every (place, target), and the
    calibrator target added before and after (-1: none needed)."""
    est, acq, gap = night.oracle.estimate, night.q.problem.overheads.acquisition_s, night.gap_s
    suits = night.q.suits[sci]  # (m, N)
    needs = np.array([night.needs_cal[int(i)] for i in sci])
    ct, cs, ce, _ = _cal_state(night, route)
    into = _trans(est, pl.prev[:, None], sci[None, :], acq)
    wait = arrive - (pl.free_from[:, None] + into)  # idle before its window opens
    base = (into + wait + dur[None, :] + _trans(est, sci[None, :], pl.nxt[:, None], acq)
            - _trans(est, pl.prev, pl.nxt, acq)[:, None])  # fmt: skip
    near_b, near_a = _near(route, night, len(pl.prev))
    if len(ct):
        since = arrive[:, :, None] - ce[np.maximum(near_b, 0)][:, None, :]
        before = _covered(suits, near_b, ct, (since >= 0) & (since <= gap))
        until = cs[np.maximum(near_a, 0)][:, None, :] - (arrive + dur[None, :])[:, :, None]
        after = _covered(suits, near_a, ct, (until >= 0) & (until <= gap))
    else:
        before = after = np.zeros(base.shape, bool)
    opts = _options(night, sci, counts)  # (m, C)
    has = opts >= 0
    o = np.maximum(opts, 0)
    cdur = np.array([night.duration_s.get(int(j), 0.0) for j in o.ravel()]).reshape(o.shape)
    cost_b = (_trans(est, pl.prev[:, None, None], o[None], acq) + cdur[None]
              + est[o, sci[:, None]][None] - into[:, :, None])  # (P, m, C)
    cost_a = (est[sci[:, None], o][None] + cdur[None] + _trans(est, o[None], pl.nxt[:, None, None],
              acq) - _trans(est, sci[None, :], pl.nxt[:, None], acq)[:, :, None])  # fmt: skip
    cost_b = np.where(has[None], cost_b, NO)
    cost_a = np.where(has[None], cost_a, NO)
    kb, ka = cost_b.argmin(axis=2), cost_a.argmin(axis=2)
    need_b, need_a = needs[None, :] & ~before, needs[None, :] & ~after
    add_b = np.where(need_b, np.take_along_axis(cost_b, kb[..., None], 2)[..., 0], 0.0)
    add_a = np.where(need_a, np.take_along_axis(cost_a, ka[..., None], 2)[..., 0], 0.0)
    pick_b = np.take_along_axis(np.broadcast_to(opts[None], cost_b.shape), kb[..., None], 2)[..., 0]
    pick_a = np.take_along_axis(np.broadcast_to(opts[None], cost_a.shape), ka[..., None], 2)[..., 0]
    return (base + add_b + add_a, np.where(need_b, pick_b, -1), np.where(need_a, pick_a, -1))


def apply_best(night: Night, route: Route, counts: Counter[int],
               moves: list[Move]) -> Route | None:  # fmt: skip
    """The first of the best ``TRY_BEST`` moves that times and brackets, or None."""
    tried = 0
    for move in moves:
        if tried >= TRY_BEST:
            break
        if any(counts.get(i, 0) + move.block.count(i) > night.allowed[i] for i in move.block):
            continue
        tried += 1
        targets = route.targets[:move.position] + list(move.block) + route.targets[move.position:]
        starts = time_route(night, targets, route, move.position)
        if starts is None:
            continue
        new = Route(targets, starts)
        broken, _ = bracket_faults(night, new)
        if not broken:
            return new
    return None
