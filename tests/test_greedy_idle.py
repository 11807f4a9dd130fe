"""The greedy queue skips idle stretches in whole steps: the same sequence as stepping
one idle step at a time (the dispatcher's rule in README, *Solvers*; common practice,
no source).  Invented nights of the generated suite, some with a lost stretch of the
night as the semester's realisations make them."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
import night_suite  # noqa: E402

import scheduler.queue.greedy as greedy  # noqa: E402
from scheduler.model.plan import PlanSettings  # noqa: E402
from scheduler.queue.prepare import prepare_queue  # noqa: E402
from scheduler.queue.restart import allowed_starts  # noqa: E402


def _sequence(q):
    return [(c.id, s) for c, s in greedy.greedy_sequence(q)]


@pytest.mark.parametrize("seed", [0, 3, 7, 12, 19])
def test_skipping_idle_steps_changes_nothing(seed, monkeypatch):
    q = prepare_queue(night_suite.problem(night_suite.small(seed)), PlanSettings())
    rng = np.random.default_rng(seed)
    night = q.problem.night
    a = night.start_s + rng.uniform(0.1, 0.6) * night.duration_s
    lost = ((a, a + 0.3 * night.duration_s),)
    cut = [c.with_starts(st) for c in q.candidates
           if (st := allowed_starts(c.starts, -np.inf, lost, c.duration_s))]  # fmt: skip
    assert _sequence(q), "the night should offer visits"
    for queue in (q, q.with_candidates(cut)):
        fast = _sequence(queue)
        with monkeypatch.context() as m:
            m.setattr(greedy, "_idle_steps", lambda cursor, before: 1.0)
            slow = _sequence(queue)
        assert fast == slow
