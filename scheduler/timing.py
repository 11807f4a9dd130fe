"""Exact times and carriage paths for a sequence, compacted, with brackets repaired.

The sequencers work with grid estimates; here every transition is recomputed with the
exact fast-path geometry at the exact instants, each visit starts as early as its
predecessor, its windows and its visit separation allow (compaction), and the common
constant K is chosen per transition by the exact minimax move.  Science visits whose
calibrator brackets no longer hold, and calibrators that serve nobody, are dropped and
the sequence is timed again.
"""

from __future__ import annotations

import numpy as np

from scheduler.constraints import SkyContext, evaluate
from scheduler.delay import line_paths
from scheduler.plan_model import Candidate, PlanSettings, Start, Visit
from scheduler.reposition import minimax_move
from scheduler.transitions import Transition, slew_time_s, transition

TIME_PAD_S = 1.0  # seconds added to each exact transition, against rounding
PROFILE_POINTS = 9  # samples of a visit for its altitude range and end geometry


def _state(ctx: SkyContext, i: int, t: float):
    ev = evaluate(ctx, np.array([i]), np.array([t]))
    m = ctx.margins.delay_m
    return ev, float(ev.span.low_m[0]) + m, float(ev.span.high_m[0]) - m


def _exact(ctx, ia, ta, ib, tb):
    ea, la, ha = _state(ctx, ia, ta)
    eb, lb, hb = _state(ctx, ib, tb)
    tr = transition(ctx.beams, ctx.array_overheads, ea.alt_rad[0], ea.az_rad[0], ea.pds_m[:, 0],
                    la, ha, eb.alt_rad[0], eb.az_rad[0], eb.pds_m[:, 0], lb, hb)  # fmt: skip
    return tr, (la, ha), (lb, hb)


def _from_origin(ctx: SkyContext, origin: Start, ib: int, tb: float) -> Transition:
    """The first transition of a restarted queue: from where the telescopes point and
    the carriages stand at ``origin.t_s`` to target ``ib`` at ``tb``.  ``dk_m`` holds
    the common constant K chosen for the first visit (the minimax move from the logged
    carriage paths).  An unknown pointing costs the worst slew, half a turn."""
    over = ctx.array_overheads
    eb, lb, hb = _state(ctx, ib, tb)
    if origin.target is None:
        slew = np.pi / over.slew_rate_rad_s + over.settle_s
    else:
        ea, _, _ = _state(ctx, origin.target, origin.t_s)
        slew = float(slew_time_s(ea.alt_rad[0], ea.az_rad[0], eb.alt_rad[0], eb.az_rad[0], over))
    if origin.opd_m is None:
        k, carriage = 0.5 * (lb + hb), 0.0
    else:  # line i then adds K + g_i: choose K in the span to move least
        g = eb.pds_m[:, 0] - ctx.beams.path_m - np.asarray(origin.opd_m)
        k, move = minimax_move(g, ctx.beams.rate_m_s, lb, max(lb, hb))
        carriage = float(move) + over.settle_s
    return Transition(np.asarray(slew), np.asarray(carriage), np.asarray(over.acquisition_s),
                      np.asarray(float(k)))  # fmt: skip


def _fit(cand: Candidate, earliest_s: float, after_s: float, transition_at):
    """The first start of ``cand`` from ``earliest_s`` that leaves the whole transition
    (``transition_at(start)``, measured from ``after_s``) before it: (start, transition),
    start None if there is none."""
    start, tr = cand.earliest_start(earliest_s), None
    for attempt in range(6):
        if start is None:
            return None, None
        tr = transition_at(start)
        need = after_s + float(tr.total_s) + TIME_PAD_S
        if need <= start:
            return start, tr
        start = cand.earliest_start(need + attempt * TIME_PAD_S)
    return None, None


def time_sequence(
    ctx: SkyContext, seq: list[tuple[Candidate, float]], compact: bool = True,
    origin: Start | None = None,
) -> list[tuple[Candidate, float, object]]:  # fmt: skip
    """Exact start of each visit: [(candidate, start, transition or None)]; visits that
    no longer fit in their windows are left out.  With ``origin`` the queue starts from
    that state (a replan) instead of the start of the night."""
    out = []
    prev = None
    last_end: dict[int, float] = dict(origin.last_end) if origin else {}
    targets = ctx.targets
    for cand, hint in seq:
        ready = last_end.get(cand.target, -np.inf) + targets.min_separation_s[cand.target]
        lo = ready if compact else max(ready, hint)
        acq = ctx.array_overheads.acquisition_s
        if prev is None and origin is not None:
            start, tr = _fit(cand, max(lo, origin.t_s + acq), origin.t_s,
                             lambda t, b=cand.target: _from_origin(ctx, origin, b, t))  # fmt: skip
        elif prev is None:
            start, tr = cand.earliest_start(max(lo, ctx.night.start_s + acq)), None
        else:
            pc, pend = prev

            def after_prev(t, a=pc.target, e=pend, b=cand.target):
                return _exact(ctx, a, e, b, t)[0]

            start, tr = _fit(cand, max(lo, pend + acq), pend, after_prev)
        if start is None:
            continue
        out.append((cand, start, tr))
        prev = (cand, start + cand.duration_s)
        last_end[cand.target] = start + cand.duration_s
    return out


def brackets(
    timed, targets, suits: np.ndarray, gap_s: float, fixed=()
) -> dict[str, tuple[str, str] | None]:
    """For each science visit that needs calibrators: the (before, after) calibrator
    visit ids, nearest in time, or None if either is missing.  ``fixed`` adds
    calibrator visits already done, as (candidate, start)."""
    out = {}
    cals = [(c, st) for c, st, _ in timed if c.value == 0] + list(fixed)
    for c, st, _ in timed:
        if c.value == 0 or not targets.needs_calibrator[c.target]:
            continue
        end = st + c.duration_s
        before = [
            (st - (cs + k.duration_s), k.id)
            for k, cs in cals
            if suits[c.target, k.target] and 0 <= st - (cs + k.duration_s) <= gap_s
        ]
        after = [(cs - end, k.id) for k, cs in cals
                 if suits[c.target, k.target] and 0 <= cs - end <= gap_s]  # fmt: skip
        out[c.id] = (min(before)[1], min(after)[1]) if before and after else None
    return out


def settle_sequence(ctx, seq, targets, suits, s: PlanSettings, compact: bool = True,
                    origin: Start | None = None):  # fmt: skip
    """Time exactly, then drop broken brackets and idle calibrators until stable.

    Compaction can pull a calibrator so early that it no longer brackets its science
    visit; the sequence is therefore also timed without compaction (each visit no
    earlier than its hint) and the better of the two kept."""
    best = _settle(ctx, seq, targets, suits, s, compact, origin)
    if compact:
        plain = _settle(ctx, seq, targets, suits, s, False, origin)
        if _value(plain[0], targets) > _value(best[0], targets):
            best = plain
    return best


def _value(timed, targets) -> float:
    return float(sum(c.value for c, _, _ in timed))


def _settle(ctx, seq, targets, suits, s: PlanSettings, compact: bool, origin):
    seq = list(seq)
    fixed = origin.fixed if origin else ()
    for _ in range(len(seq) + 1):
        timed = time_sequence(ctx, seq, compact, origin)
        br = brackets(timed, targets, suits, s.calibrator_gap_s, fixed)
        used = {cid for pair in br.values() if pair for cid in pair}
        keep_ids = {c.id for c, _, _ in timed if c.value > 0 and br.get(c.id, ()) is not None}
        keep_ids |= {c.id for c, _, _ in timed if c.value == 0 and c.id in used}
        if len(keep_ids) == len(timed):
            return timed, br
        seq = [(c, st) for c, st, _ in timed if c.id in keep_ids]
    return timed, br


def to_visits(ctx: SkyContext, timed, br, origin: Start | None = None) -> list[Visit]:
    """Visits with carriage paths: K at each end of a transition from its minimax
    shift, kept mid-way in the span that allows it.  Each visit's geometry is evaluated
    once, at nine instants from its start to its end."""
    m = ctx.margins.delay_m
    profiles = [
        evaluate(ctx, np.full(PROFILE_POINTS, c.target), np.linspace(st, st + c.duration_s,
                                                                     PROFILE_POINTS))
        for c, st, _ in timed
    ]  # fmt: skip

    def span(ev, k):
        return float(ev.span.low_m[k]) + m, float(ev.span.high_m[k]) - m

    n = len(timed)
    k_start = [0.0] * n
    k_end = [0.0] * n
    for j, (_, _, tr) in enumerate(timed):
        lb, hb = span(profiles[j], 0)
        if j == 0 and tr is not None:  # a restart: K from the move off the logged paths
            k_start[j] = float(np.clip(float(tr.dk_m), lb, hb))
            continue
        if j == 0 or tr is None:
            k_start[j] = 0.5 * (lb + hb)
            continue
        la, ha = span(profiles[j - 1], -1)
        dk = float(tr.dk_m)
        lo, hi = max(la, lb - dk), min(ha, hb - dk)
        # mid-way where the shift allows; clipped, so rounding at an end of the span can
        # never put a carriage outside its range
        k_end[j - 1] = float(np.clip(0.5 * (lo + hi), la, ha))
        k_start[j] = float(np.clip(k_end[j - 1] + dk, lb, hb))
    if n:
        lo, hi = span(profiles[-1], -1)
        k_end[-1] = float(np.clip(k_start[-1], lo, hi))
    served: dict[str, list[str]] = {}
    for sci, pair in br.items():
        for cid in pair or ():
            served.setdefault(cid, []).append(sci)
    visits = []
    for j, (cand, st, tr) in enumerate(timed):
        prof = profiles[j]
        x0 = line_paths(ctx.beams, prof.pds_m[:, 0], k_start[j])
        x1 = line_paths(ctx.beams, prof.pds_m[:, -1], k_end[j])
        slew = float(tr.slew_s) if tr is not None else 0.0
        carriage = float(tr.carriage_s) if tr is not None else 0.0
        acq = float(tr.acquisition_s) if tr is not None else ctx.array_overheads.acquisition_s
        if j:
            gap = st - (timed[j - 1][1] + timed[j - 1][0].duration_s)
        else:
            gap = st - origin.t_s if origin else acq
        visits.append(Visit(
            id=cand.id, target=cand.target, start_s=st, end_s=st + cand.duration_s,
            slew_s=slew, carriage_s=carriage, acquisition_s=acq, transition_s=gap,
            opd_start_m=tuple(float(v) for v in x0), opd_end_m=tuple(float(v) for v in x1),
            alt_range_rad=(float(prof.alt_rad.min()), float(prof.alt_rad.max())),
            calibrates=tuple(served.get(cand.id, ())),
        ))  # fmt: skip
    return visits
