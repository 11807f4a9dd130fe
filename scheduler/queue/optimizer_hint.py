"""Warm starts for the optimiser's CP-SAT models: a complete solution the model accepts,
built from an exactly timed night, and the hints that give it to the solver."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from scheduler.queue.optimizer_bounds import room_s
from scheduler.queue.prepare import QueueInputs
from scheduler.queue.timing import Timed, brackets

if TYPE_CHECKING:
    from scheduler.queue.optimizer import Handles


def model_hint(q: QueueInputs, h: Handles, timed: Timed, shortest: int) -> tuple:
    """A complete solution the model accepts, from an exactly timed night: re-time it
    with the model's reserves (a pair's slot bound where the model allows it), drop what
    no longer fits, repair brackets until stable.  Returns the starts by candidate index
    (offsets, s), the reserves used, the tight keys and the brackets by visit id."""
    ctx, cands = q.problem, list(q.candidates)
    k_of = {c.id: k for k, c in enumerate(cands)}
    seq = [k_of[c.id] for c, _, _ in timed if c.id in k_of]
    t0 = ctx.night.start_s
    room = room_s(cands, shortest)
    by_pair: dict[tuple[int | None, int], list] = {}
    for (u, v, j), (_, bound, lo, hi) in h.tight.items():
        by_pair.setdefault((u, v), []).append((j, bound, lo - t0, hi - t0))
    for _ in range(len(seq) + 1):
        out: list[tuple[int, float]] = []
        used_r: dict[int, int] = {}
        tight: set[tuple[int | None, int, int]] = set()
        free, last = float(h.first), dict(h.last_end)
        prev: int | None = None
        for k in seq:
            c = cands[k]
            ready = last.get(c.target, -np.inf) + ctx.targets.min_separation_s[c.target]
            slot = next(((j, b) for j, b, lo, hi in by_pair.get((prev, k), ())
                         if lo <= free <= hi), None) if out else None  # fmt: skip
            need = slot[1] if slot else h.reserve[k]
            begin = c.earliest_start(t0 + float(np.ceil(max(ready, free + need if out else free))))
            if begin is not None and slot and begin - t0 - free > need + room:
                slot, need = None, h.reserve[k]
                begin = c.earliest_start(t0 + float(np.ceil(max(ready, free + need))))
            if begin is None:
                continue
            offset = float(np.ceil(begin - t0))
            if not any(a - t0 <= offset <= b - t0 for a, b in c.starts):
                continue
            out.append((k, offset))
            used_r[k] = need if len(out) > 1 else h.reserve[k]
            if slot:
                tight.add((prev, k, slot[0]))
            free = offset + np.ceil(c.duration_s)
            last[c.target] = free
            prev = k
        triples = [(cands[k], t0 + off, None) for k, off in out]
        br = brackets(triples, q, h.fixed)
        used = {cid for pair in br.values() if pair for cid in pair}
        keep = [k for k, _ in out
                if (cands[k].is_science and br.get(cands[k].id, ()) is not None)
                or (not cands[k].is_science and cands[k].id in used)]  # fmt: skip
        if len(keep) == len(out) == len(seq):
            return out, used_r, tight, br
        seq = keep
    return [], {}, set(), {}


def apply_hint(m, h: Handles, cands, hint, br, sizes=None, tight=frozenset()) -> None:
    """Hint every decision: presence, start, reserve, bracket and pair literals."""
    k_of = {c.id: k for k, c in enumerate(cands)}
    starts = dict(hint)
    for k, p in enumerate(h.pres):
        m.add_hint(p, k in starts)
        st = int(starts[k]) if k in starts else h.earliest[k]
        m.add_hint(h.start[k], st)
        if not isinstance(h.size[k], int):
            reserve = int((sizes or {}).get(k, h.reserve[k]))
            m.add_hint(h.size[k], reserve)
            m.add_hint(h.begin[k], st - reserve)
    chosen_before = {(k_of[sci], k_of.get(pair[0], f"done:{pair[0]}"))
                     for sci, pair in br.items() if pair}  # fmt: skip
    chosen_after = {(k_of[sci], k_of[pair[1]]) for sci, pair in br.items() if pair}
    for key, lit in h.before.items():
        m.add_hint(lit, key in chosen_before)
    for key, lit in h.after.items():
        m.add_hint(lit, key in chosen_after)
    for key, (lit, _, _, _) in h.tight.items():
        m.add_hint(lit, key in tight)
