"""The night's geometry on a one-minute grid, for fast transition estimates.

The sequencers (greedy and optimiser) need slews and carriage moves between many pairs
of targets at many times.  They read them from this grid (nearest sample); the final
plan is then recomputed exactly (:mod:`scheduler.timing`).  Arrays are (N, T) per
target and sample, or (L, N, T) per line.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.constraints import SkyContext, evaluate_grid

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
    def build(cls, ctx: SkyContext, step_s: float = STEP_S) -> GeometryGrid:
        t = ctx.night.grid(step_s)
        ev = evaluate_grid(ctx, t)
        m = ctx.margins.delay_m
        return cls(t, ev.alt_rad, ev.az_rad, ev.pds_m, ev.span.low_m + m, ev.span.high_m - m, ev.ok)

    def column(self, t_s) -> np.ndarray:
        """Nearest sample index of times ``t_s``."""
        step = self.t_s[1] - self.t_s[0]
        k = np.rint((np.asarray(t_s, float) - self.t_s[0]) / step).astype(int)
        return np.clip(k, 0, len(self.t_s) - 1)
