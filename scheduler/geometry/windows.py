"""Observable windows: when each target can be observed tonight, and why not otherwise.

The night is sampled on a grid (60 s by default); every change of verdict between two
samples is then located by bisection on the exact constraints, so window edges are good
to about half a second, and always on the observable side: a window's first and last
instants are themselves observable.  Each excluded stretch carries the first constraint that fails
in it (see :mod:`scheduler.model.reasons`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.constraints import evaluate, evaluate_grid
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import Limit, limit_of, most_limiting

GRID_STEP_S = 60.0
BISECTIONS = 7  # 60 s / 2**7 < 0.5 s


@dataclass(frozen=True)
class TargetWindows:
    """Observable intervals and excluded stretches of one target (POSIX UTC seconds)."""

    name: str
    observable: tuple[tuple[float, float], ...]
    excluded: tuple[tuple[float, float, int], ...]  # (start, end, reason code)

    @property
    def hours(self) -> float:
        return sum(b - a for a, b in self.observable) / 3600.0

    def start_windows(self, duration_s: float) -> tuple[tuple[float, float], ...]:
        """Intervals of start times for which a visit of ``duration_s`` stays inside one
        observable window."""
        return tuple((a, b - duration_s) for a, b in self.observable if b - a >= duration_s)

    def main_reason(self) -> int:
        """What limits the target most (:func:`~scheduler.model.reasons.most_limiting`:
        the reason code that excludes the most time tonight, the altitude limit
        included; OK if nothing is excluded at all)."""
        lost: dict[int, float] = {}
        for a, b, code in self.excluded:
            lost[code] = lost.get(code, 0.0) + b - a
        order = sorted(lost, key=lambda c: (int(limit_of(c)), c))
        worst = most_limiting(lost, order)
        return int(Limit.OK) if worst is None else int(worst)

    def longest_s(self) -> float:
        """The longest observable window, seconds (0: none)."""
        return max((b - a for a, b in self.observable), default=0.0)


def observable_windows(problem: NightProblem, step_s: float = GRID_STEP_S) -> list[TargetWindows]:
    """Windows of every target of the problem's catalog over its night."""
    t = problem.night.grid(step_s)
    count = len(problem.targets)
    code = evaluate_grid(problem, t).code  # (N, T)
    # every change of verdict between neighbouring samples, located by bisection
    tgt, col = np.nonzero(code[:, 1:] != code[:, :-1])
    left, right = t[col].copy(), t[col + 1].copy()
    code_left, code_right = code[tgt, col], code[tgt, col + 1]
    leaving, entering = code_left == Limit.OK, code_right == Limit.OK
    for _ in range(BISECTIONS):
        mid = 0.5 * (left + right)
        c = evaluate(problem, tgt, mid).code
        # keep `left` where a window ends and `right` where one begins on the observable
        # side, so that every window edge is itself an observable instant
        stay = np.where(leaving, c == Limit.OK, np.where(entering, c != Limit.OK, c == code_left))
        left = np.where(stay, mid, left)
        right = np.where(stay, right, mid)
    edge = np.where(leaving, left, np.where(entering, right, 0.5 * (left + right)))
    out = []
    for i in range(count):
        sel = tgt == i
        bounds = np.concatenate([[t[0]], edge[sel], [t[-1]]])
        codes = np.concatenate([code[i, col[sel]], [code[i, -1]]])
        obs, exc = [], []
        for a, b, c in zip(bounds[:-1], bounds[1:], codes, strict=True):
            if b <= a:
                continue
            if c == Limit.OK:
                obs.append((float(a), float(b)))
            else:
                exc.append((float(a), float(b), int(c)))
        out.append(TargetWindows(problem.targets.names[i], tuple(obs), tuple(exc)))
    return out
