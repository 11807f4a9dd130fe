"""The night's geometry on a one-minute grid, for fast transition estimates.

The sequencers (greedy and optimiser) need slews and carriage moves between many pairs
of targets at many times.  They read them from this grid (nearest sample); the final
plan is then recomputed exactly (:mod:`scheduler.queue.timing`).  Arrays are (N, T) per
target and sample, or (L, N, T) per line.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.constraints import evaluate_grid
from scheduler.geometry.transitions import transition
from scheduler.model.array import Beams, Overheads
from scheduler.model.problem import NightProblem

STEP_S = 60.0


@dataclass(frozen=True, eq=False)
class GeometryGrid:
    t_s: np.ndarray  # (T,)
    alt_rad: np.ndarray  # (N, T)
    az_rad: np.ndarray
    pds_m: np.ndarray  # (L, N, T)
    k_low_m: np.ndarray  # (N, T), margins applied
    k_high_m: np.ndarray
    ok: np.ndarray  # (N, T) every constraint holds

    @classmethod
    def build(cls, problem: NightProblem, step_s: float = STEP_S) -> GeometryGrid:
        t = problem.night.grid(step_s)
        ev = evaluate_grid(problem, t)
        m = problem.margins.delay_m
        return cls(t, ev.alt_rad, ev.az_rad, ev.pds_m, ev.span.low_m + m, ev.span.high_m - m,
                   ev.ok)  # fmt: skip

    def compact(self) -> GeometryGrid:
        """The same grid in single precision (half the memory; directions to about
        1e-7 rad and paths to about 1e-5 m, far inside the grid's own rounding): for
        nights kept or sent in numbers, as a semester's are."""
        f = np.float32
        return GeometryGrid(self.t_s, self.alt_rad.astype(f), self.az_rad.astype(f),
                            self.pds_m.astype(f), self.k_low_m.astype(f),
                            self.k_high_m.astype(f), self.ok)  # fmt: skip

    def __post_init__(self) -> None:
        # plain floats for column_of (frozen dataclass: set once here)
        object.__setattr__(self, "_t0", float(self.t_s[0]))
        object.__setattr__(self, "_step", float(self.t_s[1] - self.t_s[0]))
        object.__setattr__(self, "_last", len(self.t_s) - 1)

    def column_of(self, t_s: float) -> int:
        """Nearest sample index of one time (plain Python: the search asks often)."""
        k = int(round((t_s - self._t0) / self._step))  # type: ignore[attr-defined]
        return min(max(k, 0), self._last)  # type: ignore[attr-defined]

    def column(self, t_s: np.ndarray | float) -> np.ndarray:
        """Nearest sample index of times ``t_s``."""
        step = self.t_s[1] - self.t_s[0]
        k = np.rint((np.asarray(t_s, float) - self.t_s[0]) / step).astype(int)
        return np.clip(k, 0, len(self.t_s) - 1)


class GridTransitions:
    """Transition times read from the grid, with a small pad for the nearest-sample
    rounding (``pad_s``).  Every answer is remembered per pair of grid samples: the
    sequencers ask the same questions many times (and a semester's realisations share
    one night's answers)."""

    def __init__(self, grid: GeometryGrid, beams: Beams, over: Overheads, pad_s: float = 0.0,
                 setup: np.ndarray | None = None):  # fmt: skip
        self.g, self.beams, self.over, self.pad = grid, beams, over, pad_s
        self.setup = setup  # (N, N) set-up seconds from target a's mode to b's
        self._memo: dict[tuple[int, int, int, int], tuple[float, float]] = {}

    def setup_s(self, ia: int, ib: int) -> float:
        return 0.0 if self.setup is None else float(self.setup[ia, ib])

    def seconds(self, ia: int, ta: float, ib: int, tb: float) -> tuple[float, float]:
        """(total transition, carriage move) in seconds from target ``ia`` ending at
        ``ta`` to ``ib`` starting at ``tb``."""
        g = self.g
        ca, cb = g.column_of(ta), g.column_of(tb)
        key = (ia, ca, ib, cb)
        got = self._memo.get(key)
        if got is None:
            got = self._compute(ia, ca, ib, cb)
            self._memo[key] = got
        return got

    def _compute(self, ia: int, ca: int, ib: int, cb: int) -> tuple[float, float]:
        """The transition between grid samples (not remembered)."""
        g = self.g
        tr = transition(
            self.beams, self.over,
            g.alt_rad[ia, ca], g.az_rad[ia, ca], g.pds_m[:, ia, ca], g.k_low_m[ia, ca],
            g.k_high_m[ia, ca], g.alt_rad[ib, cb], g.az_rad[ib, cb], g.pds_m[:, ib, cb],
            g.k_low_m[ib, cb], g.k_high_m[ib, cb], setup_s=self.setup_s(ia, ib),
        )  # fmt: skip
        return float(tr.total_s) + self.pad, float(tr.carriage_s)
