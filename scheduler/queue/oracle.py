"""Transition times for the search: exact enough to decide, cheap enough to ask often.

``Oracle.total`` reads the one-minute geometry grid (exact minimax carriage move on the
grid's samples, plus a pad for the nearest-sample rounding; the grid transitions
remember every answer: a search asks the same questions many times).
``Oracle.first`` is the transition into the first visit (from a restart state, or the
first acquisition of the night).
``Oracle.estimate`` is a time-independent guess between two targets from their angular
distance, used only to rank insertions before they are timed properly.
"""

from __future__ import annotations

import numpy as np

from scheduler.geometry.visibility import angular_distance
from scheduler.model.plan import Start
from scheduler.queue.prepare import QueueInputs
from scheduler.queue.timing import from_origin

ORIGIN_PAD_S = 1.0  # added to exact first transitions, against rounding


class Oracle:
    """Memoised transitions of one night's queue (see the module docstring)."""

    def __init__(self, q: QueueInputs, origin: Start | None = None):
        self.q, self.origin = q, origin
        self.grid, self.tr = q.transitions.g, q.transitions
        self._first: dict[tuple[int, int], float] = {}
        self.estimate = self._estimates()

    def total(self, ia: int, ta: float, ib: int, tb: float) -> float:
        """Seconds needed from target ``ia`` ending at ``ta`` to ``ib`` starting at
        ``tb`` (slew or carriage move, then acquisition; grid pad included)."""
        return self.tr.seconds(ia, ta, ib, tb)[0]

    def first(self, ib: int, tb: float) -> float:
        """Seconds needed before the first visit, on target ``ib`` at ``tb``, counted
        from the restart time (or from the night's start: one acquisition)."""
        over = self.q.problem.overheads
        if self.origin is None:
            return over.acquisition_s
        key = (ib, self.grid.column_of(tb))
        got = self._first.get(key)
        if got is None:
            got = float(from_origin(self.q.problem, self.origin, ib, tb).total_s) + ORIGIN_PAD_S
            self._first[key] = got
        return got

    def _estimates(self) -> np.ndarray:
        """(N, N) guesses of transition seconds between catalog targets: slew over the
        angular distance, or the carriage move that distance can cause on the longest
        station vector, whichever is longer, then acquisition."""
        t, beams, over = self.q.problem.targets, self.q.problem.beams, self.q.problem.overheads
        ra, dec = t.ra_rad, t.dec_rad
        ang = angular_distance(ra[:, None], dec[:, None], ra[None, :], dec[None, :])
        slew = ang / over.slew_rate_rad_s + over.settle_s
        reach = float(np.max(np.linalg.norm(beams.position_enu_m, axis=1), initial=0.0))
        rate = float(np.min(beams.rate_m_s)) if len(beams) else 1.0
        carriage = 2.0 * reach * np.sin(0.5 * ang) / rate + over.settle_s
        setup = self.tr.setup if self.tr.setup is not None else 0.0
        return np.maximum(slew, carriage) + over.acquisition_s + setup
