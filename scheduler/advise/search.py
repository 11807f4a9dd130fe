"""A search of a configuration's choices when there are too many to enumerate.

Steepest ascent with restarts: from tonight's set-up, and then from
:data:`RESTARTS` random choices (seeded), every neighbour of the current choice is
scored at once (all swaps of two stations' lines, every move of a station to a line no
station uses, every other fixed delay on one line) and the best one is taken while it
improves the weighted hours.  Every choice scored along the way is kept, merged like the
whole space, so the ranking picks from all of them.  The result is a good choice, not a
proven best: the ranking says so.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from scheduler.advise.space import (
    ChoiceSpace,
    current_routing,
    merged_space,
    options_per_line,
    space_size,
)
from scheduler.model.array import ArrayModel

RESTARTS = 6
MAX_STEPS = 200


def searched_space(array: ArrayModel, cfg: str, score: Callable[[ChoiceSpace], np.ndarray],
                   seed: int) -> ChoiceSpace:  # fmt: skip
    """Choices of ``cfg`` met by the search, merged, tonight's first; ``score`` gives
    the weighted hours of a space's choices."""
    options = options_per_line(array, cfg)
    stations = tuple(st for _, st in array.configuration(cfg).feeds)
    rng = np.random.default_rng(seed)
    start = np.array(current_routing(array, cfg))
    seen_slots, seen_off = [start], [np.array([o[0] for o in options])]
    n_lines = len(array.delay_lines)
    for attempt in range(RESTARTS + 1):
        slots = start.copy() if attempt == 0 else _random_routing(array, len(start), start, rng)
        line_off = (np.array([o[0] for o in options]) if attempt == 0
                    else np.array([o[rng.integers(len(o))] for o in options]))  # fmt: skip
        for _ in range(MAX_STEPS):
            cand_s, cand_o = _neighbours(slots, line_off, options, n_lines, array.routing_free)
            cand_s, cand_o = np.vstack([slots[None], cand_s]), np.vstack([line_off[None], cand_o])
            seen_slots += list(cand_s)
            seen_off += list(cand_o)
            values = score(_space(array, cfg, cand_s, cand_o, stations))
            best = int(np.argmax(values))
            if values[best] <= values[0] + 1e-9:
                break
            slots, line_off = cand_s[best], cand_o[best]
    every = np.array(seen_slots)
    offs = np.array(seen_off)
    return merged_space(array, cfg, every, offs[np.arange(len(offs))[:, None], every],
                        space_size(array, cfg), False, stations)  # fmt: skip


def _space(array: ArrayModel, cfg: str, slots: np.ndarray, line_off: np.ndarray,
           stations: tuple[str, ...]) -> ChoiceSpace:  # fmt: skip
    per_slot = line_off[np.arange(len(line_off))[:, None], slots]
    return ChoiceSpace(cfg, stations, tuple(d.name for d in array.delay_lines), slots,
                       per_slot.astype(float), np.ones(len(slots), int), len(slots), False)


def _neighbours(slots: np.ndarray, line_off: np.ndarray, options: list[tuple[float, ...]],
                n_lines: int, free: bool) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    out_s, out_o = [], []
    if free:
        for i in range(len(slots)):
            for j in range(i + 1, len(slots)):
                s = slots.copy()
                s[i], s[j] = s[j], s[i]
                out_s.append(s)
                out_o.append(line_off)
            for line in sorted(set(range(n_lines)) - set(slots.tolist())):
                s = slots.copy()
                s[i] = line
                out_s.append(s)
                out_o.append(line_off)
    for line in set(slots.tolist()):
        for value in options[line]:
            if value != line_off[line]:
                o = line_off.copy()
                o[line] = value
                out_s.append(slots)
                out_o.append(o)
    if not out_s:
        return np.zeros((0, len(slots)), int), np.zeros((0, len(line_off)))
    return np.array(out_s), np.array(out_o)


def _random_routing(array: ArrayModel, n_slots: int, now: np.ndarray,
                    rng: np.random.Generator) -> np.ndarray:  # fmt: skip
    if not array.routing_free:
        return now.copy()
    return rng.permutation(len(array.delay_lines))[:n_slots]

