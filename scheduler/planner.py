"""Plan one night: windows, candidates, a sequence, exact times, the summary.

``plan_night`` runs the greedy dispatcher, then (with ``solver="optimize"``) the
CP-SAT optimiser warm-started from it, times the better sequence exactly and explains
every science target left out.
"""

from __future__ import annotations

import time

import numpy as np

from scheduler.candidates import build_candidates, suitable_calibrators
from scheduler.constraints import SkyContext
from scheduler.geometry_grid import GeometryGrid
from scheduler.greedy import GridTransitions, greedy_sequence
from scheduler.plan_model import Plan, PlanSettings, Start, Visit
from scheduler.restart import restrict
from scheduler.timing import settle_sequence, to_visits
from scheduler.windows import observable_windows

GRID_PAD_S = 20.0  # added to grid transitions, covering nearest-sample rounding
RESERVE_S = 1.0  # of the time limit, kept for exact timing and verification
PREPARE_S = 1.0  # of the time limit, assumed spent before the optimiser in deterministic mode


def science_value(visits: list[Visit], ctx: SkyContext) -> float:
    """Sum of priority x hours over scheduled science visits."""
    t = ctx.targets
    return float(sum(t.priority[v.target] * (v.end_s - v.start_s) / 3600.0
                     for v in visits if t.is_science[v.target]))  # fmt: skip


def idle_carriage_s(visits: list[Visit]) -> float:
    """Carriage repositioning time between visits (moves and settling), seconds."""
    return float(sum(v.carriage_s for v in visits))


def carriage_wait_s(visits: list[Visit]) -> float:
    """Seconds the array waits for carriages: over all transitions, how much longer the
    carriage move takes than the telescope slew."""
    return float(sum(max(0.0, v.carriage_s - v.slew_s) for v in visits))


def objective(visits: list[Visit], ctx: SkyContext, settings: PlanSettings) -> float:
    """A timed plan's objective, priority x hours: science value minus the carriage
    weight times the carriage repositioning time."""
    return science_value(visits, ctx) - settings.carriage_weight * idle_carriage_s(visits) / 3600.0


def queue_inputs(ctx: SkyContext, settings: PlanSettings):
    """What every sequencer needs for one night: windows, calibrator suitability,
    candidate visits and grid transitions."""
    windows = observable_windows(ctx)
    suits = suitable_calibrators(ctx.targets, ctx.beams.longest_baseline_m(), settings)
    cands = build_candidates(ctx.targets, windows, suits, settings)
    grid = GeometryGrid.build(ctx)
    return windows, suits, cands, GridTransitions(grid, ctx.beams, ctx.array_overheads, GRID_PAD_S)


def energy_bound(cands, ctx: SkyContext, origin: Start | None) -> float:
    """An upper bound of any plan's science value by time alone: every visit needs its
    length plus at least one acquisition and settling, and the night (from the restart)
    has only so many seconds; the best value per second fills them first (a fractional
    knapsack, ignoring windows, so never below the true optimum)."""
    over = ctx.array_overheads
    start = origin.t_s if origin else ctx.night.start_s
    room = max(0.0, ctx.night.end_s - start)
    items = sorted(((c.value / (c.duration_s + over.acquisition_s + over.settle_s),
                     c.duration_s + over.acquisition_s + over.settle_s) for c in cands
                    if c.value > 0), reverse=True)  # fmt: skip
    total = 0.0
    for density, size in items:
        take = min(size, room)
        total += density * take
        room -= take
        if room <= 0:
            break
    return total


def plan_night(
    ctx: SkyContext,
    settings: PlanSettings,
    solver: str = "optimize",
    started_s: float | None = None,
    origin: Start | None = None,
) -> Plan:
    """Plan the night.  ``settings.time_limit_s`` counts from ``started_s``
    (``time.perf_counter()`` when the command began; now by default), and a reserve is
    kept for exact timing and verification after the optimiser stops.  With ``origin``
    the queue restarts mid-night from that state (see :mod:`scheduler.restart`), warm
    started from ``origin.previous`` where it still fits."""
    t0 = time.perf_counter()
    started = t0 if started_s is None else started_s
    targets = ctx.targets
    windows, suits, cands, tr = queue_inputs(ctx, settings)
    if origin is not None:
        cands = restrict(cands, origin, targets.min_separation_s)
    seq = greedy_sequence(cands, targets, suits, tr, settings, ctx.night.start_s, ctx.night.end_s,
                          origin)  # fmt: skip
    timed, br = settle_sequence(ctx, seq, targets, suits, settings, origin=origin)
    greedy_visits = to_visits(ctx, timed, br, origin)
    summary = {"solver": "greedy", "greedy_value": round(science_value(greedy_visits, ctx), 4)}
    visits = greedy_visits
    if origin is not None and origin.previous:  # the old order, where it still fits
        by_id = {c.id: c for c in cands}
        old = [(by_id[i], st) for i, st in origin.previous if i in by_id]
        timed_p, br_p = settle_sequence(ctx, old, targets, suits, settings, False, origin)
        kept = to_visits(ctx, timed_p, br_p, origin)
        summary["previous_value"] = round(science_value(kept, ctx), 4)
        if objective(kept, ctx, settings) >= objective(visits, ctx, settings):
            visits, timed, summary["solver"] = kept, timed_p, "previous order"
    if solver == "optimize":
        from scheduler.optimizer import optimize

        if settings.deterministic:  # a fixed share, so that machine speed changes nothing
            budget = settings.time_limit_s - RESERVE_S - PREPARE_S
        else:
            budget = settings.time_limit_s - (time.perf_counter() - started) - RESERVE_S
        result = optimize(ctx, cands, suits, tr, settings, timed, budget, origin)
        summary.update(result.report)
        fallback = summary["solver"]
        if result.sequence is not None:
            timed_o, br_o = settle_sequence(ctx, result.sequence, targets, suits, settings,
                                            origin=origin)  # fmt: skip
            opt_visits = to_visits(ctx, timed_o, br_o, origin)
            if objective(opt_visits, ctx, settings) > objective(visits, ctx, settings) - 1e-9:
                visits = opt_visits
                summary["solver"] = "optimize"
            else:
                summary["solver"] = f"{fallback} (optimiser found nothing better)"
        else:
            summary["solver"] = f"{fallback} (optimiser returned nothing in time)"
    value = science_value(visits, ctx)
    summary.update({
        "science_hours": round(sum((v.end_s - v.start_s) / 3600.0 for v in visits
                                   if targets.is_science[v.target]), 4),
        "weighted_value": round(value, 4),
        "idle_carriage_s": round(idle_carriage_s(visits), 1),
        "seed": settings.seed,
        "wall_s": round(time.perf_counter() - t0, 3),
    })  # fmt: skip
    summary["objective"] = round(objective(visits, ctx, settings), 4)
    summary["greedy_idle_carriage_s"] = round(idle_carriage_s(greedy_visits), 1)
    summary["carriage_wait_s"] = round(carriage_wait_s(visits), 1)
    if solver == "optimize":  # a second valid bound, cheap and sometimes tighter
        quick = energy_bound(cands, ctx, origin)
        summary["bound"] = min(quick, summary.get("bound") or quick)
    if summary.get("bound") is not None:
        obj = summary["objective"]
        bound = max(summary["bound"], obj)
        summary["bound"] = round(bound, 4)
        summary["gap"] = round((bound - obj) / bound, 4) if bound > 0 else 0.0
    done = dict.fromkeys(range(len(targets)), 0)
    for vid in origin.done if origin else ():
        name = vid.rsplit("#", 1)[0]
        if name in targets.names:
            done[targets.index(name)] += 1
    unscheduled = _unscheduled(ctx, windows, suits, cands, visits, done)
    return Plan(tuple(visits), tuple(unscheduled), summary)


def _unscheduled(ctx, windows, suits, cands, visits, done_before):
    t = ctx.targets
    done: dict[int, int] = {k: n for k, n in done_before.items() if n}
    for v in visits:
        done[v.target] = done.get(v.target, 0) + 1
    cal_ok = {c.target for c in cands if c.value == 0}
    out = []
    for i in np.flatnonzero(t.is_science):
        wanted, got = int(t.visits[i]), done.get(i, 0)
        if got >= wanted:
            continue
        w = windows[i]
        if not w.start_windows(float(t.duration_s[i])):
            why = f"never observable tonight for {t.duration_s[i] / 60:.0f} min"
            if w.excluded:
                why += f" ({ctx.reason(w.main_reason())})"
        elif t.needs_calibrator[i] and not any(j in cal_ok for j in np.flatnonzero(suits[i])):
            why = "no suitable calibrator observable tonight"
        else:
            why = "lost to higher priority"
        if got:
            why = f"{got} of {wanted} visits scheduled; rest {why}"
        out.append((t.names[i], why))
    return out
