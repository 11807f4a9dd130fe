"""Completion odds of the semester simulation against closed forms.

A single target that can be visited on every clear night (circumpolar above the
altitude limit for hours every night, far from the Moon, no calibrator needed, one visit
a night) completes a request of k visits in n nights exactly when at least k nights are
clear.  Under independent nights that probability is binomial, P(at least k) =
sum_{i >= k} C(n, i) p^i (1 - p)^(n - i) (CHECKS.md, weather statistics; standard
probability); under the two-state chain it follows from the forward recursion over
(state, clear nights so far) with the chain's transition probabilities (standard
probability, computed here).  The simulation must agree within its standard error.
Invented site, array and target.
"""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pandas as pd
import pytest

from scheduler.inputs.array_file import parse_array
from scheduler.inputs.catalog import parse_targets
from scheduler.model.semester import CalendarEntry, MonthWeather, Request, Semester, independent
from scheduler.semester.pool import build_scenario
from scheduler.semester.realise import FIELDS
from scheduler.semester.simulate import simulate

NIGHTS, VISITS, REALISATIONS = 20, 10, 300
SIGMAS = 4.0
FIRST = dt.date(2027, 4, 5)


def _array():
    return parse_array({
        "site": {"name": "test", "latitude_deg": -26.1, "longitude_deg": -66.2, "height_m": 3000},
        "stations": [
            {"name": "a", "east_m": 0, "north_m": 0, "up_m": 0, "internal_path_m": 40},
            {"name": "b", "east_m": 30, "north_m": 10, "up_m": 0, "internal_path_m": 40},
        ],
        "delay_lines": [{"name": f"l{k}", "opd_min_m": 0, "opd_max_m": 120,
                         "max_rate_m_s": 1} for k in range(2)],
        "configurations": [{"name": "c", "feeds": {"l0": "a", "l1": "b"}}],
    }, "test.toml")  # fmt: skip


def _scenario(weather: MonthWeather):
    # dec -70 at latitude -26.1: above 30 deg for about 9.7 h of each sidereal day
    targets = parse_targets(pd.DataFrame({
        "name": ["Pole-1"], "ra": ["150"], "dec": ["-70"], "duration_min": ["30"],
        "needs_calibrator": ["false"]}), "test.csv")  # fmt: skip
    last = FIRST + dt.timedelta(days=NIGHTS - 1)
    sem = Semester(FIRST, last, (CalendarEntry("c", FIRST, last),), (weather,), "test")
    req = [Request("P-1", 0, "c", VISITS * 0.5, 5.0, 2)]
    return build_scenario(_array(), targets, sem, req)


def binomial_at_least(n: int, k: int, p: float) -> float:
    return sum(math.comb(n, i) * p**i * (1 - p) ** (n - i) for i in range(k, n + 1))


def chain_at_least(n: int, k: int, w: MonthWeather) -> float:
    """P(at least k clear of n) for the chain started from its stationary split."""
    a, b = w.clear_to_lost, w.lost_to_clear
    # prob[s][c]: state s (1 clear) after the nights so far, with c clear nights
    prob = np.zeros((2, n + 1))
    prob[1, 1], prob[0, 0] = w.clear_nights, 1 - w.clear_nights
    for _ in range(n - 1):
        nxt = np.zeros_like(prob)
        nxt[1, 1:] += prob[1, :-1] * (1 - a) + prob[0, :-1] * b
        nxt[0, :] += prob[1, :] * a + prob[0, :] * (1 - b)
        prob = nxt
    return float(prob[:, k:].sum())


@pytest.mark.parametrize("weather, exact", [
    (independent(4, 0.6), binomial_at_least(NIGHTS, VISITS, 0.6)),
    (MonthWeather(4, 0.6, 3.0), None),
])  # fmt: skip
def test_single_target_completion_matches_the_closed_form(weather, exact):
    if exact is None:
        exact = chain_at_least(NIGHTS, VISITS, weather)
    scn = _scenario(weather)
    out = simulate(scn, REALISATIONS, seed=21, workers=1)
    done = out.hours[:, FIELDS.index("done"), 0]
    p = float(np.mean(done >= VISITS * 0.5 - 1e-9))
    se = math.sqrt(exact * (1 - exact) / REALISATIONS)
    assert abs(p - exact) < SIGMAS * se, (p, exact)
    # the visits made are exactly the clear nights, capped by the request
    clear = out.hours[:, FIELDS.index("open"), 0]
    assert np.allclose(done, np.minimum(clear, VISITS) * 0.5)


def test_chain_recursion_reduces_to_the_binomial():
    """With P(lost -> clear) = p the chain is independent nights: the recursion gives
    the binomial sum (a check of the reference itself)."""
    w = independent(4, 0.35)
    assert chain_at_least(15, 6, w) == pytest.approx(binomial_at_least(15, 6, 0.35), abs=1e-12)
    # spells make the count of clear nights more spread: fewer middling outcomes
    sticky = MonthWeather(4, 0.35, 6.0)
    assert chain_at_least(15, 12, sticky) > binomial_at_least(15, 12, 0.35)
