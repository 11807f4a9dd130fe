"""Every set-up choice of the configurations asked for, ranked by what the pool can see.

A choice's *weighted hours* are the sum over the pool's science targets of priority x
observable hours tonight (:mod:`scheduler.advise.score`).  Each configuration's space is
enumerated whole while it is small (:mod:`scheduler.advise.space`), else searched
(:mod:`scheduler.advise.search`).  What a choice *opens* and *closes* is against
tonight's set-up of the same configuration; its *least headroom* is the smallest, over
the targets it opens, of each target's best headroom: how near the most marginal target
it serves is to being shut out by a carriage's end.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np

from scheduler.advise.score import PoolSky, Scores, pool_sky, score_choices
from scheduler.advise.search import searched_space
from scheduler.advise.space import (
    MAX_EXHAUSTIVE,
    ChoiceSpace,
    space_size,
    tonight_offsets,
    whole_space,
)
from scheduler.model.array import ArrayModel
from scheduler.model.choices import Choice
from scheduler.model.problem import NightProblem


@dataclass(frozen=True)
class Option:
    """One ranked choice.  ``hours``: (science target, observable hours) where open at
    all; ``opens``/``closes``: science targets open long enough for a visit with this
    choice and not with tonight's set-up, and the reverse; ``alike``: how many
    combinations give every target the same hours (this one shown for them all);
    ``open_targets``: the science targets open long enough for a visit."""

    choice: Choice
    changes: tuple[str, ...]
    alike: int
    weighted_hours: float
    hours: tuple[tuple[str, float], ...]
    opens: tuple[str, ...]
    closes: tuple[str, ...]
    open_targets: tuple[str, ...]
    least_headroom_m: float | None

    @property
    def is_current(self) -> bool:
        return not self.changes


@dataclass(frozen=True)
class SpaceReport:
    """How one configuration's choices were covered: ``combinations`` in all,
    ``distinct`` choices scored (after merging equivalent ones); exhaustive or
    searched; seconds spent."""

    configuration: str
    combinations: int
    distinct: int
    exhaustive: bool
    seconds: float


@dataclass(frozen=True)
class Ranking:
    """The best ``top`` choices over every configuration (each at least as good as
    tonight's set-up of its configuration), best first, then the best choice and
    tonight's set-up of each configuration not among them; how each space was covered;
    the sampling step (s)."""

    options: tuple[Option, ...]
    reports: tuple[SpaceReport, ...]
    step_s: float


def rank_choices(array: ArrayModel, base: NightProblem, configurations: list[str], top: int,
                 step_s: float, seed: int = 0, max_exhaustive: int = MAX_EXHAUSTIVE,
                 tick: Callable[[str, int, int], None] | None = None) -> Ranking:  # fmt: skip
    """Rank every choice of ``configurations`` for the pool and night of ``base``
    (its beams are replaced by each configuration's)."""
    scored: list[tuple[tuple[float, int, float, int], Option]] = []
    kept: list[Option] = []
    reports = []
    for k, cfg in enumerate(configurations):
        t0 = time.perf_counter()
        sky = pool_sky(replace(base, beams=array.beams(cfg)), step_s)
        space, scores = _cover(array, cfg, sky, seed, max_exhaustive, tick)
        opens = scores.opens(sky.duration_s)
        changes, room = _changes(space, tonight_offsets(array, cfg)), _least_headroom(scores, opens)
        reps = _representatives(scores, changes, room)
        floor = scores.weighted_hours[0] - 1e-9  # no worse than tonight's set-up
        good = [c for c in reps if scores.weighted_hours[c] >= floor][:top]
        options = [_option(space, scores, sky, opens, c, room[c]) for c in good]
        scored += [((-o.weighted_hours, int(changes[c]), -np.nan_to_num(room[c]), k), o)
                   for c, o in zip(good, options, strict=True)]  # fmt: skip
        kept += options[:1]  # the configuration's best
        kept.append(options[0] if good[0] == 0 else  # and tonight's set-up
                    _option(space, scores, sky, opens, 0, room[0]))  # fmt: skip
        reports.append(SpaceReport(cfg, space.combinations, len(space), space.exhaustive,
                                   time.perf_counter() - t0))  # fmt: skip
    scored.sort(key=lambda x: x[0])
    best = [o for _, o in scored[:top]]
    best += [o for o in kept if o not in best]
    return Ranking(tuple(best), tuple(reports), float(step_s))


def _changes(space: ChoiceSpace, tonight_m: np.ndarray) -> np.ndarray:
    """(C,) the changes :meth:`~scheduler.model.choices.Choice.changes_from` lists:
    stations fed by another line, and lines in use whose fixed delay is not tonight's."""
    moved = (space.line_of_slot != space.line_of_slot[0]).sum(axis=1)
    return moved + (space.offset_of_slot_m != tonight_m[space.line_of_slot]).sum(axis=1)


def _least_headroom(scores: Scores, opens: np.ndarray) -> np.ndarray:
    """(C,) the smallest best headroom over the targets each choice opens (NaN: none)."""
    room = np.where(opens, scores.best_headroom_m, np.inf)
    least = room.min(axis=1) if room.size else np.full(len(room), np.inf)
    return np.where(np.isfinite(least), least, np.nan)


def _representatives(scores: Scores, changes: np.ndarray, room: np.ndarray) -> list[int]:
    """One choice per distinct result (the same hours for every target): the one with
    the fewest changes, then the most headroom; best weighted hours first."""
    order = np.lexsort((-np.nan_to_num(room, nan=-np.inf), changes,
                        -np.round(scores.weighted_hours, 9)))  # fmt: skip
    _, first = np.unique(np.round(scores.hours[order], 6), axis=0, return_index=True)
    return [int(c) for c in order[np.sort(first)]]


def _cover(array: ArrayModel, cfg: str, sky: PoolSky, seed: int, max_exhaustive: int,
           tick: Callable[[str, int, int], None] | None) -> tuple[ChoiceSpace, Scores]:  # fmt: skip
    def score(space: ChoiceSpace) -> Scores:
        lo, hi = space.constants(array)
        inner = None if tick is None else (lambda done: tick(cfg, done, len(space)))
        return score_choices(sky, lo, hi, inner)

    if space_size(array, cfg) <= max_exhaustive:
        space = whole_space(array, cfg)
        return space, score(space)
    space = searched_space(array, cfg, lambda s: score(s).weighted_hours, seed)
    return space, score(space)


def _option(space: ChoiceSpace, scores: Scores, sky: PoolSky, opens: np.ndarray, c: int,
            room: float) -> Option:  # fmt: skip
    names = [sky.problem.targets.names[i] for i in sky.science]
    now, here = opens[0], opens[c]
    choice = space.choice(c)
    alike = np.all(np.abs(scores.hours - scores.hours[c]) < 1e-6, axis=1)
    return Option(choice, choice.changes_from(space.choice(0)), int(space.merged[alike].sum()),
                  float(scores.weighted_hours[c]),
                  tuple((n, round(float(h), 4)) for n, h in zip(names, scores.hours[c],
                                                                 strict=True) if h > 0),
                  tuple(n for n, a, b in zip(names, here, now, strict=True) if a and not b),
                  tuple(n for n, a, b in zip(names, here, now, strict=True) if b and not a),
                  tuple(n for n, a in zip(names, here, strict=True) if a),
                  None if np.isnan(room) else float(room))  # fmt: skip
