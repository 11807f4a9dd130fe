"""Transition bounds for the optimiser, read from the one-minute geometry grid.

The planning model needs safe (upper) bounds of the transition between two targets:
over the whole night for the time it reserves before a visit, and per hour-long slot for
the closely following pairs it models, since slews change a lot over a night (a target
pair near the zenith can need a half-turn in azimuth at one moment and nothing an hour
later).  The final plan is timed exactly, so a bound that sampling misses by a few
seconds costs at most a retimed visit, never a wrong plan.
"""

from __future__ import annotations

import numpy as np

from scheduler.geometry.transitions import transition
from scheduler.model.plan import Candidate
from scheduler.queue.grid import GridTransitions

BOUND_STEP_S = 600.0  # sampling of the night for the night-long bounds
BOUND_LAG_S = 600.0  # typical length of a transition, between end of u and start of v
SLOT_S = 3600.0  # length of a slot for the per-slot pair bounds
SLOT_STEP_S = 120.0  # sampling inside a slot
SLOT_LAGS_S = (490.0, 650.0)  # transition lengths sampled for the start of v


def _grid_transition(tr: GridTransitions, ia, ca, ib, cb):
    """Transitions from targets ``ia`` at grid columns ``ca`` to ``ib`` at ``cb``
    (broadcast); returns (total, carriage, both observable)."""
    g = tr.g
    t = transition(
        tr.beams, tr.over,
        g.alt_rad[ia, ca], g.az_rad[ia, ca], g.pds_m[:, ia, ca], g.k_low_m[ia, ca],
        g.k_high_m[ia, ca], g.alt_rad[ib, cb], g.az_rad[ib, cb], g.pds_m[:, ib, cb],
        g.k_low_m[ib, cb], g.k_high_m[ib, cb], exact=False,
    )  # fmt: skip
    return t.total_s, t.carriage_s, g.ok[ia, ca] & g.ok[ib, cb]


def transition_bounds(tr: GridTransitions, targets_used: np.ndarray):
    """Upper bounds (s) of the transition, and of its carriage move, between every pair
    of the targets used, over the night (sampled every ``BOUND_STEP_S``); the transition
    bound is -1 where the pair is never both observable."""
    g = tr.g
    idx = np.asarray(targets_used)
    n = len(idx)
    total = np.full((n, n), -1.0)
    carriage = np.zeros((n, n))
    for ta in np.arange(g.t_s[0], g.t_s[-1] - BOUND_LAG_S, BOUND_STEP_S):
        ca, cb = g.column(ta), g.column(ta + BOUND_LAG_S)
        t, c, ok = _grid_transition(tr, idx[:, None], ca, idx[None, :], cb)
        total = np.where(ok, np.maximum(total, t), total)
        carriage = np.where(ok, np.maximum(carriage, c), carriage)
    return total, carriage


def reserves(cands: list[Candidate], total: np.ndarray, pos: dict, shortest_s: int):
    """Seconds reserved before each candidate: the longest transition into its target
    (planning), or the shortest possible transition (bounding)."""
    longest = np.ceil(np.max(total, axis=0)).astype(int)
    plan = [max(int(longest[pos[c.target]]), shortest_s) for c in cands]
    return plan, [shortest_s] * len(cands)


def slot_bounds(tr: GridTransitions, pairs: set[tuple[int, int]], pad_s: float):
    """Per-slot upper bounds for target pairs: ``{(a, b): [(lo_s, hi_s, bound_s)]}``
    for the slots in which a visit of ``a`` can end with ``b`` observable after it;
    ``lo_s``/``hi_s`` are POSIX times bounding the end of ``a``."""
    g = tr.g
    keys = sorted(pairs)
    out: dict[tuple[int, int], list] = {k: [] for k in keys}
    if not keys:
        return out
    ia = np.array([a for a, _ in keys])[:, None]
    ib = np.array([b for _, b in keys])[:, None]
    for lo in np.arange(g.t_s[0], g.t_s[-1], SLOT_S):
        hi = min(lo + SLOT_S, g.t_s[-1])
        taus = np.arange(lo, hi + 1.0, SLOT_STEP_S)
        best = np.full(len(keys), -1.0)
        for lag in SLOT_LAGS_S:
            t, _, ok = _grid_transition(tr, ia, g.column(taus)[None, :], ib,
                                        g.column(taus + lag)[None, :])  # fmt: skip
            best = np.maximum(best, np.where(ok, t, -1.0).max(axis=1))
        for k in np.flatnonzero(best >= 0):
            out[keys[k]].append((float(lo), float(hi), float(best[k]) + pad_s))
    return out


def abutting_pairs(cands: list[Candidate], suits, pair_s, room_s: float, nearest: int):
    """Candidate pairs (u, v) worth modelling as "u closely followed by v": every
    science-calibrator pair that may bracket, and for each visit its ``nearest``
    predecessors by transition bound whose windows let them abut."""
    first = [min(a for a, _ in c.starts) for c in cands]
    last_end = [max(b for _, b in c.starts) + c.duration_s for c in cands]
    pairs = set()
    for v, cv in enumerate(cands):
        near = []
        for u, cu in enumerate(cands):
            if cu.target == cv.target:
                continue
            t_uv = pair_s(u, v)
            if t_uv < 0 or first[v] > last_end[u] + t_uv + room_s:
                continue
            near.append((t_uv, u))
            if cu.is_science != cv.is_science:
                sci, cal = (u, v) if cu.is_science else (v, u)
                if suits[cands[sci].target, cands[cal].target]:
                    pairs.add((u, v))
        pairs |= {(u, v) for _, u in sorted(near)[:nearest]}
    return pairs


def room_s(cands: list[Candidate], shortest: int) -> int:
    """Seconds between two visits too few for any other visit to fit between them."""
    return min(int(np.ceil(c.duration_s)) for c in cands) + shortest - 1 if cands else 0
