"""The value rule (README.md, *Value rule*; a rule of this project, common practice, no
source): each science visit earns its target's priority (or priority x hours), a target
earns only from its stated minimum of visits, and with strict priorities one visit of a
higher grade outweighs everything the lower grades could earn together."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scheduler.inputs.catalog import parse_targets
from scheduler.model.errors import InputError
from scheduler.model.plan import PlanSettings
from scheduler.queue.value import ValueRule, grade_weights

ROWS = [  # invented targets
    {"name": "A", "priority": "3", "visits": "1", "duration_min": "30"},
    {"name": "B", "priority": "3", "visits": "3", "min_visits": "2", "duration_min": "60"},
    {"name": "C", "priority": "7", "visits": "2", "duration_min": "45"},
    {"name": "K", "kind": "calibrator", "duration_min": "10"},
]


def _targets(rows=ROWS):
    frame = pd.DataFrame([{"ra": "10", "dec": "-30", **r} for r in rows]).fillna("")
    return parse_targets(frame.astype(str), "invented")


def test_per_visit_and_minimum_visits():
    t = _targets()
    rule = ValueRule.of(t, PlanSettings())
    a, b, c, k = (t.index(n) for n in "ABCK")
    assert list(t.min_visits) == [1, 2, 2, 1]  # default: every visit wanted
    assert rule.earned({a: 1}) == 3.0
    assert rule.earned({b: 1}) == 0.0  # short of its minimum of 2
    assert rule.earned({b: 2}) == 6.0 and rule.earned({b: 3}) == 9.0
    assert rule.earned({c: 1}) == 0.0 and rule.earned({c: 2}) == 14.0
    assert rule.earned({k: 3}) == 0.0  # calibrators earn nothing themselves
    # a replan: one visit of B was done; the next one completes it and earns both
    assert rule.of_targets([b], done={b: 1}) == 6.0


def test_value_per_hour():
    t = _targets()
    rule = ValueRule.of(t, PlanSettings(value_per_hour=True))
    assert rule.per_visit[t.index("B")] == pytest.approx(3.0 * 1.0)
    assert rule.per_visit[t.index("C")] == pytest.approx(7.0 * 0.75)


def test_strict_grades_outweigh_all_lower_ones():
    """Weights by hand: grade 3 has 1 + 3 = 4 visits wanted, so w(3) = 1 and
    w(7) = 1 + 4 x 1 = 5; one grade-7 visit (5) beats all grade-3 visits (4)."""
    t = _targets()
    rule = ValueRule.of(t, PlanSettings(strict_priority=True))
    a, b, c = (t.index(n) for n in "ABC")
    assert rule.per_visit[a] == rule.per_visit[b] == 1.0
    assert rule.per_visit[c] == 5.0
    assert rule.earned({c: 2}) > rule.earned({a: 1, b: 3})
    w = grade_weights(np.array([1.0, 2.0, 2.0, 5.0]), np.array([2, 1, 1, 1]),
                      np.array([True, True, True, True]))  # fmt: skip
    assert list(w) == [1.0, 3.0, 3.0, 9.0]  # 1; 1 + 2x1; 1 + 2x1 + 2x3


def test_minimum_above_visits_is_refused():
    with pytest.raises(InputError, match="min_visits"):
        _targets([{"name": "X", "visits": "2", "min_visits": "3", "duration_min": "20"}])
