"""Every set-up choice of a configuration, as arrays, with equivalent choices merged.

A configuration's stations keep their order (slots); a choice gives each slot a delay
line (any injective routing when the array's routing is free, else the configuration's
own feeds) and each line a fixed delay (its ``[[fixed_delays]]`` options, else the
configuration's offset).  Tonight's set-up is always choice 0, and its offsets are
always among the options.

Two choices are *equivalent* when every station gets a line with the same range, the
same speed and the same fixed delay: the carriages then face the same night, so only
the first is kept and counts how many it stands for.  Different lines with the same
properties are interchangeable this way; choices differing only on lines no station
uses are the same choice.

Enumeration is exhaustive up to :data:`MAX_EXHAUSTIVE` combinations; beyond that the
caller searches (:mod:`scheduler.advise.search`).
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np

from scheduler.model.array import ArrayModel
from scheduler.model.choices import Choice

MAX_EXHAUSTIVE = 200_000


@dataclass(frozen=True, eq=False)
class ChoiceSpace:
    """Distinct choices of one configuration: ``line_of_slot`` (C, S) indexes the
    array's delay lines, ``offset_of_slot_m`` (C, S) the fixed delay on each slot's
    line, ``merged`` (C,) the equivalent combinations each stands for; ``combinations``
    is the size of the whole space, ``exhaustive`` whether all of it is here."""

    configuration: str
    stations: tuple[str, ...]
    line_names: tuple[str, ...]
    line_of_slot: np.ndarray
    offset_of_slot_m: np.ndarray
    merged: np.ndarray
    combinations: int
    exhaustive: bool

    def __len__(self) -> int:
        return int(self.line_of_slot.shape[0])

    def choice(self, c: int) -> Choice:
        lines = [self.line_names[k] for k in self.line_of_slot[c]]
        return Choice(self.configuration, tuple(zip(lines, self.stations, strict=True)),
                      tuple((ln, float(f)) for ln, f in zip(lines, self.offset_of_slot_m[c],
                                                             strict=True)))  # fmt: skip

    def constants(self, array: ArrayModel) -> tuple[np.ndarray, np.ndarray]:
        """``lo_m``, ``hi_m`` (C, S): each slot's line range shifted by its fixed delay."""
        lo = np.array([d.opd_min_m for d in array.delay_lines])[self.line_of_slot]
        hi = np.array([d.opd_max_m for d in array.delay_lines])[self.line_of_slot]
        return lo + self.offset_of_slot_m, hi + self.offset_of_slot_m


def options_per_line(array: ArrayModel, configuration: str) -> list[tuple[float, ...]]:
    """Each delay line's fixed delays to choose from: a line the configuration feeds
    tonight keeps tonight's offset first, then its ``[[fixed_delays]]`` options; a line
    it does not feed takes its options (none given: no fixed delay, 0 m)."""
    config = array.configuration(configuration)
    given = {f.line: f.options_m for f in array.fixed_delays}
    fed = {ln for ln, _ in config.feeds}
    out = []
    for line in array.delay_lines:
        if line.name in fed:
            now = (config.offset_m(line.name),)
            out.append(tuple(dict.fromkeys(now + given.get(line.name, ()))))
        else:
            out.append(given.get(line.name, (0.0,)))
    return out


def tonight_offsets(array: ArrayModel, configuration: str) -> np.ndarray:
    """Each delay line's fixed delay tonight (0 where the configuration feeds none)."""
    config = array.configuration(configuration)
    return np.array([config.offset_m(d.name) for d in array.delay_lines])


def current_routing(array: ArrayModel, configuration: str) -> tuple[int, ...]:
    """Tonight's line index per station slot."""
    names = [d.name for d in array.delay_lines]
    return tuple(names.index(ln) for ln, _ in array.configuration(configuration).feeds)


def routings(array: ArrayModel, configuration: str) -> list[tuple[int, ...]]:
    """Line indices per station slot: tonight's routing first, then (free routing)
    every other injective one."""
    names = [d.name for d in array.delay_lines]
    now = current_routing(array, configuration)
    if not array.routing_free:
        return [now]
    rest = (p for p in itertools.permutations(range(len(names)), len(now)) if p != now)
    return [now, *rest]


def space_size(array: ArrayModel, configuration: str) -> int:
    """How many combinations the configuration's choices make, before merging."""
    config = array.configuration(configuration)
    n_lines, n_slots = len(array.delay_lines), len(config.feeds)
    count = math.perm(n_lines, n_slots) if array.routing_free else 1
    return count * math.prod(len(o) for o in options_per_line(array, configuration))


def whole_space(array: ArrayModel, configuration: str) -> ChoiceSpace:
    """Every combination (at most :data:`MAX_EXHAUSTIVE`), equivalent ones merged."""
    total = space_size(array, configuration)
    if total > MAX_EXHAUSTIVE:
        raise ValueError(f"{total} combinations: search instead")
    config = array.configuration(configuration)
    route = np.array(routings(array, configuration), int)  # (P, S)
    offsets = np.array(list(itertools.product(*options_per_line(array, configuration))))
    slots = np.broadcast_to(route[:, None, :], (len(route), len(offsets), route.shape[1]))
    off = offsets[np.arange(len(offsets))[None, :, None], route[:, None, :]]  # (P, Q, S)
    return merged_space(array, configuration, slots.reshape(-1, route.shape[1]),
                        off.reshape(-1, route.shape[1]), total, True,
                        tuple(st for _, st in config.feeds))  # fmt: skip


def merged_space(array: ArrayModel, configuration: str, slots: np.ndarray, offsets: np.ndarray,
                 combinations: int, exhaustive: bool,
                 stations: tuple[str, ...]) -> ChoiceSpace:  # fmt: skip
    """Choices given as arrays with equivalent ones merged, first occurrences kept in
    order (so tonight's set-up, given first, stays choice 0)."""
    props = np.array([(d.opd_min_m, d.opd_max_m, d.max_rate_m_s) for d in array.delay_lines])
    key = np.concatenate([props[slots].reshape(len(slots), -1), offsets], axis=1)
    _, first, counts = np.unique(key, axis=0, return_index=True, return_counts=True)
    order = np.argsort(first)
    keep = first[order]
    return ChoiceSpace(configuration, stations, tuple(d.name for d in array.delay_lines),
                       slots[keep].copy(), offsets[keep].astype(float), counts[order],
                       combinations, exhaustive)  # fmt: skip
