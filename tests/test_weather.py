"""The semester's weather model against the closed forms of a two-state Markov chain.

Sources (standard probability; the formulas are textbook results, the numbers computed):

- a chain with P(clear -> lost) = a and P(lost -> clear) = b has the stationary clear
  fraction b / (a + b), runs of lost nights of geometric length with mean 1 / b and
  runs of clear nights with mean 1 / a; its states one night apart are correlated by
  lambda = 1 - a - b, and the mean of n consecutive states has the variance
  pi (1 - pi) / n x (1 + lambda) / (1 - lambda) for large n (CHECKS.md, weather
  statistics);
- with a = 1 - pi and b = pi the nights are independent (lambda = 0);
- a log-normal variable has the median exp(mu) and ln X has the standard deviation
  sigma.
Invented monthly statistics; no site is described.
"""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pytest

from scheduler.model.semester import (
    MEAN_PARTIAL_LOSS,
    CalendarEntry,
    MonthWeather,
    Semester,
    independent,
)
from scheduler.semester.weather import draw_weather, realisation_rng

ARCSEC = math.pi / 180 / 3600
SIGMAS = 4.0  # every statistical check allows this many standard errors


def _year(weather: MonthWeather) -> Semester:
    """A year of nights with the same statistics every month."""
    months = tuple(MonthWeather(m, **{k: getattr(weather, k) for k in (
        "clear_nights", "lost_spell_nights", "partial_nights", "seeing_rad", "seeing_spread",
        "coherence_s", "coherence_spread")}) for m in range(1, 13))  # fmt: skip
    first, last = dt.date(2027, 1, 1), dt.date(2027, 12, 31)
    return Semester(first, last, (CalendarEntry("c", first, last),), months, "test")


def _runs(values: np.ndarray, state: bool) -> list[int]:
    """Lengths of the runs of ``state`` that start and end inside the series."""
    out, n = [], 0
    for k, v in enumerate(values):
        if v == state:
            n += 1
        elif n:
            if k - n > 0:  # the run did not start at the first night
                out.append(n)
            n = 0
    return out


@pytest.mark.parametrize("clear, spell", [(0.7, 3.0), (0.55, 1.5), (0.85, 5.0)])
def test_chain_keeps_its_clear_fraction_and_spell_lengths(clear, spell):
    sem = _year(MonthWeather(1, clear, spell))
    draws = [draw_weather(sem, realisation_rng(11, k)).clear for k in range(60)]
    series = np.concatenate(draws)
    b = 1.0 / spell
    a = (1.0 - clear) * b / clear
    lam = 1.0 - a - b
    n = len(draws[0])
    var_mean = clear * (1 - clear) / n * (1 + lam) / (1 - lam) / len(draws)
    assert abs(series.mean() - clear) < SIGMAS * math.sqrt(var_mean)
    lost_runs = [r for d in draws for r in _runs(d, False)]
    clear_runs = [r for d in draws for r in _runs(d, True)]
    # geometric runs: mean 1/p, standard deviation sqrt(1 - p) / p
    for runs, p in ((lost_runs, b), (clear_runs, a)):
        assert abs(np.mean(runs) - 1 / p) < SIGMAS * math.sqrt(1 - p) / p / math.sqrt(len(runs))


def test_independent_nights_are_uncorrelated():
    """lambda = 0: the next night's state does not depend on this one's."""
    sem = _year(independent(1, 0.6))
    series = np.concatenate([draw_weather(sem, realisation_rng(3, k)).clear
                             for k in range(40)]).astype(float)  # fmt: skip
    r = np.corrcoef(series[:-1], series[1:])[0, 1]
    assert abs(r) < SIGMAS / math.sqrt(len(series))
    assert abs(series.mean() - 0.6) < SIGMAS * math.sqrt(0.24 / len(series))


def test_partial_nights_lose_half_their_dark_time_on_average():
    """A clear night is partial with probability q, losing a uniform 10-90 % of it
    (mean 50 %): the long-run usable fraction is clear x (1 - q / 2)."""
    w = MonthWeather(1, 0.8, 2.0, partial_nights=0.3)
    sem = _year(w)
    draws = [draw_weather(sem, realisation_rng(5, k)) for k in range(40)]
    clear = np.concatenate([d.clear for d in draws])
    lost = np.concatenate([d.lost_to - d.lost_from for d in draws])
    partial = clear & (lost > 0)
    n = int(clear.sum())
    assert abs(partial.sum() / n - 0.3) < SIGMAS * math.sqrt(0.21 / n)
    # uniform on [0.1, 0.9]: standard deviation 0.8 / sqrt(12)
    assert abs(lost[partial].mean() - MEAN_PARTIAL_LOSS) < SIGMAS * 0.8 / math.sqrt(
        12 * partial.sum())
    assert np.all(lost[~clear] == 1.0) and np.all((lost[partial] >= 0.1) & (lost[partial] <= 0.9))
    opened = np.concatenate([[d.open_fraction(k) for k in range(len(d.clear))] for d in draws])
    assert w.usable_fraction == pytest.approx(0.8 * (1 - 0.3 * 0.5))
    assert abs(opened.mean() - w.usable_fraction) < 0.03  # 14600 nights, correlated by spells


def test_seeing_and_coherence_are_log_normal_around_their_medians():
    """ln(seeing) and ln(coherence time) have the stated medians and spreads (the
    sample median of a normal variable has the standard error 1.2533 sigma / sqrt(n))."""
    w = MonthWeather(1, 1.0, 1.0, seeing_rad=0.9 * ARCSEC, seeing_spread=0.3,
                     coherence_s=3.5e-3, coherence_spread=0.45)  # fmt: skip
    sem = _year(w)
    d = draw_weather(sem, realisation_rng(9, 0))
    night = [d.conditions(sem, k) for k in range(len(d.clear))]
    for values, median, spread in (
        (np.array([c.seeing_rad * c.seeing_factor for c in night]), 0.9 * ARCSEC, 0.3),
        (np.array([c.coherence_s * c.coherence_factor for c in night]), 3.5e-3, 0.45),
    ):
        logs = np.log(values / median)
        n = len(logs)
        assert abs(np.median(logs)) < SIGMAS * 1.2533 * spread / math.sqrt(n)
        assert np.std(logs) == pytest.approx(spread, rel=SIGMAS / math.sqrt(2 * n))


def test_months_without_medians_scale_each_modes_reference():
    """No median given: the conditions keep the modes' references (None) and carry the
    drawn factor."""
    sem = _year(MonthWeather(1, 1.0, 1.0, seeing_spread=0.2))
    c = draw_weather(sem, realisation_rng(1, 0)).conditions(sem, 3)
    assert c.seeing_rad is None and c.coherence_s is None
    assert c.seeing_factor != 1.0 and c.coherence_factor == 1.0


def test_same_seed_and_realisation_same_weather():
    sem = _year(MonthWeather(1, 0.7, 2.0, partial_nights=0.2, seeing_spread=0.3))
    a = draw_weather(sem, realisation_rng(4, 17))
    b = draw_weather(sem, realisation_rng(4, 17))
    c = draw_weather(sem, realisation_rng(4, 18))
    assert np.array_equal(a.clear, b.clear) and np.array_equal(a.seeing_factor, b.seeing_factor)
    assert not np.array_equal(a.seeing_factor, c.seeing_factor)
